"""What a run keeps: probe and series histories, the energy ledger, field snapshots.

The solver hands every accepted step to a :class:`Recorder`, which accumulates the
histories and builds the :class:`~heatstack.result.Result` at the end (instrument
readings are the probe histories through each probe's first-order lag).
"""

from __future__ import annotations

import numpy as np

from ..geometry import RUBBING_FACE_MAX
from ..result import EnergyLedger, Result, State
from .accounts import LEDGER_ACCOUNTS, StepAccounts
from .instrument import first_order_lag
from .network import Network
from .schedule import Schedule

__all__ = ["Recorder"]


class Recorder:
    """Collects the histories of a run and builds the Result.

    Parameters
    ----------
    net : Network
        The meshed assembly being run.
    mass : ndarray, shape (n,)
        Cell masses [kg], the weights of the mass-mean cell-group series.
    """

    def __init__(self, net: Network, mass: np.ndarray):
        self.net, self.mass = net, mass
        self.times: list[float] = []
        self.probe_values: list[np.ndarray] = []
        self.series: dict[str, list[float]] = {}
        self.group_area = np.bincount(net.face_group, weights=net.face_area, minlength=len(net.groups))
        # cell groups with cells, and the mass of each [kg]
        self.cell_groups = [
            (group, np.flatnonzero(cells), mass[cells].sum())  # indices: cheaper than a mask every step
            for group, cells in zip(net.assembly.cell_groups, net.cell_group_masks, strict=True)
            if cells.any()
        ]
        self.ledger: dict[str, list[float]] = {account: [0.0] for account in LEDGER_ACCOUNTS}
        n_if = len(net.friction_labels)
        self.friction = np.zeros((n_if, 2))
        self.snap_times: list[float] = []
        self.snaps: list[np.ndarray] = []

    def record(
        self,
        t: float,
        T: np.ndarray,
        accounts: StepAccounts | None,
        face_ts: np.ndarray,
        rubbing_surface: float | None = None,
    ) -> None:
        """Record one accepted state: probes, cell-group and surface series, and the ledger.

        Parameters
        ----------
        t : float
            Time of the state [s].
        T : ndarray, shape (n,)
            Cell temperatures [K].
        accounts : StepAccounts or None
            The step's energy accounts [J], added to the ledger totals (None at the start).
        face_ts : ndarray, shape (f,)
            Exposed-face temperatures [K], area-averaged per surface group and read by
            the probes next to a face.
        rubbing_surface : float, optional
            The hottest rubbing surface [K] (:class:`~heatstack.numerics.rubbing_faces.RubbingFaces`),
            recorded as the series ``RUBBING_FACE_MAX``; None for a network without rubbing faces.
        """
        net = self.net
        self.times.append(t)
        self.probe_values.append(net.probe_stencils.evaluate(T, face_ts))
        for group, cells, group_mass in self.cell_groups:
            for statistic, name in zip(group.statistics, group.series_names, strict=True):
                if statistic == "mean":
                    value = np.dot(self.mass[cells], T[cells]) / group_mass
                else:
                    value = T[cells].max()
                self.series.setdefault(name, []).append(float(value))
        group_mean = np.bincount(net.face_group, weights=net.face_area * face_ts, minlength=len(net.groups))
        for name, mean in zip(net.groups, group_mean / self.group_area, strict=True):
            self.series.setdefault(f"surface:{name}", []).append(float(mean))
        if rubbing_surface is not None:
            self.series.setdefault(RUBBING_FACE_MAX, []).append(float(rubbing_surface))
        if accounts is not None:
            for account, totals in self.ledger.items():
                totals.append(totals[-1] + getattr(accounts, account))
            if self.friction.size:
                n_if = len(net.friction_labels)
                self.friction[:, 0] += np.bincount(net.friction_interface, weights=accounts.friction_a, minlength=n_if)
                self.friction[:, 1] += np.bincount(net.friction_interface, weights=accounts.friction_b, minlength=n_if)

    def snapshot(self, t: float, T: np.ndarray) -> None:
        """Keep the field at ``t`` as a snapshot (once: a second call at the same time is ignored).

        Parameters
        ----------
        t : float
            Time of the snapshot [s].
        T : ndarray, shape (n,)
            Cell temperatures [K].
        """
        if self.snap_times and abs(self.snap_times[-1] - t) < 1e-12:
            return
        self.snap_times.append(t)
        self.snaps.append(self.net.grid.to_field(T))

    def result(self, schedule: Schedule, final: State, stats: dict, start_readings: dict | None = None) -> Result:
        """The Result of the run recorded so far.

        Parameters
        ----------
        schedule : Schedule
            The run's schedule (phases, end of heating and of braking).
        final : State
            The state at the end of the run; its sensor readings are filled in here.
        stats : dict
            Solver statistics, stored under ``metadata["solver"]``.
        start_readings : dict of str to float, optional
            Instrument readings at the first record [K], the start of each lagging sensor's
            reading (its probe temperature when absent).

        Returns
        -------
        Result
            Times, probe temperatures and sensor readings, series, energy ledger and snapshots.
        """
        net = self.net
        start_readings = start_readings or {}
        times = np.asarray(self.times)
        values = np.asarray(self.probe_values).reshape(times.size, len(net.probe_names))
        probes = {name: values[:, k].copy() for k, name in enumerate(net.probe_names)}
        readings = {
            name: first_order_lag(times, probes[name], float(tau), start_readings.get(name) if tau > 0 else None)
            for name, tau in zip(net.probe_names, net.probe_time_constants, strict=True)
        }
        final = State(
            time=final.time,
            temperature=final.temperature,
            step=final.step,
            readings={
                name: float(readings[name][-1])
                for name, tau in zip(net.probe_names, net.probe_time_constants, strict=True)
                if tau > 0
            },
        )
        ledger = EnergyLedger(
            **{account: np.asarray(totals) for account, totals in self.ledger.items()},
            friction_labels=net.friction_labels,
            friction_split=self.friction.copy(),
        )
        parts = net.assembly.parts
        return Result(
            times=times,
            probes=probes,
            readings=readings,
            series={k: np.asarray(v) for k, v in self.series.items()},
            ledger=ledger,
            snapshot_times=np.asarray(self.snap_times),
            snapshots=np.asarray(self.snaps),
            r_edges=net.grid.r_edges.copy(),
            z_edges=net.grid.z_edges.copy(),
            part_map=net.grid.part_map.copy(),
            part_names=tuple(p.name for p in parts),
            part_roles=net.assembly.part_roles,
            final_state=final,
            phases=tuple((p.name, p.start, p.end) for p in schedule.phases),
            end_of_heating=schedule.power.end_of_heating,
            end_of_braking=(
                schedule.power.end_of_heating if schedule.end_of_braking is None else schedule.end_of_braking
            ),
            probe_positions={p.name: (p.r, p.z) for p in net.assembly.probes},
            probe_time_constants={p.name: p.time_constant for p in net.assembly.probes},
            metadata={"solver": dict(stats)},
        )
