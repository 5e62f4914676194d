"""The temperature of the rubbing surfaces themselves, from the cells on either side.

The friction heat of a rubbing face enters the two cells beside it, so the hottest
cell of the parts that rub is the mean over a cell next to a rubbing face, and reads
below the surface by about the heat crossing the cell's half-width times its
half-cell resistance. :class:`RubbingFaces` estimates each rubbing surface from
its two cells with the surfaces as nodes of no heat capacity: the heat ``q_a``,
``q_b`` made on either side (the friction partition of the step equation, at the
schedule's power of the moment) reaches the cell centres through the half-cell
resistances ``R_a``, ``R_b``, and the two surfaces exchange ``f`` through the
contact resistance ``R_c``::

    T_sa = T_a + (q_a - f) R_a,    T_sb = T_b + (q_b + f) R_b,    f R_c = T_sa - T_sb

so that ``f = (T_a - T_b + q_a R_a - q_b R_b) / (R_a + R_b + R_c)``. For a
semi-infinite solid under a constant flux this is the cell-centre value plus
``q dz / (2 k)``, which ``tests/validation`` checks against the closed-form
surface rise.
"""

from __future__ import annotations

import numpy as np

from .network import Network
from .schedule import Schedule
from .step_matrix import CellProperties, HeatSources, cell_properties

__all__ = ["RubbingFaces"]


class RubbingFaces:
    """Surface temperatures of the rubbing faces of one network under one schedule.

    Parameters
    ----------
    network : Network
        The meshed assembly; it must have rubbing faces.
    schedule : Schedule
        The run's schedule (its friction power and phases).

    Raises
    ------
    ValueError
        If a rubbing face is not one of the network's conduction links.
    """

    def __init__(self, network: Network, schedule: Schedule):
        net, n = network, network.n_cells
        self.net, self.schedule = network, schedule
        self.sources = HeatSources(network, schedule)
        # the conduction link of every rubbing face (side a is the link's side a)
        key = net.link_a.astype(np.int64) * n + net.link_b
        order = np.argsort(key)
        wanted = net.friction_a.astype(np.int64) * n + net.friction_b
        found = order[np.searchsorted(key, wanted, sorter=order).clip(0, max(key.size - 1, 0))]
        if wanted.size and (key.size == 0 or np.any(key[found] != wanted)):
            raise ValueError("a rubbing face is not a conduction link of the network")
        self.link = found
        self.conductivity_a = net.link_a[found] + n * net.link_dir[found]
        self.conductivity_b = net.link_b[found] + n * net.link_dir[found]
        self.g_a, self.g_b = net.link_ga[found], net.link_gb[found]
        self.contact = {True: net.link_contact_clamped[found], False: net.link_contact_released[found]}

    def temperatures(
        self, time: float, T: np.ndarray, clamped: bool, properties: CellProperties | None = None
    ) -> tuple[np.ndarray, np.ndarray]:
        """Temperature of either side's surface of every rubbing face.

        Parameters
        ----------
        time : float
            Time of the state [s] (the friction power is the schedule's at this time).
        T : ndarray, shape (n,)
            Cell temperatures [K].
        clamped : bool
            Whether the phase is clamped (its clamped contact resistances in force).
        properties : CellProperties, optional
            The cells' conductivities and heat capacities (those of the step's last Newton
            iterate will do); evaluated at ``T`` when None.

        Returns
        -------
        surface_a, surface_b : ndarray, shape (s,)
            Surface temperatures on side a and side b of each rubbing face [K].
        """
        net = self.net
        if properties is None:
            properties = cell_properties(net, T)
        k = properties.conductivity
        power = float(self.schedule.power.power(time))
        heat_a, heat_b = self.sources.friction(power, properties)
        R_a = self.g_a / k[self.conductivity_a]
        R_b = self.g_b / k[self.conductivity_b]
        T_a, T_b = T[net.friction_a], T[net.friction_b]
        exchange = (T_a - T_b + heat_a * R_a - heat_b * R_b) / (R_a + R_b + self.contact[bool(clamped)])
        return T_a + (heat_a - exchange) * R_a, T_b + (heat_b + exchange) * R_b

    def hottest(self, time: float, T: np.ndarray, clamped: bool, properties: CellProperties | None = None) -> float:
        """The hottest rubbing surface, either side of any rubbing face (see :meth:`temperatures`).

        Parameters
        ----------
        time : float
            Time of the state [s].
        T : ndarray, shape (n,)
            Cell temperatures [K].
        clamped : bool
            Whether the phase is clamped.
        properties : CellProperties, optional
            As for :meth:`temperatures`.

        Returns
        -------
        float
            The highest surface temperature [K].
        """
        surface_a, surface_b = self.temperatures(time, T, clamped, properties)
        return float(max(surface_a.max(), surface_b.max()))
