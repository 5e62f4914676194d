"""The outcome of one run: time series, field snapshots and the energy ledger.

A :class:`Result` is a value: plain arrays in SI units (K, s, J), no live solver
state. The answers layer reads it and never re-runs the solver.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import InputError
from .numerics.accounts import LEDGER_ACCOUNTS
from .resulttables import history_frame, result_dataset

__all__ = ["Result", "EnergyLedger", "State", "first_non_finite", "peak_time"]


def peak_time(times: np.ndarray, values: np.ndarray, k: int | None = None, corners: np.ndarray | tuple = ()) -> float:
    """Time of the peak of a recorded history, between its records.

    The vertex of the parabola through the highest record and its two neighbours (a
    second-order estimate, as the time stepping is; it lies between the neighbours); the
    record's own time at either end of the history, where the three records do not bend
    down, or where the highest record lies on a corner of the duty (heating stops, a phase
    ends: there the history has a kink, and the heat-sink mean's peak is exactly the end of
    heating). With error-controlled steps the records around a slow rim or fuse-plug
    maximum can be a minute or two apart: the vertex puts the peak's time within seconds of
    a converged run's where the highest record alone is off by up to half a spacing.

    Parameters
    ----------
    times : ndarray
        Record times [s], increasing.
    values : ndarray
        The history at those times (any unit).
    k : int, optional
        Index of the highest record (the first, if it repeats); found when not given.
    corners : array_like, optional
        Times [s] where the history may kink (:meth:`Result.corner_times`).

    Returns
    -------
    float
        Time of the peak [s].

    References
    ----------
    Three-point parabolic interpolation of an extremum, e.g. Press et al., Numerical Recipes,
    3rd ed., sec. 10.3, eq. 10.3.1 (from memory).
    """
    k = int(np.argmax(values)) if k is None else int(k)
    if k <= 0 or k >= len(values) - 1:
        return float(times[k])
    corners = np.asarray(corners, dtype=float)
    if corners.size and np.any(np.abs(corners - times[k]) <= 1e-9 * max(1.0, abs(float(times[k])))):
        return float(times[k])
    (a, b, c), (fa, fb, fc) = times[k - 1 : k + 2], values[k - 1 : k + 2]
    p, q = (b - a) * (fb - fc), (b - c) * (fb - fa)
    denominator = 2.0 * (p - q)
    if not (fb >= fa and fb >= fc) or not np.isfinite(denominator) or denominator == 0.0:
        return float(times[k])
    vertex = b - ((b - a) * p - (b - c) * q) / denominator
    return float(min(max(vertex, a), c))


@dataclass(frozen=True, eq=False)
class State:
    """Temperature of every active cell at one time: the start of a chained run.

    Parameters
    ----------
    time : float
        [s]
    temperature : ndarray
        [K], one value per active cell of the model it came from.
    readings : dict of str to float
        Instrument readings [K] of lagged probes at ``time``. A run started from this
        state starts each named probe's instrument from its reading (so a sensor that
        lagged behind the metal when the state was saved still lags); a probe not named
        starts in equilibrium with its local temperature.
    step : float or None
        The time step [s] the run that made this state would have taken next; a run
        chained from the state starts with it (unless braking starts at once), so it
        steps as the same duty run in one piece would. None: the solver's initial step.
    plug_temperatures : dict of str to float
        Temperature [K] of each fuse plug (the rim temperature at its probe through the
        plug's own lag) at ``time``; a chained run's fuse-plug answer starts each named
        plug from it instead of in equilibrium with the rim.
    tyre_gas_temperature : float or None
        Temperature [K] of the tyre gas at ``time``; a chained run's tyre answer starts the
        gas from it (so its pressure carries on). None: not known (no tyre settings).
    """

    time: float
    temperature: np.ndarray
    readings: dict[str, float] = field(default_factory=dict)
    plug_temperatures: dict[str, float] = field(default_factory=dict)
    step: float | None = None
    tyre_gas_temperature: float | None = None


@dataclass(frozen=True, eq=False)
class EnergyLedger:
    """Cumulative energy accounts since the start of the run [J], one entry per record time.

    ``closure_error = stored - heat_in + convected + radiated``: zero for an exactly
    conservative scheme (gap radiation and contact flows are internal and cancel).

    Parameters
    ----------
    heat_in : ndarray
        Friction energy put into the assembly [J].
    convected : ndarray
        Energy lost by convection [J].
    radiated : ndarray
        Energy lost by radiation to the surroundings [J].
    stored : ndarray
        Change of the stored enthalpy [J].
    friction_labels : tuple of str
        Names of the rubbing interfaces.
    friction_split : ndarray
        Energy [J] that entered the part on each side of each rubbing interface, shape
        (n_interfaces, 2).

    The four account fields are the running sums of the steps'
    :class:`~heatstack.numerics.accounts.StepAccounts` of the same names (``LEDGER_ACCOUNTS``).
    """

    heat_in: np.ndarray
    convected: np.ndarray
    radiated: np.ndarray
    stored: np.ndarray
    friction_labels: tuple[str, ...] = ()
    friction_split: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))

    @property
    def closure_error(self) -> np.ndarray:
        """Energy not accounted for [J] (cumulative)."""
        return self.stored - self.heat_in + self.convected + self.radiated

    @property
    def relative_closure_error(self) -> float:
        """``max |closure_error| / total heat in`` (or / max |stored| with no heat input)."""
        scale = max(float(np.max(np.abs(self.heat_in))), float(np.max(np.abs(self.stored))), 1e-300)
        return float(np.max(np.abs(self.closure_error)) / scale)


@dataclass(frozen=True, eq=False)
class Result:
    """Histories of one run.

    Parameters
    ----------
    times : ndarray
        Record times [s] (every accepted step and the start).
    probes : dict of str to ndarray
        Local temperature at each probe [K].
    readings : dict of str to ndarray
        Probe reading after its instrument lag [K] (equal to the local value for
        probes without a time constant).
    series : dict of str to ndarray
        Global series [K]: ``heat_sink_mean`` (mass-weighted mean over rotors, stators,
        pressure and end plates), ``heat_sink_max`` (hottest heat-sink cell),
        ``wheel_max`` (hottest wheel cell); a series is absent if its parts are.
        ``surface:<group>`` is the area-weighted mean surface temperature of each
        exposed-surface group.
    ledger : EnergyLedger
    snapshot_times : ndarray
        [s]
    snapshots : ndarray, shape (s, nz, nr)
        Temperature fields [K], NaN in void cells.
    r_edges, z_edges : ndarray
        Grid edges [m].
    part_map : ndarray of int, shape (nz, nr)
        Part index per cell, -1 for void.
    part_names, part_roles : tuple of str
    final_state : State
        The state at the end of the run (start of a chained run).
    phases : tuple of (str, float, float)
        Name, start and end [s] of each duty phase.
    end_of_heating : float
        Last time with brake power [s] (a later small event or a dragging brake moves it).
    end_of_braking : float, optional
        End of the stop that loaded the brake [s] (the duty's reference event: the one
        the case names, else the one with the most energy); every delay "after braking"
        counts from it. ``end_of_heating`` when not given.
    probe_positions : dict of str to (float, float)
        (r, z) of each probe [m].
    probe_time_constants : dict of str to float
        Instrument time constant of each probe [s].
    metadata : dict
        Free text: case text, version, solver statistics.
    initial_plug_temperatures : dict of str to float
        Fuse-plug temperatures [K] at the first record, for a run chained from a state
        that carried them (empty: every plug starts in equilibrium with the rim).
    initial_tyre_gas_temperature : float or None
        Tyre gas temperature [K] at the first record, for a run chained from a state that
        carried it (None: the tyre answer starts the gas at its cold temperature).
    """

    times: np.ndarray
    probes: dict[str, np.ndarray]
    readings: dict[str, np.ndarray]
    series: dict[str, np.ndarray]
    ledger: EnergyLedger
    snapshot_times: np.ndarray
    snapshots: np.ndarray
    r_edges: np.ndarray
    z_edges: np.ndarray
    part_map: np.ndarray
    part_names: tuple[str, ...]
    part_roles: tuple[str, ...]
    final_state: State
    phases: tuple[tuple[str, float, float], ...] = ()
    end_of_heating: float = 0.0
    end_of_braking: float | None = None
    probe_positions: dict[str, tuple[float, float]] = field(default_factory=dict)
    probe_time_constants: dict[str, float] = field(default_factory=dict)
    metadata: dict = field(default_factory=dict)
    initial_plug_temperatures: dict[str, float] = field(default_factory=dict)
    initial_tyre_gas_temperature: float | None = None

    def __post_init__(self) -> None:
        if self.end_of_braking is None:
            object.__setattr__(self, "end_of_braking", float(self.end_of_heating))

    def history(self, name: str) -> np.ndarray:
        """Temperature history of a probe reading or a global series, by name.

        Parameters
        ----------
        name : str
            Probe or series name.

        Returns
        -------
        ndarray
            The values at every record time [K].

        Raises
        ------
        InputError
            If there is no such probe or series (the known names are listed).
        """
        if name in self.readings:
            return self.readings[name]
        if name in self.series:
            return self.series[name]
        known = sorted(self.readings) + sorted(self.series)
        raise InputError(f"no probe or series named {name!r}; known: {known}")

    def peak(self, name: str) -> tuple[float, float]:
        """(peak temperature [K], time of the peak [s]) of a probe reading or series.

        Parameters
        ----------
        name : str
            Probe or series name.

        Returns
        -------
        peak : float
            Highest recorded value [K].
        time : float
            Its time [s], between the records (:func:`peak_time`).

        Raises
        ------
        InputError
            If there is no such probe or series.
        """
        values = self.history(name)
        k = int(np.argmax(values))
        return float(values[k]), peak_time(self.times, values, k, self.corner_times())

    def corner_times(self) -> np.ndarray:
        """Times where the histories may kink: each phase's start and end, the end of heating and of braking.

        Returns
        -------
        ndarray
            The times [s], sorted, each once.
        """
        times = [t for _, start, end in self.phases for t in (start, end)] + [self.end_of_heating]
        if self.end_of_braking is not None:
            times.append(self.end_of_braking)
        return np.unique(np.asarray(times, dtype=float))

    def snapshot(self, time: float) -> np.ndarray:
        """The stored field snapshot nearest to ``time``.

        Parameters
        ----------
        time : float
            Time [s].

        Returns
        -------
        ndarray, shape (nz, nr)
            Temperature field [K], NaN in void cells.

        Raises
        ------
        InputError
            If the result holds no snapshots.
        """
        if self.snapshot_times.size == 0:
            raise InputError("this result holds no field snapshots")
        return self.snapshots[int(np.argmin(np.abs(self.snapshot_times - time)))]

    def to_dataframe(self):
        """The histories as a tidy pandas DataFrame: columns ``time_s`` [s], ``name``, ``kind``, ``value_K`` [K].

        One row per record time and history; ``kind`` is ``"reading"`` (a probe's reading
        after its instrument lag), ``"local"`` (the local temperature at a probe) or
        ``"series"``; ``frame.attrs["units"]`` names each column's unit. Needs pandas
        (``pip install "heatstack[data]"``).

        Returns
        -------
        pandas.DataFrame
            The histories in long form.

        Raises
        ------
        OptionalDependencyError
            If pandas is not installed.
        """
        return history_frame(self)

    def to_xarray(self):
        """The histories and field snapshots as an xarray Dataset with named coordinates.

        The same layout as the root of a results file opened with
        ``xarray.open_dataset(path, engine="h5netcdf")``: ``reading`` and ``local`` over
        (time, probe) [K], the series, ``temperature`` over (snapshot_time, z, r) [K].
        Needs xarray (``pip install "heatstack[data]"``).

        Returns
        -------
        xarray.Dataset
            Histories and snapshots with named coordinates.

        Raises
        ------
        OptionalDependencyError
            If xarray is not installed.
        """
        return result_dataset(self)


def first_non_finite(result: Result) -> str | None:
    """The name of the first computed history or state of ``result`` that holds NaN or infinity.

    Void cells of the field snapshots are NaN by design and not counted.

    Parameters
    ----------
    result : Result
        The result to look through: times, probes, readings, series, ledger accounts, the
        final state and its readings and plug temperatures, then the field snapshots.

    Returns
    -------
    str or None
        The name of the first array that is not finite (``"probe 'rotor_mid'"``,
        ``"final state"``, ``"field snapshots"``), or None if all are finite.
    """

    arrays: list[tuple[str, Any]] = [("times", result.times), ("snapshot_times", result.snapshot_times)]
    arrays += [(f"probe {name!r}", values) for name, values in result.probes.items()]
    arrays += [(f"reading {name!r}", values) for name, values in result.readings.items()]
    arrays += [(f"series {name!r}", values) for name, values in result.series.items()]
    arrays += [(f"ledger {name}", getattr(result.ledger, name, ())) for name in LEDGER_ACCOUNTS]
    arrays += [("final state", result.final_state.temperature)]
    arrays += [(f"final reading {name!r}", v) for name, v in result.final_state.readings.items()]
    arrays += [(f"final plug temperature {name!r}", v) for name, v in result.final_state.plug_temperatures.items()]
    for name, values in arrays:
        values = np.asarray(values)
        if values.dtype.kind in "fc" and not np.all(np.isfinite(values)):
            return name
    snapshots = np.asarray(result.snapshots)
    part_map = np.asarray(result.part_map)
    if snapshots.ndim == 3 and snapshots.shape[1:] == part_map.shape and snapshots.dtype.kind == "f":
        if not np.all(np.isfinite(snapshots[:, part_map >= 0])):
            return "field snapshots"
    return None
