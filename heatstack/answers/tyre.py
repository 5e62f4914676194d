"""The tyre after braking: gas temperature and pressure in the cavity, and bead seat margins.

The tyre gas is one lumped node heated by the rim exterior inside the tyre cavity (the
area-mean temperature of the surface group ``"tyre cavity"``) and, optionally, losing
heat through the tyre carcass to the ambient air::

    m c_v dT_g/dt = h A (T_rim - T_g) - G_out (T_g - T_amb)

at constant volume (the growth of the tyre with pressure is ignored), so
``p = p_cold T_g / T_cold`` in absolute temperatures and absolute pressures.

The coupling is one-way: the gas temperature does not feed back into the conduction
solve (the rim's tyre-cavity surface keeps the cooling law of the run). That is
acceptable because the gas takes little heat: its capacity ``m c_v`` is about 0.7 kJ/K
per kilogram of nitrogen, against tens of kJ/K in a wheel and more in a heat sink.
:attr:`TyreGas.heat_absorbed` states the heat it took, to compare with the braking energy.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..errors import InputError
from ..numerics.instrument import first_order_lag
from ..result import Result, peak_time
from ..units import quantity
from .analysis import Margin, margins
from .fuse_plugs import PlugAnswer
from .histories import checked_history, first_reach, frozen_copy, level_crossings, name_tuple, record_times

__all__ = [
    "with_tyre_gas_state",
    "NITROGEN_GAS_CONSTANT",
    "NITROGEN_CV",
    "TyreGas",
    "PressureMargin",
    "PlugVersusPressure",
    "OUTER_HEAT_TRANSFER_COEFFICIENT",
    "default_outer_conductance",
    "tyre_gas",
    "tyre_pressure_margin",
    "plug_releases_before_limit",
    "bead_seat_margin",
]

#: Specific gas constant of nitrogen [J/(kg K)]: 8.314462618 / 0.0280134 (from memory).
NITROGEN_GAS_CONSTANT = 296.8
#: Specific heat at constant volume of nitrogen near 300 K [J/(kg K)]: c_p 1041 - R (from memory).
NITROGEN_CV = 743.0
#: Standard sea-level atmospheric pressure [Pa].
STANDARD_PRESSURE = 101325.0
#: Effective heat transfer coefficient from the tyre gas through the carcass to still air
#: [W/(m^2 K)] for :func:`default_outer_conductance`: natural convection outside a tyre
#: is about 5-10 W/(m^2 K) (common practice, no source); the rubber carcass in series
#: (k about 0.2-0.3 W/(m K), 10-20 mm thick, i.e. 10-30 W/(m^2 K), from memory) brings the
#: overall figure towards the low end, so 6 is taken.
OUTER_HEAT_TRANSFER_COEFFICIENT = 6.0
#: Major radius over tube radius of the torus :func:`default_outer_conductance` takes
#: for a tyre: a rim radius about twice the section half-height (an assumption, no source).
_TORUS_ASPECT = 3.0
#: The series read as the rim exterior inside the tyre cavity.
CAVITY_SERIES = "surface:tyre cavity"


@dataclass(frozen=True, eq=False)
class TyreGas:
    """History of the tyre gas over the record. Pressures are absolute.

    Attributes
    ----------
    times : ndarray
        [s]
    temperature : ndarray
        Gas temperature [K].
    pressure : ndarray
        Absolute gas pressure [Pa].
    peak_pressure : float
        Largest recorded absolute pressure [Pa].
    time_of_peak : float
        [s]
    peak_temperature : float
        [K]
    cold_pressure : float
        Absolute cold inflation pressure [Pa].
    cold_temperature : float
        Gas temperature at which ``cold_pressure`` holds [K].
    ambient_pressure : float
        [Pa], for gauge values.
    gas_mass : float
        [kg]
    time_constant : float
        ``m c_v / (h A + G_out)`` [s]; infinite with no heat exchange.
    heat_absorbed : float
        Largest heat held by the gas above its initial state, ``m c_v (max T_g - T_g(t0))``
        [J]: the heat the one-way coupling leaves out of the conduction solve.
    outer_conductance : float
        Conductance gas -> ambient through the carcass used [W/K] (given, or estimated).
    """

    times: np.ndarray
    temperature: np.ndarray
    pressure: np.ndarray
    peak_pressure: float
    time_of_peak: float
    peak_temperature: float
    cold_pressure: float
    cold_temperature: float
    ambient_pressure: float
    gas_mass: float
    time_constant: float
    heat_absorbed: float
    outer_conductance: float = 0.0

    @property
    def gauge_pressure(self) -> np.ndarray:
        """Pressure above the ambient [Pa]."""
        return self.pressure - self.ambient_pressure


@dataclass(frozen=True)
class PressureMargin:
    """Distance of the peak tyre pressure from a limit; pressures absolute [Pa].

    Attributes
    ----------
    limit : float
        [Pa], absolute.
    peak_pressure : float
        [Pa], absolute.
    margin : float
        ``limit - peak_pressure`` [Pa]; negative when exceeded.
    exceeded : bool
    time_limit_reached : float or None
        First time the pressure reaches the limit [s]; None if never.
    time_back_below_limit : float or None
        First time after ``time_limit_reached`` the pressure falls back below the limit
        [s]; None if it never reaches it, or does not fall back within the record.
    """

    limit: float
    peak_pressure: float
    margin: float
    exceeded: bool
    time_limit_reached: float | None
    time_back_below_limit: float | None = None


@dataclass(frozen=True)
class PlugVersusPressure:
    """Whether a fuse plug releases before the tyre pressure reaches a limit.

    Attributes
    ----------
    releases_first : bool
        True if some plug releases and the pressure limit is not reached before it
        (or never). False if no plug releases, or the limit comes first (or at the
        same time).
    plug : str or None
        The first plug to release.
    release_time : float or None
        [s]
    limit_time : float or None
        First time the pressure reaches the limit [s]; None if never.
    limit : float
        [Pa], absolute.
    """

    releases_first: bool
    plug: str | None
    release_time: float | None
    limit_time: float | None
    limit: float


def default_outer_conductance(gas_volume: Any, h_outer: float = OUTER_HEAT_TRANSFER_COEFFICIENT) -> float:
    """Estimated conductance [W/K] from the tyre gas through the carcass to still air.

    The tyre is taken as a torus of tube radius ``a`` about a major radius ``R = 3 a``
    (assumed: rim radius about twice the section half-height), so its gas volume is
    ``V = 2 pi^2 R a^2 = 6 pi^2 a^3`` and its outer surface ``A = 4 pi^2 R a = 12 pi^2 a^2``;
    the conductance is ``h_outer A``. A tyre with 0.09 m^3 of gas gets about 1.6 m^2 and
    9 W/K. An estimate, for when the case gives none: a measured or better-founded value
    should replace it.

    Parameters
    ----------
    gas_volume : float or str
        Gas volume of the tyre [m^3], > 0.
    h_outer : float
        Overall heat transfer coefficient gas -> carcass -> still air [W/(m^2 K)]
        (:data:`OUTER_HEAT_TRANSFER_COEFFICIENT` by default).

    Returns
    -------
    float
        [W/K]

    References
    ----------
    Torus volume ``2 pi^2 R a^2`` and area ``4 pi^2 R a`` (Pappus's centroid theorems).
    Natural convection coefficients of 5-10 W/(m^2 K) in still air: common practice, no source.
    """
    volume = quantity(gas_volume, "volume", "gas_volume", minimum=0.0, exclusive_minimum=True)
    tube = (volume / (2.0 * np.pi**2 * _TORUS_ASPECT)) ** (1.0 / 3.0)
    area = 4.0 * np.pi**2 * _TORUS_ASPECT * tube**2
    return float(quantity(h_outer, "heat_transfer_coefficient", "h_outer", minimum=0.0) * area)


def _absolute(value: Any, gauge: bool, ambient_pressure: float, field: str) -> float:
    p = quantity(value, "pressure", field) + (ambient_pressure if gauge else 0.0)
    if not p > 0:
        kind = "gauge" if gauge else "absolute"
        raise InputError(f"{field}: an absolute pressure > 0 Pa is needed; {value!r} ({kind}) gives {p} Pa")
    return p


def tyre_gas(
    result: Result,
    cold_pressure: Any,
    gas_volume: Any,
    cavity_area: Any,
    h_cavity: Any,
    cold_temperature: Any,
    outer_conductance: Any = None,
    ambient: Any = None,
    *,
    gauge: bool = True,
    ambient_pressure: Any = STANDARD_PRESSURE,
    initial_temperature: Any = None,
    gas_constant: float = NITROGEN_GAS_CONSTANT,
    cv: float = NITROGEN_CV,
) -> TyreGas:
    """Temperature and pressure of the tyre gas, heated by the rim inside the tyre cavity.

    The gas is a lumped node (see the module text); the forcing ``T_rim`` is the series
    ``"surface:tyre cavity"`` of ``result``, piecewise linear between records, and the
    first-order equation is integrated exactly over each record interval. The coupling
    is one-way: the gas does not feed back into the conduction solve (acceptable because
    the gas takes little heat).

    Parameters
    ----------
    result : Result
        Must hold the series ``"surface:tyre cavity"``.
    cold_pressure : float or str
        Cold inflation pressure [Pa]: GAUGE by default (as inflation pressures are
        quoted), absolute with ``gauge=False``. Gauge values have ``ambient_pressure``
        added.
    gas_volume : float or str
        Gas volume of the tyre [m^3], > 0.
    cavity_area : float or str
        Rim area wetted by the tyre gas [m^2], > 0.
    h_cavity : float or str
        Heat transfer coefficient rim -> gas [W/(m^2 K)], >= 0.
    cold_temperature : float or str
        Gas temperature at which ``cold_pressure`` holds [K]; also the gas temperature at
        the start of the record unless ``initial_temperature`` is given.
    outer_conductance : float or str, optional
        Conductance gas -> ambient through the tyre carcass [W/K], >= 0; estimated from
        the gas volume by :func:`default_outer_conductance` (about 6 W/(m^2 K) over the
        outer surface of the tyre) when None. Zero lets the gas follow the rim.
    ambient : float or str, optional
        Air temperature for ``outer_conductance`` [K]; ``cold_temperature`` by default.
    gauge : bool
        Whether ``cold_pressure`` is a gauge pressure.
    ambient_pressure : float or str
        [Pa]; 101325 Pa by default.
    initial_temperature : float or str, optional
        Gas temperature at the first record [K]; by default the one a chained run's state
        carried (``result.initial_tyre_gas_temperature``), else ``cold_temperature``.
    gas_constant, cv : float
        Specific gas constant and specific heat at constant volume [J/(kg K)]; nitrogen by
        default (296.8 and 743, from memory).

    Returns
    -------
    TyreGas

    Raises
    ------
    InputError, UnitError
        Missing cavity series, a value of the wrong unit or out of range (the message
        names the field), too few records.

    References
    ----------
    Exact solution of ``tau dy/dt = x - y`` for ``x`` linear over an interval, as in
    :func:`heatstack.numerics.instrument.first_order_lag`, plus the decay of the initial
    difference ``(y0 - x0) exp(-(t - t0) / tau)`` (linear superposition).
    Ideal gas at constant volume, ``p2 / p1 = T2 / T1`` (Gay-Lussac; any thermodynamics
    text, e.g. Cengel & Boles, Thermodynamics: An Engineering Approach, ch. 3, from memory).
    """
    times = record_times(result)
    if CAVITY_SERIES not in result.series:
        raise InputError(
            f"tyre_gas needs the series {CAVITY_SERIES!r} (rim exterior inside the tyre cavity); "
            f"known series: {sorted(result.series)}"
        )
    rim = checked_history(result, CAVITY_SERIES, result.series[CAVITY_SERIES])
    positive, not_negative = {"minimum": 0.0, "exclusive_minimum": True}, {"minimum": 0.0}
    p_amb = quantity(ambient_pressure, "pressure", "ambient_pressure", **positive)
    p_cold = _absolute(cold_pressure, gauge, p_amb, "cold_pressure")
    volume = quantity(gas_volume, "volume", "gas_volume", **positive)
    area = quantity(cavity_area, "area", "cavity_area", **positive)
    h = quantity(h_cavity, "heat_transfer_coefficient", "h_cavity", **not_negative)
    if outer_conductance is None:
        g_out = default_outer_conductance(volume)
    else:
        g_out = quantity(outer_conductance, "thermal_conductance", "outer_conductance", **not_negative)
    t_cold = quantity(cold_temperature, "temperature", "cold_temperature", **positive)
    t_amb = t_cold if ambient is None else quantity(ambient, "temperature", "ambient", **positive)
    if initial_temperature is None:
        carried = result.initial_tyre_gas_temperature
        t_init = t_cold if carried is None else float(carried)
    else:
        t_init = quantity(initial_temperature, "temperature", "initial_temperature", **positive)
    quantity(gas_constant, "specific_heat", "gas_constant", **positive)
    quantity(cv, "specific_heat", "cv", **positive)

    mass = p_cold * volume / (gas_constant * t_cold)
    conductance = h * area + g_out
    if conductance == 0.0:
        tau = float("inf")
        gas = np.full(times.size, t_init)
    else:
        tau = mass * cv / conductance
        drive = (h * area * rim + g_out * t_amb) / conductance
        gas = first_order_lag(times, drive, tau) + (t_init - drive[0]) * np.exp(-(times - times[0]) / tau)
    pressure = p_cold * gas / t_cold
    k = int(np.argmax(pressure))
    return TyreGas(
        times=frozen_copy(times),
        temperature=frozen_copy(gas),
        pressure=frozen_copy(pressure),
        peak_pressure=float(pressure[k]),
        time_of_peak=peak_time(times, pressure, k, result.corner_times()),
        peak_temperature=float(np.max(gas)),
        cold_pressure=p_cold,
        cold_temperature=t_cold,
        ambient_pressure=p_amb,
        gas_mass=mass,
        time_constant=tau,
        heat_absorbed=float(mass * cv * (np.max(gas) - gas[0])),
        outer_conductance=g_out,
    )


def with_tyre_gas_state(result: Result, gas: TyreGas) -> Result:
    """``result`` whose final state carries the gas temperature at its end, for a chained run.

    Parameters
    ----------
    result : Result
        The run ``gas`` was computed from.
    gas : TyreGas
        From :func:`tyre_gas` on ``result``.

    Returns
    -------
    Result
        A copy whose ``final_state.tyre_gas_temperature`` is the gas temperature [K] at the
        last record; a run chained from that state starts its gas there.

    Raises
    ------
    InputError
        If ``gas`` does not end at the result's final time.
    """
    if not isinstance(gas, TyreGas) or abs(float(gas.times[-1]) - float(result.final_state.time)) > 1e-6:
        raise InputError("with_tyre_gas_state: the tyre gas must be computed from this result")
    state = replace(result.final_state, tyre_gas_temperature=float(gas.temperature[-1]))
    return replace(result, final_state=state)


def tyre_pressure_margin(gas: TyreGas, limit: Any, gauge: bool = True) -> PressureMargin:
    """Margin of the peak tyre pressure to a limit.

    Parameters
    ----------
    gas : TyreGas
    limit : float or str
        Pressure limit [Pa]: gauge by default (``gas.ambient_pressure`` is added),
        absolute with ``gauge=False``.
    gauge : bool

    Returns
    -------
    PressureMargin
        Pressures absolute.

    Raises
    ------
    InputError
        If ``limit`` is not a pressure, or not above 0 Pa absolute.
    """
    p_limit = _absolute(limit, gauge, gas.ambient_pressure, "limit")
    reached = first_reach(gas.times, gas.pressure, p_limit)
    back = None
    if reached is not None:
        downs = [t for t, way in level_crossings(gas.times, gas.pressure, p_limit) if way == "down" and t >= reached]
        back = downs[0] if downs else None
    return PressureMargin(
        limit=p_limit,
        peak_pressure=gas.peak_pressure,
        margin=p_limit - gas.peak_pressure,
        exceeded=bool(gas.peak_pressure > p_limit),
        time_limit_reached=reached,
        time_back_below_limit=back,
    )


def plug_releases_before_limit(
    plug_answers: Sequence[PlugAnswer], gas: TyreGas, limit: Any, gauge: bool = True
) -> PlugVersusPressure:
    """Whether any fuse plug releases before the tyre pressure reaches a limit.

    ``plug_answers`` and ``gas`` must come from the same result. After a release the
    modelled pressure no longer applies (the tyre deflates); only the order of the two
    events is meaningful.

    Parameters
    ----------
    plug_answers : sequence of PlugAnswer
        From :func:`~heatstack.answers.fuse_plugs.assess_fuse_plugs`.
    gas : TyreGas
    limit : float or str
        Pressure limit [Pa], gauge by default (see :func:`tyre_pressure_margin`).
    gauge : bool

    Returns
    -------
    PlugVersusPressure
        ``releases_first`` is the yes/no answer; both times are given.

    Raises
    ------
    InputError
        If no plug answer is given, or the limit is not a valid pressure.
    """
    if not plug_answers:
        raise InputError("plug_answers: give at least one plug answer")
    p_limit = _absolute(limit, gauge, gas.ambient_pressure, "limit")
    limit_time = first_reach(gas.times, gas.pressure, p_limit)
    released = [a for a in plug_answers if a.release_time is not None]
    first = min(released, key=lambda a: a.release_time) if released else None
    if first is None:
        return PlugVersusPressure(False, None, None, limit_time, p_limit)
    ahead = limit_time is None or first.release_time < limit_time
    return PlugVersusPressure(bool(ahead), first.name, first.release_time, limit_time, p_limit)


def bead_seat_margin(
    result: Result,
    rubber_limit: Any,
    names: Sequence[str] = ("inboard bead seat", "outboard bead seat"),
) -> list[Margin]:
    """Margin of each bead seat's peak temperature to the tyre rubber's limit.

    Parameters
    ----------
    result : Result
    rubber_limit : float or str
        Highest temperature the bead rubber may see [K] (or a string with a unit).
    names : sequence of str
        Probes at the bead seats.

    Returns
    -------
    list of Margin
        One per name, in order.
    """
    limit = quantity(rubber_limit, "temperature", "rubber_limit", minimum=0.0, exclusive_minimum=True)
    return margins(result, {name: limit for name in name_tuple(names, "names")})
