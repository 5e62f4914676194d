"""Synthetic results and tyre-gas cases shared by the tyre tests (unit and validation)."""

from __future__ import annotations

import numpy as np

from heatstack.answers.fuse_plugs import PlugAnswer
from heatstack.answers.tyre import tyre_gas
from heatstack.result import EnergyLedger, Result, State


def make_result(times, probes=None, series=None):
    """A Result holding only the given histories (no field snapshots)."""
    times = np.asarray(times, dtype=float)
    probes = {k: np.asarray(v, dtype=float) for k, v in (probes or {}).items()}
    zeros = np.zeros(times.size)
    return Result(
        times=times,
        probes=probes,
        readings=dict(probes),
        series={k: np.asarray(v, dtype=float) for k, v in (series or {}).items()},
        ledger=EnergyLedger(zeros, zeros, zeros, zeros),
        snapshot_times=np.zeros(0),
        snapshots=np.zeros((0, 1, 1)),
        r_edges=np.array([0.0, 1.0]),
        z_edges=np.array([0.0, 1.0]),
        part_map=np.zeros((1, 1), dtype=int),
        part_names=("rim",),
        part_roles=("wheel",),
        final_state=State(float(times[-1]), np.zeros(1)),
        probe_time_constants={name: 0.0 for name in probes},
    )


def rim_result(rim, end=5000.0, step=10.0):
    t = np.arange(0.0, end + 1e-9, step)
    return make_result(t, series={"surface:tyre cavity": rim(t)})


def hot_rim_gas(**kw):
    """Rim held at 373.15 K; gas 1.2 MPa absolute cold at 288.15 K, 0.1 m^3, hA = 10 W/K."""
    result = rim_result(lambda t: np.full(t.size, 373.15))
    args = dict(
        cold_pressure=1.2e6,
        gas_volume=0.1,
        cavity_area=0.5,
        h_cavity=20.0,
        cold_temperature=288.15,
        outer_conductance=0.0,  # the hand values below have no loss through the carcass
    )
    args.update(kw)
    return tyre_gas(result, gauge=False, **args)


def plug(release_time):
    return PlugAnswer("fuse plug 1", 460.0, 900.0, release_time, -9.85, -12.85, True, release_time, 450.15, 3.0, 0.0)
