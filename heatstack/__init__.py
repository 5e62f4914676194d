"""heatstack: transient axisymmetric heat conduction in an aircraft wheel and brake.

Not certified data. Defer to the manufacturer's maintenance data, local regulations
and licensed practice.
"""

from __future__ import annotations

from importlib.metadata import PackageNotFoundError, version

from .errors import HeatstackError, InputError, SolverError
from .geometry import Assembly, Contact, FrictionSettings, GapPair, Part, Probe
from .material_files import available_materials, load_material
from .materials import Material, simple_material
from .model import Model, simulate
from .numerics.schedule import BoundaryLaw, FixedConvection, Phase, PowerHistory, Schedule
from .numerics.solver import SolverOptions
from .result import EnergyLedger, Result, State
from .resultfile import write_result
from .resultread import read_result

try:
    __version__ = version("heatstack")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0.0.0+unknown"

__all__ = [
    "Assembly",
    "BoundaryLaw",
    "Contact",
    "EnergyLedger",
    "FixedConvection",
    "FrictionSettings",
    "GapPair",
    "HeatstackError",
    "InputError",
    "Material",
    "Model",
    "Part",
    "Phase",
    "PowerHistory",
    "Probe",
    "Result",
    "Schedule",
    "SolverError",
    "SolverOptions",
    "State",
    "__version__",
    "available_materials",
    "read_result",
    "write_result",
    "load_material",
    "simple_material",
    "simulate",
]
