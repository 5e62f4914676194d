"""The temperature of the rubbing surfaces themselves, from the cells on either side.

The friction heat of a rubbing face enters the two cells beside it, so the hottest
cell of the parts that rub is the mean over a cell next to a rubbing face, and reads
below the surface by about the heat crossing the cell's half-width times its
half-cell resistance. :class:`RubbingFaces` estimates each rubbing surface from
its two cells with the surfaces as nodes of no heat capacity: the heat ``q_a``,
``q_b`` made on either side (the friction partition of the step that led to the
state; none at the start of a run) reaches the cell centres through the half-cell
resistances ``R_a``, ``R_b``, and the two surfaces exchange ``f`` through the
contact resistance ``R_c``::

    T_sa = T_a + (q_a - f) R_a,    T_sb = T_b + (q_b + f) R_b,    f R_c = T_sa - T_sb

so that ``f = (T_a - T_b + q_a R_a - q_b R_b) / (R_a + R_b + R_c)``. For a
semi-infinite solid under a constant flux this is the cell-centre value plus
``q dz / (2 k)``, which ``tests/validation`` checks against the closed-form
surface rise. It assumes the temperature varies linearly across the half-cell, so
it reads high while the heated layer is thinner than a half-cell (the first
instants of braking, or coarse cells).
"""

from __future__ import annotations

import numpy as np

from .network import Network

__all__ = ["RubbingFaces"]


class RubbingFaces:
    """Surface temperatures of the rubbing faces of one network.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    """

    def __init__(self, network: Network):
        net, n = network, network.n_cells
        self.net = network
        found = net.friction_link  # the conduction link of every rubbing face
        self.conductivity_a = net.link_a[found] + n * net.link_dir[found]
        self.conductivity_b = net.link_b[found] + n * net.link_dir[found]
        self.g_a, self.g_b = net.link_ga[found], net.link_gb[found]
        self.contact = {True: net.link_contact_clamped[found], False: net.link_contact_released[found]}

    def temperatures(
        self, T: np.ndarray, conductivity: np.ndarray, clamped: bool, heat_a: np.ndarray, heat_b: np.ndarray
    ) -> tuple[np.ndarray, np.ndarray]:
        """Temperature of either side's surface of every rubbing face.

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].
        conductivity : ndarray, shape (2 n,)
            Cell conductivities [W/(m K)], radial for all cells then axial (those of the
            step's last Newton iterate will do).
        clamped : bool
            Whether the phase is clamped (its clamped contact resistances in force).
        heat_a, heat_b : ndarray, shape (s,)
            Friction heat made on side a and side b of each rubbing face [W].

        Returns
        -------
        surface_a, surface_b : ndarray, shape (s,)
            Surface temperatures on side a and side b of each rubbing face [K].
        """
        net = self.net
        R_a = self.g_a / conductivity[self.conductivity_a]
        R_b = self.g_b / conductivity[self.conductivity_b]
        T_a, T_b = T[net.friction_a], T[net.friction_b]
        exchange = (T_a - T_b + heat_a * R_a - heat_b * R_b) / (R_a + R_b + self.contact[bool(clamped)])
        return T_a + (heat_a - exchange) * R_a, T_b + (heat_b + exchange) * R_b

    def hottest(
        self, T: np.ndarray, conductivity: np.ndarray, clamped: bool, heat_a: np.ndarray, heat_b: np.ndarray
    ) -> float:
        """The hottest rubbing surface, either side of any rubbing face (see :meth:`temperatures`).

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].
        conductivity : ndarray, shape (2 n,)
            Cell conductivities [W/(m K)], radial for all cells then axial.
        clamped : bool
            Whether the phase is clamped.
        heat_a, heat_b : ndarray, shape (s,)
            Friction heat made on side a and side b of each rubbing face [W].

        Returns
        -------
        float
            The highest surface temperature [K].
        """
        surface_a, surface_b = self.temperatures(T, conductivity, clamped, heat_a, heat_b)
        return float(max(surface_a.max(), surface_b.max()))
