"""Benchmark: heatstack against FiPy on one temperature-dependent braking problem.

Not a test (``validation/`` is outside the pytest ``testpaths``). Run from the
repository root::

    PYTHONPATH=. python validation/bench_fipy.py                   # everything below, a few minutes
    PYTHONPATH=. python validation/bench_fipy.py --no-memory       # skip the memory run
    PYTHONPATH=. python validation/bench_fipy.py --profile         # also: where heatstack's step time goes
    PYTHONPATH=. python validation/bench_fipy.py --factorisations  # also: factorisations of the step matrix

Printed: the largest probe and field differences, each solver's time per step,
heatstack's time per step over one triangular solve of its own step matrix (for
information), the heatstack solver statistics, FiPy's conjugate-gradient solver
checked against its LU solver, time per step at about 3k, 12k and 50k cells, and the
peak resident memory (``resource.getrusage(RUSAGE_SELF).ru_maxrss`` of a separate
process) of a 50k-cell run over three simulated hours with adaptive steps
(``--no-memory`` skips it).

The reference is FiPy 4.0.3 (https://pages.nist.gov/fipy/), through the twin model of
``validation/fipy_reference.py`` in its enthalpy form, with FiPy's fastest solver for
this symmetric positive definite problem: its conjugate-gradient solver
(``LinearPCGSolver``, SciPy suite, relative residual 1e-10), which gives the answers of
its LU solver to well inside the sweep tolerance (printed) in less time. The problem: a
five-part carbon-like stack (pressure plate, rotor, stator, rotor, end plate; annulus
r = 0.12..0.22 m, 5 x 30 mm) of one material whose specific heat doubles between 300 K
and 1000 K and whose conductivity falls with temperature (anisotropic); a 20 s braking
pulse of 1.0 MW peak at the four rubbing faces; convection h = 30 W/(m^2 K) to 300 K on
every surface; 100 fixed steps of 0.5 s. About 12,000 cells for the comparison; 3k and
50k more for the scaling (50k heatstack only).

Timing rule: on a shared machine, runs timed one after the other swing with the load,
so the two solvers are timed interleaved (heatstack, FiPy, heatstack, FiPy, ...; wall
clock, ``time.perf_counter``, in this one process), ``PAIRS`` complete runs of the 100
steps each; the model / mesh build is excluded for both, everything inside the run is
included. The speed-up is the median of the pairwise ratios FiPy / heatstack. BLAS runs
single-threaded for both (``OPENBLAS_NUM_THREADS=1`` unless set): on two loaded cores
OpenBLAS's threads on the solvers' small vector products cost far more than they save.
The last printed line is ``speedup_vs_fipy: X`` (12k case).
"""

from __future__ import annotations

import os

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # before numpy loads OpenBLAS; see the timing rule

import argparse
import cProfile
import json
import pstats
import resource
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)
from heatstack.numerics import step_matrix
from heatstack.numerics.solver import Integrator, initial_field

HERE = Path(__file__).resolve().parent

MATERIAL = simple_material(
    "bench-carbon",
    density=1780.0,
    specific_heat=(650.0, 1650.0),  # J/(kg K) at 250 and 1250 K: 700 at 300 K, 1400 at 1000 K
    conductivity=(50.0, 30.0),  # radial (in-plane) W/(m K)
    conductivity_axial=(16.0, 10.0),  # axial (through-thickness)
    temperature_range=(250.0, 1250.0),
)
MATERIALS = {MATERIAL.name: MATERIAL}
ROLES = ("pressure_plate", "rotor", "stator", "rotor", "end_plate")
PARTS = tuple(
    Part(f"{role} {k}", MATERIAL.name, 0.12, 0.22, 0.03 * k, 0.03 * (k + 1), role) for k, role in enumerate(ROLES)
)
POWER_TIMES, POWER = (0.0, 0.5, 20.0), (0.0, 1.0e6, 0.0)
H_CONV, T_AIR, T0 = 30.0, 300.0, 300.0
DT, STEPS = 0.5, 100
TOLERANCE = 1e-6  # heatstack Newton tolerance and FiPy sweep tolerance [K]
PAIRS = 3  # interleaved heatstack / FiPy runs of the 12k case
REPEATS = 2  # runs of each other timing (median)
FIPY_SOLVER, CG_TOLERANCE = "cg", 1e-10
SIZES = {"3k": (0.002, 0.0025), "12k": (0.001, 0.00125), "50k": (0.0005, 0.000625)}
PROBE_TARGETS = {
    "pressure plate at rubbing face": (0.20, 0.0299),
    "rotor at rubbing face": (0.20, 0.0301),
    "stator mid-plane": (0.17, 0.075),
    "end plate outer face": (0.215, 0.149),
}


def build(size: str) -> tuple[Model, dict[str, tuple[float, float]]]:
    """The model with its probes moved to cell centres (so both read a cell value)."""
    cell_size = SIZES[size]
    grid = Model.build(Assembly(parts=PARTS, gap_radiation=False), cell_size, materials=MATERIALS).grid
    rc, zc = grid.r_centres, grid.z_centres
    probes = {
        name: (float(rc[np.argmin(np.abs(rc - r))]), float(zc[np.argmin(np.abs(zc - z))]))
        for name, (r, z) in PROBE_TARGETS.items()
    }
    assembly = Assembly(parts=PARTS, probes=[Probe(n, r, z) for n, (r, z) in probes.items()], gap_radiation=False)
    return Model.build(assembly, cell_size, materials=MATERIALS), probes


def schedule(end: float = DT * STEPS) -> Schedule:
    law = FixedConvection(H_CONV, T_AIR, radiation=False)
    return Schedule(PowerHistory(POWER_TIMES, POWER), [Phase("stop", 0.0, end, {"*": law}, clamped=True)])


def options(**extra) -> SolverOptions:
    return SolverOptions(scheme="euler", fixed_step=DT, tolerance=TOLERANCE, **extra)  # FiPy's implicit Euler


def run_heatstack(model: Model, solver_options: SolverOptions | None = None):
    """Wall time [s] of one ``model.run`` of the 100 steps and its result."""
    start = time.perf_counter()
    result = model.run(schedule(), T0, solver_options or options())
    return time.perf_counter() - start, result


def time_heatstack(model: Model, solver_options: SolverOptions | None = None, repeats: int = REPEATS):
    """Median wall time per step of ``repeats`` runs and the last result."""
    runs = [run_heatstack(model, solver_options) for _ in range(repeats)]
    result = runs[-1][1]
    return float(np.median([t for t, _ in runs])) / result.metadata["solver"]["steps"], result


def fipy_twin(model: Model, solver: str = FIPY_SOLVER):
    sys.path.insert(0, str(HERE))
    from fipy_reference import FipyTwin

    convection = {side: (H_CONV, T_AIR) for side in ("bottom", "top", "inner", "outer")}
    return FipyTwin(
        model.grid.r_edges,
        model.grid.z_edges,
        PARTS,
        MATERIALS,
        POWER_TIMES,
        POWER,
        convection,
        form="enthalpy",
        solver=solver,
        cg_tolerance=CG_TOLERANCE,
    )


def run_fipy(model: Model, times: np.ndarray, probes: dict, snapshot_times, solver: str = FIPY_SOLVER):
    """One FiPy run (its wall time excludes building the twin) with ``solver``."""
    return fipy_twin(model, solver).run(
        times, T0, probes=probes, snapshot_times=snapshot_times, sweep_tolerance=TOLERANCE
    )


def factorisation_name() -> str:
    return "QDLDL LDL^T, symbolic analysis reused" if step_matrix.qdldl is not None else "SuperLU (splu)"


def last_step_matrix(model: Model):
    """The step matrix (``StepMatrix``) of the last step of heatstack's 100-step run."""
    integrator = Integrator(model.network, schedule(), options())
    integrator.run(initial_field(model.network, T0), 0.0)
    return integrator.newton.system


def triangular_solve_time(model: Model, repeats: int = 300) -> tuple[float, float]:
    """Factorise heatstack's last step matrix as the solver does (``StepMatrix.factorise``,
    a refactorisation with the kept analysis when QDLDL is used); time one ``solve``."""
    system = last_step_matrix(model)
    system.factorise()
    start = time.perf_counter()
    lu = system.factorise()
    factor_time = time.perf_counter() - start
    rhs = np.random.default_rng(1).standard_normal(model.n_cells)
    lu.solve(rhs)
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        lu.solve(rhs)
        times.append(time.perf_counter() - start)
    return float(np.median(times)), factor_time


def floor_text(stats: dict, factor: float, solve: float) -> str:
    """The ratio this run would have if nothing but its solves and factorisations cost time.

    Every Newton iteration makes one triangular solve and every factorisation costs
    ``factor / solve`` solves, so no saving elsewhere can bring the ratio below
    ``iterations / steps + factorisations * (factor / solve) / steps``.
    """
    steps = stats["steps"]
    floor = stats["iterations"] / steps + stats["factorisations"] * (factor / solve) / steps
    return (
        f"floor with zero cost outside solves and factorisations: {floor:.2f} "
        f"({stats['iterations'] / steps:.2f} solves + {stats['factorisations']} factorisations x "
        f"{factor / solve:.0f} solves / {steps} steps)"
    )


def budget_text(stats: dict, factor: float, solve: float, hs_step: float, fp_step: float, target: float = 40.0) -> str:
    """What a ratio of ``target`` allows per step, and how much of it the solves and factorisations already take.

    The rest of heatstack's step (properties, conductances, boundary laws, residuals,
    acceleration, the conservative update: numpy work on arrays of the cell and link
    counts) must fit in what is left.
    """
    steps = stats["steps"]
    solver = (stats["iterations"] * solve + stats["factorisations"] * factor) / steps
    allowed = fp_step / target
    return (
        f"a ratio of {target:g} allows {1e3 * allowed:.2f} ms per step; solves and factorisations take "
        f"{1e3 * solver:.2f} ms, so the rest must fit in {1e3 * (allowed - solver):.2f} ms "
        f"(it takes {1e3 * (hs_step - solver):.2f} ms now)"
    )


def header() -> None:
    import fipy

    print(f"heatstack vs FiPy {fipy.__version__}: transient r-z conduction with T-dependent k and cp")
    print("=" * 78)
    print(
        "How the two are made comparable:\n"
        "  * same grid: FiPy CylindricalGrid2D(dx, dy arrays) on heatstack's r_edges / z_edges, one FiPy\n"
        "    cell per heatstack unknown; FiPy's own metric (radial faces k r_f dz / dr_c vs heatstack's\n"
        "    exact log form: relative (dr/2r)^2/3 < 1e-5 here), harmonic face conductivity, Robin\n"
        "    convection.\n"
        "  * same steps: heatstack's step ends (100 x 0.5 s, backward Euler) are FiPy's time steps.\n"
        "  * same source: power per step = exact integral of the piecewise-linear table / dt, equal\n"
        "    share per rubbing interface, flux ~ r, split by effusivity sqrt(k_z rho cp) at the iterate\n"
        "    (recomputed by the FiPy side from the assembly).\n"
        "  * converged nonlinear iterations: FiPy in enthalpy form, TransientTerm(var=H) ==\n"
        "    DiffusionTerm(k_f / c_f, var=H) + sources, c_f the chord (H_b - H_a)/(T_b - T_a), T from\n"
        "    the twin's own exact inverse of the tabulated enthalpy after every sweep, sweeping until\n"
        f"    max |T change| <= {TOLERANCE:g} K; heatstack Newton tolerance {TOLERANCE:g} K. Single material.\n"
        f"  * FiPy's fastest solver here: LinearPCGSolver (conjugate gradients, SciPy suite, relative\n"
        f"    residual {CG_TOLERANCE:g}); checked against its LinearLUSolver at 3k cells below.\n"
        f"  * heatstack's factorisation: {factorisation_name()}.\n"
        f"  * timing: {PAIRS} interleaved pairs (heatstack, FiPy, ...) in this process, median of the pairwise\n"
        f"    ratios; model / mesh build excluded; OPENBLAS_NUM_THREADS={os.environ.get('OPENBLAS_NUM_THREADS')}."
    )


def compare() -> tuple[float, float, float]:
    model, probes = build("12k")
    print(f"[12k case] {model.n_cells} active cells, grid {model.grid.shape[1]} (r) x {model.grid.shape[0]} (z)")
    snaps = (5.0, 10.0, 20.0, 30.0)
    run_heatstack(model, options(snapshot_times=snaps))  # warm-up (imports, first tables)
    pairs, result, run = [], None, None
    for _ in range(PAIRS):
        hs_time, result = run_heatstack(model, options(snapshot_times=snaps))
        run = run_fipy(model, result.times, probes, tuple(result.snapshot_times))
        pairs.append((hs_time / result.metadata["solver"]["steps"], run.wall_time / run.steps))
    hs_steps = np.array([h for h, _ in pairs])
    fp_steps = np.array([f for _, f in pairs])
    ratios = fp_steps / hs_steps
    field = max(
        float(np.max(np.abs(result.snapshots[k] - run.snapshots[float(t)])))
        for k, t in enumerate(result.snapshot_times)
    )
    probe = {name: float(np.max(np.abs(result.probes[name] - run.probes[name]))) for name in probes}
    peak = float(np.max(result.snapshots))
    rise = MATERIAL.specific_heat(peak) / MATERIAL.specific_heat(T0)
    print(f"  peak temperature {peak:.1f} K; cp rises x{rise:.2f} from T0 to the peak")
    print(f"  largest probe difference: {max(probe.values()):.3e} K")
    for name, value in probe.items():
        print(f"      {name:32s} {value:.3e} K  (peak {np.max(result.probes[name]):.1f} K)")
    at = ", ".join(f"{t:g}" for t in result.snapshot_times)
    print(f"  largest field difference (whole field at {at} s): {field:.3e} K")
    stats = result.metadata["solver"]
    print(f"  FiPy sweeps per step: mean {np.mean(run.sweeps):.2f}, max {max(run.sweeps)}")
    print(
        "  heatstack solver statistics: "
        + ", ".join(f"{k} {v:.3g}" if isinstance(v, float) else f"{k} {v}" for k, v in stats.items())
        + f"  ({stats['iterations'] / stats['steps']:.2f} Newton iterations per step)"
    )
    for k, (h, f) in enumerate(pairs):
        print(f"  pair {k + 1}: heatstack {1e3 * h:.2f} ms per step, FiPy {1e3 * f:.1f} ms per step, ratio {f / h:.1f}")
    hs_step, fp_step = float(np.median(hs_steps)), float(np.median(fp_steps))
    print(
        f"  time per step (medians): heatstack {1e3 * hs_step:.2f} ms, FiPy {1e3 * fp_step:.1f} ms; "
        f"median of the pairwise ratios {np.median(ratios):.1f} (range {ratios.min():.1f}-{ratios.max():.1f})"
    )
    solve, factor = triangular_solve_time(model)
    print(
        f"  heatstack step matrix ({factorisation_name()}): factorisation {1e3 * factor:.2f} ms, "
        f"one triangular solve {1e3 * solve:.3f} ms (median of 300)"
    )
    print(f"  for information, heatstack time per step / one triangular solve: {hs_step / solve:.1f}")
    print(f"    {floor_text(stats, factor, solve)}")
    print(f"    {budget_text(stats, factor, solve, hs_step, fp_step)}")
    lax_step, lax = time_heatstack(model, SolverOptions(scheme="euler", fixed_step=DT))
    lax_stats = lax.metadata["solver"]
    lax_its = lax_stats["iterations"] / lax_stats["steps"]
    print(
        f"  for context, heatstack at its default Newton tolerance: {1e3 * lax_step:.2f} ms per "
        f"step, {lax_its:.2f} iterations per step"
    )
    return float(np.median(ratios)), hs_step, fp_step


def check_fipy_solvers(model: Model, times: np.ndarray, probes: dict) -> tuple[float, float]:
    """FiPy's conjugate-gradient solver against its LU solver (3k case), interleaved."""
    snaps = (10.0, 30.0)
    cg_runs, lu_runs = [], []
    for _ in range(REPEATS):
        cg_runs.append(run_fipy(model, times, probes, snaps, "cg"))
        lu_runs.append(run_fipy(model, times, probes, snaps, "lu"))
    diff = max(float(np.max(np.abs(cg_runs[-1].snapshots[t] - lu_runs[-1].snapshots[t]))) for t in snaps)
    cg = float(np.median([r.wall_time for r in cg_runs])) / cg_runs[-1].steps
    lu = float(np.median([r.wall_time for r in lu_runs])) / lu_runs[-1].steps
    print(
        f"  FiPy solvers at {model.n_cells} cells: conjugate gradients {1e3 * cg:.1f} ms per step, LU "
        f"{1e3 * lu:.1f} ms per step; largest field difference CG - LU {diff:.2e} K (sweep tolerance {TOLERANCE:g} K)"
    )
    return cg, lu


def scaling(hs_12k: float, fp_12k: float) -> None:
    print("\n[scaling] time per step versus cell count (same problem, 100 steps of 0.5 s)")
    rows = []
    for size in ("3k", "12k", "50k"):
        model, probes = build(size)
        if size == "12k":
            hs, fp_ = hs_12k, fp_12k
        else:
            hs, result = time_heatstack(model)
            fp_ = None
            if size == "3k":
                fp_, _ = check_fipy_solvers(model, result.times, probes)
        rows.append((model.n_cells, hs, fp_))
        fipy_text = f"{1e3 * fp_:8.1f} ms" if fp_ is not None else "       (not run)"
        print(f"  {model.n_cells:7d} cells: heatstack {1e3 * hs:7.2f} ms   FiPy (CG) {fipy_text}")
    n = np.array([r[0] for r in rows], float)
    t = np.array([r[1] for r in rows])
    slopes = np.diff(np.log(t)) / np.diff(np.log(n))
    print(
        "  heatstack growth exponent d ln(time) / d ln(cells): "
        + ", ".join(f"{int(n[k])}->{int(n[k + 1])}: {slopes[k]:.2f}" for k in range(slopes.size))
    )


def factorisation_cases(qdldl, A, upper, kept) -> dict:
    """The factorisations compared, as callables on the step matrix ``A`` (``upper``: its upper triangle)."""
    return {
        "splu(MMD)": lambda: spla.splu(
            A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0, options={"SymmetricMode": True}
        ),
        "splu(COLAMD)": lambda: spla.splu(A),
        "factorized": lambda: spla.factorized(A),
        "qdldl-new": lambda: qdldl.Solver(upper, upper=True),
        "qdldl-refactor": lambda: kept.update(upper, upper=True),
    }


def factorisations(repeats: int = 7) -> None:
    """Factorisations of heatstack's real step matrices (last step of the run) at 3k, 12k, 50k cells.

    Medians of ``repeats`` interleaved rounds: SuperLU as the solver used it before
    (symmetric mode, MMD on A^T + A), SuperLU's defaults (COLAMD), ``factorized``, and
    QDLDL new (AMD order and symbolic analysis each time) and refactorised with the kept
    analysis (what the solver does); one triangular solve of each.
    """
    try:
        import qdldl
    except ImportError:
        print("\n[factorisations] qdldl is not installed (pip install heatstack[fast]); skipped")
        return
    print(f"\n[factorisations] heatstack's step matrix at the end of the run, medians of {repeats} rounds [ms]")
    print("    cells      nnz   splu(MMD) splu(COLAMD) factorized qdldl-new qdldl-refactor | solve splu qdldl")
    rng = np.random.default_rng(0)
    for size in ("3k", "12k", "50k"):
        model, _ = build(size)
        system = last_step_matrix(model)
        A = system.assembled().copy()
        upper = sp.triu(A, format="csc")
        kept = qdldl.Solver(upper, upper=True)
        rhs = rng.standard_normal(A.shape[0])
        cases = factorisation_cases(qdldl, A, upper, kept)
        times = {name: [] for name in (*cases, "solve splu", "solve qdldl")}
        for _ in range(repeats):
            for name, make in cases.items():
                start = time.perf_counter()
                made = make()
                times[name].append(time.perf_counter() - start)
                if name == "splu(MMD)":
                    lu = made
            for name, factors in (("solve splu", lu), ("solve qdldl", kept)):
                start = time.perf_counter()
                factors.solve(rhs)
                times[name].append(time.perf_counter() - start)
        difference = np.max(np.abs(lu.solve(rhs) - kept.solve(rhs))) / np.max(np.abs(lu.solve(rhs)))
        ms = {name: 1e3 * float(np.median(v)) for name, v in times.items()}
        print(
            f"  {A.shape[0]:7d} {A.nnz:8d} "
            + " ".join(f"{ms[name]:10.2f}" for name in cases)
            + f" | {ms['solve splu']:6.3f} {ms['solve qdldl']:6.3f}  (solutions agree to {difference:.1e})"
        )


def memory_child() -> None:
    """50k cells, three simulated hours, adaptive steps; prints a JSON line with the peak RSS."""
    model, _ = build("50k")
    end = 3 * 3600.0
    law = FixedConvection(H_CONV, T_AIR, radiation=False)
    sched = Schedule(
        PowerHistory(POWER_TIMES, POWER),
        [Phase("stop", 0.0, 20.0, {"*": law}, clamped=True), Phase("parked", 20.0, end, {"*": law})],
    )
    start = time.perf_counter()
    result = model.run(sched, T0, SolverOptions())
    elapsed = time.perf_counter() - start
    peak_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # KiB on Linux
    print(
        json.dumps(
            {
                "cells": model.n_cells,
                "steps": result.metadata["solver"]["steps"],
                "seconds": elapsed,
                "peak_rss_mib": peak_kib / 1024.0,
                "final_max_K": float(result.final_state.temperature.max()),
            }
        )
    )


def memory() -> None:
    print("\n[memory] 50k cells, three simulated hours (20 s stop then parked), adaptive steps, own process")
    env = {
        **os.environ,
        "PYTHONPATH": os.pathsep.join(filter(None, (str(HERE.parent), os.environ.get("PYTHONPATH")))),
    }
    out = subprocess.run(
        [sys.executable, __file__, "--memory-child"], capture_output=True, text=True, check=True, env=env
    )
    data = json.loads(out.stdout.strip().splitlines()[-1])
    print(
        f"  {data['cells']} cells, {data['steps']} steps in {data['seconds']:.1f} s; "
        f"peak resident memory (ru_maxrss) {data['peak_rss_mib']:.0f} MiB (target < 500 MiB)"
    )


def profile() -> None:
    """cProfile of heatstack's 12k run, aggregated by what ``NewtonStep.step`` spends its time on.

    cProfile cannot see inside ``step`` itself (``np.bincount`` is an array-function
    dispatcher, ufunc arithmetic and fancy indexing are not calls); that remainder is
    split line by line when ``line_profiler`` is importable (optional, not a dependency).
    """
    from heatstack.numerics import newton

    model, _ = build("12k")
    model.run(schedule(), T0, options())  # warm-up
    profiler = cProfile.Profile()
    profiler.enable()
    result = model.run(schedule(), T0, options())
    profiler.disable()
    stats = pstats.Stats(profiler).stats
    info = result.metadata["solver"]
    iterations = info["iterations"]

    def cumulative(name: str, file_part: str = "newton.py") -> float:
        return sum(v[3] for k, v in stats.items() if k[2] == name and file_part in k[0])

    def own(name: str) -> float:
        return sum(v[2] for k, v in stats.items() if name in k[2])

    step = cumulative("step")
    parts = {
        "material properties (k_r, k_z, c, H per iteration)": cumulative("cell_properties", "step_matrix.py"),
        "boundary coefficients (per-group laws, radiation, U)": cumulative("faces", "boundaries.py"),
        "gap radiation conductances": cumulative("gaps", "boundaries.py"),
        "friction partition": cumulative("friction", "step_matrix.py"),
        "triangular solves (SuperLU or QDLDL solve)": own("'solve' of 'SuperLU'") + own("qdldl.solve"),
        "factorisations": cumulative("factorise"),
        "conservative update (mat-vec + exact T(H))": cumulative("conservative_update"),
        "accounts of the accepted step (finish)": cumulative("finish"),
    }
    parts["own lines of step and linearise: G, bincounts, scatter, residual, checks"] = step - sum(parts.values())
    print(
        f"\n[profile] heatstack, 12k case, {info['steps']} steps, {iterations} Newton iterations, "
        f"{info['factorisations']} factorisations (cProfile)"
    )
    print(f"  NewtonStep.step total {step:.3f} s = {1e3 * step / info['steps']:.2f} ms per step")
    for label, value in parts.items():
        print(f"    {label:72s} {1e3 * value / iterations:6.3f} ms/iter {100 * value / step:5.1f} %")
    try:
        from line_profiler import LineProfiler
    except ImportError:
        print("  (install line_profiler for a line-by-line split of the step's own statements)")
        return
    lines = LineProfiler(newton.NewtonStep.step)
    lines.enable()
    model.run(schedule(), T0, options())
    lines.disable()
    entries = next(iter(lines.get_stats().timings.values()))
    source = Path(newton.__file__).read_text().splitlines()
    total = sum(t for _, _, t in entries)
    print("  line_profiler, NewtonStep.step, top lines (includes the profiler's per-line overhead):")
    for lineno, hits, t in sorted(entries, key=lambda e: -e[2])[:14]:
        print(f"    {100 * t / total:5.1f} %  {hits:6d} hits  {source[lineno - 1].strip()[:88]}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--no-memory", action="store_true", help="skip the peak memory of a 50k-cell, 3 h run")
    parser.add_argument("--profile", action="store_true", help="also profile heatstack's step (12k case)")
    parser.add_argument("--factorisations", action="store_true", help="also time factorisations at 3k, 12k, 50k cells")
    parser.add_argument("--memory-child", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.memory_child:
        memory_child()
        return
    header()
    speedup, hs_step, fp_step = compare()
    scaling(hs_step, fp_step)
    if not args.no_memory:
        memory()
    if args.profile:
        profile()
    if args.factorisations:
        factorisations()
    print(f"speedup_vs_fipy: {speedup:.1f}")


if __name__ == "__main__":
    main()
