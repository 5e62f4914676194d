"""A turnaround on the invented reference wheel and brake, from the Python API.

INVENTED scenario (no real aircraft, wheel, brake or operator): a landing and taxi-in,
then the question behind every turnaround — how long until the brake is cool enough to
dispatch, and what would a rejected take-off do if it started after 40 minutes on the
ground? Not certified data; defer to the manufacturer's maintenance data.

Run: python examples/turnaround.py
"""

from __future__ import annotations

from heatstack import Model
from heatstack.answers import assess_fuse_plugs, sensor_lag
from heatstack.builders import build_wheel_brake
from heatstack.operations.duty import DutyCycle, DutyPhase, Environment
from heatstack.operations.heat_input import stop_from_aircraft, taxi_snubs
from heatstack.questions.whatif import cooling_time_from_state, what_if

C = 273.15  # K at 0 degC


def main() -> None:
    built = build_wheel_brake()
    model = Model.build(built.assembly, cell_size=0.006)
    ramp = Environment(ambient_temperature="30 degC", wind_speed="2 m/s")

    landing = stop_from_aircraft(
        mass="62 t", brake_on_speed="120 kt", braked_wheels=4, brake_share=0.55, stop_time="28 s", name="landing"
    )
    snubs = taxi_snubs(
        mass="62 t",
        braked_wheels=4,
        brake_share=1.0,
        speed_high="22 kt",
        speed_low="8 kt",
        snub_duration="4 s",
        interval="50 s",
        count=4,
        start="10 s",
    )
    arrival = DutyCycle(
        [
            DutyPhase(
                "landing roll", "28 s", Environment(ambient_temperature="30 degC", ground_speed="60 kt"), [landing]
            ),
            DutyPhase("taxi-in", "4 min", Environment(ambient_temperature="30 degC", ground_speed="15 kt"), [snubs]),
            DutyPhase("on stand", "40 min", ramp, clamped=False),
        ]
    )
    result = model.run(arrival.schedule(built.assembly.surfaces), initial_temperature=30 + C)

    lag = sensor_lag(result)
    print(f"landing energy per brake: {landing.energy_per_brake / 1e6:.1f} MJ")
    print(
        f"heat-sink mean peak {result.peak('heat_sink_mean')[0] - C:.0f} degC; sensor peak "
        f"{lag.reading_peak - C:.0f} degC, {lag.delay / 60:.1f} min after braking "
        f"(reads {-lag.offset_to_mean_at_peak:.0f} K below the heat-sink mean at its peak)"
    )
    for plug in assess_fuse_plugs(result, built.fuse_plugs):
        print(f"{plug.name}: peak {plug.peak - C:.0f} degC, margin {plug.margin:.0f} K")

    state = result.final_state
    cool = cooling_time_from_state(model, state, ramp, built.assembly.surfaces, below="150 degC", horizon="4 h")
    print(f"after 40 min on stand: {cool.message}")

    rto = stop_from_aircraft(
        mass="64 t",
        brake_on_speed="130 kt",
        braked_wheels=4,
        brake_share=0.9,
        stop_time="36 s",
        name="rejected take-off",
    )
    answer = what_if(
        model,
        state,
        rto,
        ramp,
        built.assembly.surfaces,
        after="2 h",
        braking_environment=Environment(ambient_temperature="30 degC", ground_speed="65 kt"),
    )
    for name in ("heat_sink_mean", "fuse plug 1", "fuse plug 2"):
        value, when = answer.peak(name)
        print(
            f"if a rejected take-off started now: {name} would peak at {value - C:.0f} degC, {when / 60:.1f} min later"
        )


if __name__ == "__main__":
    main()
