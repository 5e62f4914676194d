"""The sections of a case file, each read and validated into its heatstack object.

One reader per section: ``[assembly]`` (the wheel-and-brake builder's design and fuse plugs, or
parts, probes and contacts given one by one), ``[duty]`` (phases, environments, braking events),
``[solver]`` (options and the run budget), ``[output]`` (:class:`OutputSettings`) and ``[tyre]``.
Each takes a :class:`~heatstack.case_table.CaseTable`, so every error names its key path;
:mod:`heatstack.case` puts the sections together into a Case.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, fields, replace
from pathlib import Path
from typing import Any

import numpy as np

from .assembly import Assembly, cell_groups_by_role, rubbing_pairs_by_role
from .builders import SURFACE_ORIENTATION, BuiltWheelBrake, build_wheel_brake
from .case_events import braking_event, stated_air_pressure
from .case_guards import RunBudget, plain_file_name
from .case_table import ABOVE_ZERO, CaseTable
from .errors import InputError
from .geometry import HEAT_SINK_MEAN, ROLES, Contact, FrictionSettings, Part, Probe, SurfaceGroup
from .numerics.options import SCHEMES, SolverOptions
from .operations.duty import DutyCycle, DutyPhase, Environment
from .report_settings import TyreSettings
from .unit_declarations import declared_dimensions
from .wheel_design import FusePlugSpec, WheelBrakeDesign

__all__ = ["OutputSettings", "read_assembly", "read_duty", "read_solver", "read_budget", "read_output", "read_tyre"]


@dataclass(frozen=True)
class OutputSettings:
    """What a run writes and reports: results file, plots, report unit, limits [K] per
    probe or series, the cooling-time question (series below a temperature [K]) and the
    braking event whose end is "end of braking" (``reference_event``; by default the
    event with the most energy per brake, so gear retraction or taxi snubs after the
    stop do not move it).

    Attributes
    ----------
    file : str
        Results file name.
    plots : bool
        Whether the run writes its plots.
    temperature_unit : str
        Report unit: ``"degC"``, ``"degF"`` or ``"K"``.
    limits : mapping of str to float
        Limit of each probe or series [K].
    cooling_below : float or None
        Temperature of the cooling-time question [K].
    cooling_series : str
        Series the cooling-time question follows.
    reference_event : str or None
        Braking event whose end is "end of braking".
    """

    file: str = "results.h5"
    plots: bool = True
    temperature_unit: str = "degC"
    limits: Mapping[str, float] = field(default_factory=dict)
    cooling_below: float | None = None
    cooling_series: str = HEAT_SINK_MEAN
    reference_event: str | None = None


#: The largest count a design key takes (rotors ...): far above any wheel, far below a memory exhaustion.
_MAX_DESIGN_COUNT = 1000


def _design(table: CaseTable) -> WheelBrakeDesign:
    defaults = WheelBrakeDesign()
    changes: dict[str, Any] = {}
    names = tuple(f.name for f in fields(WheelBrakeDesign) if f.name != "fuse_plugs")
    for key in table.data:
        if key not in names:
            continue
        current = getattr(defaults, key)
        if isinstance(current, bool):
            changes[key] = table.boolean(key)
        elif isinstance(current, int):
            changes[key] = table.integer(key, minimum=1, maximum=_MAX_DESIGN_COUNT)
        elif isinstance(current, str):
            changes[key] = table.text(key)
        else:
            changes[key] = table.quantity(key)
    table.finish(names)
    try:
        return defaults.with_changes(**changes)
    except InputError as exc:
        raise InputError(f"{table.path}: {exc}") from exc


def _fuse_plugs(tables: list[CaseTable]) -> tuple[FusePlugSpec, ...]:
    plugs = []
    for t in tables:
        name = t.text("name")
        values = t.declared(FusePlugSpec)
        if "z_fraction" not in values:
            t.raw("z_fraction")  # required: raises naming the key path
        try:
            plugs.append(FusePlugSpec(name=name, **values))
        except InputError as exc:
            raise InputError(f"{t.path}: {exc}") from exc
        t.finish()
    return tuple(plugs)


def _part(t: CaseTable) -> Part:
    role = t.text("role", "other")
    if role not in ROLES:
        raise InputError(f"{t.where('role')}: {role!r} is not one of {', '.join(ROLES)}")
    part = Part(
        t.text("name"),
        t.text("material"),
        t.quantity("r_inner"),
        t.quantity("r_outer"),
        t.quantity("z_min"),
        t.quantity("z_max"),
        role,
    )
    t.finish()
    return part


def _probe(t: CaseTable) -> Probe:
    probe = Probe(
        t.text("name"),
        t.quantity("r"),
        t.quantity("z"),
        t.text("part", None),
        t.quantity("time_constant", 0.0),
    )
    t.finish()
    return probe


def _contact(t: CaseTable) -> Contact:
    pair_key = "parts" if t.has("parts") else "roles"
    pair = t.raw(pair_key)
    if not (isinstance(pair, list) and len(pair) == 2 and all(isinstance(x, str) for x in pair)):
        raise InputError(f'{t.where(pair_key)}: expected two names, e.g. ["rotor", "stator"]')
    clamped = t.quantity("clamped", None)
    released = t.quantity("released", None)
    t.finish(("parts", "roles", "clamped", "released"))
    return Contact(**{pair_key: tuple(pair)}, clamped=clamped, released=released)


def read_assembly(table: CaseTable) -> tuple[Assembly, BuiltWheelBrake | None, tuple]:
    """Read ``[assembly]``: the built wheel and brake (``builder = "wheel-brake"``) or the parts as given.

    Parameters
    ----------
    table : CaseTable
        The ``[assembly]`` table.

    Returns
    -------
    tuple
        The assembly, the built wheel and brake (None with ``builder = "none"``) and its fuse plugs.

    Raises
    ------
    InputError
        Naming the key path of a missing, unknown or wrong key.
    """
    builder = table.text("builder", "wheel-brake")
    if builder not in ("wheel-brake", "none"):
        raise InputError(f"{table.where('builder')}: expected 'wheel-brake' or 'none', got {builder!r}")
    parts = [_part(t) for t in table.tables("parts")]
    probes = [_probe(t) for t in table.tables("probes")]
    contacts = [_contact(t) for t in table.tables("contacts")]
    if builder == "none":
        for key in ("design", "fuse_plugs"):
            if table.has(key):
                raise InputError(f"{table.where(key)}: only with builder = 'wheel-brake'")
        groups_table = table.table("surface_groups", {})
        groups = {k: groups_table.text(k) for k in groups_table.data}
        scales_table = table.table("length_scales", {})
        # a group named like one of the built wheel's lies as it does there
        surfaces = [
            SurfaceGroup(k, scales_table.quantity(k), SURFACE_ORIENTATION.get(k, "horizontal_cylinder"))
            for k in scales_table.data
        ]
        default_h = table.quantity("default_contact_conductance", None)
        distribution = table.text("friction_distribution", "uniform_pressure")
        table.finish()
        assembly = Assembly(
            parts,
            contacts,
            probes,
            default_h,
            groups,
            FrictionSettings(distribution),
            rubbing_pairs=rubbing_pairs_by_role(parts),
            cell_groups=cell_groups_by_role(parts),
            surfaces=surfaces,
        )
        return assembly, None, ()
    design_table = table.table("design", {})
    design = _design(design_table)
    plugs = _fuse_plugs(table.tables("fuse_plugs"))
    if plugs:
        design = design.with_changes(fuse_plugs=plugs)
    table.finish()
    built = build_wheel_brake(design, extra_parts=parts, extra_probes=probes)
    assembly = built.assembly
    if contacts:
        assembly = replace(assembly, contacts=[*contacts, *assembly.contacts])
    return assembly, built, built.fuse_plugs


def _environment(t: CaseTable) -> Environment:
    well = None
    if t.has("wheel_well_air_temperature") or t.has("wheel_well_wall_temperature"):
        well = (t.quantity("wheel_well_air_temperature"), t.quantity("wheel_well_wall_temperature"))
    values = t.declared(Environment, tuple(k for k in declared_dimensions(Environment) if k != "wheel_well"))
    t.finish()
    try:
        return Environment(**values, wheel_well=well)
    except InputError as exc:
        message, own = str(exc), "environment: "
        raise InputError(
            f"{t.path}.{message[len(own) :]}" if message.startswith(own) else f"{t.path}: {message}"
        ) from exc


def read_duty(table: CaseTable, base: Path) -> DutyCycle:
    """Read ``[duty]``: its phases, each with its environment and braking events.

    Parameters
    ----------
    table : CaseTable
        The ``[duty]`` table.
    base : Path
        Folder against which relative paths (speed traces) are resolved.

    Returns
    -------
    DutyCycle
        The duty cycle.

    Raises
    ------
    InputError
        Naming the key path of a missing, unknown or wrong key.
    """
    phases = []
    for t in table.tables("phases"):
        name = t.text("name")
        env = _environment(t.table("environment", {}))
        events = [braking_event(e, base) for e in t.tables("events")]
        clamped = t.boolean("clamped", None)
        duration = t.quantity("duration")
        t.finish()
        try:
            phases.append(DutyPhase(name, duration, env, events, clamped))
        except InputError as exc:
            raise InputError(f"{t.path}: {exc}") from exc
    if not phases:
        raise InputError(f"{table.where('phases')}: at least one [[duty.phases]] is needed")
    values = table.declared(DutyCycle)
    table.finish()
    return DutyCycle(phases, **values)


def read_solver(t: CaseTable) -> SolverOptions:
    """Read ``[solver]``: scheme, accuracy, steps and snapshot times (the budget keys are left to :func:`read_budget`).

    Parameters
    ----------
    t : CaseTable
        The ``[solver]`` table.

    Returns
    -------
    SolverOptions
        The solver options, times in [s] and temperatures in [K].

    Raises
    ------
    InputError
        Naming the key path of a missing, unknown or wrong key.
    """
    snapshots = t.raw("snapshot_times", [])
    if not isinstance(snapshots, list):
        raise InputError(f'{t.where("snapshot_times")}: expected a list such as ["10 min", "1 h"]')
    times = tuple(
        t.convert(v, (*t.tokens, "snapshot_times", k), f"{t.where('snapshot_times')}[{k}]")
        for k, v in enumerate(snapshots)
    )
    scheme = t.text("scheme", "bdf2")
    if scheme not in SCHEMES:
        raise InputError(f"{t.where('scheme')}: expected one of {', '.join(map(repr, SCHEMES))}, got {scheme!r}")
    if scheme == "bdf2" and t.has("target_change"):
        raise InputError(
            f'{t.where("target_change")}: applies to scheme = "euler" only; with scheme "bdf2" (the default) '
            'the step follows the error estimate: give accuracy (e.g. accuracy = "0.2 K") instead'
        )
    values = t.declared(SolverOptions, ("accuracy", "target_change", "initial_step", "max_step", "tolerance"))
    t.finish(tuple(sorted(t.used | {"max_steps", "max_wall_time"})))
    try:
        return SolverOptions(scheme=scheme, **values, snapshot_times=times)
    except InputError as exc:
        raise InputError(f"{t.path}: {exc}") from exc


def read_budget(t: CaseTable) -> RunBudget:
    """Read ``[solver] max_steps`` and ``max_wall_time``: what a run may spend.

    Parameters
    ----------
    t : CaseTable
        The ``[solver]`` table.

    Returns
    -------
    RunBudget
        The most time steps and wall time [s] a run may take.

    Raises
    ------
    InputError
        If a value is not a positive count or time.
    """
    default = RunBudget()
    steps = t.integer("max_steps", default.max_steps, minimum=1)
    wall = t.quantity("max_wall_time", default.max_wall_time, minimum=0.0, exclusive_minimum=True)
    return RunBudget(steps, wall)


def read_output(t: CaseTable) -> OutputSettings:
    """Read ``[output]``: results file, plots, report unit, limits and the cooling question.

    Parameters
    ----------
    t : CaseTable
        The ``[output]`` table.

    Returns
    -------
    OutputSettings
        The output settings, temperatures in [K].

    Raises
    ------
    InputError
        Naming the key path of a missing, unknown or wrong key.
    """
    unit = t.text("temperature_unit", "degC")
    if unit not in ("degC", "degF", "K"):
        raise InputError(f"{t.where('temperature_unit')}: expected 'degC', 'degF' or 'K', got {unit!r}")
    limits_table = t.table("limits", {})
    limits = {k: limits_table.quantity(k, **ABOVE_ZERO) for k in limits_table.data}
    out = OutputSettings(
        plain_file_name(t.text("file", "results.h5"), t.where("file")),
        t.boolean("plots", True),
        unit,
        limits,
        t.quantity("cooling_below", None, **ABOVE_ZERO),
        t.text("cooling_series", HEAT_SINK_MEAN),
        t.text("reference_event", None),
    )
    t.finish()
    return out


def read_tyre(t: CaseTable, built: BuiltWheelBrake | None, duty: DutyCycle, duty_data: Any) -> TyreSettings | None:
    """Read ``[tyre]``: the tyre gas inputs of the tyre pressure answer.

    Parameters
    ----------
    t : CaseTable
        The ``[tyre]`` table (empty: no tyre answer).
    built : BuiltWheelBrake or None
        The built wheel, whose rim gives the cavity area [m^2] when none is given.
    duty : DutyCycle
        The duty, whose first phase's ambient pressure [Pa] is the default reference.
    duty_data : object
        The raw ``[duty]`` mapping, for a stated airfield pressure.

    Returns
    -------
    TyreSettings or None
        The tyre settings, or None without a ``[tyre]`` table.

    Raises
    ------
    InputError
        Naming the key path of a missing, unknown or wrong key.
    """
    if not t.data:
        return None
    area = t.quantity("cavity_area", None)
    if area is None:
        if built is None:
            raise InputError(f"{t.where('cavity_area')}: missing (required without the wheel-brake builder)")
        d = built.design
        rim = next(p for p in built.assembly.parts if p.name == "rim")
        length = rim.z_max - rim.z_min - 2.0 * (d.flange_thickness + d.bead_width)
        area = 2.0 * np.pi * d.rim_outer_radius * length
    values = t.declared(TyreSettings)
    for key in ("cold_pressure", "gas_volume"):
        t.raw(key)  # required: raises naming the key path
    values["cavity_area"] = area
    # gauge pressures are read against the air where the duty starts, unless given: the first
    # phase's ambient pressure, or the airfield's (ISO 2533 at the first stop's pressure altitude)
    stated = stated_air_pressure(duty_data)
    values.setdefault("ambient_pressure", stated[0] if stated else duty.phases[0].environment.ambient_pressure)
    t.finish()
    try:
        return TyreSettings(**values)
    except InputError as exc:
        message = str(exc)
        own = "tyre: "
        raise InputError(f"tyre.{message[len(own) :]}" if message.startswith(own) else f"{t.path}: {message}") from exc
