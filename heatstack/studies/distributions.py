"""The distributions a study parameter may follow, with parameters that may carry units.

Each distribution holds its parameters as given (numbers in SI or strings with a unit)
and builds a frozen :mod:`scipy.stats` distribution in SI once the parameter's physical
dimension is known. :data:`DISTRIBUTIONS` names them as a study file writes them.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any, ClassVar

from scipy import stats

from ..errors import InputError
from ..units import quantity

__all__ = [
    "Distribution",
    "Uniform",
    "Normal",
    "TruncatedNormal",
    "Triangular",
    "LogNormal",
    "DISTRIBUTIONS",
]


@dataclass(frozen=True)
class Distribution:
    """Base of the distributions a parameter may follow.

    Subclasses hold their parameters as given (numbers in SI or strings with a unit) and
    build a frozen :mod:`scipy.stats` distribution in SI once the parameter's dimension
    is known (:meth:`frozen`). Location parameters (bounds, mean, mode, median) carry the
    parameter's dimension; spreads (``std``) carry its difference (a temperature spread
    of ``"3 degC"`` is 3 K).
    """

    kind: ClassVar[str] = ""
    _spreads: ClassVar[tuple[str, ...]] = ()
    _plain: ClassVar[tuple[str, ...]] = ()
    _positive: ClassVar[tuple[str, ...]] = ()

    def values_si(self, dimension: str | None, where: str) -> dict[str, float]:
        """The distribution's parameters in SI, validated; keys are the field names.

        Parameters
        ----------
        dimension : str or None
            Dimension of the sampled quantity (None: dimensionless); a spread of a temperature
            is a temperature difference.
        where : str
            Key path used in error messages.

        Returns
        -------
        dict of str to float
            Each parameter in SI.

        Raises
        ------
        UnitError
            If a parameter has the wrong unit.
        InputError
            If a parameter is out of range or the parameters are inconsistent (e.g. low > high).
        """
        out = {}
        spread = "temperature_difference" if dimension == "temperature" else dimension
        for f in fields(self):
            value = getattr(self, f.name)
            if f.name in self._plain:
                of = "dimensionless"
            else:
                of = (spread if f.name in self._spreads else dimension) or "dimensionless"
            bounds = {"minimum": 0.0, "exclusive_minimum": True} if f.name in self._positive else {}
            out[f.name] = quantity(value, of, f"{where}.{f.name}", **bounds)
        self._validate(out, where)
        return out

    def _validate(self, v: dict[str, float], where: str) -> None:  # pragma: no cover - overridden
        return None

    def _scipy(self, v: dict[str, float]) -> Any:  # pragma: no cover - overridden
        raise NotImplementedError

    def frozen(self, dimension: str | None, where: str = "distribution") -> Any:
        """A frozen :mod:`scipy.stats` distribution in SI units.

        Parameters
        ----------
        dimension : str or None
            Dimension of the sampled quantity (None: dimensionless).
        where : str, optional
            Key path used in error messages.

        Returns
        -------
        scipy.stats.rv_frozen
            The distribution.
        """
        return self._scipy(self.values_si(dimension, where))

    def to_dict(self) -> dict[str, Any]:
        """The distribution as given, for the store's manifest.

        Returns
        -------
        dict
            ``distribution`` (the kind) and every parameter as given.
        """
        return {"distribution": self.kind, **{f.name: getattr(self, f.name) for f in fields(self)}}

    def strings(self) -> list[str]:
        """Parameters given as strings (they carry units).

        Returns
        -------
        list of str
            The string-valued parameters.
        """
        return [v for f in fields(self) if isinstance(v := getattr(self, f.name), str)]


def _ordered(v: dict[str, float], low: str, high: str, where: str, given: Any) -> None:
    if not v[low] < v[high]:
        raise InputError(f"{where}.{high}: must be above {low} ({getattr(given, low)!r}), got {getattr(given, high)!r}")


@dataclass(frozen=True)
class Uniform(Distribution):
    """Uniform between ``low`` and ``high`` (``scipy.stats.uniform``).

    Attributes
    ----------
    low, high : float or str
        Bounds, SI numbers or quantities with units.
    """

    low: Any
    high: Any
    kind: ClassVar[str] = "uniform"

    def _validate(self, v, where):
        _ordered(v, "low", "high", where, self)

    def _scipy(self, v):
        return stats.uniform(loc=v["low"], scale=v["high"] - v["low"])


@dataclass(frozen=True)
class Normal(Distribution):
    """Normal of ``mean`` and standard deviation ``std`` (``scipy.stats.norm``).

    Attributes
    ----------
    mean : float or str
        Mean, SI number or quantity.
    std : float or str
        Standard deviation (> 0), SI number or quantity.
    """

    mean: Any
    std: Any
    kind: ClassVar[str] = "normal"
    _spreads: ClassVar[tuple[str, ...]] = ("std",)
    _positive: ClassVar[tuple[str, ...]] = ("std",)

    def _scipy(self, v):
        return stats.norm(loc=v["mean"], scale=v["std"])


@dataclass(frozen=True)
class TruncatedNormal(Distribution):
    """Normal of ``mean`` and ``std`` cut to [``low``, ``high``] (``scipy.stats.truncnorm``).

    Attributes
    ----------
    mean : float or str
        Mean of the untruncated normal.
    std : float or str
        Its standard deviation (> 0).
    low, high : float or str
        Truncation bounds.
    """

    mean: Any
    std: Any
    low: Any
    high: Any
    kind: ClassVar[str] = "truncated_normal"
    _spreads: ClassVar[tuple[str, ...]] = ("std",)
    _positive: ClassVar[tuple[str, ...]] = ("std",)

    def _validate(self, v, where):
        _ordered(v, "low", "high", where, self)

    def _scipy(self, v):
        a, b = (v["low"] - v["mean"]) / v["std"], (v["high"] - v["mean"]) / v["std"]
        return stats.truncnorm(a, b, loc=v["mean"], scale=v["std"])


@dataclass(frozen=True)
class Triangular(Distribution):
    """Triangular from ``low`` through ``mode`` to ``high`` (``scipy.stats.triang``).

    Attributes
    ----------
    low, mode, high : float or str
        Lower bound, mode and upper bound.
    """

    low: Any
    mode: Any
    high: Any
    kind: ClassVar[str] = "triangular"

    def _validate(self, v, where):
        _ordered(v, "low", "high", where, self)
        if not v["low"] <= v["mode"] <= v["high"]:
            raise InputError(f"{where}.mode: must lie between low and high, got {self.mode!r}")

    def _scipy(self, v):
        width = v["high"] - v["low"]
        return stats.triang((v["mode"] - v["low"]) / width, loc=v["low"], scale=width)


@dataclass(frozen=True)
class LogNormal(Distribution):
    """Log-normal of ``median`` and log standard deviation ``log_std`` [-] (``scipy.stats.lognorm``).

    ``ln X`` is normal with mean ``ln(median)`` and standard deviation ``log_std``.

    Attributes
    ----------
    median : float or str
        Median (> 0), SI number or quantity.
    log_std : float
        Standard deviation of ``ln X`` (> 0) [-].
    """

    median: Any
    log_std: Any
    kind: ClassVar[str] = "lognormal"
    _plain: ClassVar[tuple[str, ...]] = ("log_std",)
    _positive: ClassVar[tuple[str, ...]] = ("median", "log_std")

    def _scipy(self, v):
        return stats.lognorm(v["log_std"], scale=v["median"])


#: Distribution kinds by name, as written in a study file.
DISTRIBUTIONS: dict[str, type[Distribution]] = {
    cls.kind: cls for cls in (Uniform, Normal, TruncatedNormal, Triangular, LogNormal)
}
