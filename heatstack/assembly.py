"""The assembly of an axisymmetric wheel and brake: its parts and everything declared about them.

An :class:`Assembly` is a plain, immutable description. Every length is in [m], every
conductance in [W/(m^2 K)], every temperature in [K]. Nothing here is meshed; the grid
module turns an assembly into cells.

The trade knowledge the numerics needs is handed down as data: which parts rub
(:class:`~heatstack.geometry.RubbingPair`), which cells are averaged or searched for their hottest value
(:class:`~heatstack.geometry.CellGroup`) and how each exposed-surface group lies
(:class:`~heatstack.geometry.SurfaceGroup`). A part's ``role`` is a trade label from which the builder and the
case reader derive that data (:func:`rubbing_pairs_by_role`, :func:`cell_groups_by_role`); the numerics never
reads it.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from itertools import combinations

from .errors import GeometryError
from .geometry import (
    CELL_STATISTICS,
    HEAT_SINK,
    HEAT_SINK_ROLES,
    NON_ROTATING_STACK_ROLES,
    ROLES,
    SIDES,
    WHEEL,
    CellGroup,
    Contact,
    FrictionSettings,
    GapPair,
    Part,
    Probe,
    RubbingPair,
    SurfaceGroup,
    ThermalLink,
)
from .units import quantity

__all__ = ["Assembly", "rubbing_pairs_by_role", "cell_groups_by_role"]


def _touch_axially(a: Part, b: Part) -> bool:
    """Whether an axial face of ``a`` lies on one of ``b`` with some radial overlap."""
    tol = 1e-12 * max(a.r_outer, b.r_outer, abs(a.z_max), abs(b.z_max), 1.0)
    overlap = min(a.r_outer, b.r_outer) - max(a.r_inner, b.r_inner)
    return overlap > tol and (abs(a.z_max - b.z_min) <= tol or abs(b.z_max - a.z_min) <= tol)


def rubbing_pairs_by_role(parts: Sequence[Part]) -> tuple[RubbingPair, ...]:
    """The rubbing pairs of a brake stack found from the part roles.

    A rotor rubs on every stator, pressure plate or end plate it touches across an
    axial face (common practice, no source).

    Parameters
    ----------
    parts : sequence of Part

    Returns
    -------
    tuple of RubbingPair
    """
    rotors = [p for p in parts if p.role == "rotor"]
    stack = [p for p in parts if p.role in NON_ROTATING_STACK_ROLES]
    return tuple(RubbingPair(r.name, s.name) for r in rotors for s in stack if _touch_axially(r, s))


def cell_groups_by_role(parts: Sequence[Part]) -> tuple[CellGroup, ...]:
    """The cell groups of a wheel and brake found from the part roles.

    ``heat_sink`` (mean and hottest cell) holds the rotors, stators, pressure and end
    plates; ``wheel`` (hottest cell) the wheel parts. A group with no parts is left out.

    Parameters
    ----------
    parts : sequence of Part

    Returns
    -------
    tuple of CellGroup
    """
    sink = tuple(p.name for p in parts if p.role in HEAT_SINK_ROLES)
    wheel = tuple(p.name for p in parts if p.role == "wheel")
    groups = []
    if sink:
        groups.append(CellGroup(HEAT_SINK, sink, CELL_STATISTICS))
    if wheel:
        groups.append(CellGroup(WHEEL, wheel, ("max",)))
    return tuple(groups)


@dataclass(frozen=True)
class Assembly:
    """The whole axisymmetric model: parts, contacts, probes and surface groups.

    Parameters
    ----------
    parts : sequence of Part
        Non-overlapping parts.
    contacts : sequence of Contact
        Contact conductances; a part pair overrides a role pair. Touching parts with
        no matching contact use ``default_contact_conductance``.
    probes : sequence of Probe
        Points to record.
    default_contact_conductance : float or None
        [W/(m^2 K)]; ``None`` means perfect contact.
    surface_groups : mapping of str to str
        Exposed-surface group of a part side, keyed ``"part:side"``, ``"part"`` (all
        sides), ``"@role:side"`` or ``"@role"``, looked up in that order; the value is the
        group name. A side matching no key forms the group ``"part:side"``.
    friction : FrictionSettings
        Spreading of the brake power over the rubbing interfaces.
    gap_radiation : bool
        Find radiation exchanges across voids automatically.
    gap_pairs : sequence of GapPair
        Declared radiation exchanges.
    links : sequence of ThermalLink
        Conduction paths that are not parts (drive keys, bolts).
    rubbing_pairs : sequence of RubbingPair, optional
        Parts that rub; the brake power enters at their touching axial faces. Default:
        :func:`rubbing_pairs_by_role`.
    cell_groups : sequence of CellGroup, optional
        Groups of parts recorded as global series. Default: :func:`cell_groups_by_role`.
    surfaces : sequence of SurfaceGroup
        Characteristic length and orientation of exposed-surface groups, for cooling
        laws (see :meth:`heatstack.operations.duty.DutyCycle.schedule`).
    """

    parts: Sequence[Part]
    contacts: Sequence[Contact] = ()
    probes: Sequence[Probe] = ()
    default_contact_conductance: float | None = None
    surface_groups: Mapping[str, str] = field(default_factory=dict)
    friction: FrictionSettings = field(default_factory=FrictionSettings)
    gap_radiation: bool = True
    gap_pairs: Sequence[GapPair] = ()
    links: Sequence[ThermalLink] = ()
    rubbing_pairs: Sequence[RubbingPair] | None = None
    cell_groups: Sequence[CellGroup] | None = None
    surfaces: Sequence[SurfaceGroup] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "parts", tuple(self.parts))
        object.__setattr__(self, "contacts", tuple(self.contacts))
        object.__setattr__(self, "probes", tuple(self.probes))
        object.__setattr__(self, "gap_pairs", tuple(self.gap_pairs))
        object.__setattr__(self, "links", tuple(self.links))
        object.__setattr__(self, "surface_groups", dict(self.surface_groups))
        if not self.parts:
            raise GeometryError("assembly: at least one part is needed")
        if self.default_contact_conductance is not None:
            conductance = quantity(
                self.default_contact_conductance,
                "heat_transfer_coefficient",
                "default_contact_conductance",
                minimum=0.0,
                exclusive_minimum=True,
                error=GeometryError,
            )
            object.__setattr__(self, "default_contact_conductance", conductance)
        self._check_unique("part", [p.name for p in self.parts])
        self._check_unique("probe", [p.name for p in self.probes])
        self._check_overlaps()
        names = {p.name for p in self.parts}
        for contact in self.contacts:
            for name in contact.parts or ():
                if name not in names:
                    raise GeometryError(f"contact {contact.label!r}: no part named {name!r}")
        for pair in (*self.gap_pairs, *self.links):
            for name in (pair.part_a, pair.part_b):
                if name not in names:
                    kind = "gap pair" if isinstance(pair, GapPair) else f"thermal link {pair.name!r}"
                    raise GeometryError(f"{kind}: no part named {name!r}")
        for probe in self.probes:
            self.owner_of(probe)
        self._check_surface_group_keys(names)
        self._settle_trade_data(names)

    def _settle_trade_data(self, names: set[str]) -> None:
        """Fill in the default rubbing pairs and cell groups and check all three kinds of record."""
        pairs = rubbing_pairs_by_role(self.parts) if self.rubbing_pairs is None else tuple(self.rubbing_pairs)
        groups = cell_groups_by_role(self.parts) if self.cell_groups is None else tuple(self.cell_groups)
        object.__setattr__(self, "rubbing_pairs", pairs)
        object.__setattr__(self, "cell_groups", groups)
        object.__setattr__(self, "surfaces", tuple(self.surfaces))
        seen_pairs: set[frozenset[str]] = set()
        for pair in pairs:
            if not isinstance(pair, RubbingPair):
                raise GeometryError(f"rubbing pairs: expected RubbingPair records, got {type(pair).__name__}")
            for name in (pair.part_a, pair.part_b):
                if name not in names:
                    raise GeometryError(f"rubbing pair {pair.label!r}: no part named {name!r}")
            key = frozenset((pair.part_a, pair.part_b))
            if key in seen_pairs:
                raise GeometryError(f"rubbing pair {pair.label!r} is given twice")
            seen_pairs.add(key)
        for group in groups:
            if not isinstance(group, CellGroup):
                raise GeometryError(f"cell groups: expected CellGroup records, got {type(group).__name__}")
            for name in group.parts:
                if name not in names:
                    raise GeometryError(f"cell group {group.name!r}: no part named {name!r}")
        series = [s for g in groups for s in g.series_names]
        for name in series:
            if series.count(name) > 1:
                raise GeometryError(f"cell groups: two groups record a series named {name!r}")
        for surface in self.surfaces:
            if not isinstance(surface, SurfaceGroup):
                raise GeometryError(f"surfaces: expected SurfaceGroup records, got {type(surface).__name__}")
        self._check_unique("surface record", [s.name for s in self.surfaces])

    @staticmethod
    def _check_unique(kind: str, names: list[str]) -> None:
        seen: set[str] = set()
        for name in names:
            if name in seen:
                raise GeometryError(f"two {kind}s are named {name!r}")
            seen.add(name)

    def _check_overlaps(self) -> None:
        for a, b in combinations(self.parts, 2):
            dr = min(a.r_outer, b.r_outer) - max(a.r_inner, b.r_inner)
            dz = min(a.z_max, b.z_max) - max(a.z_min, b.z_min)
            tol = 1e-12 * max(a.r_outer, b.r_outer, abs(a.z_max), abs(b.z_max), 1.0)
            if dr > tol and dz > tol:
                raise GeometryError(f"parts {a.name!r} and {b.name!r} overlap")

    def _check_surface_group_keys(self, names: set[str]) -> None:
        for key in self.surface_groups:
            target, _, side = key.partition(":")
            if side and side not in SIDES:
                raise GeometryError(f"surface group key {key!r}: side {side!r} is not one of {SIDES}")
            if target.startswith("@"):
                if target[1:] not in ROLES:
                    raise GeometryError(f"surface group key {key!r}: unknown role {target[1:]!r}")
            elif target not in names:
                raise GeometryError(f"surface group key {key!r}: no part named {target!r}")

    @property
    def part_roles(self) -> tuple[str, ...]:
        """The trade label of each part, in part order (kept in results files)."""
        return tuple(p.role for p in self.parts)

    @property
    def length_scales(self) -> dict[str, float]:
        """Characteristic length [m] of each surface group in :attr:`surfaces`."""
        return {s.name: s.length for s in self.surfaces}

    def part(self, name: str) -> Part:
        """The part called ``name``.

        Parameters
        ----------
        name : str
            Part name.

        Returns
        -------
        Part
            The part.

        Raises
        ------
        GeometryError
            If no part has that name.
        """
        for part in self.parts:
            if part.name == name:
                return part
        raise GeometryError(f"no part named {name!r}")

    def owner_of(self, probe: Probe) -> Part:
        """The part that contains ``probe`` (its declared part if given).

        Parameters
        ----------
        probe : Probe
            The probe, at ``r``, ``z`` [m].

        Returns
        -------
        Part
            Its declared part, else the one part containing it.

        Raises
        ------
        GeometryError
            If the probe lies outside its declared part, outside every part, or (with no
            part declared) on the boundary of two or more parts, naming them.
        """
        if probe.part is not None:
            part = self.part(probe.part)
            if not part.contains(probe.r, probe.z):
                raise GeometryError(
                    f"probe {probe.name!r} at r={probe.r} m, z={probe.z} m is not inside its part {probe.part!r}"
                )
            return part
        owners = [p for p in self.parts if p.contains(probe.r, probe.z)]
        if not owners:
            raise GeometryError(f"probe {probe.name!r} at r={probe.r} m, z={probe.z} m lies outside every part")
        if len(owners) > 1:  # on a boundary: the parts may be at very different temperatures
            names = " and ".join(repr(p.name) for p in owners)
            raise GeometryError(
                f"probe {probe.name!r} at r={probe.r} m, z={probe.z} m lies on the boundary of parts {names}; "
                "say which it reads with part = one of them"
            )
        return owners[0]

    def surface_group(self, part: Part, side: str) -> str:
        """Exposed-surface group name of ``side`` of ``part``.

        Parameters
        ----------
        part : Part
            A part of this assembly.
        side : str
            ``"inner"``, ``"outer"``, ``"bottom"`` or ``"top"``.

        Returns
        -------
        str
            The group from ``surface_groups`` (by part and side, part, role and side, or
            role, in that order), else ``"<part name>:<side>"``.
        """
        groups = self.surface_groups
        for key in (f"{part.name}:{side}", part.name, f"@{part.role}:{side}", f"@{part.role}"):
            if key in groups:
                return groups[key]
        return f"{part.name}:{side}"

    def contact_conductance(self, a: Part, b: Part) -> tuple[float | None, float | None]:
        """Clamped and released conductance [W/(m^2 K)] between touching parts ``a`` and ``b``.

        Parameters
        ----------
        a, b : Part
            Two touching parts of this assembly.

        Returns
        -------
        (float or None, float or None)
            Clamped and released contact conductance [W/(m^2 K)] from the first contact
            naming both parts, else the first naming both roles, else
            ``default_contact_conductance``; None means perfect contact.
        """
        for contact in self.contacts:
            if contact.parts is not None and set(contact.parts) == {a.name, b.name}:
                return contact.clamped, contact.released
        for contact in self.contacts:
            if contact.roles is not None and sorted(contact.roles) == sorted((a.role, b.role)):
                return contact.clamped, contact.released
        return self.default_contact_conductance, self.default_contact_conductance
