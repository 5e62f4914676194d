"""Running a study: every case built from the base mapping, run, summarised and stored.

:func:`run_study` draws (or reads back) the sample table, skips cases the store already
holds, sends the rest to an executor and writes each summary the moment it arrives.
A failing case is recorded with its error text and the study goes on. An interrupted
study is resumed by calling :func:`run_study` again with the same description and store.

Each worker process keeps a small cache of meshed models keyed by the case's built
assembly with its contact conductances blanked, its cell sizes and its ``materials``
section. Cases that vary only the duty, the environment, the solver, the fuse-plug
ratings or a contact conductance reuse one mesh per worker (a new contact conductance
recomputes only the links' contact resistances, :meth:`heatstack.model.Model.with_contacts`);
cases that vary a dimension or a material build their own.
"""

from __future__ import annotations

import hashlib
import json
import logging
import math
import os
import socket
import sys
import threading
import time
import traceback
import uuid
import warnings
from collections import OrderedDict
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..answers.fuse_plugs import assess_fuse_plugs
from ..case import case_from_mapping, run_case
from ..errors import HeatstackError, InputError
from ..numerics.network import contact_free
from .dask_executor import DaskExecutor
from .description import Study, StudyPlan, plan_study
from .executors import LocalExecutor, StudyExecutor
from .store import StudyStore
from .table import StudyTable

__all__ = [
    "CaseJob",
    "CaseOutcome",
    "StudyRun",
    "run_study",
    "run_one_case",
    "summarise",
    "clear_model_cache",
    "resolve_executor",
]

log = logging.getLogger(__name__)

#: Meshed models kept per worker process.
MODEL_CACHE_SIZE = 4

_MODELS: OrderedDict[str, Any] = OrderedDict()
_MODELS_LOCK = threading.Lock()


@dataclass(frozen=True)
class CaseJob:
    """What a worker needs to run one case (picklable).

    Attributes
    ----------
    index : int
        Case number (row of the sample table).
    mapping : dict
        The case's TOML mapping with the overrides and parameter values written in.
    text, origin, base_dir : str
        Base case text, file name and folder.
    outputs : tuple of str or None
        Probes or series whose peaks are collected (None: all).
    """

    index: int
    mapping: dict
    text: str
    origin: str
    base_dir: str
    outputs: tuple[str, ...] | None = None

    @property
    def key(self) -> str:
        """A task name for schedulers."""
        return f"heatstack-case-{self.index}-{uuid.uuid4().hex}"


@dataclass(frozen=True, eq=False)
class CaseOutcome:
    """The summary of one case, as a worker returns it.

    Attributes
    ----------
    index : int
    status : {"ok", "failed"}
    names : tuple of str
        Output names (see :func:`summarise`).
    values : ndarray
        Output values [SI], one per name.
    error : str
        Error text of a failed case ("" if ok).
    warnings : str
        Warnings raised while the case ran, one a line.
    wall_time : float
        [s]
    worker : str
        ``host:pid`` of the worker.
    model_reused : bool
        Whether the worker's cached model served the case.
    """

    index: int
    status: str
    names: tuple[str, ...]
    values: np.ndarray
    error: str = ""
    warnings: str = ""
    wall_time: float = 0.0
    worker: str = ""
    model_reused: bool = False


def clear_model_cache() -> None:
    """Forget the models cached in this process."""
    with _MODELS_LOCK:
        _MODELS.clear()


def _model_key(case: Any, mapping: Mapping) -> str:
    """What a case's mesh and network depend on, contact conductances aside, as a digest."""
    content = {
        "assembly": repr(contact_free(case.assembly)),
        "cells": [case.cell_size, case.min_cells],
        "materials": mapping.get("materials", {}),
    }
    return hashlib.sha256(json.dumps(content, sort_keys=True, default=str).encode("utf-8")).hexdigest()


def _model_for(case: Any, mapping: Mapping) -> tuple[Any, bool]:
    key = _model_key(case, mapping)
    with _MODELS_LOCK:
        if key in _MODELS:
            _MODELS.move_to_end(key)
            cached = _MODELS[key]
            return (cached if cached.assembly == case.assembly else cached.with_contacts(case.assembly)), True
    model = case.build_model()
    with _MODELS_LOCK:
        _MODELS[key] = model
        while len(_MODELS) > MODEL_CACHE_SIZE:
            _MODELS.popitem(last=False)
    return model, False


def summarise(case: Any, result: Any, outputs: Sequence[str] | None = None) -> list[tuple[str, float]]:
    """The collected outputs of one run, as (name, SI value) pairs.

    Names: ``peak:<x>`` [K], ``peak_time:<x>`` [s] and ``peak_delay:<x>`` (time of the
    peak after the end of braking) [s] for each probe reading or series ``x``;
    ``limit_margin:<x>`` = limit - peak [K] for each of the case's ``output.limits``;
    ``plug_peak:<p>`` [K], ``plug_released:<p>`` (1 when the plug's peak reading reaches
    its release temperature, else 0) and ``plug_margin:<p>`` = release temperature -
    peak [K] for each fuse plug, with ``any_plug_released`` and ``plug_margin_min``;
    ``energy_in`` [J]; ``solver:<statistic>``.

    Parameters
    ----------
    case : heatstack.case.Case
    result : heatstack.result.Result
    outputs : sequence of str, optional
        Probes or series to collect peaks of; every probe and every global series
        (not the per-surface-group means) by default.

    Returns
    -------
    list of (str, float)
        The outputs in the order above, values in SI.
    """
    names = (
        list(outputs)
        if outputs is not None
        else [*result.readings, *(s for s in result.series if not s.startswith("surface:"))]
    )
    out: list[tuple[str, float]] = []
    end = float(result.end_of_braking)
    for name in names:
        peak, when = result.peak(name)
        out += [(f"peak:{name}", peak), (f"peak_time:{name}", when), (f"peak_delay:{name}", when - end)]
    answers = assess_fuse_plugs(result, case.fuse_plugs) if case.fuse_plugs else []
    plug_peaks = {plug.name: plug.peak for plug in answers}
    for name, limit in case.output.limits.items():
        # a limit on a fuse plug is judged on the plug's own temperature, as in the report
        top = plug_peaks[name] if name in plug_peaks else result.peak(name)[0]
        out.append((f"limit_margin:{name}", float(limit) - top))
    margins, released = [], []
    for plug in answers:
        # the plug's own lag behind the rim is applied (its time constant from the case)
        out += [
            (f"plug_peak:{plug.name}", plug.peak),
            (f"plug_released:{plug.name}", 1.0 if plug.releases else 0.0),
            (f"plug_margin:{plug.name}", plug.margin),
        ]
        margins.append(plug.margin)
        released.append(plug.releases)
    if case.fuse_plugs:
        out += [("any_plug_released", 1.0 if any(released) else 0.0), ("plug_margin_min", min(margins))]
    out.append(("energy_in", float(result.ledger.heat_in[-1])))
    for key, value in sorted(result.metadata.get("solver", {}).items()):
        if isinstance(value, int | float) and not isinstance(value, bool):
            out.append((f"solver:{key}", float(value)))
    return out


def run_one_case(job: CaseJob) -> CaseOutcome:
    """Build, run and summarise one case; never raises for a failing case.

    A case that fails (bad sampled value, solver failure, anything) comes back with
    ``status = "failed"`` and its error text.

    Parameters
    ----------
    job : CaseJob
        The case mapping and what to collect.

    Returns
    -------
    CaseOutcome
        Status, output names and SI values, error and warning texts, wall time [s], worker
        and whether a cached model was reused.
    """
    start = time.perf_counter()
    worker = f"{socket.gethostname()}:{os.getpid()}"
    reused = False
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            origin = f"{job.origin} (study case {job.index})"
            case = case_from_mapping(job.mapping, job.text, origin, Path(job.base_dir))
            model, reused = _model_for(case, job.mapping)
            result = run_case(case, model)
            pairs = summarise(case, result, job.outputs)
            status, error = "ok", ""
        except HeatstackError as exc:
            pairs, status, error = [], "failed", f"{type(exc).__name__}: {exc}"
        except Exception as exc:  # a case must never stop the study
            last = traceback.format_exception(exc)[-3:]
            pairs, status, error = [], "failed", f"{type(exc).__name__}: {exc}\n{''.join(last)}"
    text = "\n".join(dict.fromkeys(f"{w.category.__name__}: {w.message}" for w in caught))
    return CaseOutcome(
        index=job.index,
        status=status,
        names=tuple(n for n, _ in pairs),
        values=np.array([v for _, v in pairs], dtype=float),
        error=error,
        warnings=text,
        wall_time=time.perf_counter() - start,
        worker=worker,
        model_reused=reused,
    )


@dataclass(frozen=True, eq=False)
class StudyRun:
    """What :func:`run_study` did.

    Attributes
    ----------
    store : Path
    table : StudyTable
        The whole table read back from the store, in case order.
    cases_run : int
        Cases run by this call.
    cases_skipped : int
        Cases already in the store.
    cases_failed : int
        Cases of this call that failed.
    seconds : float
        Wall time of this call [s].
    executor : str
    """

    store: Path
    table: StudyTable
    cases_run: int
    cases_skipped: int
    cases_failed: int
    seconds: float
    executor: str = ""

    @property
    def cases_per_second(self) -> float:
        """Cases run by this call per second of wall time [1/s]."""
        return self.cases_run / self.seconds if self.seconds > 0 else math.nan


def resolve_executor(executor: StudyExecutor | str | None, timeout: float) -> tuple[StudyExecutor, bool]:
    """The executor a study runs on, and whether the caller owns it (must close it).

    Parameters
    ----------
    executor : StudyExecutor or str, optional
        ``None`` or ``"local"``: a new :class:`LocalExecutor`; a string: a new
        :class:`DaskExecutor` for that scheduler address; an executor object: itself.
    timeout : float
        Seconds to wait for a Dask scheduler given by address [s].

    Returns
    -------
    executor : StudyExecutor
        The executor (not yet started).
    owned : bool
        True when it was made here (the caller closes it).

    Raises
    ------
    InputError
        If ``executor`` is none of these.
    """
    if executor is None or executor == "local":
        return LocalExecutor(), True
    if isinstance(executor, str):
        return DaskExecutor(executor, timeout=timeout), True
    if isinstance(executor, StudyExecutor):
        return executor, False
    raise InputError(f"executor: expected 'local', a scheduler address or a StudyExecutor, got {executor!r}")


def _progress(progress: bool | Callable[[int, int], None] | None, total: int) -> tuple[Callable, Callable]:
    if callable(progress):
        done = [0]

        def step() -> None:
            done[0] += 1
            progress(done[0], total)

        return step, lambda: None
    show = sys.stderr.isatty() if progress is None else bool(progress)
    if not show or total == 0:
        return (lambda: None), (lambda: None)
    from tqdm import tqdm

    bar = tqdm(total=total, unit="case", desc="study", file=sys.stderr)
    return (lambda: bar.update(1)), bar.close


def _jobs(plan: StudyPlan, indices: Sequence[int]) -> Iterator[CaseJob]:
    for index in indices:
        yield CaseJob(
            index=int(index),
            mapping=plan.case_mapping(int(index)),
            text=plan.base_text,
            origin=plan.origin,
            base_dir=plan.base_dir,
            outputs=plan.outputs,
        )


def run_study(
    study: Study | StudyPlan,
    store: str | os.PathLike,
    executor: StudyExecutor | str | None = None,
    *,
    progress: bool | Callable[[int, int], None] | None = None,
    retry_failed: bool = False,
    timeout: float = 10.0,
    cases: Sequence[int] | None = None,
) -> StudyRun:
    """Run (or resume) a study into a store folder.

    Parameters
    ----------
    study : Study or StudyPlan
    store : str or path
        Store folder (created if absent; see :mod:`heatstack.studies.store`).
    executor : StudyExecutor or str, optional
        ``None`` or ``"local"``: a :class:`LocalExecutor` on every core; a string: the
        address of a Dask scheduler; or an executor object (left open afterwards).
    progress : bool or callable, optional
        A tqdm bar on standard error when ``True`` (by default only at a terminal), or a
        function called with (cases done, cases to do) after each case.
    retry_failed : bool
        Run again the cases the store records as failed.
    timeout : float
        Seconds to wait for a Dask scheduler given by address [s].
    cases : sequence of int, optional
        Run only these case numbers (the others stay as they are in the store; a reduced
        model's confirmations run this way). All cases by default.

    Returns
    -------
    StudyRun

    Raises
    ------
    InputError
        A bad description (before anything runs); a store that cannot be written or
        that holds a different study (before the first case); an unreachable scheduler
        (within ``timeout``, nothing written).
    """
    plan = study if isinstance(study, StudyPlan) else plan_study(study)
    target = StudyStore(store)
    target.preflight()
    runner, owned = resolve_executor(executor, timeout)
    started = time.perf_counter()
    run = failed = skipped = 0
    try:
        runner.start()
        with target.session(plan) as session:
            todo = session.todo(retry_failed=retry_failed)
            wanted = range(plan.n_cases) if cases is None else sorted({int(k) for k in cases})
            skipped = len(wanted) - len(todo) if cases is None else len(set(wanted) - set(todo))
            if cases is not None:
                todo = sorted(set(todo) & set(wanted))
            log.info(
                "study %r: %d cases, %d in the store, %d to run on %s",
                plan.study.title,
                plan.n_cases,
                skipped,
                len(todo),
                runner.describe(),
            )
            step, finish = _progress(progress, len(todo))
            try:
                for outcome in runner.map_unordered(run_one_case, _jobs(plan, todo)):
                    session.write_case(outcome)
                    run += 1
                    if outcome.status != "ok":
                        failed += 1
                        log.warning("case %d failed: %s", outcome.index, outcome.error.splitlines()[0])
                    step()
            finally:
                finish()
    finally:
        if owned:
            runner.close()
    seconds = time.perf_counter() - started
    return StudyRun(
        store=target.root,
        table=target.table(),
        cases_run=run,
        cases_skipped=skipped,
        cases_failed=failed,
        seconds=seconds,
        executor=runner.describe(),
    )
