"""Case files: a TOML description of a wheel and brake, its duty and the outputs wanted.

The layout is our own; every quantity may carry its unit (``"20 mm"``, ``"15 degC"``,
``"70 t"``, ``"150 kt"``); bare numbers are SI. :func:`load_case` validates the file
into a :class:`Case`; every error names the key path (``duty.phases[2].events[0].mass``)
and, for an unknown key, the closest valid key. :func:`run_case` runs it.
"""

from __future__ import annotations

import difflib
import tomllib
import warnings
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field, fields, replace
from pathlib import Path
from typing import Any

import numpy as np

from .assembly import Assembly, cell_groups_by_role, rubbing_pairs_by_role
from .builders import SURFACE_ORIENTATION, BuiltWheelBrake, FusePlugSpec, WheelBrakeDesign, build_wheel_brake
from .case_events import braking_event, stated_air_pressure
from .case_guards import (
    DEFAULT_MAX_CELLS,
    RunBudget,
    check_cell_count,
    check_cooling_series,
    plain_file_name,
    watch_budget,
)
from .case_table import ABOVE_ZERO, CaseTable
from .errors import HeatstackError, InputError, ScheduleError
from .geometry import HEAT_SINK_MEAN, ROLES, Contact, FrictionSettings, Part, Probe, SurfaceGroup
from .material_files import material_from_mapping
from .materials import Material
from .model import Model
from .numerics.options import SCHEMES, SolverOptions
from .operations.duty import DutyCycle, DutyPhase, Environment
from .property_table import forget_warnings
from .questions.chaining import read_start, run_from_state, state_for_model
from .report import ReportSettings, TyreSettings, with_tyre_gas_carried
from .result import Result, State
from .unit_declarations import declared_dimensions

__all__ = [
    "Case",
    "OutputSettings",
    "load_case",
    "parse_case",
    "case_from_mapping",
    "run_case",
]


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


@dataclass(frozen=True, eq=False)
class Case:
    """A validated case, ready to run.

    Parameters
    ----------
    title : str
    assembly : Assembly
    built : BuiltWheelBrake or None
        Set when the assembly comes from the wheel-and-brake builder.
    materials : dict of str to Material
        Inline materials.
    cell_size : (float, float)
        Target cell size [m].
    min_cells : int
    duty : DutyCycle
    initial_temperature : float
        [K].
    solver : SolverOptions
    output : OutputSettings
    fuse_plugs : tuple of FusePlugSpec
    tyre : TyreSettings or None
        Tyre gas inputs for the tyre pressure answer.
    text : str
        The case file's text.
    origin : str
        File name or ``"<string>"``.
    initial_state : str or None
        Results file whose final state (or snapshot, see ``initial_state_time``) the run
        starts from, instead of ``initial_temperature`` (``[case] initial_state``).
    initial_state_time : float or None
        A time of that run [s] (``[case] initial_state_time``); None for its final state.
    budget : RunBudget
        The most time steps and wall time a run may take (``[solver] max_steps`` and
        ``max_wall_time``).
    """

    title: str
    assembly: Assembly
    built: BuiltWheelBrake | None
    materials: dict[str, Material]
    cell_size: tuple[float, float]
    min_cells: int
    duty: DutyCycle
    initial_temperature: float
    solver: SolverOptions
    output: OutputSettings
    fuse_plugs: tuple[FusePlugSpec, ...]
    tyre: TyreSettings | None
    text: str
    origin: str
    initial_state: str | None = None
    initial_state_time: float | None = None
    budget: RunBudget = field(default_factory=lambda: RunBudget())

    def report_settings(self) -> ReportSettings:
        """What the report assesses for this case.

        Returns
        -------
        ReportSettings
            Unit, limits [K], fuse plugs, tyre, cold temperature [K], cooling question and title.
        """
        return ReportSettings(
            unit=self.output.temperature_unit,
            limits=dict(self.output.limits),
            fuse_plugs=self.fuse_plugs,
            tyre=self.tyre,
            cold_temperature=self.initial_temperature,
            cooling_below=self.output.cooling_below,
            cooling_series=self.output.cooling_series,
            title=self.title,
        )

    def build_model(self) -> Model:
        """Mesh the case's assembly.

        Returns
        -------
        Model
            The model built at the case's cell sizes [m] and minimum cell count.
        """
        return Model.build(self.assembly, self.cell_size, self.min_cells, self.materials)

    def resolved(self) -> dict[str, Any]:
        """The inputs as plain SI values, for the results file.

        Returns
        -------
        dict
            Title, cell sizes [m], minimum cells, initial temperature [K], parts, probes, phases
            (durations [s], energies per brake [J]) and limits [K].
        """
        return {
            "title": self.title,
            "cell_size_m": list(self.cell_size),
            "min_cells": self.min_cells,
            "initial_temperature_K": self.initial_temperature,
            "parts": [{f.name: getattr(p, f.name) for f in fields(p)} for p in self.assembly.parts],
            "probes": [{f.name: getattr(p, f.name) for f in fields(p)} for p in self.assembly.probes],
            "phases": [
                {
                    "name": p.name,
                    "duration_s": p.duration,
                    "clamped": p.is_clamped,
                    "events": [{"name": e.name, "energy_per_brake_J": e.energy_per_brake} for e in p.events],
                }
                for p in self.duty.phases
            ],
            "limits_K": dict(self.output.limits),
        }


# ------------------------------------------------------------------------ sections


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


def _assembly(table: CaseTable) -> tuple[Assembly, BuiltWheelBrake | None, tuple]:
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


def _duty(table: CaseTable, base: Path) -> DutyCycle:
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


def _solver(t: CaseTable) -> SolverOptions:
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


def _budget(t: CaseTable) -> RunBudget:
    """``[solver] max_steps`` and ``max_wall_time``: what a run may spend."""
    default = RunBudget()
    steps = t.integer("max_steps", default.max_steps, minimum=1)
    wall = t.quantity("max_wall_time", default.max_wall_time, minimum=0.0, exclusive_minimum=True)
    return RunBudget(steps, wall)


def _output(t: CaseTable) -> OutputSettings:
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


def _tyre(t: CaseTable, built: BuiltWheelBrake | None, duty: DutyCycle, duty_data: Any) -> TyreSettings | None:
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


def parse_case(text: str, origin: str = "<string>", base: str | Path = ".") -> Case:
    """Validate case text into a :class:`Case`.

    Parameters
    ----------
    text : str
        TOML text.
    origin : str
        Name used in error messages.
    base : str or Path
        Folder against which relative paths in the case (speed traces) are resolved.

    Returns
    -------
    Case
        The validated case.

    Raises
    ------
    InputError
        Naming the key path and what was expected.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{origin}: not valid TOML: {exc}") from None
    except RecursionError:
        raise InputError(f"{origin}: tables or arrays are nested too deeply to read") from None
    try:
        return case_from_mapping(data, text, origin, Path(base))
    except InputError as exc:
        raise type(exc)(f"{origin}: {exc}") from None
    except HeatstackError as exc:
        raise InputError(f"{origin}: {exc}") from None
    except RecursionError:
        raise InputError(f"{origin}: tables or arrays are nested too deeply to read") from None
    except (TypeError, OverflowError, KeyError, IndexError, AttributeError) as exc:
        # a value of a type no reader above expected (a list where a name belongs ...)
        detail = str(exc) if len(str(exc)) <= 80 else str(exc)[:77] + "..."
        raise InputError(f"{origin}: a value has the wrong type or size ({type(exc).__name__}: {detail})") from None


def case_from_mapping(data: dict, text: str, origin: str, base: Path) -> Case:
    """Validate an already parsed case mapping (e.g. a study's modified copy) into a Case.

    Errors are not prefixed with ``origin`` here (:func:`parse_case` does that).

    Parameters
    ----------
    data : dict
        The case mapping, as TOML reads it.
    text : str
        Kept as the case text.
    origin : str
        Name of the case's source, kept in the Case.
    base : Path
        Folder against which relative paths (speed traces, initial state) are resolved.

    Returns
    -------
    Case
        The validated case.

    Raises
    ------
    InputError
        Naming the key path and what was expected.
    """
    root = CaseTable(data, "", ())
    head = root.table("case", {})
    title = head.text("title", "untitled case")
    initial = head.quantity("initial_temperature", 288.15, **ABOVE_ZERO)
    initial_state = head.text("initial_state", None)
    initial_state_time = head.quantity("initial_state_time", None, minimum=0.0)
    if initial_state is not None:
        if "\0" in initial_state or not initial_state.strip():
            raise InputError("case.initial_state: not a file name (empty, or holds a null byte)")
        initial_state = str(base / initial_state)
    elif initial_state_time is not None:
        raise InputError("case.initial_state_time: needs case.initial_state (the earlier results file)")
    head.finish()
    materials_table = root.table("materials", {})
    materials = {
        name: material_from_mapping(
            {"name": name, **dict(CaseTable(body, f"materials.{name}").data)}, f"materials.{name}"
        )
        for name, body in materials_table.data.items()
    }
    assembly_table = root.table("assembly", {})
    cell = assembly_table.quantity("cell_size", 0.004)
    cell_r = assembly_table.quantity("cell_size_radial", cell)
    cell_z = assembly_table.quantity("cell_size_axial", cell)
    min_cells = assembly_table.integer("min_cells", 3, minimum=1, maximum=100_000)
    max_cells = assembly_table.integer("max_cells", DEFAULT_MAX_CELLS, minimum=1)
    if not (cell_r > 0 and cell_z > 0):
        raise InputError("assembly.cell_size: must be > 0")
    assembly, built, plugs = _assembly(assembly_table)
    check_cell_count(assembly, (cell_r, cell_z), min_cells, max_cells)
    duty = _duty(root.table("duty"), base)
    solver = _solver(root.table("solver", {}))
    budget = _budget(root.table("solver", {}))
    output = _output(root.table("output", {}))
    tyre = _tyre(root.table("tyre", {}), built, duty, root.data.get("duty"))
    root.finish(("case", "materials", "assembly", "duty", "solver", "output", "tyre"))
    try:
        duty.end_of_braking(output.reference_event)
    except ScheduleError as exc:
        raise InputError(f"output.{exc}") from None
    known = {p.name for p in assembly.probes} | {s for g in assembly.cell_groups for s in g.series_names}
    for name in output.limits:
        if name not in known:
            close = difflib.get_close_matches(name, sorted(known), n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise InputError(f"output.limits.{name}: no probe or series of that name{hint}")
    if output.cooling_below is not None:
        check_cooling_series(output.cooling_series, known | {f"surface:{s.name}" for s in assembly.surfaces})
    case = Case(
        title,
        assembly,
        built,
        materials,
        (cell_r, cell_z),
        min_cells,
        duty,
        initial,
        solver,
        output,
        plugs,
        tyre,
        text,
        origin,
        initial_state,
        initial_state_time,
        budget,
    )
    case.report_settings()  # everything the report will use is checked now, before any solve
    return case


def load_case(path: str | Path) -> Case:
    """Read and validate a case file.

    Parameters
    ----------
    path : str or Path
        A TOML case file; file names in it (materials, speed traces) are relative to
        its folder. Quantities may carry units (``"20 mm"``); bare numbers are SI.

    Returns
    -------
    Case
        The validated case, every quantity in SI units [K, s, m, W, J, kg, Pa].

    Raises
    ------
    InputError
        If the file is missing or unreadable, is not valid TOML, or a key is unknown,
        missing or of the wrong type; the message names the key path
        (``duty.phases[2].events[0].mass``) and, for an unknown key, the closest valid one.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(f"case file {str(path)!r} does not exist") from None
    except (OSError, UnicodeDecodeError, ValueError) as exc:  # ValueError: a null byte in the path
        raise InputError(f"case file {str(path)[:80]!r} cannot be read: {str(exc)[:80]}") from None
    return parse_case(text, path.name, path.parent)


def run_case(case: Case, model: Model | None = None, progress: Callable[[float], None] | None = None) -> Result:
    """Mesh (unless ``model`` is given) and run a case.

    Parameters
    ----------
    case : Case
        A validated case (:func:`load_case`, :func:`parse_case`).
    model : Model, optional
        A model already built from ``case`` (:meth:`Case.build_model`), to skip meshing;
        it is built here when None.
    progress : callable, optional
        Called with the simulated time [s] after every accepted step.

    Returns
    -------
    Result
        The run [K, s, J]; its metadata holds the case title and origin and the text of
        every warning raised while meshing and running (``metadata["warnings"]``), which
        the report shows. With ``[case] initial_state`` it continues the earlier run on
        its clock, the instruments and fuse plugs lagging on from where they were.

    Raises
    ------
    GeometryError, MaterialError
        If the assembly of the case cannot be meshed.
    SolverError
        If the solver cannot complete a step.
    """
    forget_warnings()  # each run reports the materials that leave their tables in it
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        model = model or case.build_model()
        initial: float | State = case.initial_temperature
        note = ""
        if case.initial_state is not None:
            start = read_start(case.initial_state, case.initial_state_time)
            initial, note = state_for_model(model, start), start.note
        schedule = case.duty.schedule(
            case.assembly.surfaces,
            start=initial.time if isinstance(initial, State) else 0.0,
            reference_event=case.output.reference_event,
        )
        watched = watch_budget(case.budget, schedule.start, schedule.end, progress)
        result = run_from_state(model, schedule, initial, case.fuse_plugs, case.solver, watched)
        result = with_tyre_gas_carried(result, case.report_settings())  # on to a chained run
    for item in caught:  # shown as before, and kept with the result for its report
        warnings.warn_explicit(item.message, item.category, item.filename, item.lineno)
    messages = list(dict.fromkeys(str(item.message) for item in caught))
    result.metadata.update({"case_title": case.title, "case_origin": case.origin, "warnings": messages})
    result.metadata["stops"] = case.duty.stop_accounts()  # the ground rolls' energy accounts, for the report
    if case.initial_state is not None:
        result.metadata.update({"initial_state": case.initial_state, "initial_state_note": note})
    return result
