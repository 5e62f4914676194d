"""Tyre pressure margins, plug-versus-pressure order, bead seats and bad input, on synthetic rim histories (the
ideal-gas and lumped closed-form checks are in tests/validation/test_tyre_gas.py).
"""

from __future__ import annotations

import numpy as np
import pytest
from tyre_case import hot_rim_gas, make_result, plug, rim_result

from heatstack.answers.tyre import (
    bead_seat_margin,
    plug_releases_before_limit,
    tyre_gas,
    tyre_pressure_margin,
)
from heatstack.errors import InputError, UnitError

R_N2, CV_N2 = 296.8, 743.0  # nitrogen [J/(kg K)], from memory (cv near 300 K)


def test_pressure_margin_to_a_gauge_limit():
    # Hand: limit 14 bar gauge = 1.4e6 + 101325 = 1.501325e6 Pa absolute; peak 1.553982e6 Pa
    # (test above) -> margin -52657 Pa.
    margin = tyre_pressure_margin(hot_rim_gas(), "14 bar")
    assert margin.margin == pytest.approx(1.501325e6 - 1.553982e6, abs=50.0)


def _fast_gas():
    # Gas following a rim ramp 288.15 + 0.1 t closely: hA = 5e5 W/K, tau = 1042.5 / 5e5 = 2.1 ms.
    # Hand: the 1.5 MPa absolute limit is met at T = 288.15 * 1.5 / 1.2 = 360.1875 K, when the
    # rim was there tau earlier: t = (360.1875 - 288.15) / 0.1 + 0.0021 = 720.377 s.
    result = rim_result(lambda t: 288.15 + 0.1 * t, end=1500.0, step=1.0)
    return tyre_gas(result, 1.2e6, 0.1, 0.5, 1e6, 288.15, outer_conductance=0.0, gauge=False)


def test_plug_releasing_first_is_reported_with_both_times():
    # Hand: plug releases at 600 s, limit reached at 720.377 s.
    answer = plug_releases_before_limit([plug(600.0), plug(None)], _fast_gas(), 1.5e6, gauge=False)
    assert answer.releases_first
    assert (answer.release_time, answer.limit_time) == pytest.approx((600.0, 720.377), abs=1e-3)


def test_limit_reached_before_the_plug_is_reported():
    # Hand: plug releases at 800 s, after the limit at 720.377 s.
    answer = plug_releases_before_limit([plug(800.0)], _fast_gas(), 1.5e6, gauge=False)
    assert not answer.releases_first


def test_bead_seat_margins():
    # Hand: bead seats peak at 300 + 100 = 400 K and 300 + 50 = 350 K; 120 degC = 393.15 K
    # (SI Brochure, 9th ed., sec. 2.3.1) -> margins -6.85 K and 43.15 K.
    t = np.linspace(0.0, 100.0, 101)
    result = make_result(t, probes={"inboard bead seat": 300.0 + t, "outboard bead seat": 300.0 + 0.5 * t})
    answers = bead_seat_margin(result, "120 degC")
    assert [a.margin for a in answers] == pytest.approx([-6.85, 43.15])


def test_missing_tyre_cavity_series_is_refused():
    t = np.linspace(0.0, 100.0, 11)
    result = make_result(t, series={"surface:rim bore": 300.0 + t})
    with pytest.raises(InputError, match=r"surface:tyre cavity.*surface:rim bore"):
        tyre_gas(result, 1.2e6, 0.1, 0.5, 20.0, 288.15)


def test_gas_volume_with_a_wrong_unit_names_the_field():
    with pytest.raises(UnitError, match="gas_volume"):
        tyre_gas(rim_result(lambda t: 300.0 + 0 * t), 1.2e6, "0.1 m**2", 0.5, 20.0, 288.15)
