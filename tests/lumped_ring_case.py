"""A lumped ring pair for the study tests: two very conductive rings rubbing, one probe (invented).

With conductivity 5000 W/(m K) on 10 mm cells the pair is a lumped body, so a study over its
braking energy and ambient has peaks known from the energy balance rho V c dT/dt = P - losses
(Incropera, DeWitt, Bergman, Lavine, Fundamentals of Heat and Mass Transfer, 6th ed., sec. 5.3;
from memory). Shared by the study, growth, reduced-model and Dask-fault tests.
"""

from __future__ import annotations

_TEXT = """
[case]
title = "{title}"
initial_temperature = "20 degC"

[materials.conductor]
description = "very high conductivity, constant properties: a lumped body (test)"
extrapolation = "error"
density = {{value = 2000.0, unit = "kg/m^3", source = "test"}}
specific_heat = {{unit = "J/(kg*K)", temperature_unit = "K", source = "test", table = [[200.0, 900.0], [2000.0, 900.0]]}}
conductivity = {{unit = "W/(m*K)", temperature_unit = "K", source = "test", table = [[200.0, 5000.0], [2000.0, 5000.0]]}}
emissivity = {{unit = "1", temperature_unit = "K", source = "test", table = [[200.0, 0.05], [2000.0, 0.05]]}}

[assembly]
builder = "none"
cell_size = "10 mm"
[[assembly.parts]]
name = "rotor"
material = "conductor"
r_inner = "100 mm"
r_outer = "200 mm"
z_min = 0
z_max = "10 mm"
role = "rotor"
[[assembly.parts]]
name = "stator"
material = "conductor"
r_inner = "100 mm"
r_outer = "200 mm"
z_min = "10 mm"
z_max = "20 mm"
role = "stator"
[[assembly.probes]]
name = "sensor"
r = "150 mm"
z = "5 mm"
[assembly.length_scales]
"rotor:inner" = "0.2 m"
"rotor:outer" = "0.4 m"
"rotor:bottom" = "0.4 m"
"stator:inner" = "0.2 m"
"stator:outer" = "0.4 m"
"stator:top" = "0.4 m"

[[duty.phases]]
name = "stop"
duration = "2 s"
[[duty.phases.events]]
kind = "stop_from_energy"
energy = "1 MJ"
duration = "2 s"
[[duty.phases]]
name = "parked"
duration = "{parked}"
{limits}
"""


def lumped_ring_case(title: str, parked: str = "1 min", heat_sink_limit: str | None = "600 degC") -> str:
    """The case text, with its title, the parked phase's length and the heat-sink mean's limit (None: no limit)."""
    limits = "" if heat_sink_limit is None else f'\n[output.limits]\nheat_sink_mean = "{heat_sink_limit}"'
    return _TEXT.format(title=title, parked=parked, limits=limits)
