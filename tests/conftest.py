"""Shared fixtures of the test suite.

``tests/unit`` holds behaviour tests; ``tests/validation`` holds the checks against a published source, a reference
library or a trade fact (``pytest tests/validation`` runs exactly those). Models that several test modules need are
built once per session here.
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).resolve().parent))  # the shared case modules beside this file

from energy_fit_case import E_TRUE, T_AMBIENT, TRACE_T, stop_and_park, synthetic_trace  # noqa: E402

from heatstack import Model, build_wheel_brake  # noqa: E402
from heatstack.questions.inverse import estimate_energy  # noqa: E402


@pytest.fixture(scope="session")
def built():
    return build_wheel_brake()


@pytest.fixture(scope="session")
def truth_model(built):
    return Model.build(built.assembly, cell_size=0.006)


@pytest.fixture(scope="session")
def fit_model(built):
    return Model.build(built.assembly, cell_size=0.009)


@pytest.fixture(scope="session")
def trace(truth_model, built):
    return synthetic_trace(truth_model, built, E_TRUE, seed=20240611)


@pytest.fixture(scope="session")
def estimate(fit_model, built, trace):
    # the duty's own energy (15 MJ) is only the first guess
    return estimate_energy(fit_model, stop_and_park(15e6), built.assembly.surfaces, TRACE_T, trace, T_AMBIENT)
