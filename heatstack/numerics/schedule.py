"""The protocol the solver reads: heat input, boundary laws and contact state versus time.

A :class:`Schedule` is built by the operations layer (stops, taxi, parking ...) or
directly by a user. The solver only calls the methods defined here. Time is in [s],
temperatures in [K], power in [W], energies in [J].
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import ClassVar, Protocol, runtime_checkable

import numpy as np

from ..errors import ScheduleError
from ..unit_declarations import convert_declared, declared
from ..units import quantity_array

__all__ = [
    "BoundaryLaw",
    "FixedConvection",
    "PowerHistory",
    "Phase",
    "Schedule",
]


@runtime_checkable
class BoundaryLaw(Protocol):
    """Cooling law of one exposed-surface group during one phase.

    The surface loses ``h_conv (T_s - ambient_temperature)`` by convection and, if
    ``radiation`` is true, ``eps sigma (T_s^4 - surroundings_temperature^4)`` by grey
    radiation (emissivity from the part's material).

    A law may set the class attribute ``time_dependent = False`` to declare that its
    coefficient does not depend on time; the solver then tabulates it over surface
    temperature (every 2 K) instead of calling it at every Newton iteration.
    """

    ambient_temperature: float
    surroundings_temperature: float
    radiation: bool

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Convective heat transfer coefficient [W/(m^2 K)] at each surface temperature [K].

        Parameters
        ----------
        surface_temperature : ndarray
            Temperature of each exposed face of the group [K].
        time : float
            Model time [s].

        Returns
        -------
        ndarray
            One coefficient [W/(m^2 K)] per face, >= 0.
        """
        ...


@dataclass(frozen=True)
class FixedConvection:
    """A constant convective coefficient with grey radiation to the surroundings.

    Each number may be SI or carry a unit (``h="8 W/(m^2*K)"``, ``ambient_temperature="15 degC"``).

    Parameters
    ----------
    h : float or str or pint.Quantity
        Convective heat transfer coefficient [W/(m^2 K)], >= 0.
    ambient_temperature : float or str or pint.Quantity
        Air temperature far from the surface [K].
    surroundings_temperature : float or str or pint.Quantity, optional
        Temperature of the radiation surroundings [K]; defaults to the ambient.
    radiation : bool
        Whether the surface radiates to the surroundings.
    """

    h: float = declared("heat_transfer_coefficient", minimum=0.0)
    ambient_temperature: float = declared("temperature", positive=True)
    surroundings_temperature: float | None = declared("temperature", None, positive=True)
    radiation: bool = True
    time_dependent: ClassVar[bool] = False  # lets the solver tabulate the (constant) h

    def __post_init__(self) -> None:
        convert_declared(self, "convection", ScheduleError)
        if self.surroundings_temperature is None:
            object.__setattr__(self, "surroundings_temperature", self.ambient_temperature)

    def convection_coefficient(self, surface_temperature: np.ndarray, time: float) -> np.ndarray:
        """Return ``h`` for every surface [W/(m^2 K)].

        Parameters
        ----------
        surface_temperature : ndarray
            Temperature of each exposed face [K] (only its shape is used).
        time : float
            Model time [s] (unused: the coefficient is constant).

        Returns
        -------
        ndarray
            ``h`` [W/(m^2 K)] in the shape of ``surface_temperature``.
        """
        return np.full(np.shape(surface_temperature), self.h)


@dataclass(frozen=True)
class PowerHistory:
    """Total friction power of the model, piecewise linear in time.

    Parameters
    ----------
    times : sequence of float or str, or pint.Quantity
        Strictly increasing times [s] (items may carry a unit, ``"30 s"``).
    powers : sequence of float or str, or pint.Quantity
        Power at each time [W], >= 0. Zero outside ``[times[0], times[-1]]``.
        A step is written as two rows at the same time is not allowed; use a short ramp
        or :meth:`steps`.
    """

    times: np.ndarray
    powers: np.ndarray

    def __post_init__(self) -> None:
        t = quantity_array(self.times, "time", "power history times", allow_nonfinite=True)
        p = quantity_array(self.powers, "power", "power history powers", allow_nonfinite=True)
        if t.ndim != 1 or t.shape != p.shape or t.size < 2:
            raise ScheduleError("power history: times and powers must be 1-D of equal length >= 2")
        if not (np.all(np.isfinite(t)) and np.all(np.isfinite(p))):
            bad = int(np.flatnonzero(~(np.isfinite(t) & np.isfinite(p)))[0])
            raise ScheduleError(f"power history row {bad}: non-finite value")
        steps = np.diff(t)
        if np.any(steps <= 0):
            bad = int(np.flatnonzero(steps <= 0)[0]) + 1
            raise ScheduleError(f"power history row {bad}: time {t[bad]} s is not after the previous {t[bad - 1]} s")
        if np.any(p < 0):
            bad = int(np.flatnonzero(p < 0)[0])
            raise ScheduleError(f"power history row {bad}: negative power {p[bad]} W")
        object.__setattr__(self, "times", t)
        object.__setattr__(self, "powers", p)

    @classmethod
    def none(cls) -> PowerHistory:
        """A history with no heat input.

        Returns
        -------
        PowerHistory
            Zero power [W] over the table 0 to 1 s (and zero outside it).
        """
        return cls(np.array([0.0, 1.0]), np.array([0.0, 0.0]))

    def power(self, time: float | np.ndarray) -> np.ndarray:
        """Power at ``time``; zero outside the table.

        Parameters
        ----------
        time : float or ndarray
            Time [s].

        Returns
        -------
        ndarray
            Power [W], linearly interpolated in the table.
        """
        return np.interp(time, self.times, self.powers, left=0.0, right=0.0)

    def energy(self, start: float, end: float) -> float:
        """Exact integral of the power over ``[start, end]`` [J] (trapezoid of a linear table).

        Parameters
        ----------
        start, end : float
            Interval [s]; the parts outside the table count zero.

        Returns
        -------
        float
            Energy [J]; zero when ``end <= start``.
        """
        start, end = max(start, self.times[0]), min(end, self.times[-1])
        if end <= start:
            return 0.0
        knots = self.times[(self.times > start) & (self.times < end)]
        t = np.concatenate(([start], knots, [end]))
        p = self.power(t)
        return float(np.sum(0.5 * (p[1:] + p[:-1]) * np.diff(t)))

    @property
    def total_energy(self) -> float:
        """Energy of the whole history [J]."""
        return self.energy(self.times[0], self.times[-1])

    @property
    def end_of_heating(self) -> float:
        """Last time with non-zero power [s] (start of the table if all zero)."""
        nonzero = np.flatnonzero(self.powers > 0)
        return float(self.times[min(nonzero[-1] + 1, self.times.size - 1)]) if nonzero.size else float(self.times[0])


@dataclass(frozen=True)
class Phase:
    """One interval of constant cooling laws and contact state.

    Parameters
    ----------
    name : str
        Label of the phase (e.g. ``"parked"``).
    start, end : float
        Phase interval [s], ``end > start``.
    laws : mapping of str to BoundaryLaw
        Cooling law for each exposed-surface group name. The key ``"*"`` is the default
        for groups not named.
    clamped : bool
        Whether the contacts are clamped (their clamped conductance applies) during the phase.
    """

    name: str
    start: float
    end: float
    laws: Mapping[str, BoundaryLaw]
    clamped: bool = False

    def __post_init__(self) -> None:
        if not (np.isfinite(self.start) and np.isfinite(self.end)) or self.end <= self.start:
            raise ScheduleError(f"phase {self.name!r}: end {self.end} s must be after start {self.start} s")
        for group, law in self.laws.items():
            if not isinstance(law, BoundaryLaw):
                raise ScheduleError(f"phase {self.name!r}: law for group {group!r} is not a boundary law")

    def law(self, group: str) -> BoundaryLaw:
        """Cooling law of ``group`` in this phase.

        Parameters
        ----------
        group : str
            Surface group name.

        Returns
        -------
        BoundaryLaw
            The group's own law, else the phase's default law ``"*"``.

        Raises
        ------
        ScheduleError
            If the phase has neither a law for ``group`` nor a default.
        """
        try:
            return self.laws[group] if group in self.laws else self.laws["*"]
        except KeyError:
            raise ScheduleError(
                f"phase {self.name!r}: no cooling law for surface group {group!r} and no default '*'"
            ) from None


@dataclass(frozen=True)
class Schedule:
    """Heat input and environment over a run: what the solver reads.

    Parameters
    ----------
    power : PowerHistory
        Total friction power [W]; the network spreads it over the
        rubbing interfaces.
    phases : sequence of Phase
        Contiguous, ordered phases covering the run from ``phases[0].start`` to
        ``phases[-1].end``.
    extra_breakpoints : sequence of float
        More times [s] the solver must land on exactly (e.g. output times).
    volumetric_source : callable, optional
        ``source(r, z, t) -> ndarray``: a heat source [W/m^3] at cell centres ``r``, ``z``
        [m] and time ``t`` [s], evaluated at the end of each step. For verification
        (manufactured solutions) and for heating not at a rubbing interface.
    end_of_braking : float, optional
        End of the stop that loaded the brake [s], the reference of every delay "after
        braking"; the last time with power (``power.end_of_heating``) when None.
    """

    power: PowerHistory
    phases: Sequence[Phase]
    extra_breakpoints: Sequence[float] = field(default=())
    volumetric_source: Callable[[np.ndarray, np.ndarray, float], np.ndarray] | None = None
    end_of_braking: float | None = None

    def __post_init__(self) -> None:
        phases = tuple(self.phases)
        if not phases:
            raise ScheduleError("schedule: at least one phase is needed")
        for before, after in zip(phases[:-1], phases[1:], strict=True):
            if not np.isclose(before.end, after.start, rtol=0.0, atol=1e-9):
                kind = "overlap" if after.start < before.end else "leave a gap"
                raise ScheduleError(
                    f"phases {before.name!r} (ends {before.end} s) and {after.name!r} (starts {after.start} s) {kind}"
                )
        object.__setattr__(self, "phases", phases)

    @property
    def start(self) -> float:
        """Start of the run [s]."""
        return self.phases[0].start

    @property
    def end(self) -> float:
        """End of the run [s]."""
        return self.phases[-1].end

    def breakpoints(self) -> np.ndarray:
        """Sorted unique times in ``[start, end]`` the solver must land on.

        Returns
        -------
        ndarray
            Start, end and phase ends, the power table's times when there is any power, and the
            extra breakpoints [s].
        """
        times = [self.start, self.end, *(p.end for p in self.phases)]
        if np.any(self.power.powers > 0):
            times.extend(self.power.times)
        times.extend(self.extra_breakpoints)
        t = np.unique(np.asarray(times, dtype=float))
        return t[(t >= self.start) & (t <= self.end)]

    def phase_at(self, time: float) -> Phase:
        """The phase containing ``time`` (a step is attributed by its midpoint).

        Parameters
        ----------
        time : float
            Time [s].

        Returns
        -------
        Phase
            The first phase ending after ``time``; the last phase for a time past every end.
        """
        for phase in self.phases:
            if time < phase.end:
                return phase
        return self.phases[-1]

    def energy(self, start: float, end: float) -> float:
        """Friction energy delivered over ``[start, end]`` [J].

        Parameters
        ----------
        start, end : float
            Interval [s].

        Returns
        -------
        float
            Energy [J] of the power history over the interval.
        """
        return self.power.energy(start, end)
