"""Chaining runs: start a run where an earlier results file left the wheel.

A results file keeps the final :class:`~heatstack.result.State` of its run: every cell's
temperature, the lagged instruments' readings and the fuse plugs' lagged temperatures.
:func:`read_start` loads it (or the field snapshot nearest a chosen time, saying so),
:func:`check_start_fits` refuses a state whose grid or design differs from the model's,
naming what differs, and :func:`run_from_state` runs a schedule from it so that the
instruments and the fuse plugs go on lagging exactly as they would have in one piece.

Decision on ``initial_state_time``: a time other than the final one takes the stored
field snapshot nearest to it and says so (:attr:`ChainStart.note`); a snapshot keeps no
instrument or plug state, so those start in equilibrium with the metal there, and the
note says that too. Only the final state chains exactly.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np

from ..answers.fuse_plugs import FusePlug, state_with_plugs
from ..errors import InputError
from ..model import Model
from ..numerics.schedule import Schedule
from ..numerics.solver import SolverOptions
from ..result import Result, State
from ..resultread import read_result
from ..wheel_design import FusePlugSpec

__all__ = ["ChainStart", "check_start_fits", "read_start", "run_from_state", "state_for_model"]


@dataclass(frozen=True, eq=False)
class ChainStart:
    """Where a chained run starts: a state and the grid and design it belongs to.

    Attributes
    ----------
    source : str
        The results file the state came from.
    requested_time : float or None
        The time asked for [s]; None for the final state.
    state : State or None
        The final state (None when a snapshot is used: it needs the model's grid to be
        turned into a state, see :func:`state_for_model`).
    snapshot : ndarray or None
        The (nz, nr) field [K] of the snapshot used instead of the final state.
    time : float
        Time of the state or snapshot [s].
    note : str
        What was taken, in words ("" for the exact final state).
    r_edges, z_edges : ndarray
        Grid edges of the earlier run [m].
    part_names : tuple of str
    n_cells : int
        Active cells of the earlier run.
    """

    source: str
    requested_time: float | None
    state: State | None
    snapshot: np.ndarray | None
    time: float
    note: str
    r_edges: np.ndarray
    z_edges: np.ndarray
    part_names: tuple[str, ...]
    n_cells: int


def _pick(result: Result, source: str, time: float | None) -> tuple[State | None, np.ndarray | None, float, str]:
    final = result.final_state
    if time is None or abs(time - final.time) <= 1e-6 * max(1.0, abs(final.time)):
        return final, None, float(final.time), ""
    times = np.asarray(result.snapshot_times, dtype=float)
    if times.size == 0:
        raise InputError(
            f"initial_state_time: {source!r} holds no field snapshots; only its final state "
            f"({final.time:g} s) can start a chained run"
        )
    if not (times[0] - 1e-9 <= time <= final.time + 1e-9):
        raise InputError(
            f"initial_state_time: {time:g} s is outside the run in {source!r} ({times[0]:g}-{final.time:g} s)"
        )
    k = int(np.argmin(np.abs(times - time)))
    note = (
        f"initial state: the snapshot at {times[k]:g} s of {source!r} (nearest to the {time:g} s asked, "
        f"{abs(times[k] - time):g} s away); instruments and fuse plugs start in equilibrium with the metal there"
    )
    return None, np.asarray(result.snapshots[k], dtype=float), float(times[k]), note


def read_start(path: str | Path, time: float | None = None) -> ChainStart:
    """Load the start of a chained run from a results file.

    Parameters
    ----------
    path : str or Path
        A heatstack results file (.h5).
    time : float, optional
        A time of that run [s]; the final state when None (or equal to the final time),
        else the nearest stored field snapshot (see the module notes).

    Returns
    -------
    ChainStart

    Raises
    ------
    ResultFileError
        If the file is missing, unreadable or of an older layout without a final state.
    InputError
        If ``time`` lies outside the run, or the run kept no snapshots.
    """
    source = str(path)
    result = read_result(path)
    state, snapshot, when, note = _pick(result, source, time)
    return ChainStart(
        source=source,
        requested_time=time,
        state=state,
        snapshot=snapshot,
        time=when,
        note=note,
        r_edges=np.asarray(result.r_edges, dtype=float),
        z_edges=np.asarray(result.z_edges, dtype=float),
        part_names=tuple(result.part_names),
        n_cells=int(np.asarray(result.final_state.temperature).size),
    )


def _edges_differ(name: str, ours: np.ndarray, theirs: np.ndarray) -> str | None:
    if ours.size != theirs.size:
        return f"{name} grid lines: {theirs.size} in the file, {ours.size} in this model"
    worst = float(np.max(np.abs(ours - theirs))) if ours.size else 0.0
    if worst > 1e-9:
        return f"{name} grid lines move by up to {worst * 1e3:.3f} mm"
    return None


def check_start_fits(model: Model, start: ChainStart) -> None:
    """Raise :class:`~heatstack.errors.InputError` unless ``start`` belongs to ``model``'s grid and design.

    The message lists what differs: part names, active cell count, grid lines.

    Parameters
    ----------
    model : Model
        The model to run.
    start : ChainStart
        The saved starting point and the grid and design it came from.

    Raises
    ------
    InputError
        If the part names, the active cell count or the grid lines differ.
    """
    net = model.network
    ours = tuple(p.name for p in net.assembly.parts)
    problems = []
    if ours != start.part_names:
        extra = sorted(set(start.part_names) - set(ours))
        missing = sorted(set(ours) - set(start.part_names))
        detail = f" (only in the file: {extra}; only in this model: {missing})" if extra or missing else " (order)"
        problems.append(f"part names differ{detail}")
    if start.n_cells != model.n_cells:
        problems.append(f"active cells: {start.n_cells} in the file, {model.n_cells} in this model")
    for name, ours_edges, theirs in (
        ("radial", net.grid.r_edges, start.r_edges),
        ("axial", net.grid.z_edges, start.z_edges),
    ):
        problem = _edges_differ(name, np.asarray(ours_edges, dtype=float), theirs)
        if problem:
            problems.append(problem)
    if problems:
        raise InputError(
            f"initial_state: {start.source!r} comes from another grid or design: "
            + "; ".join(problems)
            + " (use the same design and cell size as the earlier run)"
        )


def state_for_model(model: Model, start: ChainStart) -> State:
    """The :class:`~heatstack.result.State` a chained run of ``model`` starts from (checked).

    Parameters
    ----------
    model : Model
        The model to run.
    start : ChainStart
        The saved starting point: a state, or a snapshot field and its time [s].

    Returns
    -------
    State
        The saved state, or one made from the snapshot's active cells [K].

    Raises
    ------
    InputError
        If ``start`` does not fit the model, or the snapshot lacks a value in an active cell.
    """
    check_start_fits(model, start)
    if start.state is not None:
        return start.state
    grid = model.network.grid
    temperature = start.snapshot[grid.cell_ij[:, 0], grid.cell_ij[:, 1]]
    if not np.all(np.isfinite(temperature)):
        raise InputError(f"initial_state: the snapshot of {start.source!r} has no value in some active cells")
    return State(time=start.time, temperature=np.asarray(temperature, dtype=float))


def run_from_state(
    model: Model,
    schedule: Schedule,
    initial: float | State,
    plugs: Sequence[FusePlug | FusePlugSpec] = (),
    options: SolverOptions | None = None,
    progress=None,
) -> Result:
    """Run ``schedule`` from a state (or a uniform temperature [K]), carrying the lags on.

    The instruments start from the state's readings (the solver does that), the fuse
    plugs from its ``plug_temperatures``; the result's final state holds both again, so
    a further run chained from it continues exactly.

    Parameters
    ----------
    model : Model
    schedule : Schedule
        Starting at the state's time.
    initial : State or float
        [K] for a uniform start.
    plugs : sequence of FusePlug or FusePlugSpec
        Fuse plugs whose lagged temperature the final state keeps.
    options : SolverOptions, optional
    progress : callable, optional
        Called with the simulated time [s] after every accepted step.

    Returns
    -------
    Result
        With ``initial_plug_temperatures`` from the state and a final state that carries
        the plugs' temperatures.
    """
    result = model.run(schedule, initial, options, progress)
    if isinstance(initial, State):
        result = replace(
            result,
            initial_plug_temperatures=dict(initial.plug_temperatures),
            initial_tyre_gas_temperature=initial.tyre_gas_temperature,
        )
    return replace(result, final_state=state_with_plugs(result, plugs))
