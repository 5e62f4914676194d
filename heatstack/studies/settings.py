"""The settings of a study's reduced-order model and of its rare-event estimate, validated in SI.

A study file gives them as ``[study.reduced_model]`` and ``[study.rare_event]`` tables
(our own layout, see :func:`heatstack.studies.studyfile.study_from_mapping`); the Python
API builds the records directly. Values may carry units (``tolerance_peak = "1 K"``);
:meth:`ReducedModelSettings.checked` and :meth:`RareEventSettings.checked` return a copy
with every value in SI and raise :class:`~heatstack.errors.InputError` naming the key.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..units import quantity

__all__ = ["ReducedModelSettings", "RareEventSettings", "SURFACE_KINDS", "RARE_EVENT_METHODS", "FALLBACKS"]

#: Forms of the reduced model's response surface.
SURFACE_KINDS = ("spline", "quadratic")

#: Ways of estimating a rare-event probability.
RARE_EVENT_METHODS = ("importance_sampling", "monte_carlo")

#: What a study does when the gate refuses its reduced model.
FALLBACKS = ("full", "stop")


def _whole(value: Any, where: str, minimum: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < minimum:
        raise InputError(f"{where}: expected a whole number >= {minimum}, got {value!r}")
    return int(value)


def _choice(value: Any, allowed: Sequence[str], where: str) -> str:
    if value not in allowed:
        raise InputError(f"{where}: expected one of {', '.join(allowed)}, got {value!r}")
    return str(value)


def _fraction(value: Any, where: str, low: float, high: float) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or not low < float(value) < high:
        raise InputError(f"{where}: expected a number strictly between {low:g} and {high:g}, got {value!r}")
    return float(value)


@dataclass(frozen=True)
class ReducedModelSettings:
    """How a study builds, checks and uses its reduced-order model.

    Attributes
    ----------
    training : int or None
        Full runs of the first fit, the first points of the design; twice the number of
        terms of a quadratic in the study's parameters by default.
    held_back : int
        Full runs held back per round to check the model (never trained on).
    rounds : int
        Fits at most; after a refused fit the worst half of the held-back runs join the
        training set and fresh held-back runs are drawn.
    tolerance_peak : float or str
        Largest accepted error of every output that is not a time (peaks, margins) [K].
    tolerance_time : float or str
        Largest accepted error of peak times and delays [s].
    confirm_within : float
        A case whose predicted margin lies within this many measured errors of zero is
        re-run in full [-].
    confirm_margin : float or str
        ... and every case whose predicted margin lies within this of zero, whatever the
        measured error (a floor for a model that measured itself very accurate) [K].
    fallback : {"full", "stop"}
        When the gate refuses: run the study's cases in full, or stop after saying so.
    kind : {"spline", "quadratic"}
        ``spline``: a thin-plate spline with a quadratic trend that passes through every
        training run (scipy ``RBFInterpolator``); ``quadratic``: a least-squares quadratic.
    tail : float
        Each parameter's quantiles ``tail`` and ``1 - tail`` bound the design box [-].
    outputs : tuple of str or None
        The outputs modelled (names as in the study table); peaks, peak times, delays and
        margins by default.
    seed : int or None
        Seed of the design (the study's seed by default).
    """

    training: int | None = None
    held_back: int = 12
    rounds: int = 3
    tolerance_peak: float | str = 1.0
    tolerance_time: float | str = 30.0
    confirm_within: float = 3.0
    confirm_margin: float | str = 0.0
    fallback: str = "full"
    kind: str = "spline"
    tail: float = 1e-6
    outputs: tuple[str, ...] | None = None
    seed: int | None = None

    def checked(self, where: str = "study.reduced_model") -> ReducedModelSettings:
        """A copy with the tolerances in SI and every value validated.

        Parameters
        ----------
        where : str, optional
            Key path used in error messages.

        Returns
        -------
        ReducedModelSettings
            Tolerances as floats [K], [s].

        Raises
        ------
        InputError
            Naming the key of a value out of range or of the wrong type or unit.
        """
        if self.training is not None:
            _whole(self.training, f"{where}.training", 1)
        _whole(self.held_back, f"{where}.held_back", 1)
        _whole(self.rounds, f"{where}.rounds", 1)
        if self.seed is not None:
            _whole(self.seed, f"{where}.seed", 0)
        positive = {"minimum": 0.0, "exclusive_minimum": True}
        peak = quantity(self.tolerance_peak, "temperature_difference", f"{where}.tolerance_peak", **positive)
        time = quantity(self.tolerance_time, "time", f"{where}.tolerance_time", **positive)
        floor = quantity(self.confirm_margin, "temperature_difference", f"{where}.confirm_margin", minimum=0.0)
        confirm = self.confirm_within
        if isinstance(confirm, bool) or not isinstance(confirm, int | float) or not 0.0 <= confirm < math.inf:
            raise InputError(f"{where}.confirm_within: expected a number of errors >= 0, got {confirm!r}")
        _choice(self.fallback, FALLBACKS, f"{where}.fallback")
        _choice(self.kind, SURFACE_KINDS, f"{where}.kind")
        _fraction(self.tail, f"{where}.tail", 0.0, 0.5)
        outputs = self.outputs
        if outputs is not None:
            if isinstance(outputs, str) or not all(isinstance(o, str) for o in outputs) or not outputs:
                raise InputError(f"{where}.outputs: expected a non-empty list of output names, got {outputs!r}")
            outputs = tuple(outputs)
        return dataclasses.replace(
            self,
            tolerance_peak=peak,
            tolerance_time=time,
            confirm_within=float(confirm),
            confirm_margin=floor,
            outputs=outputs,
        )

    def band(self, errors: np.ndarray) -> np.ndarray:
        """Half-width of the confirmation band about a zero margin, per margin (a checked copy).

        Parameters
        ----------
        errors : ndarray
            Measured largest held-back error of each margin [K].

        Returns
        -------
        ndarray
            ``max(confirm_within * error, confirm_margin)`` [K].
        """
        return np.maximum(self.confirm_within * np.asarray(errors, dtype=float), float(self.confirm_margin))

    def tolerance_of(self, name: str) -> float:
        """The tolerance of output ``name``: a time's for peak times and delays, else a peak's.

        Parameters
        ----------
        name : str
            An output name (``peak_time:sensor``, ``plug_margin:fuse plug 1``).

        Returns
        -------
        float
            [s] for ``peak_time:`` and ``peak_delay:`` outputs, otherwise [K] (a checked copy).
        """
        timed = name.startswith(("peak_time:", "peak_delay:"))
        return float(self.tolerance_time if timed else self.tolerance_peak)


@dataclass(frozen=True)
class RareEventSettings:
    """How a study estimates the probability of a rare release or limit crossing.

    Attributes
    ----------
    event : str
        ``any_plug_released`` (a plug's margin <= 0), ``any_limit`` (a plug's or an
        ``output.limits`` margin <= 0), or one margin column (``plug_margin:fuse plug 1``,
        ``limit_margin:tyre bead``): the event is that margin <= 0.
    method : {"importance_sampling", "monte_carlo"}
        Importance sampling about the design point found on the reduced model, or plain
        Monte Carlo (the check).
    samples : int
        Samples drawn (on the reduced model; the near-limit ones also run in full).
    seed : int or None
        Seed of the samples (the study's seed by default).
    confidence : float
        Two-sided confidence level of the interval [-].
    defensive : float
        Share of the importance density kept at the input distribution itself (a defensive
        mixture), bounding every weight by ``1 / defensive`` [-].
    """

    event: str = "any_plug_released"
    method: str = "importance_sampling"
    samples: int = 2000
    seed: int | None = None
    confidence: float = 0.95
    defensive: float = 0.1

    def checked(self, where: str = "study.rare_event") -> RareEventSettings:
        """A validated copy.

        Parameters
        ----------
        where : str, optional
            Key path used in error messages.

        Returns
        -------
        RareEventSettings
            The same values, checked.

        Raises
        ------
        InputError
            Naming the key of a value out of range or of the wrong type.
        """
        if not isinstance(self.event, str) or not self.event:
            raise InputError(f"{where}.event: expected an event or margin name, got {self.event!r}")
        _choice(self.method, RARE_EVENT_METHODS, f"{where}.method")
        _whole(self.samples, f"{where}.samples", 2)
        if self.seed is not None:
            _whole(self.seed, f"{where}.seed", 0)
        _fraction(self.confidence, f"{where}.confidence", 0.0, 1.0)
        _fraction(self.defensive, f"{where}.defensive", 0.0, 1.0)
        return dataclasses.replace(self, confidence=float(self.confidence), defensive=float(self.defensive))
