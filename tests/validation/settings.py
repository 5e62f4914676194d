"""The two solver settings every transient validation check runs at, with the same tolerance.

``fixed_step``
    The check's own fixed small step (stated in the check), so that the time error is
    small against the tolerance: this checks the physics and the space discretisation.
``defaults``
    ``SolverOptions()`` as a user gets it (only output times such as ``snapshot_times``
    added): this checks that the answers a user gets are as good as the check demands.

Use :func:`at_both_settings` on a test (or on the test that requests a run fixture taking
``setting``) and :func:`solver_options` to build the options of the run. The ids are
``fixed_step`` and ``defaults``, so ``pytest tests/validation -k defaults`` runs the checks
at the default settings only.

A defaults case that misses on the current stepping is marked strictly expected to fail
with the miss measured in the reason: it is not loosened, and it must be unmarked as soon
as it passes (strict: an unexpected pass fails the run).
"""

from __future__ import annotations

import pytest

from heatstack import SolverOptions

FIXED_STEP, DEFAULTS = "fixed_step", "defaults"

#: What every strict expected failure at the defaults says after its measured miss.
PENDING = "the default step control misses by {miss} (measured); not loosened: the tolerance must tighten"


def at_both_settings(defaults_miss: str | None = None):
    """Parametrise a test over ``setting`` in (``fixed_step``, ``defaults``), module scope.

    Parameters
    ----------
    defaults_miss : str, optional
        The measured miss at the default settings (e.g. ``"0.9 K against 0.6 K"``); when
        given, the ``defaults`` case is marked ``xfail(strict=True)`` with it in the reason.

    Returns
    -------
    pytest.MarkDecorator
        The parametrisation.
    """
    defaults = DEFAULTS
    if defaults_miss is not None:
        defaults = pytest.param(
            DEFAULTS, marks=pytest.mark.xfail(strict=True, reason=PENDING.format(miss=defaults_miss))
        )
    return pytest.mark.parametrize("setting", [FIXED_STEP, defaults], scope="module")


def solver_options(setting: str, fixed_step: float, **output) -> SolverOptions:
    """The options of a run at ``setting``.

    Parameters
    ----------
    setting : {"fixed_step", "defaults"}
        Which of the two settings.
    fixed_step : float
        The check's fixed step [s] (used at ``fixed_step`` only).
    **output
        Options that only say what to keep (``snapshot_times``), passed at both settings.

    Returns
    -------
    SolverOptions
        ``SolverOptions(fixed_step=fixed_step, **output)`` or ``SolverOptions(**output)``.
    """
    if set(output) - {"snapshot_times"}:
        raise ValueError(f"only output options may be passed at both settings, got {sorted(output)}")
    if setting == FIXED_STEP:
        return SolverOptions(fixed_step=fixed_step, **output)
    if setting == DEFAULTS:
        return SolverOptions(**output)
    raise ValueError(f"unknown setting {setting!r}")
