"""The public entry point: mesh an assembly once, then run schedules on it.

Example
-------
>>> from heatstack import Assembly, Part, Model, Schedule, Phase, PowerHistory, FixedConvection
>>> model = Model.build(assembly, cell_size=0.004)            # doctest: +SKIP
>>> result = model.run(schedule, initial_temperature=293.15)   # doctest: +SKIP
>>> result.peak("heat_sink_mean")                              # doctest: +SKIP
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np

from .assembly import Assembly
from .errors import GeometryError
from .geometry import HEAT_SINK
from .materials import Material
from .numerics.grid import Grid, build_grid
from .numerics.network import Network, build_network, with_contacts
from .numerics.options import SolverOptions
from .numerics.schedule import Schedule
from .numerics.solver import integrate
from .result import Result, State
from .units import quantity

__all__ = ["Model", "simulate"]


@dataclass(frozen=True, eq=False)
class Model:
    """A meshed assembly: grid and precomputed network, reusable across many runs.

    Build it with :meth:`Model.build`; run it with :meth:`Model.run`.

    Parameters
    ----------
    assembly : Assembly
        The parts, contacts and probes that were meshed.
    grid : Grid
        The structured r-z grid [m] with its part map and active-cell numbering.
    network : Network
        Conductances [W/K], capacities and exposed faces [m^2] computed on ``grid``.
    """

    assembly: Assembly
    grid: Grid
    network: Network

    @classmethod
    def build(
        cls,
        assembly: Assembly,
        cell_size: float | tuple[float, float] = 0.004,
        min_cells: int = 3,
        materials: Mapping[str, Material] | None = None,
    ) -> Model:
        """Mesh ``assembly`` and precompute its conductance network.

        Parameters
        ----------
        assembly : Assembly
        cell_size : float or str or pint.Quantity, or a pair of them
            Target cell size [m] (or radial and axial sizes), e.g. ``"5 mm"``.
        min_cells : int
            Minimum number of cells across each part in each direction [-].
        materials : mapping of str to Material, optional
            Materials not in the materials directory (e.g. defined inline), by name.

        Returns
        -------
        Model
            The meshed assembly, ready for any number of :meth:`run` calls.

        Raises
        ------
        GeometryError
            If ``cell_size`` or ``min_cells`` is not valid, or the assembly does not fit its
            mesh (a gap pair whose sides do not face each other, a rubbing interface with no
            area inside the friction radii, friction shares that do not match the interfaces).
        MaterialError
            If a part names a material that is neither given nor in the materials directory.
        """
        pair = isinstance(cell_size, tuple | list)
        sizes = tuple(
            quantity(
                v,
                "length",
                f"cell_size[{k}]" if pair else "cell_size",
                minimum=0.0,
                exclusive_minimum=True,
                error=GeometryError,
            )
            for k, v in enumerate(cell_size if pair else [cell_size])
        )
        grid = build_grid(assembly, sizes if pair else sizes[0], min_cells)
        return cls(assembly=assembly, grid=grid, network=build_network(assembly, grid, materials))

    def with_contacts(self, assembly: Assembly) -> Model:
        """This model with the contact conductances of ``assembly``, re-meshing nothing.

        Parameters
        ----------
        assembly : Assembly
            The meshed assembly with other contact conductances (clamped or released, by
            part or role pair, or the default), and nothing else changed.

        Returns
        -------
        Model
            A model whose runs equal those of ``Model.build(assembly, ...)`` on the same grid;
            it shares every array but the contact resistances with this one.

        Raises
        ------
        GeometryError
            If ``assembly`` differs from this model's in anything but contact conductances.
        """
        return Model(assembly=assembly, grid=self.grid, network=with_contacts(self.network, assembly))

    @property
    def n_cells(self) -> int:
        """Number of active cells (unknowns)."""
        return self.grid.n_cells

    @property
    def heat_sink_mass(self) -> float | None:
        """Mass [kg] of the ``heat_sink`` cell group at the reference density, or None without that group."""
        network = self.network
        for group, cells in zip(network.assembly.cell_groups, network.cell_group_masks, strict=True):
            if group.name == HEAT_SINK:
                return float(network.mass()[cells].sum())
        return None

    def run(
        self,
        schedule: Schedule,
        initial_temperature: float | Mapping[str, float] | State | np.ndarray,
        options: SolverOptions | None = None,
        progress: Callable[[float], None] | None = None,
    ) -> Result:
        """Integrate ``schedule`` from ``initial_temperature`` [K] (or a saved State).

        Parameters
        ----------
        schedule : Schedule
            Brake power [W] over time [s] and the phases with their boundary laws.
        initial_temperature : float, str, mapping of str to float or str, State or ndarray
            One temperature (a number in [K] or a string with its unit, e.g. ``"30 degC"``) for every
            cell, a temperature per part name, a
            :class:`~heatstack.result.State` saved by an earlier run (the run continues
            from its time and instrument readings), or one temperature [K] per active cell.
        options : SolverOptions, optional
            Step control and tolerances; the defaults when None.
        progress : callable, optional
            Called with the simulated time [s] after every accepted step.

        Returns
        -------
        Result
            Record times [s], probe and series histories [K], the energy ledger [J],
            snapshots and the final state.

        Raises
        ------
        InputError
            If the initial temperature does not fit the model (unknown part name, wrong
            number of cells, not finite and above 0 K), a saved state lies outside the
            schedule, or a solver option is not valid.
        SolverError
            If a step cannot be completed even at the smallest step size; the message
            says when and where.
        The result's metadata states the heat-sink mass used (``heat_sink_mass_kg``) and how
        the run was computed (``numerics``: cells, time-stepping scheme and its control).
        """
        positive = {"minimum": 0.0, "exclusive_minimum": True}
        if isinstance(initial_temperature, Mapping):
            initial_temperature = {
                name: quantity(value, "temperature", f"initial_temperature[{name!r}]", **positive)
                for name, value in initial_temperature.items()
            }
        elif not isinstance(initial_temperature, State | np.ndarray):
            initial_temperature = quantity(initial_temperature, "temperature", "initial_temperature", **positive)
        result = integrate(self.network, schedule, initial_temperature, options, progress)
        result.metadata["heat_sink_mass_kg"] = self.heat_sink_mass
        result.metadata["numerics"] = _numerics(self.n_cells, options or SolverOptions())
        return result


def _numerics(cells: int, options: SolverOptions) -> dict:
    """How a run was computed: cells and the time stepping's scheme and control (SI, JSON-able)."""
    fixed = options.fixed_step is not None
    return {
        "cell_count": int(cells),
        "scheme": options.scheme,
        "fixed_step_s": options.fixed_step,
        "accuracy_K": options.accuracy if options.scheme == "bdf2" and not fixed else None,
        "target_change_K": options.euler_target_change if options.scheme == "euler" and not fixed else None,
    }


def simulate(
    assembly: Assembly,
    schedule: Schedule,
    initial_temperature: float | Mapping[str, float] | State,
    cell_size: float | tuple[float, float] = 0.004,
    options: SolverOptions | None = None,
) -> Result:
    """Build a :class:`Model` and run one schedule: the one-call form of the API.

    Parameters
    ----------
    assembly : Assembly
        The parts [m], contacts and probes to mesh.
    schedule : Schedule
        Brake power [W] over time [s] and the phases with their boundary laws.
    initial_temperature : float, mapping of str to float, or State
        One temperature [K] for every cell, a temperature [K] per part name, or a
        saved :class:`~heatstack.result.State` of a model of the same assembly.
    cell_size : float or (float, float)
        Target cell size [m] (or radial and axial sizes [m]).
    options : SolverOptions, optional
        Step control and tolerances; the defaults when None.

    Returns
    -------
    Result
        The run, as from :meth:`Model.run`.

    Raises
    ------
    GeometryError, MaterialError
        As :meth:`Model.build`.
    InputError, SolverError
        As :meth:`Model.run`.
    """
    return Model.build(assembly, cell_size).run(schedule, initial_temperature, options)
