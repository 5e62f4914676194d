"""A study that stands a checked reduced-order model in for full runs, and estimates rare events on it.

:func:`run_reduced_study` runs every full run of the study through one executor (in this
process, a local pool or a Dask cluster) into sub-stores of one store folder, each
kill-safe and resumable like any study store (:mod:`heatstack.studies.store`)::

    <store>/
        design/         the Sobol' design: training and held-back full runs (it grows
                        when more are needed, reusing every finished run)
        full/           the study's own cases run in full: the confirmations near a limit,
                        or every case when the gate refused the model
        rare-<hash>/    the rare-event samples run in full (near the limit, or outside the
                        box the model was checked on)
        reduced-model.json   what was decided and measured, rewritten at the end of each run

Steps: (1) the reduced model is trained and gated on held-back full runs
(:func:`heatstack.studies.surrogate.build_reduced_model`); (2) if accepted, it predicts
every case of the study, and a case whose predicted margin (to a fuse plug's release or a
limit) lies within ``confirm_within`` measured errors (or ``confirm_margin``) of zero is re-run in full, so no
release decision rests on the model; if refused, the study runs in full (``fallback =
"full"``) or stops after saying so; (3) with a ``rare_event`` setting, the probability of
the event is estimated (:mod:`heatstack.studies.rare_events`) with the model as the
margin and full runs near the limit; with a refused model every sample runs in full (the
model then only places the samples, and the estimate is still unbiased).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math
import os
import time
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..atomic import write_file_atomically
from ..errors import InputError
from .description import Study, StudyPlan, plan_study
from .executors import StudyExecutor
from .rare_events import RareEventEstimate, find_design_point, importance_sampling, monte_carlo
from .runner import resolve_executor, run_study
from .settings import RareEventSettings, ReducedModelSettings
from .store import StudyStore
from .surrogate import ReducedModel, RunFull, build_reduced_model
from .table import StudyTable, column_unit

__all__ = [
    "ReducedStudyRun",
    "run_reduced_study",
    "estimate_rare_event",
    "design_points",
    "role_plan",
    "event_margins",
    "reduced_model_lines",
]

SUMMARY = "reduced-model.json"


@dataclass(frozen=True, eq=False)
class ReducedStudyRun:
    """What :func:`run_reduced_study` did.

    Attributes
    ----------
    store : Path
    table : StudyTable
        The study's cases: predicted by the reduced model, or run in full (column
        ``source``: ``reduced model`` or ``full run``).
    model : ReducedModel
        The reduced model and its gate.
    decision : str
        What the study did, in words (model used, or full runs, or stopped).
    full_runs : dict of str to int
        Full runs finished per sub-store (``design``, ``full``, ``rare-...``).
    confirmed : int
        Study cases re-run in full because their predicted margin was near zero.
    rare_event : RareEventEstimate or None
    seconds : float
        Wall time of this call [s].
    executor : str
    """

    store: Path
    table: StudyTable
    model: ReducedModel
    decision: str
    full_runs: dict[str, int]
    confirmed: int
    rare_event: RareEventEstimate | None
    seconds: float
    executor: str = ""

    @property
    def total_full_runs(self) -> int:
        """Full runs finished over every sub-store."""
        return int(sum(self.full_runs.values()))


def role_plan(plan: StudyPlan, samples: np.ndarray, role: str, grows: bool = False) -> StudyPlan:
    """The study's plan with its own sample table, for the full runs of one role.

    Parameters
    ----------
    plan : StudyPlan
        The study's plan (base case, parameters, overrides).
    samples : ndarray, shape (n, d)
        Parameter rows [SI].
    role : str
        What the runs are for (``design``, ``rare``); part of the fingerprint.
    grows : bool, optional
        The samples are the first rows of one fixed sequence: a store of a shorter prefix
        is extended, not refused.

    Returns
    -------
    StudyPlan
        Same case, new samples; its fingerprint covers the role and the samples.
    """
    samples = np.ascontiguousarray(samples, dtype=float)
    base = {k: v for k, v in plan.description.items() if k not in ("title", "sampling")}
    keyed = {**base, "role": role, "parameters": list(plan.parameter_names)}
    grown = hashlib.sha256(json.dumps(keyed, sort_keys=True, default=str).encode()).hexdigest()
    digest = hashlib.sha256(samples.tobytes() + grown.encode()).hexdigest()
    description = {**plan.description, "role": role, "sampling": {"method": role, "cases": len(samples)}}
    return dataclasses.replace(
        plan, samples=samples, description=description, fingerprint=digest, growth_key=grown if grows else ""
    )


def _columns(table: StudyTable) -> dict[str, np.ndarray]:
    ok = table.ok
    return {n: np.where(ok, np.asarray(table[n], dtype=float), np.nan) for n in table.output_names}


def event_margins(event: str, names: Sequence[str]) -> tuple[str, ...]:
    """The margin columns whose minimum being <= 0 is the event.

    Parameters
    ----------
    event : str
        ``any_plug_released``, ``any_limit`` or one margin column name.
    names : sequence of str
        The modelled outputs.

    Returns
    -------
    tuple of str
        The margin columns.

    Raises
    ------
    InputError
        If the event names no modelled margin.
    """
    if event == "any_plug_released":
        out = tuple(n for n in names if n.startswith("plug_margin:"))
    elif event == "any_limit":
        out = tuple(n for n in names if n.startswith(("plug_margin:", "limit_margin:")))
    else:
        out = (event,) if event in names and event.startswith(("plug_margin:", "limit_margin:")) else ()
    if not out:
        margins = [n for n in names if n.startswith(("plug_margin:", "limit_margin:"))]
        raise InputError(
            f"study.rare_event.event: {event!r} names no modelled margin (any_plug_released, any_limit"
            + (", " + ", ".join(margins) if margins else "; the cases have no fuse plug or limit")
            + ")"
        )
    return out


class _FullRuns:
    """Full runs of one study through one executor into the sub-stores of one folder."""

    def __init__(self, plan: StudyPlan, root: Path, executor: StudyExecutor, progress, retry_failed: bool):
        self.plan, self.root, self.executor = plan, root, executor
        self.progress, self.retry_failed = progress, retry_failed
        self.counts: dict[str, int] = {}

    def run(self, x: np.ndarray, role: str, cases: Sequence[int] | None = None) -> dict[str, np.ndarray]:
        """Run the rows ``x`` (only rows ``cases``, if given) in full as ``role``; each output by name.

        The sub-store holds every row, named by the rows' hash (a design by its first row, so
        that a longer prefix grows it); rows not run, and failed runs, are NaN.
        """
        grows = role == "design"
        tag = hashlib.sha256(np.ascontiguousarray(x[:1] if grows else x, dtype=float).tobytes()).hexdigest()[:10]
        name = f"{role}-{tag}"
        done = run_study(
            role_plan(self.plan, x, role, grows),
            self.root / name,
            self.executor,
            progress=self.progress,
            retry_failed=self.retry_failed,
            cases=cases,
        )
        counts = done.table.counts()
        self.counts[name] = counts["ok"] + counts["failed"]
        return _columns(done.table)

    def study_cases(self, indices: Sequence[int] | None) -> StudyTable:
        """Run the study's own cases ``indices`` (all when None) in full; the whole table of ``full/``."""
        done = run_study(
            self.plan,
            self.root / "full",
            self.executor,
            progress=self.progress,
            retry_failed=self.retry_failed,
            cases=indices,
        )
        counts = done.table.counts()
        self.counts["full"] = counts["ok"] + counts["failed"]
        return done.table


def _marginals(plan: StudyPlan) -> list:
    out = []
    for k, p in enumerate(plan.parameters):
        if p.distribution is None:
            raise InputError(
                f"study.parameters[{k}]: a reduced model needs a distribution for every parameter "
                f"({p.name!r} has a list of values)"
            )
        out.append(p.distribution)
    return out


def _predicted_table(plan: StudyPlan, model: ReducedModel, full: StudyTable | None) -> StudyTable:
    """The study's cases predicted by the model, with the cases run in full written over them."""
    surface = model.surface
    n = plan.n_cases
    predicted = surface.predict(plan.samples)
    values = {name: predicted[:, j].copy() for j, name in enumerate(surface.output_names)}
    source = np.full(n, "reduced model", dtype=object)
    if full is not None:
        ran = np.asarray(full["status"]) != "pending"
        for name in values:
            if name in full.columns:
                values[name][ran] = np.asarray(full[name], dtype=float)[ran]
        source[ran] = "full run"
    status = np.full(n, "ok", dtype=object)
    error = np.full(n, "", dtype=object)
    if full is not None:
        failed = np.asarray(full["status"]) == "failed"
        status[failed], error[failed] = "failed", np.asarray(full["error"])[failed]
    plugs = [name for name in values if name.startswith("plug_margin:")]
    for name in plugs:
        values["plug_released:" + name.split(":", 1)[1]] = (values[name] <= 0.0).astype(float)
    if plugs:
        lowest = np.min(np.column_stack([values[p] for p in plugs]), axis=1)
        values["any_plug_released"] = (lowest <= 0.0).astype(float)
        values["plug_margin_min"] = lowest
    columns: dict[str, np.ndarray] = {"case": np.arange(n)}
    units = {"case": "", "status": "", "error": "", "source": ""}
    for j, p in enumerate(plan.parameters):
        columns[p.name], units[p.name] = plan.samples[:, j].copy(), p.unit
    columns["status"], columns["error"], columns["source"] = status.astype(str), error.astype(str), source.astype(str)
    for name, column in values.items():
        columns[name], units[name] = column, column_unit(name)
    return StudyTable(
        columns=columns,
        parameter_names=plan.parameter_names,
        output_names=tuple(values),
        units=units,
        title=plan.study.title,
        method=f"{plan.study.sampling.method} on the reduced model",
        cell_size=plan.cell_size,
        accuracy=plan.accuracy,
        target_change=plan.target_change,
    )


def _near_limit(model: ReducedModel, x: np.ndarray, settings: ReducedModelSettings) -> np.ndarray:
    """Rows whose predicted margin (any margin) lies within the confirmation band of zero."""
    surface = model.surface
    margins = [j for j, n in enumerate(surface.output_names) if n.startswith(("plug_margin:", "limit_margin:"))]
    if not margins:
        return np.zeros(len(x), dtype=bool)
    predicted = surface.predict(x)[:, margins]
    band = settings.band(model.check.errors[margins])
    return np.any(np.abs(predicted) <= band, axis=1)


def estimate_rare_event(
    model: ReducedModel,
    marginals: Sequence,
    settings: RareEventSettings,
    run_full: RunFull,
    model_settings: ReducedModelSettings,
    seed: int = 0,
) -> RareEventEstimate:
    """The probability of a rare event: the model as the margin, full runs where they decide.

    A sample is run in full unless the event is settled by the model: some predicted
    margin below minus its confirmation band (:meth:`ReducedModelSettings.band`), or every
    one above plus its band; and or when it lies outside the box the
    model was trained and checked on; with a refused model every sample runs in full (the
    model then only places the importance density, and the estimate stays unbiased).

    Parameters
    ----------
    model : ReducedModel
        The gated reduced model (its surface places the design point).
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    settings : RareEventSettings
        Event, method, samples, confidence, defensive share (checked here).
    run_full : callable
        ``run_full(x, "rare", rows)``: the full runs of ``x[rows]`` ([SI]; ``x`` is every
        sample, so a store behind it keeps them all and reuses any run finished before),
        each output by name for every row of ``x`` (NaN where not run).
    model_settings : ReducedModelSettings
        The model's settings (their confirmation band; checked here).
    seed : int, optional
        Seed of the samples when ``settings.seed`` is not given.

    Returns
    -------
    RareEventEstimate
        The estimate, its interval, the samples and their margins.

    Raises
    ------
    InputError
        If no surface could be fitted, or the event names no modelled margin.
    """
    settings, model_settings = settings.checked(), model_settings.checked()
    if model.surface is None:
        raise InputError("study.rare_event: no reduced model could be fitted to place the samples; nothing estimated")
    surface = model.surface
    names = event_margins(settings.event, surface.output_names)
    columns = [surface.output_names.index(n) for n in names]
    band = model_settings.band(model.check.errors[columns]) if model.usable else np.full(len(columns), np.inf)
    seed = settings.seed if settings.seed is not None else int(seed)

    def confirmed(x: np.ndarray) -> np.ndarray:
        margins = surface.predict(x)[:, columns]
        # the event is certain when a margin is below -band, its absence when every margin is above +band
        settled = np.any(margins < -band, axis=1) | np.all(margins > band, axis=1)
        rerun = np.flatnonzero(~settled | ~surface.inside(x))
        out = margins.min(axis=1)
        if rerun.size:
            full = run_full(x, "rare", rerun)
            missing = np.full(len(x), np.nan)
            out[rerun] = np.min(np.column_stack([full.get(n, missing) for n in names]), axis=1)[rerun]
        return out

    if settings.method == "monte_carlo":
        return monte_carlo(confirmed, marginals, settings.samples, seed, settings.confidence)
    points = design_points(surface, columns, marginals, seed)
    return importance_sampling(
        confirmed, marginals, points, settings.samples, seed, settings.confidence, settings.defensive
    )


def design_points(surface, columns: Sequence[int], marginals: Sequence, seed: int = 0) -> np.ndarray:
    """One design point per margin of the event, on the reduced model, those closer than 0.5 apart merged.

    The event "any of these margins <= 0" is the union of one limit per margin (each fuse
    plug, each limit); their design points lie in different directions of standard normal
    space, and the importance-sampling mixture places a component about each.

    Parameters
    ----------
    surface : ResponseSurface
        The reduced model's surface (``predict(x)`` gives every output per row).
    columns : sequence of int
        The surface outputs that are the event's margins [K].
    marginals : sequence of scipy frozen distributions
        Each parameter's distribution [SI].
    seed : int, optional
        Seed of the design-point searches.

    Returns
    -------
    ndarray, shape (K, d)
        The design points [-], nearest first.

    Raises
    ------
    InputError
        If no margin reaches zero within about 7 standard deviations.
    """
    found, refused = [], None
    for column in columns:
        try:
            point, beta = find_design_point(lambda x, c=column: surface.predict(x)[:, c], marginals, seed)
        except InputError as exc:  # this margin cannot be crossed: no component for it
            refused = exc
            continue
        found.append((beta, point))
    if not found:
        raise refused if refused is not None else InputError("rare event: the event names no margin")
    kept: list[np.ndarray] = []
    for _, point in sorted(found, key=lambda item: item[0]):
        if all(np.linalg.norm(point - other) > 0.5 for other in kept):
            kept.append(point)
    return np.array(kept)


def run_reduced_study(
    study: Study | StudyPlan,
    store: str | os.PathLike,
    settings: ReducedModelSettings | None = None,
    rare_event: RareEventSettings | None = None,
    executor: StudyExecutor | str | None = None,
    *,
    progress=None,
    retry_failed: bool = False,
    timeout: float = 10.0,
) -> ReducedStudyRun:
    """Run (or resume) a study on a reduced model that proves itself, with full runs where they decide.

    Parameters
    ----------
    study : Study or StudyPlan
        The study; its cases are the ones predicted (a large ``cases`` is cheap).
    store : str or path
        Store folder holding the sub-stores (see the module notes); created if absent.
    settings : ReducedModelSettings, optional
        The model's settings; the study's own (``study.reduced_model``) or the defaults.
    rare_event : RareEventSettings, optional
        Estimate a rare event's probability too; the study's own ``study.rare_event`` by default.
    executor : StudyExecutor or str, optional
        As for :func:`heatstack.studies.runner.run_study`; one executor serves every full run.
    progress : bool or callable, optional
        As for :func:`heatstack.studies.runner.run_study`, per batch of full runs.
    retry_failed : bool, optional
        Run again full runs the stores record as failed.
    timeout : float, optional
        Seconds to wait for a Dask scheduler given by address [s].

    Returns
    -------
    ReducedStudyRun
        The table, the model and its gate, the decision, the full runs and the rare event.

    Raises
    ------
    InputError
        A bad description or settings, a parameter without a distribution, a store folder
        that is a plain study store, or a refused model with ``fallback = "stop"`` after
        the verdict is written to ``reduced-model.json``.
    """
    plan = study if isinstance(study, StudyPlan) else plan_study(study)
    settings = (settings or plan.study.reduced_model or ReducedModelSettings()).checked()
    rare_event = rare_event or plan.study.rare_event
    rare_event = None if rare_event is None else rare_event.checked()
    root = Path(store)
    if StudyStore(root).exists():
        raise InputError(f"store {str(root)!r}: holds a study run without a reduced model; choose another folder")
    marginals = _marginals(plan)
    runner, owned = resolve_executor(executor, timeout)
    started = time.perf_counter()
    try:
        runner.start()
        runs = _FullRuns(plan, root, runner, progress, retry_failed)
        model = build_reduced_model(runs.run, marginals, settings, int(plan.study.sampling.seed or 0))
        confirmed = 0
        if model.usable:
            near = np.flatnonzero(_near_limit(model, plan.samples, settings))
            confirmed = int(near.size)
            full = runs.study_cases(near.tolist()) if near.size else None
            table = _predicted_table(plan, model, full)
            decision = (
                f"reduced model used for {plan.n_cases - confirmed} of {plan.n_cases} cases; {confirmed} cases "
                f"with a predicted margin within {settings.confirm_within:g} measured errors "
                f"(or {settings.confirm_margin:g} K) of zero re-run in full"
            )
        elif settings.fallback == "full":
            table = runs.study_cases(None)
            decision = f"reduced model refused by its gate; all {plan.n_cases} cases run in full"
        else:
            decision = "reduced model refused by its gate; stopped (fallback = 'stop'), no case predicted"
            _write_summary(root, model, decision, runs.counts, 0, None)
            raise InputError(f"study.reduced_model: {model.note}; {decision}")
        estimate = None
        if rare_event is not None:
            seed = int(plan.study.sampling.seed or 0)
            estimate = estimate_rare_event(model, marginals, rare_event, runs.run, settings, seed)
    finally:
        if owned:
            runner.close()
    _write_summary(root, model, decision, runs.counts, confirmed, estimate)
    return ReducedStudyRun(
        root,
        table,
        model,
        decision,
        dict(runs.counts),
        confirmed,
        estimate,
        time.perf_counter() - started,
        runner.describe(),
    )


def _write_summary(
    root: Path, model: ReducedModel, decision: str, counts: Mapping[str, int], confirmed: int, estimate
) -> None:
    check = model.check
    data = {
        "decision": decision,
        "gate": model.note,
        "accepted": model.usable,
        "training_runs": model.training,
        "design_runs": model.full_runs,
        "errors": {} if check is None else {n: float(e) for n, e in zip(check.output_names, check.errors, strict=True)},
        "full_runs": dict(counts),
        "confirmed_cases": confirmed,
    }
    if estimate is not None:
        data["rare_event"] = {
            "method": estimate.method,
            "estimate": estimate.estimate,
            "interval": list(estimate.interval),
            "confidence": estimate.confidence,
            "samples": estimate.samples,
            "events": estimate.events,
        }
    text = json.dumps(data, indent=2, default=float) + "\n"
    root.mkdir(parents=True, exist_ok=True)
    write_file_atomically(root / SUMMARY, lambda temp: temp.write_text(text, encoding="utf-8"), "study summary")


def reduced_model_lines(run: ReducedStudyRun, temperature_digits: int = 2) -> list[str]:
    """Markdown lines for the report: the gate's verdict and measured errors, the decision, the rare event.

    Parameters
    ----------
    run : ReducedStudyRun
        What :func:`run_reduced_study` did.
    temperature_digits : int, optional
        Decimals of the errors shown.

    Returns
    -------
    list of str
        The lines (a section headed ``### Reduced model``).
    """
    model = run.model
    lines = ["", "### Reduced model", "", f"- {run.decision}.", f"- Gate: {model.note}."]
    if model.check is not None:
        lines += ["", "| output | largest held-back error | tolerance |", "|---|---|---|"]
        for name, err, tol in zip(model.check.output_names, model.check.errors, model.check.tolerances, strict=True):
            unit = column_unit(name)
            shown = "n/a" if not math.isfinite(err) else f"{err:.{temperature_digits}f} {unit}"
            lines.append(f"| {name} | {shown} | {tol:g} {unit} |")
    runs = ", ".join(f"{k} {v}" for k, v in run.full_runs.items())
    lines += ["", f"Full runs: {run.total_full_runs} ({runs})."]
    if run.rare_event is not None:
        lines += ["", "### Rare event", "", f"- Probability: {run.rare_event.describe()}."]
    return lines
