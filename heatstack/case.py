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
from collections.abc import Callable
from dataclasses import dataclass, field, fields
from pathlib import Path
from typing import Any

from .assembly import Assembly
from .builders import BuiltWheelBrake
from .case_guards import DEFAULT_MAX_CELLS, RunBudget, check_cell_count, check_cooling_series, watch_budget
from .case_sections import (
    OutputSettings,
    read_assembly,
    read_budget,
    read_duty,
    read_output,
    read_solver,
    read_tyre,
)
from .case_table import ABOVE_ZERO, CaseTable
from .errors import HeatstackError, InputError, ScheduleError
from .material_files import material_from_mapping
from .materials import Material
from .model import Model
from .numerics.options import SolverOptions
from .operations.duty import DutyCycle
from .property_table import forget_warnings
from .questions.chaining import read_start, run_from_state, state_for_model
from .report_settings import ReportSettings, TyreSettings, with_tyre_gas_carried
from .result import Result, State
from .wheel_design import FusePlugSpec

__all__ = [
    "Case",
    "load_case",
    "parse_case",
    "case_from_mapping",
    "run_case",
]


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
    assembly, built, plugs = read_assembly(assembly_table)
    check_cell_count(assembly, (cell_r, cell_z), min_cells, max_cells)
    duty = read_duty(root.table("duty"), base)
    solver = read_solver(root.table("solver", {}))
    budget = read_budget(root.table("solver", {}))
    output = read_output(root.table("output", {}))
    tyre = read_tyre(root.table("tyre", {}), built, duty, root.data.get("duty"))
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
