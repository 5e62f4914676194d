"""heatstack: transient axisymmetric heat conduction in an aircraft wheel and brake.

Everything a script or a back-end needs is importable from here: the core engine
(:class:`Assembly`, :class:`Model`, :class:`Schedule`, :func:`simulate`), the
parametric wheel and brake (:func:`build_wheel_brake`), the duty cycle
(:class:`DutyCycle`, :class:`DutyPhase`, :class:`Environment` and the braking events),
case files (:func:`load_case`, :func:`run_case`), the report, the answers read off a
Result (:mod:`heatstack.answers`) and the questions that re-run the model
(:mod:`heatstack.questions`).

Not certified data. Defer to the manufacturer's maintenance data, local regulations
and licensed practice.
"""

from importlib import metadata as _metadata

try:
    __version__ = _metadata.version("heatstack")
except _metadata.PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0.0.0+unknown"

# Plain imports after __version__ (modules that record the version read it from here).
# No module of the package imports this file's names at import time, so no order among
# these imports can close a circle; tests/test_public_api.py checks it in a fresh process.
from .answers import (  # noqa: E402
    assess_fuse_plugs,
    cooling_time_in_result,
    sensor_lag,
    tyre_gas,
    tyre_pressure_margin,
)
from .assembly import Assembly
from .builders import build_wheel_brake  # noqa: E402
from .case import Case, load_case, run_case  # noqa: E402
from .errors import HeatstackError, InputError, SolverError  # noqa: E402
from .geometry import CellGroup, Contact, FrictionSettings, GapPair, Part, Probe, RubbingPair, SurfaceGroup
from .material_files import available_materials, load_material  # noqa: E402
from .materials import Material, simple_material  # noqa: E402
from .model import Model, simulate  # noqa: E402
from .numerics.options import SolverOptions  # noqa: E402
from .numerics.schedule import BoundaryLaw, FixedConvection, Phase, PowerHistory, Schedule  # noqa: E402
from .operations.duty import DutyCycle, DutyPhase, Environment  # noqa: E402
from .operations.heat_input import (  # noqa: E402
    gear_retraction,
    stop_from_aircraft,
    stop_from_energy,
    stop_from_speed_trace,
    taxi_snubs,
)
from .operations.roll_inputs import Aircraft, Conditions, Runway  # noqa: E402
from .operations.stops import landing_roll, rejected_takeoff, taxi_stop  # noqa: E402
from .questions import cooling_time_from_state, estimate_energy, predict_from_estimate, what_if  # noqa: E402
from .report import build_report, format_report  # noqa: E402
from .report_settings import ReportSettings, TyreSettings  # noqa: E402
from .result import EnergyLedger, Result, State  # noqa: E402
from .resultfile import write_result  # noqa: E402
from .resultread import read_result  # noqa: E402
from .wheel_design import FusePlugSpec, WheelBrakeDesign  # noqa: E402

__all__ = [
    "Aircraft",
    "Assembly",
    "BoundaryLaw",
    "Case",
    "CellGroup",
    "Conditions",
    "Contact",
    "DutyCycle",
    "DutyPhase",
    "EnergyLedger",
    "Environment",
    "FixedConvection",
    "FrictionSettings",
    "FusePlugSpec",
    "GapPair",
    "HeatstackError",
    "InputError",
    "Material",
    "Model",
    "Part",
    "Phase",
    "PowerHistory",
    "Probe",
    "ReportSettings",
    "Result",
    "RubbingPair",
    "Runway",
    "Schedule",
    "SolverError",
    "SolverOptions",
    "State",
    "SurfaceGroup",
    "TyreSettings",
    "WheelBrakeDesign",
    "__version__",
    "assess_fuse_plugs",
    "available_materials",
    "build_report",
    "build_wheel_brake",
    "cooling_time_from_state",
    "cooling_time_in_result",
    "estimate_energy",
    "format_report",
    "gear_retraction",
    "landing_roll",
    "load_case",
    "load_material",
    "predict_from_estimate",
    "read_result",
    "rejected_takeoff",
    "run_case",
    "sensor_lag",
    "simple_material",
    "simulate",
    "stop_from_aircraft",
    "stop_from_energy",
    "stop_from_speed_trace",
    "taxi_snubs",
    "taxi_stop",
    "tyre_gas",
    "tyre_pressure_margin",
    "what_if",
    "write_result",
]
