"""Energy closure of a braking pulse followed by three hours of cooling.

First law for the whole stack (e.g. Incropera, Fundamentals of Heat and Mass Transfer,
6th ed., eq. 1.11c, from memory): E_in - E_out = delta E_stored, here

    heat in (friction) - convected - radiated = stored

with radiation across the internal gaps and the contact flows internal, so they must
cancel exactly. The engine integrates in enthalpy, so the balance must hold to
round-off (<= 1e-9 of the heat in) however large the steps and however strongly the
specific heat varies.

The stack is small and invented: a pressure plate, two rotors, a stator and an end
plate (four rubbing interfaces), 20 mm thick on a 0.12-0.22 m annulus, with contact
conductances that change when the brake is released, and (in the first case) a thin
steel heat shield outside the stack that exchanges radiation with it across a void.
A 40 s pulse of linearly falling power (500 kW to 0, 10 MJ) is followed by 3 h of
cooling by convection (h = 15 W/(m^2 K)) and radiation to 300 K on every exposed face.

Closure alone cannot see a wrong flux that is applied consistently (a doubled h both
cools the stack and is booked as convected). So the convected and radiated accounts are
also compared with independent integrals over the recorded surface temperatures (the
area-mean temperature of each exposed side, ``series["surface:<part>:<side>"]``), with
h, the emissivities and the areas taken from the case itself, not from the engine:

    convected = integral of sum_sides h A (Ts - T_amb) dt
    radiated  = integral of sum_sides eps(Ts) sigma A (Ts^4 - Tsur^4) dt

(Newton's law of cooling and the grey-body exchange with large surroundings: Incropera,
6th ed., eqs. 1.3a and 1.7, from memory). The integral over the record is taken by the
trapezoidal rule; how a scheme distributes the flux inside a step is then uncertain by
half the difference of the left and right rectangle sums, which is part of the
tolerance. Both run at a fixed 10 s step and at the default settings
(tests/validation/settings.py).
"""

from __future__ import annotations

import numpy as np
import pytest
from settings import at_both_settings, solver_options

from heatstack import (
    Assembly,
    Contact,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Schedule,
    SolverOptions,
    load_material,
    simple_material,
)

PULSE, COOLING = 40.0, 3.0 * 3600.0
PEAK_POWER = 5.0e5  # W, falling linearly to 0 over the pulse
ENERGY = 0.5 * PEAK_POWER * PULSE  # 10 MJ
R_IN, R_OUT, THICKNESS = 0.12, 0.22, 0.02
DISCS = (
    ("pressure plate", "pressure_plate"),
    ("rotor 1", "rotor"),
    ("stator 1", "stator"),
    ("rotor 2", "rotor"),
    ("end plate", "end_plate"),
)
CONTACTS = [
    Contact(roles=("rotor", other), clamped=8000.0, released=1500.0)
    for other in ("stator", "pressure_plate", "end_plate")
]
# cp(T) = C0 + C1 T: 800 J/(kg K) at 300 K, 1600 J/(kg K) at 1000 K (doubles over the
# temperatures the run visits), written as the values at 50 K and 3000 K
C1 = (1600.0 - 800.0) / 700.0
C0 = 800.0 - 300.0 * C1
RHO = 1780.0
CARBON_LINEAR = simple_material(
    "carbon-linear",
    density=RHO,
    specific_heat=(C0 + 50.0 * C1, C0 + 3000.0 * C1),
    conductivity=(45.0, 30.0),
    conductivity_axial=(15.0, 10.0),
    emissivity=0.8,
)
STEEL = simple_material("shield-steel", density=7900.0, specific_heat=500.0, conductivity=16.0, emissivity=0.3)


def _stack(material: str, heat_shield: bool) -> Assembly:
    parts = [
        Part(name, material, R_IN, R_OUT, k * THICKNESS, (k + 1) * THICKNESS, role)
        for k, (name, role) in enumerate(DISCS)
    ]
    if heat_shield:  # a 5 mm void between the stack and the shield: gap radiation
        parts.append(Part("shield", "shield-steel", R_OUT + 0.005, R_OUT + 0.007, 0.0, 5 * THICKNESS, "heat_shield"))
    return Assembly(parts=parts, contacts=CONTACTS)


def _schedule() -> Schedule:
    law = FixedConvection(h=15.0, ambient_temperature=300.0, surroundings_temperature=300.0, radiation=True)
    return Schedule(
        power=PowerHistory(np.array([0.0, PULSE]), np.array([PEAK_POWER, 0.0])),
        phases=[
            Phase("stop", 0.0, PULSE, {"*": law}, clamped=True),
            Phase("cooling", PULSE, PULSE + COOLING, {"*": law}, clamped=False),
        ],
    )


@pytest.fixture(scope="module")
def shipped_run():
    """The shipped carbon-carbon (cp rises ~2.5x from 300 K to 1000 K), adaptive steps."""
    materials = {"shield-steel": STEEL}
    model = Model.build(_stack("carbon-carbon", heat_shield=True), cell_size=0.005, materials=materials)
    assert load_material("carbon-carbon").specific_heat(1000.0) > 2.0 * load_material("carbon-carbon").specific_heat(
        300.0
    )
    assert model.network.gap_a.size > 0  # the shield does exchange radiation across the void
    return model, model.run(_schedule(), initial_temperature=300.0)


@pytest.fixture(scope="module")
def large_step_run():
    """cp doubling over the run's temperatures and steps up to 600 s."""
    model = Model.build(
        _stack("carbon-linear", heat_shield=False),
        cell_size=0.005,
        materials={"carbon-linear": CARBON_LINEAR},
    )
    options = SolverOptions(max_step=600.0, accuracy=50.0)  # BDF2 with a loose error tolerance
    return model, model.run(_schedule(), initial_temperature=300.0, options=options)


def test_energy_closes_over_pulse_and_three_hours_cooling(shipped_run):
    # First law, Incropera 6th ed., eq. 1.11c (from memory): |in - out - stored| / in <= 1e-9
    # at every record time of the run.
    _, result = shipped_run
    assert result.times[-1] == pytest.approx(PULSE + COOLING)
    assert result.ledger.relative_closure_error <= 1e-9


def test_heat_in_equals_energy_of_power_history(shipped_run):
    # The integral of the linearly falling power, P0 t_pulse / 2 = 10 MJ (trapezoid, exact).
    _, result = shipped_run
    assert result.ledger.heat_in[-1] == pytest.approx(ENERGY, rel=1e-12)


def test_friction_split_sums_to_heat_in(shipped_run):
    # Every joule of friction heat enters one of the two sides of a rubbing interface.
    _, result = shipped_run
    ledger = result.ledger
    assert ledger.friction_split.shape == (4, 2)
    assert np.sum(ledger.friction_split) == pytest.approx(ledger.heat_in[-1], rel=1e-12)


def test_rubbing_interfaces_take_equal_shares_by_default(shipped_run):
    # Default friction shares are equal: each of the 4 interfaces takes 10 MJ / 4.
    _, result = shipped_run
    per_interface = result.ledger.friction_split.sum(axis=1)
    assert np.allclose(per_interface, ENERGY / 4.0, rtol=1e-12, atol=0.0)


def test_energy_closes_with_cp_doubling_and_600_s_steps(large_step_run):
    # First law as above with cp doubling over the run and steps of up to 600 s: an update
    # in temperature with a frozen cp would not close; the enthalpy form must, to 1e-9.
    _, result = large_step_run
    steps = np.diff(result.times)
    assert steps.max() == pytest.approx(600.0)  # the large steps were actually taken
    assert result.ledger.relative_closure_error <= 1e-9


def test_stored_energy_equals_enthalpy_of_final_field(large_step_run):
    # Stored energy = sum over cells of rho V integral_{300 K}^{T} cp dT, with the closed-form
    # integral of the linear cp, C0 (T - 300) + C1 (T^2 - 300^2) / 2, and cell volumes from
    # the grid edges. Tolerance 1e-9 of the heat in.
    _, result = large_step_run
    field = result.snapshots[-1]
    volumes = np.outer(np.diff(result.z_edges), np.pi * np.diff(result.r_edges**2))
    active = ~np.isnan(field)
    t = field[active]
    enthalpy = RHO * (C0 * (t - 300.0) + 0.5 * C1 * (t**2 - 300.0**2))
    stored = float(np.sum(volumes[active] * enthalpy))
    assert abs(stored - result.ledger.stored[-1]) <= 1e-9 * ENERGY
    # and the check is not trivial: the stack still holds tens of kJ
    assert stored > 1e4


# --------------------------------------------------------------------------- independent flux integrals

SIGMA = 5.670374419e-8  # W/(m^2 K^4), CODATA 2018 (exact in the SI)
H_CONVECTION, T_AIR = 15.0, 300.0  # the law of _schedule()
FLUX_STEP = 10.0  # s, the fixed step


def _side_area(part: Part, side: str) -> float:
    """Area [m^2] of one exposed side of an annular part (full circumference)."""
    if side in ("inner", "outer"):
        radius = part.r_inner if side == "inner" else part.r_outer
        return 2.0 * np.pi * radius * (part.z_max - part.z_min)
    return np.pi * (part.r_outer**2 - part.r_inner**2)


def _faces_a_gap(part: Part, side: str) -> bool:
    """The stack's outer sides and the shield's inner side face each other across the 5 mm
    void: they radiate to each other (internal), not to the surroundings."""
    return side == ("inner" if part.name == "shield" else "outer")


@pytest.fixture(scope="module")
def flux_run(setting):
    """The shipped case (with the heat shield) at a fixed 10 s step or at the default settings."""
    assembly = _stack("carbon-carbon", heat_shield=True)
    model = Model.build(assembly, cell_size=0.005, materials={"shield-steel": STEEL})
    result = model.run(_schedule(), initial_temperature=300.0, options=solver_options(setting, FLUX_STEP))
    return assembly, result


def _surface_fluxes(assembly: Assembly, result) -> tuple[np.ndarray, np.ndarray]:
    """Convective and radiative heat rates [W] to the surroundings at every record time."""
    parts = {p.name: p for p in assembly.parts}
    carbon = load_material("carbon-carbon")
    convective = np.zeros(result.times.size)
    radiative = np.zeros(result.times.size)
    sides = [key.split(":")[1:] for key in result.series if key.startswith("surface:")]
    assert len(sides) == 16  # 5 discs x (inner, outer) + their two ends + the shield's four sides
    for name, side in sides:
        part, ts = parts[name], result.series[f"surface:{name}:{side}"]
        area = _side_area(part, side)
        convective += H_CONVECTION * area * (ts - T_AIR)
        if not _faces_a_gap(part, side):
            emissivity = (STEEL if name == "shield" else carbon).emissivity(ts)
            radiative += emissivity * SIGMA * area * (ts**4 - T_AIR**4)
    return convective, radiative


def _integral_and_band(times: np.ndarray, rate: np.ndarray) -> tuple[float, float]:
    """Trapezoidal integral [J] and a bound of how far any one-point-per-step rule may lie from it [J].

    The bound is half the step-weighted total variation of the rate, sum dt |r(k+1) - r(k)| / 2:
    within it lie the left and right rectangle sums (backward Euler books the right one) and
    the BDF2 booking, which equals the right sum plus half the first-minus-last booking of
    each stretch between restarts (each restart's backward-Euler step; the sum telescopes).
    """
    steps = np.diff(times)
    return float(np.sum(steps * 0.5 * (rate[:-1] + rate[1:]))), 0.5 * float(np.sum(steps * np.abs(np.diff(rate))))


@at_both_settings()
def test_convected_energy_is_integral_of_h_area_surface_excess(flux_run):
    # Newton's law of cooling, Incropera 6th ed., eq. 1.3a (from memory), integrated over the
    # recorded side temperatures. h is uniform on every side, so the area mean of a side is
    # exact for it: tolerance the quadrature band plus 1e-4 of the account.
    assembly, result = flux_run
    convective, _ = _surface_fluxes(assembly, result)
    independent, band = _integral_and_band(result.times, convective)
    booked = result.ledger.convected[-1]
    assert booked > 0.3 * ENERGY  # convection carries a large share of the 10 MJ
    assert abs(booked - independent) <= band + 1e-4 * booked, (booked, independent, band)


@at_both_settings()
def test_radiated_energy_is_integral_of_grey_exchange(flux_run):
    # Grey surface in large surroundings, Incropera 6th ed., eq. 1.7 (from memory), integrated
    # over the recorded side temperatures, emissivities from the material tables at those
    # temperatures. The fourth power of a side's mean temperature is below the mean of the
    # fourth powers (3.3e-4 of the account measured at 1 s steps): tolerance the quadrature
    # band plus 1e-3 of the account.
    assembly, result = flux_run
    _, radiative = _surface_fluxes(assembly, result)
    independent, band = _integral_and_band(result.times, radiative)
    booked = result.ledger.radiated[-1]
    assert booked > 0.2 * ENERGY
    assert abs(booked - independent) <= band + 1e-3 * booked, (booked, independent, band)
