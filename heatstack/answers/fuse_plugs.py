"""Fuse plugs (thermal relief plugs): does a plug in the rim release, when, and by what margin.

A fuse plug is a threaded insert in the wheel rim whose core is a fusible alloy; when
the rim gets hot enough the alloy melts and the tyre gas escapes before the heat can
weaken the wheel or the tyre burst. Here the plug's temperature is the local rim
temperature at the plug's probe, passed through the plug's own first-order lag
(``tau dT_plug/dt = T_rim - T_plug``; ``tau = 0`` for a plug that follows the rim).

Melt temperatures: typical fusible alloys for wheel thermal relief plugs melt at about
177-199 degC, some at about 227 degC (from memory; no standard is cited here). Those
figures match eutectic points of tin alloys: tin-cadmium about 177 degC, tin-zinc about
199 degC, tin-copper about 227 degC (from memory). The builder's default release
temperature, 450.15 K (177 degC), lies at the low end of that range.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from ..errors import InputError
from ..numerics.instrument import first_order_lag
from ..result import Result, State, peak_time
from ..unit_declarations import convert_declared, declared
from ..units import quantity
from ..wheel_design import FusePlugSpec
from .histories import first_reach, local_temperature, record_times

__all__ = ["FusePlug", "PlugAnswer", "assess_fuse_plugs", "plug_temperature", "as_fuse_plug", "state_with_plugs"]


@dataclass(frozen=True)
class FusePlug:
    """A fuse plug as the answers layer sees it: where, at what temperature, how slow.

    Parameters
    ----------
    name : str
        Name of the probe at the plug (e.g. ``"fuse plug 1"``).
    release_temperature : float or str
        Nominal melt (release) temperature of the fusible alloy [K] (or a string with a
        unit, e.g. ``"177 degC"``).
    tolerance : float or str
        Half-width of the release band [K] (a temperature difference), >= 0.
    time_constant : float or str
        First-order lag of the plug behind the local rim temperature [s], >= 0.

    Raises
    ------
    InputError, UnitError
        A value of the wrong unit or out of range; the message names the plug and field.
    """

    name: str
    release_temperature: float = declared("temperature", positive=True)
    tolerance: float = declared("temperature_difference", minimum=0.0)
    time_constant: float = declared("time", 0.0, minimum=0.0)

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name:
            raise InputError(f"fuse plug: name must be a non-empty string, got {self.name!r}")
        where = f"fuse plug {self.name!r}"
        convert_declared(self, where)

    @classmethod
    def from_thermal_mass(
        cls,
        name: str,
        release_temperature: Any,
        tolerance: Any,
        mass: Any,
        specific_heat: Any,
        contact_conductance: Any,
    ) -> FusePlug:
        """A plug whose lag comes from its heat capacity and its contact with the rim.

        ``tau = m c / G``: a lumped body exchanging heat with the rim through ``G``.

        Parameters
        ----------
        name : str
        release_temperature : float or str
            [K]
        tolerance : float or str
            [K]
        mass : float or str
            Mass of the plug [kg], > 0.
        specific_heat : float or str
            [J/(kg K)], > 0.
        contact_conductance : float or str
            Thermal conductance from the rim to the plug's fusible core [W/K], > 0.

        Returns
        -------
        FusePlug

        References
        ----------
        Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer,
        6th ed., eq. 5.7: the thermal time constant of a lumped body, capacitance over
        conductance (from memory).
        """
        where = f"fuse plug {name!r}"
        positive = {"minimum": 0.0, "exclusive_minimum": True}
        m = quantity(mass, "mass", f"{where}: mass", **positive)
        c = quantity(specific_heat, "specific_heat", f"{where}: specific_heat", **positive)
        g = quantity(contact_conductance, "thermal_conductance", f"{where}: contact_conductance", **positive)
        return cls(name, release_temperature, tolerance, m * c / g)

    @classmethod
    def from_spec(cls, spec: FusePlugSpec, time_constant: Any = None) -> FusePlug:
        """The plug of a built wheel; its own time constant unless ``time_constant`` is given.

        Parameters
        ----------
        spec : FusePlugSpec
            The builder's plug: name, release temperature [K], tolerance [K], time constant [s].
        time_constant : float or str, optional
            Time constant used instead of the spec's [s].

        Returns
        -------
        FusePlug
            The plug.
        """
        tau = spec.time_constant if time_constant is None else time_constant
        return cls(spec.name, spec.release_temperature, spec.tolerance, tau)


@dataclass(frozen=True)
class PlugAnswer:
    """What one fuse plug does over the record.

    Attributes
    ----------
    name : str
    peak : float
        Peak plug temperature [K].
    time_of_peak : float
        [s]
    release_time : float or None
        First time the plug temperature reaches ``release_temperature`` [s]; None if it
        never does within the record.
    margin : float
        ``release_temperature - peak`` [K]; <= 0 when the plug releases.
    margin_to_band_low : float
        ``release_temperature - tolerance - peak`` [K]: <= 0 means a plug at the low end
        of its tolerance band would release.
    releases : bool
        Whether the nominal release temperature is reached.
    earliest_release_time : float or None
        First time the plug reaches the low end of its band [s]; None if never.
    release_temperature, tolerance, time_constant : float
        The plug's data [K], [K], [s].
    """

    name: str
    peak: float
    time_of_peak: float
    release_time: float | None
    margin: float
    margin_to_band_low: float
    releases: bool
    earliest_release_time: float | None
    release_temperature: float
    tolerance: float
    time_constant: float


def as_fuse_plug(item: FusePlug | FusePlugSpec) -> FusePlug:
    """A :class:`FusePlug` from a plug or a builder's :class:`~heatstack.wheel_design.FusePlugSpec`.

    A spec keeps its own time constant.

    Parameters
    ----------
    item : FusePlug or FusePlugSpec
        The plug.

    Returns
    -------
    FusePlug
        ``item`` itself, or the plug of the spec.

    Raises
    ------
    InputError
        If ``item`` is neither.
    """
    if isinstance(item, FusePlugSpec):
        return FusePlug.from_spec(item)
    if isinstance(item, FusePlug):
        return item
    raise InputError(f"plugs: expected FusePlug or FusePlugSpec, got {type(item).__name__}")


def plug_temperature(result: Result, plug: FusePlug | FusePlugSpec) -> np.ndarray:
    """The plug's own temperature [K] at every record time: the local rim temperature at
    its seat passed through the plug's first-order lag (the temperature its release,
    peak and margin are judged on). A plug starts from the result's
    ``initial_plug_temperatures`` (a run chained from a state that carried them), else in
    equilibrium with the rim.

    Parameters
    ----------
    result : Result
        The run.
    plug : FusePlug or FusePlugSpec
        The plug.

    Returns
    -------
    ndarray
        The plug's temperature at every record time [K].

    Raises
    ------
    InputError
        The result lacks the plug's probe, or has too few records.
    """
    plug = as_fuse_plug(plug)
    local = local_temperature(result, plug.name, f"fuse plug {plug.name!r}")
    start = result.initial_plug_temperatures.get(plug.name)
    return first_order_lag(record_times(result), local, plug.time_constant, start)


def assess_fuse_plugs(result: Result, plugs: Sequence[FusePlug | FusePlugSpec]) -> list[PlugAnswer]:
    """Peak, margin and release time of each fuse plug.

    The plug temperature is the local rim temperature at the plug's probe (not the
    probe reading) passed through the plug's own first-order lag, integrated exactly for
    a history piecewise linear between records
    (:func:`heatstack.numerics.instrument.first_order_lag`).

    Parameters
    ----------
    result : Result
    plugs : sequence of FusePlug or FusePlugSpec
        The plugs; a ``FusePlugSpec`` (e.g. from ``build_wheel_brake().fuse_plugs``) is
        taken with its own time constant. The result does not record the plugs of the
        design that was run: pass that design's plugs.

    Returns
    -------
    list of PlugAnswer
        In the order of ``plugs``.

    Raises
    ------
    InputError
        No plugs, a plug whose probe the result lacks (the message lists the known
        probes), too few records.
    """
    if isinstance(plugs, FusePlug | FusePlugSpec):
        plugs = [plugs]
    if not plugs:
        raise InputError("plugs: give at least one fuse plug")
    times = record_times(result)
    out = []
    for item in plugs:
        plug = as_fuse_plug(item)
        temperature = plug_temperature(result, plug)
        k = int(np.argmax(temperature))
        top = float(temperature[k])
        release = first_reach(times, temperature, plug.release_temperature)
        low = plug.release_temperature - plug.tolerance
        out.append(
            PlugAnswer(
                name=plug.name,
                peak=top,
                time_of_peak=peak_time(times, temperature, k, result.corner_times()),
                release_time=release,
                margin=plug.release_temperature - top,
                margin_to_band_low=low - top,
                releases=release is not None,
                earliest_release_time=first_reach(times, temperature, low),
                release_temperature=plug.release_temperature,
                tolerance=plug.tolerance,
                time_constant=plug.time_constant,
            )
        )
    return out


def state_with_plugs(result: Result, plugs: Sequence[FusePlug | FusePlugSpec]) -> State:
    """The result's final state with each fuse plug's own temperature [K] at that time.

    A run started from it (:mod:`heatstack.questions.chaining`) carries the plugs' own
    lag on, instead of restarting each plug in equilibrium with the rim.

    Parameters
    ----------
    result : Result
    plugs : sequence of FusePlug or FusePlugSpec

    Returns
    -------
    State
        ``result.final_state`` with ``plug_temperatures`` filled in.
    """
    temperatures = {as_fuse_plug(plug).name: float(plug_temperature(result, plug)[-1]) for plug in plugs}
    return replace(result.final_state, plug_temperatures=temperatures)
