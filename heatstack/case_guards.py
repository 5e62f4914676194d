"""Guards a case passes before any allocation or solve: grid size, output names, run budgets.

:func:`check_cell_count` counts the cells the grid builder would make (:func:`estimated_cells`)
and refuses more than a limit; :func:`plain_file_name` keeps output files inside the output
folder; :class:`RunBudget` and :func:`watch_budget` stop a run past its step or wall-time
budget with :class:`BudgetExceeded`, saying how far it got.
"""

from __future__ import annotations

import difflib
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .assembly import Assembly
from .errors import InputError, SolverError

__all__ = [
    "DEFAULT_MAX_CELLS",
    "BudgetExceeded",
    "RunBudget",
    "check_cell_count",
    "check_cooling_series",
    "estimated_cells",
    "heat_sink_overload",
    "plain_file_name",
    "watch_budget",
]


@dataclass(frozen=True)
class RunBudget:
    """The most a run may spend: accepted time steps, and wall time [s] (None: no limit).

    The defaults are generous: the demo takes a few hundred steps and seconds.

    Attributes
    ----------
    max_steps : int
        The most accepted time steps [-]; the run stops at the step that reaches it.
    max_wall_time : float or None
        The most wall-clock time the run may take [s], counted from just before its time
        stepping starts; None for no limit.
    """

    max_steps: int = 1_000_000
    max_wall_time: float | None = 6.0 * 3600.0


class BudgetExceeded(SolverError):
    """A run stopped at its step or wall-time budget; the message says how far it got."""


#: Default limit on the number of grid cells of a case (``[assembly] max_cells`` sets another).
DEFAULT_MAX_CELLS = 2_000_000


def estimated_cells(assembly: Assembly, cell_size: tuple[float, float], min_cells: int) -> int:
    """The number of grid cells (active and void) meshing ``assembly`` gives, without building the grid.

    Each interval between part boundaries gets ``ceil(length / cell size)`` cells, or more so that
    every part has ``min_cells`` across it, as the grid builder does.

    Parameters
    ----------
    assembly : Assembly
        The parts to mesh (their radial and axial extents are used).
    cell_size : tuple of float
        Target cell size (radial, axial) [m].
    min_cells : int
        The fewest cells across every part, in each direction [-].

    Returns
    -------
    int
        The number of cells of the whole tensor grid [-]: radial count times axial count.
    """

    def axis(spans: list[tuple[float, float]], target: float) -> int:
        lines = sorted({x for span in spans for x in span})
        total = 0
        for low, high in zip(lines[:-1], lines[1:], strict=True):
            length, middle = high - low, 0.5 * (low + high)
            need = max(
                [1, int(np.ceil(length / target - 1e-9))]
                + [int(np.ceil(min_cells * length / (b - a) - 1e-9)) for a, b in spans if a < middle < b]
            )
            total += need
        return total

    radial = axis([(p.r_inner, p.r_outer) for p in assembly.parts], cell_size[0])
    axial = axis([(p.z_min, p.z_max) for p in assembly.parts], cell_size[1])
    return radial * axial


def check_cell_count(assembly: Assembly, cell_size: tuple[float, float], min_cells: int, limit: int) -> None:
    """InputError before any allocation when the grid would pass ``limit`` cells.

    An assembly without parts passes (there is nothing to count).

    Parameters
    ----------
    assembly : Assembly
        The parts to mesh.
    cell_size : tuple of float
        Target cell size (radial, axial) [m].
    min_cells : int
        The fewest cells across every part, in each direction [-].
    limit : int
        The most cells allowed [-] (``[assembly] max_cells``).

    Raises
    ------
    InputError
        Naming ``assembly``, if :func:`estimated_cells` exceeds ``limit``; the message gives
        the estimate, the cell sizes and the ways out (larger cells, a higher ``max_cells``).
    """
    if not assembly.parts:
        return
    estimate = estimated_cells(assembly, cell_size, min_cells)
    if estimate > limit:
        raise InputError(
            f"assembly: the grid would have about {estimate:.3g} cells ({cell_size[0] * 1e3:.3g} x "
            f"{cell_size[1] * 1e3:.3g} mm cells, min_cells = {min_cells}), more than the limit of {limit:.3g}; "
            "use larger cells, or raise assembly.max_cells"
        )


def heat_sink_overload(network, initial_temperature: float, energy: float) -> str | None:
    """A warning when ``energy`` is more than the heat sink can hold within its specific-heat tables.

    The capacity is the enthalpy the heat-sink cells gain from ``initial_temperature`` to the top
    of each material's specific-heat table (first law, no losses). Above it the heat sink alone
    cannot take the duty's energy without leaving its tables: the run then fails unless conduction
    to the other parts carries the rest away.

    Parameters
    ----------
    network : Network
        The meshed model's network (its heat-sink cell group and materials are used).
    initial_temperature : float
        The uniform starting temperature [K].
    energy : float
        The duty's braking energy into the modelled brake [J].

    Returns
    -------
    str or None
        The warning text, or None when the energy fits, there is no heat-sink group, or a
        heat-sink material clamps its table (no upper end).
    """
    from .geometry import HEAT_SINK

    groups = zip(network.assembly.cell_groups, network.cell_group_masks, strict=True)
    masks = [mask for group, mask in groups if group.name == HEAT_SINK]
    if not masks:
        return None
    capacity, tops = 0.0, []
    for material, block in network.material_blocks:
        inside = masks[0][block]
        if not inside.any():
            continue
        if material.specific_heat.extrapolation == "clamp":
            return None
        top = float(material.specific_heat.temperature_range[1])
        if not top > initial_temperature:
            return None  # the start itself is outside the table: the reader says so
        rise = float(material.enthalpy(top) - material.enthalpy(initial_temperature))
        capacity += rise * float(network.volume[block][inside].sum())
        tops.append(top)
    if not tops or energy <= capacity:
        return None
    return (
        f"the duty puts {energy / 1e6:.4g} MJ into the modelled brake, more than its heat sink can hold within "
        f"its material tables ({capacity / 1e6:.4g} MJ up to {min(tops) - 273.15:.0f} degC); the run will likely "
        "fail when a part leaves its table: check the energy, braked_wheels and brake shares"
    )


def plain_file_name(name: str, where: str) -> str:
    """``name`` if it is a plain file name inside the output folder, else an InputError naming ``where``.

    No folder part, no ``..``, no absolute path or drive, no null byte, not heatstack's temporary pattern.

    Parameters
    ----------
    name : str
        The file name given in the case.
    where : str
        The key path of the name, for the message (``output.file``).

    Returns
    -------
    str
        ``name``, unchanged.

    Raises
    ------
    InputError
        Naming ``where``, if ``name`` holds a null byte, is blank, ``.`` or ``..``, holds a
        ``/`` or ``\\``, is absolute, or looks like a heatstack temporary file (``.NAME.tmp``).
    """
    shown = name if len(name) <= 80 else name[:77] + "..."
    if "\0" in name:
        raise InputError(f"{where}: {shown!r} holds a null byte; give a plain file name such as 'results.h5'")
    if not name.strip() or name in (".", "..") or "/" in name or "\\" in name or Path(name).is_absolute():
        raise InputError(
            f"{where}: {shown!r} is not a plain file name; the file is written inside the output "
            "folder (--out), so give a name such as 'results.h5' without a folder, '..' or drive"
        )
    if name.startswith(".") and name.endswith(".tmp"):
        raise InputError(f"{where}: {shown!r} looks like one of heatstack's temporary files; choose another")
    return name


def check_cooling_series(name: str, known: set[str]) -> None:
    """InputError naming ``output.cooling_series`` unless ``name`` is a series the run records.

    Parameters
    ----------
    name : str
        The series named by ``output.cooling_series``.
    known : set of str
        The names of the probes and series the run records.

    Raises
    ------
    InputError
        Naming ``output.cooling_series``, if ``name`` is not in ``known``, with the closest
        known name or the first known names.
    """
    if name in known:
        return
    close = difflib.get_close_matches(name, sorted(known), n=1)
    names = sorted(known)
    hint = f"; did you mean {close[0]!r}?" if close else f"; known: {', '.join(names[:8])}{' ...' * (len(names) > 8)}"
    raise InputError(f"output.cooling_series: no probe or series named {name[:80]!r}{hint}")


def watch_budget(
    budget: RunBudget, start: float, end: float, progress: Callable[[float], None] | None
) -> Callable[[float], None]:
    """A progress callback that stops the run (BudgetExceeded) past its step or wall-time budget.

    The wall time is counted from this call; every call of the callback counts one accepted step.

    Parameters
    ----------
    budget : RunBudget
        The steps and wall time the run may take.
    start : float
        Simulated time at which the run starts [s].
    end : float
        Simulated time at which the run ends [s]; with ``start``, for the share of the duty
        done that the message gives.
    progress : callable or None
        The caller's own progress callback, called first with the simulated time [s] of every
        accepted step; None for none.

    Returns
    -------
    callable
        ``watch(t)``, to be called with the simulated time [s] after every accepted step; it
        raises :class:`BudgetExceeded` at the step that reaches ``budget.max_steps`` or once
        the wall time passes ``budget.max_wall_time``, saying how far the run got.
    """
    began = time.monotonic()
    steps = 0

    def watch(t: float) -> None:
        nonlocal steps
        steps += 1
        if progress is not None:
            progress(t)
        spent = time.monotonic() - began
        over_steps = steps >= budget.max_steps
        over_time = budget.max_wall_time is not None and spent > budget.max_wall_time
        if over_steps or over_time:
            what = f"{budget.max_steps} steps" if over_steps else f"{budget.max_wall_time:g} s of wall time"
            done = 100.0 * (t - start) / (end - start) if end > start else 100.0
            raise BudgetExceeded(
                f"the run reached its budget of {what} at t = {t:g} s of {end:g} s ({done:.1f} % of the duty) "
                f"after {steps} steps and {spent:.0f} s; no results file was written. Loosen "
                'solver.accuracy (solver.target_change with scheme = "euler"), '
                "or raise solver.max_steps / solver.max_wall_time"
            )

    return watch
