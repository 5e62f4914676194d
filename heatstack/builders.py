"""The parametric wheel and brake: a handful of numbers -> parts, contacts, surface groups, probes.

The design's numbers are :class:`~heatstack.wheel_design.WheelBrakeDesign` (an INVENTED reference
design of our own by default: it describes no real aircraft, wheel or brake); this module builds
them into an assembly, and parts can be added or replaced afterwards.

Coordinates: r outward from the axle centre line [m]; z along the axle [m], z = 0 at the
inboard face of the piston housing, increasing outboard. The stack is pressed from the
inboard side: housing, pressure plate, rotor, stator, ..., rotor, end plate, then the
torque tube's backing flange. The wheel web and hub sit outboard of the brake.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from .assembly import Assembly, cell_groups_by_role, rubbing_pairs_by_role
from .errors import GeometryError
from .geometry import Contact, FrictionSettings, Part, Probe, SurfaceGroup, ThermalLink
from .wheel_design import FusePlugSpec, WheelBrakeDesign

__all__ = [
    "BuiltWheelBrake",
    "build_wheel_brake",
    "surface_records",
    "SURFACE_GROUPS",
    "SURFACE_ORIENTATION",
]

#: The exposed-surface groups of a built wheel and brake: name, orientation (axle
#: horizontal: cylinders about the axle, or vertical disc faces) and the characteristic
#: length [m] for convection correlations (diameter of cylinders, height of vertical faces).
_SURFACES: tuple[tuple[str, str, Callable[[WheelBrakeDesign], float]], ...] = (
    ("stack outer diameter", "horizontal_cylinder", lambda d: 2.0 * d.rotor_outer_radius),
    ("stack bore", "horizontal_cylinder", lambda d: 2.0 * d.stator_inner_radius),
    ("stack faces", "vertical_plate", lambda d: 2.0 * d.friction_outer_radius),
    ("torque tube", "horizontal_cylinder", lambda d: 2.0 * d.torque_tube_inner_radius),
    ("heat shield", "horizontal_cylinder", lambda d: 2.0 * d.heat_shield_inner_radius),
    ("housing", "horizontal_cylinder", lambda d: 2.0 * d.housing_outer_radius),
    ("rim bore", "horizontal_cylinder", lambda d: 2.0 * d.rim_inner_radius),
    ("tyre cavity", "horizontal_cylinder", lambda d: 2.0 * d.rim_outer_radius),
    ("wheel inboard", "vertical_plate", lambda d: 2.0 * (d.rim_outer_radius + d.flange_height)),
    ("wheel outboard", "vertical_plate", lambda d: 2.0 * (d.rim_outer_radius + d.flange_height)),
    ("hub bore", "horizontal_cylinder", lambda d: 2.0 * d.hub_inner_radius),
    ("tyre bead", "horizontal_cylinder", lambda d: 2.0 * (d.rim_outer_radius + d.bead_height)),
)
#: The exposed-surface group names of a built wheel and brake, for cooling laws.
SURFACE_GROUPS = tuple(name for name, _, _ in _SURFACES)
#: How each surface group of a built wheel and brake lies.
SURFACE_ORIENTATION = {name: orientation for name, orientation, _ in _SURFACES}


@dataclass(frozen=True, eq=False)
class BuiltWheelBrake:
    """The outcome of :func:`build_wheel_brake`.

    Attributes
    ----------
    assembly : Assembly
        Carries the rubbing pairs, the cell groups and the surface records
        (``assembly.surfaces``).
    design : WheelBrakeDesign
    fuse_plugs : tuple of FusePlugSpec
    stack_z : (float, float)
        Axial extent of the friction stack [m].
    """

    assembly: Assembly
    design: WheelBrakeDesign
    fuse_plugs: tuple[FusePlugSpec, ...]
    stack_z: tuple[float, float]


def _stack(d: WheelBrakeDesign, z0: float) -> tuple[list[Part], float]:
    roles = ["pressure_plate"] + ["rotor", "stator"] * (d.rotors - 1) + ["rotor", "end_plate"]
    worn = d.worn_per_face
    thickness = {
        "pressure_plate": d.pressure_plate_thickness - worn,
        "rotor": d.rotor_thickness - 2 * worn,
        "stator": d.stator_thickness - 2 * worn,
        "end_plate": d.end_plate_thickness - worn,
    }
    parts, z, counts = [], z0, {"rotor": 0, "stator": 0}
    for role in roles:
        if role == "rotor":
            r_in, r_out = d.friction_inner_radius, d.rotor_outer_radius
        else:
            r_in, r_out = d.stator_inner_radius, d.friction_outer_radius
        if role in counts:
            counts[role] += 1
            name = f"{role} {counts[role]}"
        else:
            name = role.replace("_", " ")
        parts.append(Part(name, d.heat_sink_material, r_in, r_out, z, z + thickness[role], role))
        z += thickness[role]
    return parts, z


def _wheel(d: WheelBrakeDesign, z_in: float, z_web: float) -> list[Part]:
    r_bore, r_seat = d.rim_inner_radius, d.rim_outer_radius
    z_out = z_web + d.web_thickness + d.rim_overhang_outboard
    m = d.wheel_material
    return [
        Part("rim", m, r_bore, r_seat, z_in, z_out, "wheel"),
        Part("inboard flange", m, r_seat, r_seat + d.flange_height, z_in, z_in + d.flange_thickness, "wheel"),
        Part("outboard flange", m, r_seat, r_seat + d.flange_height, z_out - d.flange_thickness, z_out, "wheel"),
        Part("web", m, d.hub_inner_radius + d.hub_thickness, r_bore, z_web, z_web + d.web_thickness, "wheel"),
        Part(
            "hub",
            m,
            d.hub_inner_radius,
            d.hub_inner_radius + d.hub_thickness,
            z_web - 0.5 * d.web_thickness,
            z_out,
            "wheel",
        ),
        Part(
            "inboard bead",
            d.bead_material,
            r_seat,
            r_seat + d.bead_height,
            z_in + d.flange_thickness,
            z_in + d.flange_thickness + d.bead_width,
            "tyre_bead",
        ),
        Part(
            "outboard bead",
            d.bead_material,
            r_seat,
            r_seat + d.bead_height,
            z_out - d.flange_thickness - d.bead_width,
            z_out - d.flange_thickness,
            "tyre_bead",
        ),
    ]


def surface_records(design: WheelBrakeDesign) -> tuple[SurfaceGroup, ...]:
    """The exposed-surface groups of the built wheel and brake of ``design``, as records.

    Parameters
    ----------
    design : WheelBrakeDesign

    Returns
    -------
    tuple of SurfaceGroup
        Name, characteristic length [m] and orientation of every group.
    """
    return tuple(SurfaceGroup(name, length(design), orientation) for name, orientation, length in _SURFACES)


def _surface_groups() -> dict[str, str]:
    groups = {}
    for role in ("rotor", "stator", "pressure_plate", "end_plate"):
        groups[f"@{role}:outer"] = "stack outer diameter"
        groups[f"@{role}:inner"] = "stack bore"
        groups[f"@{role}:bottom"] = "stack faces"
        groups[f"@{role}:top"] = "stack faces"
    groups.update(
        {
            "@torque_tube": "torque tube",
            "@heat_shield": "heat shield",
            "@other": "housing",
            "@tyre_bead": "tyre bead",
            "@wheel:bottom": "wheel inboard",
            "@wheel:top": "wheel outboard",
            "@wheel:inner": "rim bore",
            "@wheel:outer": "tyre cavity",
            "hub:inner": "hub bore",
            "inboard flange:outer": "wheel inboard",
            "outboard flange:outer": "wheel outboard",
        }
    )
    return groups


def _contacts(d: WheelBrakeDesign) -> list[Contact]:
    wheel_pairs = [("rim", "inboard flange"), ("rim", "outboard flange"), ("rim", "web"), ("web", "hub")]
    return [
        Contact(roles=("rotor", "stator"), clamped=d.rotor_stator_clamped, released=d.rotor_stator_released),
        Contact(
            roles=("rotor", "pressure_plate"),
            clamped=d.rotor_stator_clamped,
            released=d.rotor_stator_released,
        ),
        Contact(roles=("rotor", "end_plate"), clamped=d.rotor_stator_clamped, released=d.rotor_stator_released),
        Contact(roles=("stator", "torque_tube"), clamped=d.stator_torque_tube),
        Contact(roles=("pressure_plate", "torque_tube"), clamped=d.stator_torque_tube),
        Contact(roles=("end_plate", "torque_tube"), clamped=d.end_plate_flange),
        Contact(roles=("pressure_plate", "other"), clamped=d.pressure_plate_housing),
        Contact(roles=("torque_tube", "other"), clamped=d.housing_torque_tube),
        Contact(roles=("tyre_bead", "wheel"), clamped=d.tyre_bead_rim),
        *(Contact(parts=pair) for pair in wheel_pairs),
        Contact(parts=("torque tube", "backing flange")),
    ]


def build_wheel_brake(
    design: WheelBrakeDesign | None = None,
    extra_parts: Sequence[Part] = (),
    replace_parts: Sequence[Part] = (),
    extra_probes: Sequence[Probe] = (),
) -> BuiltWheelBrake:
    """Build the assembly of a wheel and brake from its design numbers.

    Parameters
    ----------
    design : WheelBrakeDesign, optional
        Dimensions and materials; the invented reference design by default.
    extra_parts : sequence of Part
        Parts added by hand.
    replace_parts : sequence of Part
        Parts that replace the built part of the same name.
    extra_probes : sequence of Probe
        More probes.

    Returns
    -------
    BuiltWheelBrake
        The assembly [m], its surface groups and cooling length scales [m], and the fuse
        plugs of the design.

    Raises
    ------
    GeometryError
        If a part given by hand overlaps the built parts or a probe lies outside every part.
    """
    d = design or WheelBrakeDesign()
    parts, (z_stack0, z_stack1) = _built_parts(d)
    parts = _apply_replacements(parts, replace_parts) + list(extra_parts)
    probes = _probes(d, parts, (z_stack0, z_stack1), extra_probes)
    rotors = [p.name for p in parts if p.role == "rotor"]
    links = [
        ThermalLink(name, "outer", "rim", "inner", d.drive_key_conductance, f"drive keys {name}") for name in rotors
    ]
    assembly = Assembly(
        parts,
        links=links,
        contacts=_contacts(d),
        probes=probes,
        default_contact_conductance=1000.0,
        surface_groups=_surface_groups(),
        friction=FrictionSettings(distribution=d.friction_distribution),
        rubbing_pairs=rubbing_pairs_by_role(parts),
        cell_groups=cell_groups_by_role(parts),
        surfaces=surface_records(d),
    )
    return BuiltWheelBrake(assembly, d, tuple(d.fuse_plugs), (z_stack0, z_stack1))


def _built_parts(d: WheelBrakeDesign) -> tuple[list[Part], tuple[float, float]]:
    """The parts of the design and the axial extent of the stack ``(z_min, z_max)`` [m]."""
    z_stack0 = d.housing_thickness + d.stack_wear
    stack, z_stack1 = _stack(d, z_stack0)
    z_flange1 = z_stack1 + d.backing_flange_thickness
    z_in = -d.rim_overhang_inboard
    z_web = z_flange1 + d.web_gap
    r_tt_out = d.stator_inner_radius
    parts = [
        Part("housing", d.housing_material, r_tt_out, d.housing_outer_radius, 0.0, z_stack0, "other"),
        *stack,
        Part("torque tube", d.torque_tube_material, d.torque_tube_inner_radius, r_tt_out, 0.0, z_stack1, "torque_tube"),
        Part(
            "backing flange",
            d.torque_tube_material,
            d.torque_tube_inner_radius,
            d.friction_outer_radius,
            z_stack1,
            z_flange1,
            "torque_tube",
        ),
        *_wheel(d, z_in, z_web),
    ]
    if d.heat_shield:
        r = d.heat_shield_inner_radius
        parts.append(
            Part(
                "heat shield",
                d.heat_shield_material,
                r,
                r + d.heat_shield_thickness,
                z_stack0,
                z_stack1,
                "heat_shield",
            )
        )
    return parts, (z_stack0, z_stack1)


def _probes(
    d: WheelBrakeDesign, parts: Sequence[Part], stack: tuple[float, float], extra: Sequence[Probe]
) -> list[Probe]:
    """The design's probes (sensor, hottest rotor, bead seats, fuse plugs) and the ``extra`` ones.

    The "hottest rotor" probe sits in the middle rotor's mid-plane at the mean friction
    radius: the rotor's core temperature, not that of its rubbing faces.

    ``stack`` holds the axial ends of the stack [m]; the rim and the rotors are looked
    up by name in ``parts`` (after any replacement).
    """
    z_stack0, z_stack1 = stack
    z_in = -d.rim_overhang_inboard
    rim = next(p for p in parts if p.name == "rim")
    middle_rotor = next(p for p in parts if p.name == f"rotor {(d.rotors + 1) // 2}")
    return [
        Probe(
            "sensor",
            d.torque_tube_inner_radius + d.sensor_depth,
            z_stack0 + d.sensor_z_fraction * (z_stack1 - z_stack0),
            part="torque tube",
            time_constant=d.sensor_time_constant,
        ),
        Probe(
            "hottest rotor",
            0.5 * (d.friction_inner_radius + d.friction_outer_radius),
            0.5 * (middle_rotor.z_min + middle_rotor.z_max),
            part=middle_rotor.name,
        ),
        Probe("inboard bead seat", rim.r_outer, z_in + d.flange_thickness + 0.5 * d.bead_width, part="rim"),
        Probe("outboard bead seat", rim.r_outer, rim.z_max - d.flange_thickness - 0.5 * d.bead_width, part="rim"),
        *(
            Probe(
                plug.name,
                rim.r_inner + plug.depth_fraction * (rim.r_outer - rim.r_inner),
                rim.z_min + plug.z_fraction * (rim.z_max - rim.z_min),
                part="rim",
            )
            for plug in d.fuse_plugs
        ),
        *extra,
    ]


def _apply_replacements(parts: list[Part], replacements: Sequence[Part]) -> list[Part]:
    by_name = {p.name: p for p in replacements}
    unknown = sorted(set(by_name) - {p.name for p in parts})
    if unknown:
        raise GeometryError(f"replace_parts: the design has no part named {unknown[0]!r}")
    return [by_name.get(p.name, p) for p in parts]
