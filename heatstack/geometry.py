"""The pieces of an axisymmetric wheel and brake: parts, contacts, probes, rubbing pairs, cell and surface groups.

Each record is a plain, immutable description; :mod:`heatstack.assembly` puts them together.
Every length is in [m], every conductance in [W/(m^2 K)], every temperature in [K].

The trade knowledge the numerics needs is handed down as data: which parts rub
(:class:`RubbingPair`), which cells are averaged or searched for their hottest value
(:class:`CellGroup`) and how each exposed-surface group lies (:class:`SurfaceGroup`).
A part's ``role`` is a trade label from which the builder and the case reader derive
that data (:func:`~heatstack.assembly.rubbing_pairs_by_role`, :func:`~heatstack.assembly.cell_groups_by_role`); the
numerics never reads it.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from .errors import GeometryError
from .unit_declarations import convert_declared, declared
from .units import quantity

__all__ = [
    "ROLES",
    "HEAT_SINK_ROLES",
    "NON_ROTATING_STACK_ROLES",
    "SIDES",
    "CELL_STATISTICS",
    "SURFACE_ORIENTATIONS",
    "HEAT_SINK",
    "WHEEL",
    "HEAT_SINK_MEAN",
    "HEAT_SINK_MAX",
    "RUBBING_FACE_MAX",
    "WHEEL_MAX",
    "GLOBAL_SERIES",
    "series_name",
    "series_label",
    "Part",
    "Contact",
    "Probe",
    "FrictionSettings",
    "GapPair",
    "ThermalLink",
    "RubbingPair",
    "CellGroup",
    "SurfaceGroup",
]

#: Roles a part may play. Rubbing interfaces are found between a rotor and a
#: stator, pressure plate or end plate; the heat sink is the union of those four roles.
ROLES = (
    "rotor",
    "stator",
    "pressure_plate",
    "end_plate",
    "torque_tube",
    "heat_shield",
    "wheel",
    "tyre_bead",
    "other",
)
HEAT_SINK_ROLES = ("rotor", "stator", "pressure_plate", "end_plate")
NON_ROTATING_STACK_ROLES = ("stator", "pressure_plate", "end_plate")
#: Sides of an annular block: inner and outer cylinders, bottom (z_min) and top (z_max) faces.
SIDES = ("inner", "outer", "bottom", "top")
#: Statistics a cell group can be recorded with: the mass-weighted mean and the hottest cell.
CELL_STATISTICS = ("mean", "max")
#: How an exposed surface lies, for the convection correlations (axle horizontal).
SURFACE_ORIENTATIONS = ("vertical_plate", "horizontal_cylinder", "horizontal_plate_up", "horizontal_plate_down")

#: Cell groups the builder declares: the heat sink (rotors, stators, pressure and end
#: plates) and the wheel.
HEAT_SINK = "heat_sink"
WHEEL = "wheel"


def series_name(group: str, statistic: str) -> str:
    """Name of the recorded series of ``statistic`` over the cell group ``group``, e.g. ``"wheel_max"``.

    Parameters
    ----------
    group : str
        Cell group name.
    statistic : str
        ``"mean"`` or ``"max"``.

    Returns
    -------
    str
        ``"<group>_<statistic>"``.
    """
    return f"{group}_{statistic}"


#: The global series of a built wheel and brake, as recorded in results files.
HEAT_SINK_MEAN = series_name(HEAT_SINK, "mean")
HEAT_SINK_MAX = series_name(HEAT_SINK, "max")
WHEEL_MAX = series_name(WHEEL, "max")
#: The hottest rubbing surface (recorded for every model with rubbing faces, built or not).
RUBBING_FACE_MAX = "rubbing_face_max"
GLOBAL_SERIES = (HEAT_SINK_MEAN, HEAT_SINK_MAX, RUBBING_FACE_MAX, WHEEL_MAX)
_GLOBAL_SERIES_LABELS = {
    HEAT_SINK_MEAN: "heat-sink mean",
    HEAT_SINK_MAX: "heat sink, hottest cell",
    RUBBING_FACE_MAX: "hottest rubbing surface",
    WHEEL_MAX: "wheel, hottest cell",
}


def series_label(name: str) -> str:
    """How a person reads a recorded name: ``"heat_sink_mean"`` -> ``"heat-sink mean"``,
    ``"surface:rim bore"`` -> ``"rim bore surface"``; probe names are shown as they are.

    Parameters
    ----------
    name : str
        A recorded series name (a global series, ``surface:GROUP`` or a probe name).

    Returns
    -------
    str
        The label shown in reports, figures and verb output.
    """
    if name.startswith("surface:"):
        return f"{name[len('surface:') :]} surface"
    return _GLOBAL_SERIES_LABELS.get(name, name)


@dataclass(frozen=True)
class Part:
    """An axisymmetric annular block of one material.

    Parameters
    ----------
    name : str
        Unique name of the part (e.g. ``"rotor 1"``).
    material : str
        Name of a material file in ``materials/`` (or an inline material registered
        with the model).
    r_inner, r_outer : float or str or pint.Quantity
        Inner and outer radius [m] (or with a unit, ``"125 mm"``); ``0 <= r_inner < r_outer``.
    z_min, z_max : float or str or pint.Quantity
        Axial extent [m]; ``z_min < z_max``.
    role : str
        One of :data:`ROLES`.
    """

    name: str
    material: str
    r_inner: float = declared("length", minimum=0.0)
    r_outer: float = declared("length")
    z_min: float = declared("length")
    z_max: float = declared("length")
    role: str = "other"

    def __post_init__(self) -> None:
        if not self.name or not isinstance(self.name, str):
            raise GeometryError(f"part name must be a non-empty string, got {self.name!r}")
        if self.role not in ROLES:
            raise GeometryError(f"part {self.name!r}: role {self.role!r} is not one of {ROLES}")
        convert_declared(self, f"part {self.name!r}", GeometryError)
        if not self.r_outer > self.r_inner:
            raise GeometryError(
                f"part {self.name!r}: radial size r_outer - r_inner must be > 0, got {self.r_outer - self.r_inner:g} m"
            )
        if not self.z_max > self.z_min:
            raise GeometryError(
                f"part {self.name!r}: axial size z_max - z_min must be > 0, got {self.z_max - self.z_min:g} m"
            )

    def contains(self, r: float, z: float) -> bool:
        """Whether the point (r [m], z [m]) lies in the part (boundary included).

        Parameters
        ----------
        r, z : float
            Radius and axial position of the point [m].

        Returns
        -------
        bool
        """
        return self.r_inner <= r <= self.r_outer and self.z_min <= z <= self.z_max

    @property
    def volume(self) -> float:
        """Volume of the full annulus [m^3]."""
        return np.pi * (self.r_outer**2 - self.r_inner**2) * (self.z_max - self.z_min)


@dataclass(frozen=True)
class Contact:
    """Contact conductance between two touching parts, or between two roles.

    Give either ``parts`` (two part names) or ``roles`` (two role names). ``None``
    for a conductance means perfect contact (no interface resistance).

    Parameters
    ----------
    parts : tuple of str, optional
        The two part names.
    roles : tuple of str, optional
        The two roles (order does not matter).
    clamped : float or str or pint.Quantity or None
        Conductance [W/(m^2 K)] while the stack is clamped (brake applied).
    released : float or str or pint.Quantity or None
        Conductance [W/(m^2 K)] while released; defaults to ``clamped``.
    """

    parts: tuple[str, str] | None = None
    roles: tuple[str, str] | None = None
    clamped: float | None = declared("heat_transfer_coefficient", None, positive=True)
    released: float | None = declared("heat_transfer_coefficient", None, positive=True)

    def __post_init__(self) -> None:
        if (self.parts is None) == (self.roles is None):
            raise GeometryError("contact: give exactly one of 'parts' or 'roles'")
        pair = self.parts if self.parts is not None else self.roles
        if len(pair) != 2:
            raise GeometryError(f"contact {pair!r}: needs exactly two names")
        if self.roles is not None:
            for role in self.roles:
                if role not in ROLES:
                    raise GeometryError(f"contact {self.roles!r}: unknown role {role!r}")
        convert_declared(self, f"contact {pair!r}", GeometryError)
        if self.released is None:
            object.__setattr__(self, "released", self.clamped)

    @property
    def label(self) -> str:
        """Readable name of the contact, e.g. ``"rotor 1 / stator 1"``."""
        pair = self.parts if self.parts is not None else self.roles
        return " / ".join(pair)


@dataclass(frozen=True)
class Probe:
    """A named point at which the temperature history is recorded.

    Parameters
    ----------
    name : str
        Unique probe name (e.g. ``"sensor"``, ``"fuse plug 1"``).
    r, z : float or str or pint.Quantity
        Position [m] (or with a unit, ``"113 mm"``); must lie inside a part.
    part : str, optional
        Owning part; needed only on a boundary shared by two parts.
    time_constant : float or str or pint.Quantity
        First-order lag of the instrument [s]; 0 records the local temperature.
    """

    name: str
    r: float = declared("length", minimum=0.0)
    z: float = declared("length")
    part: str | None = None
    time_constant: float = declared("time", 0.0, minimum=0.0)

    def __post_init__(self) -> None:
        if not self.name:
            raise GeometryError("probe name must be a non-empty string")
        convert_declared(self, f"probe {self.name!r}", GeometryError)


@dataclass(frozen=True)
class FrictionSettings:
    """How the brake power is spread over the rubbing interfaces.

    Parameters
    ----------
    distribution : str
        ``"uniform_pressure"`` (flux proportional to radius) or ``"uniform_wear"``
        (uniform flux) over the rubbing annulus.
    shares : mapping of str to float, optional
        Share of the total power per interface label ``"rotor 1 / stator 1"``; the
        shares are normalised. Default: equal shares.
    r_min, r_max : float, optional
        Radial limits of the rubbing annulus [m]; default: the radial overlap of the
        two parts.
    """

    distribution: str = "uniform_pressure"
    shares: Mapping[str, float] | None = None
    r_min: float | None = None
    r_max: float | None = None

    def __post_init__(self) -> None:
        if self.distribution not in ("uniform_pressure", "uniform_wear"):
            raise GeometryError(
                f"friction distribution must be 'uniform_pressure' or 'uniform_wear', got {self.distribution!r}"
            )
        if self.shares is not None:
            for label, share in self.shares.items():
                if not np.isfinite(share) or share < 0:
                    raise GeometryError(f"friction share of {label!r} must be >= 0, got {share}")
        if self.r_min is not None and self.r_max is not None and self.r_max <= self.r_min:
            raise GeometryError("friction r_max must be greater than r_min")


@dataclass(frozen=True)
class GapPair:
    """A declared radiation exchange between one side of a part and one side of another.

    Faces are matched row by row (inner/outer sides) or column by column (bottom/top
    sides) on the grid, whether or not the void between them is unobstructed.

    Parameters
    ----------
    part_a, part_b : str
        Names of the two parts.
    side_a, side_b : str
        Their facing sides: ``"inner"``/``"outer"`` (radial gap) or ``"bottom"``/``"top"``
        (axial gap).

    Raises
    ------
    GeometryError
        If a side is not one of the four, or one side is radial and the other axial.
    """

    part_a: str
    side_a: str
    part_b: str
    side_b: str

    def __post_init__(self) -> None:
        for side in (self.side_a, self.side_b):
            if side not in SIDES:
                raise GeometryError(f"gap pair: side {side!r} is not one of {SIDES}")
        radial = {"inner", "outer"}
        if (self.side_a in radial) != (self.side_b in radial):
            raise GeometryError("gap pair: both sides must be radial (inner/outer) or both axial")


@dataclass(frozen=True)
class ThermalLink:
    """A conduction path that is not a part: e.g. drive keys from the rotors to the rim.

    The total conductance is shared over the facing faces of the two sides (matched
    row by row for inner/outer sides, column by column for bottom/top sides) in
    proportion to the area of the faces of ``part_a``; each share is in series with the
    half-cells at both ends.

    Parameters
    ----------
    part_a, side_a, part_b, side_b : str
        The two parts and their sides (see :data:`SIDES`).
    conductance : float or str or pint.Quantity
        Total conductance of the path [W/K].
    name : str
        Label, e.g. ``"drive keys"``.
    """

    part_a: str
    side_a: str
    part_b: str
    side_b: str
    conductance: float = declared("thermal_conductance", positive=True)
    name: str = "link"

    def __post_init__(self) -> None:
        GapPair(self.part_a, self.side_a, self.part_b, self.side_b)
        convert_declared(self, f"thermal link {self.name!r}", GeometryError)


@dataclass(frozen=True)
class RubbingPair:
    """Two parts whose touching axial faces rub while braking (friction power enters there).

    Parameters
    ----------
    part_a, part_b : str
        The two part names (order does not matter).
    """

    part_a: str
    part_b: str

    def __post_init__(self) -> None:
        for name in (self.part_a, self.part_b):
            if not name or not isinstance(name, str):
                raise GeometryError(f"rubbing pair: part names must be non-empty strings, got {name!r}")
        if self.part_a == self.part_b:
            raise GeometryError(f"rubbing pair: a part cannot rub on itself ({self.part_a!r})")

    @property
    def label(self) -> str:
        """Readable name, e.g. ``"rotor 1 / stator 1"``."""
        return f"{self.part_a} / {self.part_b}"


@dataclass(frozen=True)
class CellGroup:
    """Cells of some parts whose temperatures are recorded as global series.

    Each statistic gives one series named :func:`series_name` (``"<name>_<statistic>"``):
    ``"mean"`` the mass-weighted mean temperature, ``"max"`` the hottest cell [K].

    Parameters
    ----------
    name : str
        Group name, e.g. ``"heat_sink"``.
    parts : tuple of str
        Names of the parts in the group.
    statistics : tuple of str
        Some of :data:`CELL_STATISTICS`.
    """

    name: str
    parts: tuple[str, ...]
    statistics: tuple[str, ...] = CELL_STATISTICS

    def __post_init__(self) -> None:
        if not self.name or not isinstance(self.name, str):
            raise GeometryError(f"cell group name must be a non-empty string, got {self.name!r}")
        object.__setattr__(self, "parts", tuple(self.parts))
        object.__setattr__(self, "statistics", tuple(self.statistics))
        if not self.parts:
            raise GeometryError(f"cell group {self.name!r}: needs at least one part")
        if not self.statistics:
            raise GeometryError(f"cell group {self.name!r}: needs at least one statistic")
        for statistic in self.statistics:
            if statistic not in CELL_STATISTICS:
                raise GeometryError(
                    f"cell group {self.name!r}: statistic {statistic!r} is not one of {CELL_STATISTICS}"
                )
        if len(set(self.statistics)) != len(self.statistics):
            raise GeometryError(f"cell group {self.name!r}: a statistic is listed twice")

    @property
    def series_names(self) -> tuple[str, ...]:
        """Names of the recorded series, one per statistic."""
        return tuple(series_name(self.name, statistic) for statistic in self.statistics)


@dataclass(frozen=True)
class SurfaceGroup:
    """An exposed-surface group as the cooling laws see it.

    Parameters
    ----------
    name : str
        Group name, as given by :attr:`Assembly.surface_groups` (e.g. ``"rim bore"``).
    length : float
        Characteristic length [m] for convection correlations (diameter of a
        cylinder, height of a vertical face).
    orientation : str
        One of :data:`SURFACE_ORIENTATIONS`.
    """

    name: str
    length: float
    orientation: str = "horizontal_cylinder"

    def __post_init__(self) -> None:
        if not self.name or not isinstance(self.name, str):
            raise GeometryError(f"surface group name must be a non-empty string, got {self.name!r}")
        length = quantity(
            self.length,
            "length",
            f"surface group {self.name!r}: length",
            minimum=0.0,
            exclusive_minimum=True,
            error=GeometryError,
        )
        object.__setattr__(self, "length", length)
        if self.orientation not in SURFACE_ORIENTATIONS:
            raise GeometryError(
                f"surface group {self.name!r}: orientation {self.orientation!r} is not one of {SURFACE_ORIENTATIONS}"
            )
