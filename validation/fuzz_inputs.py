"""Long fuzzing run: mutated demo case and study files through ``heatstack check`` / ``study --check``.

Each input is a mutated copy of ``examples/demo_rto.toml`` (checked with ``heatstack check``) or of
``examples/demo_study.toml`` (``heatstack study --check``, with the demo case as its base), made by
``tests/fuzz_mutations.py`` (the module the suite's ``tests/unit/test_fuzz_inputs.py`` uses too);
then ``heatstack run`` on mutants of the demo cut short (12 mm grid, minutes) that ``check`` accepts,
with four times the time bound, and ``heatstack study`` (one worker) on mutants of a 3-case study of
that short case that ``study --check`` accepts, with eight times the bound (a run or study refused
after its check accepted it counts as unclear).
The inputs run in a worker process that is killed and replaced when one input passes its time
bound (a hang); the worker's address space is limited, so an absurd size ends in MemoryError, not
in the machine's swap. Each outcome is classified (clear error, accepted, computation failure,
unclear error, silent misread, traceback, hang); the counts are printed, a few examples of every
class but the first two, and last ``unhandled_per_10k: X`` (tracebacks plus hangs per 10,000 inputs).

Usage::

    python validation/fuzz_inputs.py                 # 10,000 case files and 2,000 study files
    python validation/fuzz_inputs.py --cases 500 --studies 100 --runs 20 --seed 7 --timeout 20

Exit status: 0 when nothing was unhandled and nothing silently misread, else 1.
"""

from __future__ import annotations

import argparse
import multiprocessing
import random
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from fuzz_mutations import (  # noqa: E402
    CASE_FILE,
    OUTCOMES,
    STUDY_FILE,
    UNHANDLED,
    classify,
    mutate,
    run_in_process,
    write_mutant,
    write_short_case,
    write_short_study,
)


def _worker(connection, memory_limit: int, layout: bool) -> None:
    """Run each command line received on ``connection`` in this process; send back the outcome."""
    import resource

    resource.setrlimit(resource.RLIMIT_AS, (memory_limit, memory_limit))
    from heatstack import plotting
    from heatstack.cli import main

    if not layout:
        plotting.plot_layout = lambda assembly, path, grid=None, **kw: Path(path)
    while True:
        argv = connection.recv()
        if argv is None:
            return
        connection.send(run_in_process(main, argv, limit=1e6))


class Runner:
    """A worker process with a watchdog: an input past ``timeout`` kills it and a new one starts."""

    def __init__(self, timeout: float, memory_limit: int, layout: bool) -> None:
        self.timeout, self.memory_limit, self.layout = timeout, memory_limit, layout
        self.context = multiprocessing.get_context("spawn")
        self.process = None
        self.connection = None

    def _start(self) -> None:
        self.connection, child = self.context.Pipe()
        self.process = self.context.Process(target=_worker, args=(child, self.memory_limit, self.layout), daemon=False)
        self.process.start()

    def run(self, argv: list[str]) -> tuple[int | None, str, str, float]:
        """The exit code (None: killed at the time bound), stdout, stderr and seconds of one input."""
        if self.process is None or not self.process.is_alive():
            self._start()
        started = time.perf_counter()
        self.connection.send(argv)
        if self.connection.poll(self.timeout):
            try:
                return self.connection.recv()
            except EOFError:  # the worker died (a crash in a C library): as bad as a traceback
                self.process = None
                return -9, "", "Traceback (most recent call last)\nworker process died", time.perf_counter() - started
        self.process.kill()
        self.process.join()
        self.process = None
        return None, "", "", time.perf_counter() - started

    def close(self) -> None:
        """Stop the worker."""
        if self.process is not None and self.process.is_alive():
            self.connection.send(None)
            self.process.join(5)
            if self.process.is_alive():
                self.process.kill()


def fuzz(kind: str, count: int, rng: random.Random, runner: Runner, timeout: float, examples: dict) -> Counter:
    """Run ``count`` mutants of one kind (``case`` or ``study``); the outcome counts."""
    source = CASE_FILE if kind == "case" else STUDY_FILE
    counts: Counter = Counter()
    for k in range(count):
        mutant = mutate(source, rng)
        with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as folder:
            argv = write_mutant(mutant, Path(folder), kind)
            code, out, err, seconds = runner.run(argv)
        outcome = classify(code, out, err, seconds, timeout, mutant.must_fail)
        counts[outcome] += 1
        if outcome not in ("clear_error", "accepted") and len(examples.setdefault(outcome, [])) < 10:
            last = (err.strip().splitlines() or [""])[-1][:200]
            examples[outcome].append(f"[{kind}] {'; '.join(mutant.steps)[:300]} -> {code}: {last}")
        if (k + 1) % 100 == 0:
            print(f"  progress {kind}: {k + 1}/{count} {dict(counts)}", file=sys.stderr, flush=True)
    return counts


def fuzz_runs(count: int, rng: random.Random, runner: Runner, timeout: float, examples: dict) -> Counter:
    """``heatstack run`` on ``count`` mutants of the short demo case that ``check`` accepts; the counts.

    A mutant ``check`` refuses is skipped (up to 50 tries for each run); a run may end in exit 0
    or a failed computation (exit 1, one line), but not in a traceback, a hang, or exit 2 (the
    input refused after ``check`` accepted it: ``unclear_error`` here).
    """
    counts: Counter = Counter()
    with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as base:
        source = write_short_case(Path(base))
        for _ in range(count):
            for _ in range(50):
                mutant = mutate(source, rng, changes=1)
                with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as folder:
                    argv = write_mutant(mutant, Path(folder), "case")
                    checked = classify(*runner.run(argv), timeout, mutant.must_fail)
                    if checked != "accepted":
                        continue
                    run = ["run", argv[1], "--out", str(Path(folder) / "run"), "--quiet", "--no-plots"]
                    code, out, err, seconds = runner.run(run)
                outcome = classify(code, out, err, seconds, timeout, "")
                outcome = "unclear_error" if outcome == "clear_error" else outcome
                counts[outcome] += 1
                if outcome != "accepted" and len(examples.setdefault(f"run {outcome}", [])) < 10:
                    last = (err.strip().splitlines() or [""])[-1][:200]
                    examples[f"run {outcome}"].append(f"[run] {'; '.join(mutant.steps)[:300]} -> {code}: {last}")
                break
    return counts


def fuzz_study_runs(count: int, rng: random.Random, runner: Runner, timeout: float, examples: dict) -> Counter:
    """``heatstack study`` (one worker) on ``count`` mutants of a 3-case study of the short demo that
    ``study --check`` accepts; the counts (a study refused after its check counts as unclear)."""
    counts: Counter = Counter()
    with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as base:
        source, short_case = write_short_study(Path(base))
        for _ in range(count):
            for _ in range(50):
                mutant = mutate(source, rng, changes=1)
                with tempfile.TemporaryDirectory(prefix="heatstack-fuzz-") as folder:
                    argv = write_mutant(mutant, Path(folder), "study", base_case=short_case)
                    if classify(*runner.run(argv), timeout, mutant.must_fail) != "accepted":
                        continue
                    run = ["study", argv[1], "--store", str(Path(folder) / "store"), "--workers", "1", "--quiet"]
                    code, out, err, seconds = runner.run(run)
                outcome = classify(code, out, err, seconds, timeout, "")
                outcome = "unclear_error" if outcome == "clear_error" else outcome
                counts[outcome] += 1
                if outcome != "accepted" and len(examples.setdefault(f"study run {outcome}", [])) < 10:
                    last = (err.strip().splitlines() or [""])[-1][:200]
                    steps = "; ".join(mutant.steps)[:300]
                    examples[f"study run {outcome}"].append(f"[study run] {steps} -> {code}: {last}")
                break
    return counts


def main(argv: list[str] | None = None) -> int:
    """Run the fuzzing campaign and print its figures; 0 when nothing was unhandled or misread."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=10_000, help="mutated case files (default: %(default)s)")
    parser.add_argument("--studies", type=int, default=2_000, help="mutated study files (default: %(default)s)")
    parser.add_argument("--runs", type=int, default=100, help="runs of accepted mutants (default: %(default)s)")
    parser.add_argument(
        "--study-runs", type=int, default=20, help="3-case studies of accepted study mutants (default: %(default)s)"
    )
    parser.add_argument("--seed", type=int, default=2026, help="random seed (default: %(default)s)")
    parser.add_argument("--timeout", type=float, default=30.0, help="seconds an input may take (default: %(default)s)")
    parser.add_argument("--memory", type=float, default=4.0, help="worker address-space limit [GiB] (default: 4)")
    parser.add_argument("--no-layout", action="store_true", help="skip drawing the layout figure (faster)")
    args = parser.parse_args(argv)
    rng = random.Random(args.seed)
    runner = Runner(args.timeout, int(args.memory * 2**30), not args.no_layout)
    examples: dict = {}
    started = time.perf_counter()
    try:
        cases = fuzz("case", args.cases, rng, runner, args.timeout, examples)
        studies = fuzz("study", args.studies, rng, runner, args.timeout, examples)
        runs = fuzz_runs(args.runs, rng, runner, 4 * args.timeout, examples)
        study_runs = fuzz_study_runs(args.study_runs, rng, runner, 8 * args.timeout, examples)
    finally:
        runner.close()
    total = cases + studies + runs + study_runs
    inputs = args.cases + args.studies + sum(runs.values()) + sum(study_runs.values())
    print(
        f"fuzzed {args.cases} case files, {args.studies} study files, {sum(runs.values())} runs and "
        f"{sum(study_runs.values())} study runs in {time.perf_counter() - started:.0f} s"
    )
    print(f"{'outcome':16s} {'check':>7s} {'study':>7s} {'run':>7s} {'study run':>9s}")
    for outcome in OUTCOMES:
        print(f"{outcome:16s} {cases[outcome]:7d} {studies[outcome]:7d} {runs[outcome]:7d} {study_runs[outcome]:9d}")
    for outcome, lines in examples.items():
        print(f"examples of {outcome}:")
        for line in lines:
            print(f"  {line}")
    unhandled = sum(total[o] for o in UNHANDLED)
    print(f"silent_misreads: {total['silent_misread']}")
    print(f"unhandled_per_10k: {1e4 * unhandled / max(inputs, 1):.1f}")
    return 0 if unhandled == 0 and total["silent_misread"] == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
