"""The two-disc case with a lagging sensor shared by the chained-readings tests (unit and validation)."""

from __future__ import annotations

from heatstack import (
    Assembly,
    FixedConvection,
    Model,
    Part,
    Phase,
    PowerHistory,
    Probe,
    Schedule,
    SolverOptions,
    simple_material,
)

STEEL = simple_material("plain", 7800.0, 480.0, 40.0, temperature_range=(200.0, 1500.0))


TAU = 60.0  # s, slow against the heating so the reading lags by tens of kelvin


def lag_model() -> Model:
    assembly = Assembly(
        [Part("rotor", "plain", 0.1, 0.2, 0.0, 0.02, "rotor"), Part("stator", "plain", 0.1, 0.2, 0.02, 0.04, "stator")],
        probes=[Probe("sensor", 0.15, 0.03, time_constant=TAU), Probe("bare", 0.15, 0.03)],
    )
    return Model.build(assembly, 0.01, materials={"plain": STEEL})


def lag_schedule(extra=()) -> Schedule:
    law = {"*": FixedConvection(20.0, 300.0, radiation=False)}
    power = PowerHistory((0.0, 1.0, 200.0), (0.0, 2.0e4, 2.0e4))
    return Schedule(power, [Phase("heat", 0.0, 200.0, law)], extra_breakpoints=extra)


# backward Euler: a chained BDF2 run restarts its history, so only there does a split run step as the whole
OPTIONS = SolverOptions(scheme="euler", fixed_step=2.0, tolerance=1e-8)
