"""Tyre gas heated by the rim, tyre pressure margins, plug-versus-pressure order, bead seats.

Checks against the ideal gas law and the lumped first-order closed forms worked by hand
beside each test (source named), on synthetic rim histories.
"""

from __future__ import annotations

import numpy as np
import pytest
from tyre_case import hot_rim_gas, rim_result

from heatstack.answers.tyre import (
    tyre_gas,
)

R_N2, CV_N2 = 296.8, 743.0  # nitrogen [J/(kg K)], from memory (cv near 300 K)


def test_constant_volume_pressure_rise_hand_value():
    # Ideal gas at constant volume, p2/p1 = T2/T1 (Cengel & Boles, Thermodynamics, ch. 3, from
    # memory). Hand: 1.2 MPa * 373.15 / 288.15 = 1.2 * 1.294985 = 1.5540 MPa (absolute).
    # tau = m cv / hA ~ 104 s; 5000 s leaves exp(-48) of the initial difference.
    gas = hot_rim_gas()
    assert gas.pressure[-1] == pytest.approx(1.5540e6, abs=50.0)


def test_gauge_cold_pressure_adds_the_ambient():
    # Hand: 10 bar gauge + 101325 Pa = 1.0e6 + 101325 = 1.101325e6 Pa absolute.
    gas = tyre_gas(
        rim_result(lambda t: np.full(t.size, 288.15)),
        "10 bar",
        0.1,
        0.5,
        20.0,
        288.15,
        ambient_pressure=101325.0,
    )
    assert gas.cold_pressure == pytest.approx(1.101325e6)


def test_gas_temperature_follows_the_lumped_exponential():
    # Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.6 (from memory), for the
    # gas node: T_g = T_rim + (T0 - T_rim) exp(-t / tau), tau = m cv / (h A), m = p V / (R T0).
    gas = hot_rim_gas()
    tau = (1.2e6 * 0.1 / (R_N2 * 288.15)) * CV_N2 / (20.0 * 0.5)
    expected = 373.15 + (288.15 - 373.15) * np.exp(-gas.times / tau)
    assert np.max(np.abs(gas.temperature - expected)) < 1e-9


def test_gas_trails_a_ramping_rim_by_its_time_constant():
    # Ogata, Modern Control Engineering, 5th ed., sec. 5-2, ramp response (from memory): after
    # the transient the gas is at the rim temperature tau earlier. Exact on 60 s records.
    gas = tyre_gas(
        rim_result(lambda t: 288.15 + 0.01 * t, end=6000.0, step=60.0),
        1.2e6,
        0.1,
        0.5,
        20.0,
        288.15,
        outer_conductance=0.0,
        gauge=False,
    )
    tau = (1.2e6 * 0.1 / (R_N2 * 288.15)) * CV_N2 / (20.0 * 0.5)
    assert gas.temperature[-1] == pytest.approx(288.15 + 0.01 * (6000.0 - tau), abs=1e-6)


def test_steady_gas_temperature_with_a_loss_to_ambient():
    # Hand, steady energy balance hA (T_rim - T) = G (T - T_amb):
    # T = (10 * 400 + 5 * 300) / 15 = 366.667 K.
    result = rim_result(lambda t: np.full(t.size, 400.0), end=20000.0, step=100.0)
    gas = tyre_gas(result, 1.2e6, 0.1, 0.5, 20.0, 288.15, outer_conductance=5.0, ambient=300.0, gauge=False)
    assert gas.temperature[-1] == pytest.approx(5500.0 / 15.0, abs=1e-6)
