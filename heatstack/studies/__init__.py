"""Studies at fleet scale: parameter sweeps and Monte Carlo fuse-plug margins.

A :class:`Study` names a base case file, the parameters to vary (addressed by their key
path in the case, e.g. ``duty.phases[0].events[0].mass``), how to sample them (a full
grid, random, or a Latin hypercube) and what to collect. :func:`run_study` runs it on
an executor (in this process, a local process pool or a Dask cluster) into a store
folder, one file per finished case, so that an interrupted study resumes where it
stopped. The results come back as a :class:`StudyTable`; the analysis functions give
release probabilities with confidence intervals, margin percentiles and sensitivity
rankings, and :mod:`heatstack.studies.plots` draws them.

Example (an invented study of the invented demonstration case)
--------------------------------------------------------------
>>> from heatstack.studies import Study, Parameter, Normal, Uniform, Sampling, run_study, release_probability
>>> study = Study(                                                     # doctest: +SKIP
...     "examples/demo_rto.toml",
...     [Parameter("duty.phases[0].events[0].mass", Normal("62 t", "3 t"), name="mass"),
...      Parameter("assembly.fuse_plugs[0].release_temperature", Uniform("174 degC", "180 degC"))],
...     Sampling("latin_hypercube", cases=200, seed=1),
...     cell_size="8 mm", accuracy="0.5 K")
>>> run = run_study(study, "mass-study")                               # doctest: +SKIP
>>> release_probability(run.table).wilson                              # doctest: +SKIP

Not certified data.
"""

from __future__ import annotations

from ..errors import ExecutorError, OptionalDependencyError
from .analysis import (
    ProbabilityEstimate,
    Sensitivity,
    SensitivityResult,
    binomial_intervals,
    governing_plugs,
    margin_percentiles,
    release_probability,
    sensitivity,
)
from .dask_executor import DaskExecutor
from .description import Sampling, Study, StudyPlan, plan_study
from .distributions import DISTRIBUTIONS, Distribution, LogNormal, Normal, Triangular, TruncatedNormal, Uniform
from .executors import LocalExecutor, SerialExecutor, StudyExecutor
from .parameters import Parameter
from .rare_events import RareEventEstimate
from .reduced_study import ReducedStudyRun, run_reduced_study
from .runner import CaseOutcome, StudyRun, run_study, summarise
from .settings import RareEventSettings, ReducedModelSettings
from .store import StudyStore, load_table
from .studyfile import load_study, study_from_mapping
from .summary import study_report
from .table import StudyTable

__all__ = [
    "CaseOutcome",
    "DISTRIBUTIONS",
    "DaskExecutor",
    "Distribution",
    "ExecutorError",
    "LocalExecutor",
    "LogNormal",
    "Normal",
    "OptionalDependencyError",
    "Parameter",
    "ProbabilityEstimate",
    "RareEventEstimate",
    "RareEventSettings",
    "ReducedModelSettings",
    "ReducedStudyRun",
    "Sampling",
    "SerialExecutor",
    "Sensitivity",
    "SensitivityResult",
    "Study",
    "StudyExecutor",
    "StudyPlan",
    "StudyRun",
    "StudyStore",
    "StudyTable",
    "Triangular",
    "TruncatedNormal",
    "Uniform",
    "binomial_intervals",
    "governing_plugs",
    "load_study",
    "load_table",
    "margin_percentiles",
    "plan_study",
    "release_probability",
    "run_reduced_study",
    "run_study",
    "sensitivity",
    "study_from_mapping",
    "study_report",
    "summarise",
]
