"""The INVENTED twin-engine aircraft and runway shared by the ground-roll tests (unit and validation)."""

from __future__ import annotations

from heatstack.operations.roll_inputs import Aircraft, Runway

KT = 1852.0 / 3600.0  # [m/s], exact


# An INVENTED twin-engine aircraft and runway for these tests only.
REVERSE_TABLE = [["0 kt", "15 kN"], ["60 kt", "25 kN"], ["160 kt", "40 kN"]]


def aircraft(**changes) -> Aircraft:
    values = dict(
        mass="70 t",
        drag_area="5 m^2",
        lift_area="80 m^2",
        lift_area_dumped="8 m^2",
        spoiler_time="1.5 s",
        idle_thrust="8 kN",
        takeoff_thrust="220 kN",
        reverse_thrust=REVERSE_TABLE,
        reversers=2,
        reverse_cancel_speed="60 kt",
        braked_wheels=4,
        braked_weight_fraction=0.92,
    )
    values.update(changes)
    return Aircraft(**values)


DRY = Runway(braking_friction=[["0 kt", 0.55], ["160 kt", 0.40]], surface="dry", slope=0.008)
