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

from .geometry import Assembly
from .materials import Material
from .numerics.grid import Grid, build_grid
from .numerics.network import Network, build_network
from .numerics.schedule import Schedule
from .numerics.solver import SolverOptions, integrate
from .result import Result, State

__all__ = ["Model", "simulate"]


@dataclass(frozen=True, eq=False)
class Model:
    """A meshed assembly: grid and precomputed network, reusable across many runs.

    Build it with :meth:`Model.build`; run it with :meth:`Model.run`.
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
        cell_size : float or (float, float)
            Target cell size [m] (or radial and axial sizes).
        min_cells : int
            Minimum number of cells across each part in each direction.
        materials : mapping of str to Material, optional
            Materials not in the materials directory (e.g. defined inline).
        """
        grid = build_grid(assembly, cell_size, min_cells)
        return cls(assembly=assembly, grid=grid, network=build_network(assembly, grid, materials))

    @property
    def n_cells(self) -> int:
        """Number of active cells (unknowns)."""
        return self.grid.n_cells

    def run(
        self,
        schedule: Schedule,
        initial_temperature: float | Mapping[str, float] | State | np.ndarray,
        options: SolverOptions | None = None,
        progress: Callable[[float], None] | None = None,
    ) -> Result:
        """Integrate ``schedule`` from ``initial_temperature`` [K] (or a saved State).

        ``progress``, if given, is called with the simulated time [s] after every step.
        The result's metadata states the heat-sink mass used (``heat_sink_mass_kg``).
        """
        result = integrate(self.network, schedule, initial_temperature, options, progress)
        result.metadata["heat_sink_mass_kg"] = float(self.network.mass()[self.network.heat_sink].sum())
        return result


def simulate(
    assembly: Assembly,
    schedule: Schedule,
    initial_temperature: float | Mapping[str, float] | State,
    cell_size: float | tuple[float, float] = 0.004,
    options: SolverOptions | None = None,
) -> Result:
    """Build a :class:`Model` and run one schedule: the one-call form of the API."""
    return Model.build(assembly, cell_size).run(schedule, initial_temperature, options)
