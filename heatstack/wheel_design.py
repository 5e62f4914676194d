"""The numbers of the parametric wheel and brake: :class:`WheelBrakeDesign` (dimensions, materials,
contact conductances, wear state) and :class:`FusePlugSpec` (a fuse plug in the rim), each validated.

The defaults form an INVENTED reference design of our own (a four-rotor carbon brake in a forged
aluminium wheel); they describe no real aircraft, wheel or brake. Every number is overridable, with a
unit if wanted. :func:`heatstack.builders.build_wheel_brake` turns a design into parts, contacts,
surface groups and probes.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

from .errors import GeometryError
from .unit_declarations import convert_declared, declared

__all__ = ["WheelBrakeDesign", "FusePlugSpec"]


@dataclass(frozen=True)
class FusePlugSpec:
    """A fuse plug (thermal relief plug) in the wheel rim.

    Parameters
    ----------
    name : str
        Probe name, e.g. ``"fuse plug 1"``.
    z_fraction : float
        Axial position as a fraction of the rim length, 0 at its inboard end [-].
    depth_fraction : float
        Radial position inside the rim wall, 0 at its bore and 1 at its outer surface [-].
    release_temperature : float
        Melt (release) temperature of the plug's fusible alloy [K].
    tolerance : float
        Half-width of the release temperature band [K].
    time_constant : float
        First-order lag of the plug behind the rim around it [s]: its own small thermal
        mass over its contact conductance, ``m c / G`` (0: the plug follows the rim).
    """

    name: str
    z_fraction: float = declared("dimensionless", minimum=0.0, maximum=1.0)
    depth_fraction: float = declared("dimensionless", 0.5, minimum=0.0, maximum=1.0)
    release_temperature: float = declared("temperature", 450.15, positive=True)
    tolerance: float = declared("temperature_difference", 3.0, minimum=0.0)
    time_constant: float = declared("time", 0.0, minimum=0.0)

    def __post_init__(self) -> None:
        convert_declared(self, f"fuse plug {self.name!r}", GeometryError)


@dataclass(frozen=True)
class WheelBrakeDesign:
    """Dimensions [m], materials and contact conductances [W/(m^2 K)] of a wheel and brake.

    Every default is INVENTED for the reference design (no real product). Each number may
    also be given with a unit (``rotor_thickness="18 mm"``) or as a pint Quantity; each
    field declares its dimension once (:func:`heatstack.unit_declarations.declared_dimension`).
    ``drive_key_conductance`` [W/K] is the conduction path from each rotor's keys through
    the wheel's drive keys into the rim bore (the keys themselves are not meshed).

    Parameters
    ----------
    rotors : int
        Number of rotors (>= 1); the stack is pressure plate, rotor/stator pairs, a last
        rotor and the end plate.
    rotor_thickness, stator_thickness, pressure_plate_thickness, end_plate_thickness : float
        Axial thickness of each heat-sink disc [m].
    friction_inner_radius, friction_outer_radius : float
        Inner and outer radius of the rubbing faces [m].
    rotor_key_height, stator_key_height : float
        Radial height of the rotor keys (outside the friction radius) and of the stator
        keys (inside it) [m].
    heat_sink_material, torque_tube_material, housing_material : str
        Material names (files in ``materials/``).
    heat_shield_material, wheel_material, bead_material : str
        Material names (files in ``materials/``).
    torque_tube_inner_radius : float
        Bore of the torque tube [m].
    backing_flange_thickness : float
        Axial thickness of the torque tube's backing flange behind the end plate [m].
    housing_thickness, housing_outer_radius : float
        Axial thickness and outer radius of the piston housing [m].
    heat_shield : bool
        Whether the heat shield between the rotors and the rim is meshed.
    heat_shield_gap, heat_shield_thickness : float
        Radial gap from the rotor keys to the heat shield, and its thickness [m].
    rim_bore_clearance : float
        Radial clearance between the heat shield (or the rotors) and the rim bore [m].
    rim_thickness : float
        Radial thickness of the rim [m].
    rim_overhang_inboard, rim_overhang_outboard : float
        Axial length of the rim beyond the housing (inboard) and beyond the web
        (outboard) [m].
    flange_height, flange_thickness : float
        Radial height above the bead seat and axial thickness of each wheel flange [m].
    web_gap, web_thickness : float
        Axial gap between the backing flange and the wheel web, and the web thickness [m].
    hub_inner_radius, hub_thickness : float
        Bore and radial thickness of the wheel hub [m].
    bead_width, bead_height : float
        Axial width and radial height of each tyre bead on its seat [m].
    sensor_depth : float
        Radial depth of the brake-temperature sensor into the torque tube from its bore [m].
    sensor_z_fraction : float
        Axial position of the sensor along the heat-sink stack, 0 at the housing and 1 at
        the end plate [-].
    sensor_time_constant : float
        First-order lag of the sensor behind the metal around it [s].
    wear_fraction : float
        Wear state from 0 (new) to 1 (at the wear limit, ``full_wear_per_face`` worn off each
        friction face) [-].
    wear_per_face : float
        Thickness worn off each friction face [m], instead of ``wear_fraction``.
    full_wear_per_face : float
        Thickness each friction face loses between new and the wear limit [m] (invented default).
    fuse_plugs : tuple of FusePlugSpec
        Fuse plugs in the rim.
    rotor_stator_clamped, rotor_stator_released : float
        Contact conductance of the rubbing faces with the brake applied and released
        [W/(m^2 K)].
    stator_torque_tube, end_plate_flange, pressure_plate_housing, housing_torque_tube, tyre_bead_rim : float
        Contact conductance of each of these joints [W/(m^2 K)].
    drive_key_conductance : float
        Conduction path from each rotor to the rim bore through the drive keys [W/K].
    friction_distribution : str
        How the friction heat spreads over a rubbing face's radius (see
        :class:`~heatstack.geometry.FrictionSettings`).

    Raises
    ------
    GeometryError
        If ``rotors`` is not a whole number >= 1, a length is not > 0, the friction radii
        are out of order, the torque tube is not inside the stator bore, or
        ``sensor_z_fraction`` is outside [0, 1].

    Wear: ``wear_fraction`` (0 new .. 1 at the wear limit, ``full_wear_per_face`` [m] worn
    off each friction face) or ``wear_per_face`` [m] directly. Each rotor and stator loses
    it on both faces, the pressure and end plates on their one rubbing face; the stack
    stays against the backing flange, so it starts further outboard and the pistons'
    extension is meshed as housing (the housing grows by :attr:`stack_wear`). The
    heat-sink mass falls accordingly.
    """

    rotors: int = 4
    rotor_thickness: float = declared("length", 0.020, positive=True)
    stator_thickness: float = declared("length", 0.018, positive=True)
    pressure_plate_thickness: float = declared("length", 0.022, positive=True)
    end_plate_thickness: float = declared("length", 0.022, positive=True)
    friction_inner_radius: float = declared("length", 0.130, positive=True)
    friction_outer_radius: float = declared("length", 0.210, positive=True)
    rotor_key_height: float = declared("length", 0.010, positive=True)
    stator_key_height: float = declared("length", 0.010, positive=True)
    heat_sink_material: str = "carbon-carbon"
    torque_tube_inner_radius: float = declared("length", 0.106, positive=True)
    torque_tube_material: str = "low-alloy-steel"
    backing_flange_thickness: float = declared("length", 0.016, positive=True)
    housing_thickness: float = declared("length", 0.040, positive=True)
    housing_outer_radius: float = declared("length", 0.200, positive=True)
    housing_material: str = "low-alloy-steel"
    heat_shield: bool = True
    heat_shield_gap: float = declared("length", 0.014, positive=True)
    heat_shield_thickness: float = declared("length", 0.0015, positive=True)
    heat_shield_material: str = "stainless-heat-shield"
    rim_bore_clearance: float = declared("length", 0.006, positive=True)
    rim_thickness: float = declared("length", 0.012, positive=True)
    rim_overhang_inboard: float = declared("length", 0.010, positive=True)
    rim_overhang_outboard: float = declared("length", 0.030, positive=True)
    flange_height: float = declared("length", 0.028, positive=True)
    flange_thickness: float = declared("length", 0.014, positive=True)
    web_gap: float = declared("length", 0.012, positive=True)
    web_thickness: float = declared("length", 0.022, positive=True)
    hub_inner_radius: float = declared("length", 0.072, positive=True)
    hub_thickness: float = declared("length", 0.022, positive=True)
    wheel_material: str = "forged-aluminium-wheel-alloy"
    bead_width: float = declared("length", 0.040, positive=True)
    bead_height: float = declared("length", 0.018, positive=True)
    bead_material: str = "tyre-rubber"
    sensor_depth: float = declared("length", 0.004, positive=True)
    sensor_z_fraction: float = declared("dimensionless", 0.9, minimum=0.0, maximum=1.0)
    sensor_time_constant: float = declared("time", 15.0, positive=True)
    fuse_plugs: tuple[FusePlugSpec, ...] = field(
        default=(
            FusePlugSpec("fuse plug 1", z_fraction=0.80),
            FusePlugSpec("fuse plug 2", z_fraction=0.55),
        )
    )
    rotor_stator_clamped: float = declared("heat_transfer_coefficient", 3000.0, positive=True)
    rotor_stator_released: float = declared("heat_transfer_coefficient", 250.0, positive=True)
    stator_torque_tube: float = declared("heat_transfer_coefficient", 300.0, positive=True)
    end_plate_flange: float = declared("heat_transfer_coefficient", 1500.0, positive=True)
    pressure_plate_housing: float = declared("heat_transfer_coefficient", 150.0, positive=True)
    housing_torque_tube: float = declared("heat_transfer_coefficient", 2000.0, positive=True)
    tyre_bead_rim: float = declared("heat_transfer_coefficient", 800.0, positive=True)
    drive_key_conductance: float = declared("thermal_conductance", 4.0, positive=True)
    friction_distribution: str = "uniform_pressure"
    wear_fraction: float = declared("dimensionless", 0.0, minimum=0.0, maximum=1.0)
    wear_per_face: float = declared("length", 0.0, minimum=0.0)
    full_wear_per_face: float = declared("length", 0.003, positive=True)

    def __post_init__(self) -> None:
        if int(self.rotors) != self.rotors or self.rotors < 1:
            raise GeometryError(f"design: rotors must be a whole number >= 1, got {self.rotors}")
        convert_declared(self, "design", GeometryError)
        if self.friction_outer_radius <= self.friction_inner_radius:
            raise GeometryError("design: friction_outer_radius must exceed friction_inner_radius")
        if self.torque_tube_inner_radius >= self.friction_inner_radius - self.stator_key_height:
            raise GeometryError("design: torque_tube_inner_radius must be inside the stator bore")
        self._check_wear()

    def _check_wear(self) -> None:
        if self.wear_fraction > 0 and self.wear_per_face > 0:
            raise GeometryError("design: wear_fraction and wear_per_face: give one or the other, not both")
        key = "wear_per_face" if self.wear_per_face > 0 else "wear_fraction"
        worn = self.worn_per_face
        for part, thickness, faces in (
            ("rotor", self.rotor_thickness, 2),
            ("stator", self.stator_thickness, 2),
            ("pressure plate", self.pressure_plate_thickness, 1),
            ("end plate", self.end_plate_thickness, 1),
        ):
            if faces * worn >= thickness:
                raise GeometryError(
                    f"design: {key}: {worn * 1e3:.3g} mm worn per friction face wears through the {part} "
                    f"({thickness * 1e3:.3g} mm thick, {faces} friction face{'s' if faces > 1 else ''})"
                )

    def with_changes(self, **changes) -> WheelBrakeDesign:
        """A copy with some fields changed (validated again).

        Parameters
        ----------
        **changes
            New field values (SI numbers, unit strings or quantities), by field name.

        Returns
        -------
        WheelBrakeDesign
            The changed design.

        Raises
        ------
        GeometryError
            If a field name is unknown or the changed design is invalid.
        """
        unknown = sorted(set(changes) - set(self.__dataclass_fields__))
        if unknown:
            raise GeometryError(f"design: unknown field {unknown[0]!r}")
        return replace(self, **changes)

    # wear -------------------------------------------------------------------------
    @property
    def worn_per_face(self) -> float:
        """Thickness worn off each friction face [m]: ``wear_per_face``, or
        ``wear_fraction * full_wear_per_face``."""
        return self.wear_per_face if self.wear_per_face > 0 else self.wear_fraction * self.full_wear_per_face

    @property
    def stack_wear(self) -> float:
        """Total thickness the stack has lost [m]: ``4 rotors`` friction faces worn."""
        return 4 * self.rotors * self.worn_per_face

    # derived radii ---------------------------------------------------------------
    @property
    def stator_inner_radius(self) -> float:
        """Bore of stators, pressure and end plates = torque tube outer radius [m]."""
        return self.friction_inner_radius - self.stator_key_height

    @property
    def rotor_outer_radius(self) -> float:
        """Outer radius of the rotors [m]."""
        return self.friction_outer_radius + self.rotor_key_height

    @property
    def heat_shield_inner_radius(self) -> float:
        """[m]"""
        return self.rotor_outer_radius + self.heat_shield_gap

    @property
    def rim_inner_radius(self) -> float:
        """Rim bore [m]."""
        shield = self.heat_shield_thickness if self.heat_shield else 0.0
        return self.heat_shield_inner_radius + shield + self.rim_bore_clearance

    @property
    def rim_outer_radius(self) -> float:
        """Bead seat radius [m]."""
        return self.rim_inner_radius + self.rim_thickness
