"""The command-line verbs that fit a model to measurements: ``fit`` (the braking energy from a recorded sensor
trace, optionally with an uncertain sensor time constant and contact conductance) and ``calibrate`` (a case's
uncertain parameters from measured test traces)."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .errors import InputError
from .geometry import HEAT_SINK_MAX, HEAT_SINK_MEAN
from .report import CAUTION

__all__ = ["cmd_fit", "cmd_calibrate"]


def cmd_fit(args: argparse.Namespace) -> int:
    """The ``fit`` verb: estimate the energy per brake from a recorded sensor trace.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (case, trace, sensor, optional input spreads).

    Returns
    -------
    int
        0 when the fit converged, else 1.
    """
    from .case import load_case
    from .questions.sensor_trace import read_sensor_trace

    case = load_case(args.case)
    t, T = read_sensor_trace(args.trace)
    if args.sensor_time_constant_sd is not None or args.contact_conductance_sd is not None:
        return _fit_with_inputs(args, case, t, T)
    from .questions.inverse import estimate_energy

    model = case.build_model()
    estimate = estimate_energy(
        model,
        case.duty,
        case.assembly.surfaces,
        t,
        T,
        case.initial_temperature,
        sensor=args.sensor,
        raise_on_failure=False,
    )
    state = "converged" if estimate.converged else "NOT converged"
    print(CAUTION)
    print(
        f"energy per brake: {estimate.energy / 1e6:.3f} MJ +/- {estimate.standard_error / 1e6:.3f} MJ "
        f"(1 standard error; {state}; {estimate.n_runs} runs; residual rms {estimate.residual_rms:.2f} K)"
    )
    _print_fit_details(estimate, case)
    return 0 if estimate.converged else 1


def _print_fit_details(estimate, case) -> None:
    from .answers.fuse_plugs import assess_fuse_plugs

    if estimate.message:
        print(estimate.message)
    predicted = estimate.predicted
    peaks = [(name, *predicted.peak(name)) for name in (HEAT_SINK_MEAN, HEAT_SINK_MAX) if name in predicted.series]
    if case.fuse_plugs:  # a plug's peak is its own lagged temperature, as in the report
        peaks += [(a.name, a.peak, a.time_of_peak) for a in assess_fuse_plugs(predicted, case.fuse_plugs)]
    for name, value, when in peaks:
        print(f"  predicted {name:16s} peak {value - 273.15:7.1f} degC at {when / 60.0:6.1f} min")


def _fit_with_inputs(args: argparse.Namespace, case, t, T) -> int:
    from .questions.honest_energy import energy_with_input_uncertainty
    from .units import to_si

    tau_sd = None
    if args.sensor_time_constant_sd is not None:
        tau_sd = to_si(args.sensor_time_constant_sd, None, "time", "--sensor-time-constant-sd")
    honest = energy_with_input_uncertainty(case, t, T, args.sensor, tau_sd, args.contact_conductance_sd)
    estimate = honest.estimate
    state = "converged" if estimate.converged else "NOT converged"
    print(CAUTION)
    print(
        f"energy per brake: {estimate.energy / 1e6:.3f} MJ +/- {honest.standard_deviation / 1e6:.3f} MJ "
        f"(1 standard deviation, trace scatter and uncertain inputs; {state})"
    )
    print(f"  from the trace scatter: +/- {estimate.standard_error / 1e6:.3f} MJ")
    for part in honest.contributions:
        print(
            f"  from the {part.name}: +/- {part.standard_deviation / 1e6:.3f} MJ "
            f"(refits {part.energy_low / 1e6:.3f} and {part.energy_high / 1e6:.3f} MJ)"
        )
    _print_fit_details(estimate, case)
    return 0 if estimate.converged else 1


def cmd_calibrate(args: argparse.Namespace) -> int:
    """The ``calibrate`` verb: fit a calibration file's parameters and write its outputs.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (calibration file, output folder, quiet).

    Returns
    -------
    int
        0 when the fit converged, else 1.

    Raises
    ------
    InputError
        If ``--out`` exists and is not a folder.
    """
    from .questions.calibrate import calibrate, fit_summary, write_calibration_outputs
    from .questions.calibration_file import load_calibration
    from .questions.calibration_report import CALIBRATION_NOTE

    calibration = load_calibration(args.calibration)
    out = Path(args.out) if args.out else Path(args.calibration).with_suffix(".calibrated")
    if out.exists() and not out.is_dir():
        raise InputError(f"--out: {str(out)!r} is not a folder")
    if not args.quiet:
        print(
            f"heatstack: {calibration.title}: {len(calibration.runs)} runs, {len(calibration.parameters)} parameters, "
            f"{calibration.n_points} readings",
            file=sys.stderr,
        )
    run = calibrate(calibration)
    print(CAUTION)
    print(CALIBRATION_NOTE)
    print(run.fit.message)
    print(fit_summary(run.fit, run.identifiability))
    print(run.identifiability.statement)
    for path in write_calibration_outputs(run, out):
        print(f"wrote: {path}")
    return 0 if run.fit.converged else 1
