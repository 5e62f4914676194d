"""Standard atmosphere and airspeed conversions."""

from __future__ import annotations

import math

import fluids
import pytest

from heatstack.operations import atmosphere as atm

KT = 1852.0 / 3600.0  # [m/s], exact
FT = 0.3048  # [m], exact


# ISO 2533:1975 table (geopotential altitude) values, quoted FROM MEMORY:
# altitude [m], temperature [K], pressure [Pa], density [kg/m^3].
ISO_2533_TABLE = [
    (0.0, 288.15, 101325.0, 1.2250),
    (1000.0, 281.65, 89875.0, 1.1117),
    (2000.0, 275.15, 79495.0, 1.0065),
    (3000.0, 268.65, 70109.0, 0.90912),
]


@pytest.mark.parametrize(("h", "t", "p", "rho"), ISO_2533_TABLE)
def test_iso_2533_table_within_0p1_percent(h: float, t: float, p: float, rho: float) -> None:
    assert float(atm.isa_temperature(h)) == pytest.approx(t, rel=1e-3)
    assert float(atm.isa_pressure(h)) == pytest.approx(p, rel=1e-3)
    assert float(atm.isa_density(h)) == pytest.approx(rho, rel=1e-3)


@pytest.mark.parametrize("h", [-1500.0, 0.0, 2500.0, 6000.0, 10999.0])
def test_matches_us_standard_atmosphere_1976_in_fluids(h: float) -> None:
    # Source: fluids.ATMOSPHERE_1976 (U.S. Standard Atmosphere 1976, identical to ISA
    # below 32 km); it takes geometric altitude Z = r0 H / (r0 - H), r0 = 6356766 m.
    z = 6356766.0 * h / (6356766.0 - h)
    reference = fluids.ATMOSPHERE_1976(z)
    assert float(atm.isa_temperature(h)) == pytest.approx(reference.T, rel=1e-6)
    assert float(atm.isa_pressure(h)) == pytest.approx(reference.P, rel=1e-5)
    assert float(atm.isa_density(h)) == pytest.approx(reference.rho, rel=1e-5)


def test_sea_level_speed_of_sound() -> None:
    # ISO 2533 sea-level speed of sound 340.294 m/s (from memory).
    assert float(atm.speed_of_sound(288.15)) == pytest.approx(340.294, abs=5e-4)


@pytest.mark.parametrize("cas", [5.0, 60.0, 90.0, 150.0, 250.0])
def test_cas_equals_tas_at_sea_level_isa(cas: float) -> None:
    assert float(atm.true_airspeed(cas, 0.0)) == pytest.approx(cas, rel=1e-12)


def test_low_speed_limit_is_density_ratio() -> None:
    # Incompressible limit: TAS = EAS sqrt(rho0/rho) and EAS -> CAS as M -> 0; the
    # compressibility correction at M = 0.03 is of order M^2/8 ~ 1e-4.
    tas = float(atm.true_airspeed(10.0, 3000.0))
    assert tas == pytest.approx(10.0 * math.sqrt(atm.RHO0 / float(atm.isa_density(3000.0))), rel=2e-4)


def test_hand_check_250_kcas_at_10000_ft() -> None:
    # Hand calculation, step by step with a pocket calculator (constants of ISO 2533,
    # relations of Anderson, Introduction to Flight, 8th ed., sect. 4.12):
    # T = 288.15 - 0.0065 * 3048 = 268.338 K;
    # p = 101325 (268.338/288.15)^5.25588 = 69682 Pa (69.68 kPa at 10 000 ft, as
    # altimetry tables give, from memory);
    # qc = 101325 [(1 + 0.2 (128.611/340.294)^2)^3.5 - 1] = 10498 Pa;
    # M = sqrt(5 [(10498/69682 + 1)^(2/7) - 1]) = 0.4523;
    # a = 20.0468 sqrt(268.338) = 328.39 m/s; TAS = 0.4523 * 328.39 = 148.52 m/s = 288.7 kt.
    h = 10000.0 * FT
    assert float(atm.isa_temperature(h)) == pytest.approx(268.338, abs=5e-4)
    assert float(atm.isa_pressure(h)) == pytest.approx(69682.0, rel=2e-5)
    assert float(atm.impact_pressure(250.0 * KT)) == pytest.approx(10498.0, rel=5e-5)
    assert float(atm.mach_from_calibrated(250.0 * KT, h)) == pytest.approx(0.4523, abs=5e-5)
    assert float(atm.true_airspeed(250.0 * KT, h)) == pytest.approx(148.52, abs=0.005)


def test_temperature_offset_changes_density_not_pressure() -> None:
    h = 1500.0
    p = float(atm.isa_pressure(h))
    t = float(atm.isa_temperature(h))
    assert float(atm.isa_density(h, 20.0)) == pytest.approx(p / (atm.R_ISA * (t + 20.0)), rel=1e-14)
    # Same Mach at the same pressure: TAS scales with sqrt(T).
    ratio = float(atm.true_airspeed(70.0, h, temperature_offset=20.0)) / float(atm.true_airspeed(70.0, h))
    assert ratio == pytest.approx(math.sqrt((t + 20.0) / t), rel=1e-13)
    same = atm.true_airspeed(70.0, h, air_temperature=t + 20.0)
    assert float(same) == pytest.approx(float(atm.true_airspeed(70.0, h, temperature_offset=20.0)), rel=1e-14)


def test_ground_speed_with_head_and_tail_wind() -> None:
    assert float(atm.ground_speed(70.0, headwind=10.0)) == 60.0
    assert float(atm.ground_speed(70.0, headwind=-5.0)) == 75.0
