"""Benchmark: a 1,000-case Monte Carlo of fuse-plug margins after the invented rejected take-off.

Not a test (``validation/`` is outside the pytest ``testpaths``); run by hand from the
repository root::

    PYTHONPATH=. python validation/bench_study.py                  # settings sweep + 1000 cases
    PYTHONPATH=. python validation/bench_study.py --cases 100      # fewer cases, extrapolated
    PYTHONPATH=. python validation/bench_study.py --dask tcp://host:8786

Step 1 (settings): the demonstration case ``examples/demo_rto.toml`` (an invented
rejected take-off, 5 min held, 3 h of parked cooling) and two corners of the study's
scatter (70 t, 140 kt, 40 degC and 48 t, 120 kt, 5 degC) are run once at each cell size
4 / 6 / 8 / 10 / 12 mm and solver accuracy 0.03 / 0.5 / 1 / 2 / 3 / 5 K (the BDF2 step
control), timed, and their collected outputs compared with the case's defaults (4 mm,
0.03 K). The study settings are the coarsest cell and then the loosest accuracy whose
sensor and fuse-plug peaks (probe readings and the plugs' own lagged temperatures) stay
within ``--tolerance`` (1 K), and their peak times within 30 s, of the defaults on all
three cases; ``--cell-size`` and ``--accuracy`` override the choice. The hottest rotor's
peak is collected by the study and its change printed, but it is not held to the tolerance
(the study is of fuse-plug margins; the rotor's peak moves more with the cell size).

Step 2 (study): a Latin hypercube of ``--cases`` cases (seed 20261201) on a local process
pool of ``--workers`` processes (every core by default) or a Dask cluster. The varied
inputs and their scatter are INVENTED for the benchmark (no real fleet data):

* aircraft mass: truncated normal, mean 58 t, standard deviation 4 t, cut to 48-70 t;
* brake-on speed: triangular 120 / 130 / 140 kt;
* ambient temperature (all three phases, and the brake's starting temperature):
  uniform 5-40 degC;
* rotor-stator contact conductance when clamped: uniform +-20 % about the design value;
* release temperature of each fuse plug: uniform within its tolerance (177 +- 3 degC).

Printed: the settings table, the chosen settings and their accuracy cost, the study's
wall time, cases per second, model reuse, failures, the release probability with its
Wilson and Clopper-Pearson intervals, margin percentiles, the sensitivity ranking, and
as the LAST line ``study_minutes_1000_cases: X`` -- measured when 1000 cases were run,
otherwise extrapolated linearly from the cases run (and then said so on the line before).

Timing rule: wall clock (``time.perf_counter``) of :func:`run_study` in this process,
from start to the last case written, pool start-up included. Not certified data.
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import tempfile
import time
import tomllib
import warnings
from pathlib import Path

import numpy as np

from heatstack.case import case_from_mapping, load_case, run_case
from heatstack.studies import (
    DaskExecutor,
    LocalExecutor,
    Parameter,
    Sampling,
    Study,
    Triangular,
    TruncatedNormal,
    Uniform,
    margin_percentiles,
    release_probability,
    run_study,
    sensitivity,
)
from heatstack.studies.runner import summarise

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "examples" / "demo_rto.toml"
CELLS = (0.004, 0.006, 0.008, 0.010, 0.012)
ACCURACIES = (0.03, 0.5, 1.0, 2.0, 3.0, 5.0)
WATCHED = ("sensor", "fuse plug 1", "fuse plug 2")
OUTPUTS = ("sensor", "hottest rotor", "fuse plug 1", "fuse plug 2")
#: Accepted change of a watched peak time [s] (the reduced model's default gate on times).
TIME_TOLERANCE = 30.0
SEED = 20261201
#: The cases the settings are checked on: the nominal demo and two corners of the scatter
#: (mass, brake-on speed, ambient and starting temperature), each set as case-file text.
CHECKED = {
    "nominal": {},
    "hot corner": {"mass": "70 t", "speed": "140 kt", "ambient": "40 degC"},
    "cold corner": {"mass": "48 t", "speed": "120 kt", "ambient": "5 degC"},
}


def _checked_mapping(text: str, corner: dict, cell: float, accuracy: float) -> dict:
    data = tomllib.loads(text)
    data["assembly"]["cell_size"] = cell
    data.setdefault("solver", {})["accuracy"] = accuracy
    if corner:
        event = data["duty"]["phases"][0]["events"][0]
        event["aircraft"]["mass"], event["reject_speed"] = corner["mass"], corner["speed"]
        data["case"]["initial_temperature"] = corner["ambient"]
        for phase in data["duty"]["phases"]:
            phase.setdefault("environment", {})["ambient_temperature"] = corner["ambient"]
    return data


def _watched(pairs: list[tuple[str, float]]) -> dict[str, float]:
    """The outputs the settings are held to: peaks [K] and peak times [s] of the sensor and plugs."""
    keep = [f"{kind}:{name}" for name in WATCHED for kind in ("peak", "peak_time")]
    keep += [n for n, _ in pairs if n.startswith("plug_peak:")]
    values = dict(pairs)
    return {name: values[name] for name in keep}


def settings_sweep() -> list[dict]:
    """Run each checked case once per (cell size, accuracy); return timings and watched outputs."""
    text = DEMO.read_text(encoding="utf-8")
    rows = []
    for cell in CELLS:
        for accuracy in ACCURACIES:
            row = {"cell": cell, "accuracy": accuracy, "outputs": {}, "hottest rotor": {}, "warnings": set()}
            for label, corner in CHECKED.items():
                case = case_from_mapping(_checked_mapping(text, corner, cell, accuracy), text, DEMO.name, DEMO.parent)
                started = time.perf_counter()
                with warnings.catch_warnings(record=True) as caught:
                    warnings.simplefilter("always")
                    model = case.build_model()
                    result = run_case(case, model)
                seconds = time.perf_counter() - started
                row["warnings"] |= {f"{label}: {str(w.message).split(':')[0]}" for w in caught}
                pairs = summarise(case, result, OUTPUTS)
                row["outputs"][label] = _watched(pairs)
                row["hottest rotor"][label] = dict(pairs)["peak:hottest rotor"]
                if label == "nominal":
                    row.update(cells=model.n_cells, steps=result.metadata["solver"]["steps"], seconds=seconds)
            rows.append(row)
    return rows


def choose(rows: list[dict], tolerance: float) -> tuple[dict, dict]:
    """The coarsest cell, then the loosest accuracy, whose watched outputs stay within tolerance on every checked case.

    Peaks [K] within ``tolerance`` and peak times within :data:`TIME_TOLERANCE` [s] of the
    defaults (4 mm, 0.03 K), on the nominal case and on both corners of the scatter.
    """
    reference = next(r for r in rows if r["cell"] == CELLS[0] and r["accuracy"] == ACCURACIES[0])
    for row in rows:
        row["diff"] = {
            label: {n: v - reference["outputs"][label][n] for n, v in outputs.items()}
            for label, outputs in row["outputs"].items()
        }
        row["worst_peak"] = max(abs(v) for d in row["diff"].values() for n, v in d.items() if "_time:" not in n)
        row["worst_time"] = max(abs(v) for d in row["diff"].values() for n, v in d.items() if "_time:" in n)
        row["rotor"] = max(abs(v - reference["hottest rotor"][k]) for k, v in row["hottest rotor"].items())
    fits = [r for r in rows if r["worst_peak"] <= tolerance and r["worst_time"] <= TIME_TOLERANCE]
    chosen = max(fits, key=lambda r: (r["cell"], r["accuracy"]))
    return chosen, reference


def invented_study(cell: float, accuracy: float, cases: int) -> Study:
    case = load_case(DEMO)
    h = case.built.design.rotor_stator_clamped
    plugs = [
        Parameter(
            f"assembly.fuse_plugs[{k}].release_temperature",
            Uniform(plug.release_temperature - plug.tolerance, plug.release_temperature + plug.tolerance),
            name=f"{plug.name} release",
        )
        for k, plug in enumerate(case.fuse_plugs)
    ]
    ambient_paths = ["case.initial_temperature"] + [
        f"duty.phases[{k}].environment.ambient_temperature" for k in range(len(case.duty.phases))
    ]
    return Study(
        DEMO,
        [
            Parameter(
                "duty.phases[0].events[0].aircraft.mass", TruncatedNormal("58 t", "4 t", "48 t", "70 t"), name="mass"
            ),
            Parameter(
                "duty.phases[0].events[0].reject_speed",
                Triangular("120 kt", "130 kt", "140 kt"),
                name="brake-on speed",
            ),
            Parameter(ambient_paths, Uniform("5 degC", "40 degC"), name="ambient"),
            Parameter("assembly.design.rotor_stator_clamped", Uniform(0.8 * h, 1.2 * h), name="rotor-stator h"),
            *plugs,
        ],
        Sampling("latin_hypercube", cases, SEED),
        outputs=list(OUTPUTS),
        cell_size=cell,
        accuracy=accuracy,
        title="invented RTO fuse-plug Monte Carlo (benchmark)",
    )


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=1000)
    parser.add_argument("--workers", type=int, default=os.cpu_count())
    parser.add_argument("--dask", default=None, help="Dask scheduler address instead of a local pool")
    parser.add_argument("--tolerance", type=float, default=1.0, help="accepted peak change [K]")
    parser.add_argument("--cell-size", type=float, default=None, help="[m], skips the choice")
    parser.add_argument("--accuracy", type=float, default=None, help="[K], skips the choice")
    parser.add_argument("--store", default=None, help="store folder (kept); a temporary one by default")
    args = parser.parse_args(argv)

    print("Not certified data. Invented demonstration case and invented scatter.")
    print(f"machine: {os.cpu_count()} cores; python {sys.version.split()[0]}")
    print(
        "\n1. settings: the demo case (RTO + 5 min held + 3 h cooling) and two corners of the scatter, "
        "largest differences vs 4 mm / 0.03 K"
    )
    rows = settings_sweep()
    chosen, reference = choose(rows, args.tolerance)
    print(f"{'cell':>6} {'acc':>5} {'cells':>6} {'steps':>6} {'time':>7}  {'peaks':>8} {'times':>7} {'rotor':>7}")
    for r in rows:
        head = f"{1000 * r['cell']:4.0f}mm {r['accuracy']:4.2f}K {r['cells']:6d} {r['steps']:6d} {r['seconds']:6.2f}s"
        print(f"{head}  {r['worst_peak']:7.2f}K {r['worst_time']:6.1f}s {r['rotor']:6.2f}K")
    print(
        "peaks: sensor, fuse-plug readings and plug temperatures; times: their peak times; rotor: the hottest "
        "rotor's peak (collected, not held to the tolerance)"
    )
    raised = sorted(set().union(*(r["warnings"] for r in rows)))
    if raised:
        print("warnings raised in the settings runs (first words): " + "; ".join(raised))
    ref_peaks = ", ".join(f"{n} {reference['outputs']['nominal'][f'peak:{n}'] - 273.15:.1f} degC" for n in WATCHED)
    print(f"default-settings peaks (nominal): {ref_peaks}")
    cell = args.cell_size if args.cell_size is not None else chosen["cell"]
    accuracy = args.accuracy if args.accuracy is not None else chosen["accuracy"]
    row = next((r for r in rows if r["cell"] == cell and r["accuracy"] == accuracy), None)
    print(
        f"study settings: cell {1000 * cell:g} mm, accuracy {accuracy:g} K (rule: coarsest, then loosest, with "
        f"every watched peak within {args.tolerance:g} K and peak time within {TIME_TOLERANCE:g} s of the defaults "
        "on all three checked cases)"
    )
    if row is not None:
        print(
            f"accuracy cost of these settings: peaks {row['worst_peak']:.2f} K, peak times {row['worst_time']:.1f} s, "
            f"hottest rotor {row['rotor']:.2f} K; one case {row['seconds']:.2f} s vs {reference['seconds']:.2f} s"
        )

    print(f"\n2. study: {args.cases} cases, Latin hypercube, seed {SEED}")
    study = invented_study(cell, accuracy, args.cases)
    store = Path(args.store) if args.store else Path(tempfile.mkdtemp(prefix="bench-study-")) / "store"
    executor = DaskExecutor(args.dask) if args.dask else LocalExecutor(workers=args.workers)
    started = time.perf_counter()
    with executor:  # run_study leaves an executor it is given open: its pool is shut down here, not at exit
        run = run_study(study, store, executor, progress=None)
        seconds = time.perf_counter() - started
    table = run.table
    counts = table.counts()
    print(f"executor: {run.executor}; store: {store}")
    print(
        f"cases run {run.cases_run} (skipped {run.cases_skipped}, failed {counts['failed']}); wall time {seconds:.1f} s"
    )
    rate = run.cases_run / seconds if seconds > 0 else float("nan")
    per_case = np.nanmean(table["wall_time"])
    print(f"cases_per_second: {rate:.3f}")
    print(f"mean time per case in a worker: {per_case:.3f} s; model reused in {np.mean(table['model_reused']):.0%}")
    print(f"solver steps per case: median {np.nanmedian(table['solver:steps']):.0f}")
    if counts["ok"]:
        for plug in (None, "fuse plug 1", "fuse plug 2"):
            est = release_probability(table, plug)
            print(
                f"P(release, {est.label}) = {est.estimate:.3f} ({est.events}/{est.trials}); "
                f"Wilson 95 % {est.wilson[0]:.3f}-{est.wilson[1]:.3f}, "
                f"Clopper-Pearson 95 % {est.clopper_pearson[0]:.3f}-{est.clopper_pearson[1]:.3f}"
            )
        p = margin_percentiles(table, "plug_margin_min")
        print(f"plug_margin_min [K]: P5 {p[5.0]:.1f}, P50 {p[50.0]:.1f}, P95 {p[95.0]:.1f}")
        if counts["ok"] > len(table.parameter_names) + 1:
            result = sensitivity(table, "plug_margin_min")
            ranking = ", ".join(f"{e.parameter} {e.spearman:+.2f}" for e in result.entries)
            print(f"Spearman ranking of plug_margin_min: {ranking} (linear R^2 {result.r_squared:.2f})")
    if not args.store:
        shutil.rmtree(store.parent, ignore_errors=True)
    minutes = seconds / 60.0 * (1000.0 / max(run.cases_run, 1))
    if run.cases_run != 1000:
        print(f"extrapolated linearly to 1000 cases from {run.cases_run} cases run")
    print(f"study_minutes_1000_cases: {minutes:.2f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
