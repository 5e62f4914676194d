"""What the report assesses: :class:`ReportSettings` (unit, limits, fuse plugs, cooling question) and
:class:`TyreSettings`, the tyre gas inputs, with the tyre gas a run gives under them.

The settings are stored with a result (:meth:`ReportSettings.to_mapping`) and read back
(:meth:`ReportSettings.from_mapping`), so ``heatstack report results.h5`` assesses what the run did.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import asdict, dataclass, field, fields
from typing import Any

import numpy as np

from .answers.tyre import TyreGas, tyre_gas, with_tyre_gas_state
from .errors import InputError
from .geometry import HEAT_SINK_MEAN
from .result import Result
from .unit_declarations import convert_declared, declared
from .wheel_design import FusePlugSpec

__all__ = ["TyreSettings", "ReportSettings", "tyre_gas_for", "with_tyre_gas_carried"]


@dataclass(frozen=True)
class TyreSettings:
    """Tyre gas node inputs (SI; pressures gauge), as :func:`~heatstack.answers.tyre.tyre_gas` takes them.

    Parameters
    ----------
    cold_pressure : float
        Cold inflation pressure [Pa gauge].
    gas_volume : float
        Gas volume of the tyre [m^3].
    cavity_area : float
        Rim exterior wetted by the tyre gas [m^2].
    h_cavity : float
        Heat transfer coefficient rim -> gas [W/(m^2 K)].
    outer_conductance : float or None
        Conductance from the gas through the carcass to ambient [W/K]; None for the
        estimate of :func:`~heatstack.answers.tyre.default_outer_conductance` (about
        6 W/(m^2 K) over the tyre's outer surface, from the gas volume).
    pressure_limit : float or None
        Pressure limit [Pa gauge] to assess against, or None for no limit.
    ambient_pressure : float
        Air pressure [Pa] the gauge pressures are read against (the case's own ambient).

    Notes
    -----
    The bounds keep the gas node's arithmetic finite while leaving every real tyre inside:
    a gas volume of 1 cm^3 to 100 m^3, a rim-to-gas coefficient up to 10^4 W/(m^2 K) (gas
    convection stays far below it), a carcass conductance up to 10^6 W/K, a gauge cold
    pressure >= 0 and a gauge limit > 0 (common practice, no source).
    """

    cold_pressure: float = declared("pressure", minimum=0.0)
    gas_volume: float = declared("volume", minimum=1e-6, maximum=100.0)
    cavity_area: float = declared("area", minimum=1e-6, maximum=100.0)
    h_cavity: float = declared("heat_transfer_coefficient", 15.0, minimum=0.0, maximum=1e4)
    outer_conductance: float | None = declared("thermal_conductance", None, minimum=0.0, maximum=1e6)
    pressure_limit: float | None = declared("pressure", None, positive=True)
    ambient_pressure: float = declared("pressure", 101325.0, minimum=1.0, maximum=1e7)

    def __post_init__(self) -> None:
        convert_declared(self, "tyre")


@dataclass(frozen=True)
class ReportSettings:
    """What the report assesses. Temperatures [K].

    Parameters
    ----------
    unit : str
        Temperature unit of the text report: ``"degC"``, ``"degF"`` or ``"K"``.
    limits : mapping of str to float
        Temperature limit [K] per probe or series name, for the margins; a limit on a
        fuse plug's name is judged on the plug's own (lagged) temperature.
    fuse_plugs : tuple of FusePlugSpec
        Fuse plugs to assess (release temperature [K], tolerance [K], lag [s]).
    tyre : TyreSettings or None
        Tyre gas node inputs, or None for no tyre section.
    cold_temperature : float
        Tyre gas temperature [K] at which the cold inflation pressure holds.
    cooling_below : float or None
        Temperature [K] for the cooling time of ``cooling_series``, or None for none.
    cooling_series : str
        Probe or series whose cooling time is reported.
    band : float
        Half-width [K] of the band around the heat-sink mean for the sensor section.
    sensor : str
        Name of the brake-temperature-sensor probe.
    title : str
        Title printed at the head of the report.
    """

    unit: str = "degC"
    limits: Mapping[str, float] = field(default_factory=dict)
    fuse_plugs: tuple[FusePlugSpec, ...] = ()
    tyre: TyreSettings | None = None
    cold_temperature: float = 288.15
    cooling_below: float | None = None
    cooling_series: str = HEAT_SINK_MEAN
    band: float = 10.0
    sensor: str = "sensor"
    title: str = ""

    def __post_init__(self) -> None:
        if self.unit not in ("degC", "degF", "K"):
            raise InputError(f"report unit must be 'degC', 'degF' or 'K', got {str(self.unit)[:80]!r}")
        for name, value in dict(self.limits).items():
            _check_temperature(value, f"limits[{str(name)[:80]!r}]")
        _check_temperature(self.cold_temperature, "cold_temperature")
        if self.cooling_below is not None:
            _check_temperature(self.cooling_below, "cooling_below")
        if not (isinstance(self.band, int | float) and np.isfinite(self.band) and self.band >= 0.0):
            raise InputError(f"band: must be a finite temperature difference >= 0 K, got {self.band!r}")

    def to_mapping(self) -> dict[str, Any]:
        """Plain JSON-able form (for the results file).

        Returns
        -------
        dict
            The fields as plain values (:func:`dataclasses.asdict`), SI units.
        """
        return asdict(self)

    @classmethod
    def from_mapping(cls, data: Mapping[str, Any]) -> ReportSettings:
        """Inverse of :meth:`to_mapping`.

        Parameters
        ----------
        data : mapping
            A mapping written by :meth:`to_mapping`.

        Returns
        -------
        ReportSettings
            The settings, fuse plugs and tyre rebuilt as records.

        Raises
        ------
        InputError
            If ``data`` is not a mapping of known settings (a newer writer's, or damaged),
            naming the unknown or bad setting.
        """
        if not isinstance(data, Mapping):
            raise InputError(f"report settings: expected a mapping, got {type(data).__name__}")
        data = dict(data)
        _known_keys(data, cls, "report settings")
        plugs = data.get("fuse_plugs", ())
        if not isinstance(plugs, list | tuple) or not all(isinstance(p, Mapping) for p in plugs):
            raise InputError("report settings: fuse_plugs must be a list of mappings")
        for p in plugs:
            _known_keys(p, FusePlugSpec, "report settings: fuse plug")
        tyre = data.get("tyre")
        if tyre is not None and not isinstance(tyre, Mapping):
            raise InputError("report settings: tyre must be a mapping or null")
        if tyre:
            _known_keys(tyre, TyreSettings, "report settings: tyre")
        limits = data.get("limits", {})
        if not isinstance(limits, Mapping):
            raise InputError("report settings: limits must be a mapping of names to temperatures [K]")
        try:
            data["fuse_plugs"] = tuple(FusePlugSpec(**p) for p in plugs)
            data["tyre"] = TyreSettings(**tyre) if tyre else None
            return cls(**data)
        except (TypeError, ValueError) as exc:
            if isinstance(exc, InputError):
                raise InputError(f"report settings: {exc}") from None
            raise InputError(f"report settings: {type(exc).__name__}: {str(exc)[:80]}") from None


def _known_keys(data: Mapping[str, Any], cls: type, what: str) -> None:
    """InputError naming the keys of ``data`` that are not fields of dataclass ``cls``."""
    names = {f.name for f in fields(cls)}
    unknown = sorted(str(k)[:40] for k in data if k not in names)
    if unknown:
        raise InputError(
            f"{what}: unknown setting(s) {', '.join(unknown[:5])} (written by a newer heatstack, or damaged)"
        )


def _check_temperature(value: Any, where: str) -> None:
    """InputError unless ``value`` is a finite absolute temperature > 0 K."""
    if isinstance(value, bool) or not isinstance(value, int | float | np.floating | np.integer):
        raise InputError(f"{where}: expected a temperature [K], got {type(value).__name__}")
    if not (np.isfinite(value) and value > 0.0):
        raise InputError(f"{where}: must be a finite absolute temperature > 0 K, got {float(value)!r} K")


def tyre_gas_for(result: Result, settings: ReportSettings) -> TyreGas | None:
    """The tyre gas of a run under the report's tyre settings.

    Parameters
    ----------
    result : Result
    settings : ReportSettings
        Its ``tyre`` and ``cold_temperature`` [K] (the gas starts from the state a chained
        run carried, else cold).

    Returns
    -------
    TyreGas or None
        None without tyre settings or without the tyre-cavity series.
    """
    tyre = settings.tyre
    if tyre is None or "surface:tyre cavity" not in result.series:
        return None
    return tyre_gas(
        result,
        tyre.cold_pressure,
        tyre.gas_volume,
        tyre.cavity_area,
        tyre.h_cavity,
        settings.cold_temperature,
        tyre.outer_conductance,
        ambient_pressure=tyre.ambient_pressure,
    )


def with_tyre_gas_carried(result: Result, settings: ReportSettings) -> Result:
    """``result`` whose final state carries the tyre gas temperature (from :func:`tyre_gas_for`) on to a
    chained run; ``result`` itself without tyre settings or tyre-cavity series.

    Parameters
    ----------
    result : Result
        A finished run.
    settings : ReportSettings
        The report settings holding the tyre inputs (cold pressure, gas volume, conductances).

    Returns
    -------
    Result
        ``result`` with the tyre gas temperature [K] in its final state, or ``result`` unchanged.
    """
    gas = tyre_gas_for(result, settings)
    return result if gas is None else with_tyre_gas_state(result, gas)
