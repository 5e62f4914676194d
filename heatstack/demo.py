"""The demonstration case: an INVENTED carbon brake after an invented stop, then parked cooling.

Every number here is invented for the demonstration; none describes a real aircraft,
wheel or brake.
"""

from __future__ import annotations

from .geometry import Assembly, Contact, Part, Probe
from .model import Model
from .numerics.schedule import FixedConvection, Phase, PowerHistory, Schedule
from .numerics.solver import SolverOptions

__all__ = ["demo_assembly", "demo_schedule", "run_demo"]

_CAUTION = (
    "Not certified data. Invented demonstration case. Defer to the manufacturer's maintenance "
    "data, local regulations and licensed practice; hot brakes, wheels and tyres are dangerous."
)


def demo_assembly() -> Assembly:
    """An invented four-rotor carbon stack on a steel torque tube (all dimensions invented)."""
    parts, z = [], 0.0
    roles = ["pressure_plate", "rotor", "stator", "rotor", "stator", "rotor", "stator", "rotor", "end_plate"]
    for k, role in enumerate(roles):
        thickness = 0.022 if role in ("pressure_plate", "end_plate") else 0.018
        parts.append(
            Part(f"{role.replace('_', ' ')} {k}", "carbon-carbon", 0.125, 0.215, z, z + thickness, role)
        )
        z += thickness
    parts.append(Part("torque tube", "low-alloy-steel", 0.105, 0.121, 0.0, z, "torque_tube"))
    parts.append(Part("heat shield", "stainless-heat-shield", 0.228, 0.230, 0.0, z, "heat_shield"))
    probes = [Probe("sensor", 0.113, 0.5 * z, part="torque tube", time_constant=20.0)]
    contacts = [Contact(roles=("rotor", "stator"), clamped=2000.0, released=300.0)]
    return Assembly(parts, contacts, probes, default_contact_conductance=1000.0)


def demo_schedule(energy: float = 40e6, stop_time: float = 35.0, cooling: float = 2 * 3600.0) -> Schedule:
    """An invented stop of ``energy`` [J] in ``stop_time`` [s], then parked cooling [s]."""
    air = FixedConvection(8.0, 288.15)
    power = PowerHistory([0.0, stop_time], [2.0 * energy / stop_time, 0.0])
    return Schedule(
        power,
        [
            Phase("stop", 0.0, stop_time, {"*": air}, clamped=True),
            Phase("parked", stop_time, stop_time + cooling, {"*": air}, clamped=False),
        ],
    )


def run_demo() -> str:
    """Run the demo and return a short text report (temperatures in degC)."""
    model = Model.build(demo_assembly(), cell_size=0.004)
    result = model.run(demo_schedule(), 288.15, SolverOptions())
    lines = [_CAUTION, "", f"cells: {model.n_cells}", "peak temperatures:"]
    for name in ("heat_sink_max", "heat_sink_mean", "sensor"):
        peak, when = result.peak(name)
        lines.append(f"  {name:16s} {peak - 273.15:8.1f} degC at {when / 60.0:7.1f} min")
    ledger = result.ledger
    lines.append(
        f"energy: in {ledger.heat_in[-1] / 1e6:.2f} MJ, convected {ledger.convected[-1] / 1e6:.2f} MJ, "
        f"radiated {ledger.radiated[-1] / 1e6:.2f} MJ, stored {ledger.stored[-1] / 1e6:.2f} MJ, "
        f"closure {ledger.relative_closure_error:.1e}"
    )
    return "\n".join(lines)
