"""Fuse plugs: release time, margins, the plug's own lag, and the default melt temperature.

Checks against closed forms worked by hand (source named) on synthetic rim histories,
and the builder's default release temperature against the range of melt temperatures
of wheel fuse plugs (from memory).
"""

from __future__ import annotations

import numpy as np
import pytest

from heatstack.answers.fuse_plugs import FusePlug, assess_fuse_plugs
from heatstack.builders import build_wheel_brake
from heatstack.errors import InputError, UnitError
from heatstack.result import EnergyLedger, Result, State
from heatstack.wheel_design import FusePlugSpec


def make_result(times, probes):
    """A Result holding only probe histories (local = reading, no field snapshots)."""
    times = np.asarray(times, dtype=float)
    probes = {k: np.asarray(v, dtype=float) for k, v in probes.items()}
    zeros = np.zeros(times.size)
    return Result(
        times=times,
        probes=probes,
        readings=dict(probes),
        series={},
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


def ramp_result(slope=0.5, end=1000.0, step=10.0):
    t = np.arange(0.0, end + 1e-9, step)
    return make_result(t, {"fuse plug 1": 300.0 + slope * t})


def test_release_time_of_a_plug_following_the_rim():
    # Hand: rim 300 + 0.5 t [K] reaches 450.15 K at (450.15 - 300) / 0.5 = 300.3 s.
    (answer,) = assess_fuse_plugs(ramp_result(), [FusePlug("fuse plug 1", 450.15, 3.0)])
    assert answer.releases and answer.release_time == pytest.approx(300.3)


def test_plug_lag_delays_release_by_its_time_constant_on_a_ramp():
    # Ogata, Modern Control Engineering, 5th ed., sec. 5-2, ramp response of a first-order
    # system (from memory): after the transient the plug is the rim tau earlier, so it
    # releases at 300.3 + 30 = 330.3 s (transient left at 330 s: 0.5*30*exp(-11) ~ 2.5e-4 K).
    (answer,) = assess_fuse_plugs(ramp_result(), [FusePlug("fuse plug 1", 450.15, 3.0, time_constant=30.0)])
    assert answer.release_time == pytest.approx(330.3, abs=0.01)


def test_earliest_release_at_the_low_end_of_the_band():
    # Hand: the band's low end 450.15 - 3 = 447.15 K is reached at 147.15 / 0.5 = 294.3 s.
    (answer,) = assess_fuse_plugs(ramp_result(), [FusePlug("fuse plug 1", 450.15, 3.0)])
    assert answer.earliest_release_time == pytest.approx(294.3)


def test_time_constant_from_thermal_mass():
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.7 (from memory):
    # tau = m c / G. Hand: 50 g * 900 J/(kg K) / 1.5 W/K = 30 s.
    plug = FusePlug.from_thermal_mass("fuse plug 1", 450.15, 3.0, "50 g", 900.0, "1.5 W/K")
    assert plug.time_constant == pytest.approx(30.0)


def test_margins_of_a_plug_that_does_not_release():
    # Hand: rim peaks at 300 + 0.25*520 = 430 K; margin 450.15 - 430 = 20.15 K, to the band's
    # low end 20.15 - 3 = 17.15 K.
    (answer,) = assess_fuse_plugs(ramp_result(slope=0.25, end=520.0), [FusePlug("fuse plug 1", 450.15, 3.0)])
    assert (answer.peak, answer.margin, answer.margin_to_band_low) == pytest.approx((430.0, 20.15, 17.15))


def test_plug_that_never_reaches_release_has_no_release_time():
    # Hand: peak 430 K < 450.15 K.
    (answer,) = assess_fuse_plugs(ramp_result(slope=0.25, end=520.0), [FusePlug("fuse plug 1", 450.15, 3.0)])
    assert (answer.releases, answer.release_time) == (False, None)


def test_release_temperature_given_in_celsius():
    # SI Brochure, 9th ed., sec. 2.3.1: T/K = t/degC + 273.15 -> 177 degC = 450.15 K.
    assert FusePlug("fuse plug 1", "177 degC", "3 K").release_temperature == pytest.approx(450.15)


def test_default_release_temperature_lies_in_the_published_range():
    # From memory (no standard at hand): fusible alloys for wheel thermal relief plugs
    # typically melt at about 177-199 degC, some at about 227 degC -> 450.15 K to 500.15 K.
    low, high = 177.0 + 273.15, 227.0 + 273.15
    temperatures = [FusePlugSpec("x", 0.5).release_temperature] + [
        p.release_temperature for p in build_wheel_brake().fuse_plugs
    ]
    assert all(low - 1e-9 <= t <= high + 1e-9 for t in temperatures)


def test_unknown_plug_probe_lists_the_known_probes():
    with pytest.raises(InputError, match=r"'fuse plug 3'.*'fuse plug 1'"):
        assess_fuse_plugs(ramp_result(), [FusePlug("fuse plug 3", 450.15, 3.0)])


def test_release_temperature_with_a_wrong_unit_names_the_field():
    with pytest.raises(UnitError, match="release_temperature"):
        FusePlug("fuse plug 1", "177 kg", 3.0)
