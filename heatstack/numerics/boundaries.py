"""Exposed faces and radiating gaps, linearised at the current iterate.

Each exposed face loses heat by its group's convection law and by grey radiation; the
radiation is linearised on its tangent at the iterate's surface temperature, and the
face and its half-cell resistance become one transfer coefficient ``U`` to one
equivalent temperature (:class:`FaceExchange`). Each gap pair exchanges grey radiation
between two parallel faces (:class:`GapExchange`). Surface temperatures follow from the
cell temperatures and the fluxes through the half-cell resistances
(:class:`SurfaceTemperatures`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .network import Network
from .schedule import Phase
from .tabulated import MergedConvection, PieceLookup, evaluator

__all__ = [
    "STEFAN_BOLTZMANN",
    "Boundaries",
    "FaceExchange",
    "GapExchange",
    "PhaseSurroundings",
    "SurfaceTemperatures",
]

#: Stefan-Boltzmann constant [W/(m^2 K^4)] (CODATA 2018, exact in the SI).
STEFAN_BOLTZMANN = 5.670374419e-8


@dataclass(frozen=True, eq=False)
class PhaseSurroundings:
    """What one phase's boundary laws give every exposed face.

    Attributes
    ----------
    convection : MergedConvection
        Convection coefficient [W/(m^2 K)] of every face, as ``f(surface_t, time)``.
    ambient : ndarray
        Ambient temperature [K] of every face.
    surroundings : ndarray
        Radiation surroundings temperature [K] of every face.
    radiates : ndarray
        1 where the face radiates in this phase, else 0.
    mean_ambient : float or None
        The faces' mean ambient temperature [K] (the reference of the tolerances on the
        rise above ambient); None without exposed faces.
    """

    convection: MergedConvection
    ambient: np.ndarray
    surroundings: np.ndarray
    radiates: np.ndarray
    mean_ambient: float | None = None


@dataclass(frozen=True, eq=False)
class FaceExchange:
    """Linearised heat loss of every exposed face, ``U (T_cell - equivalent_temperature)``.

    Attributes
    ----------
    transfer : ndarray
        Transfer coefficient [W/K] from the cell centre through the face.
    equivalent_temperature : ndarray
        Temperature [K] the face loses heat towards (convection and radiation combined).
    convection, radiation : ndarray
        Convection and linearised radiation coefficients [W/(m^2 K)].
    radiation_temperature : ndarray
        Temperature [K] the linearised radiation loses heat towards.
    half_cell_resistance : ndarray
        Resistance [K/W] from the cell centre to the face.
    ambient : ndarray
        Ambient temperature [K] of the convection.
    """

    transfer: np.ndarray
    equivalent_temperature: np.ndarray
    convection: np.ndarray
    radiation: np.ndarray
    radiation_temperature: np.ndarray
    half_cell_resistance: np.ndarray
    ambient: np.ndarray


@dataclass(frozen=True, eq=False)
class GapExchange:
    """Radiation across every gap pair, cell centre to cell centre.

    Attributes
    ----------
    conductance : ndarray
        Conductance [W/K] of the pair: both half-cell resistances and the linearised radiation.
    resistance_a, resistance_b : ndarray
        Half-cell resistances [K/W] of the cells on side a and side b.
    """

    conductance: np.ndarray
    resistance_a: np.ndarray
    resistance_b: np.ndarray


@dataclass(frozen=True, eq=False)
class SurfaceTemperatures:
    """Surface temperatures of the exposed faces and of both sides of every gap pair.

    Attributes
    ----------
    face : ndarray, shape (f,)
        Temperature of each exposed face [K].
    gap_a, gap_b : ndarray, shape (q,)
        Temperatures of the side-a and side-b faces of each gap pair [K].
    """

    face: np.ndarray
    gap_a: np.ndarray
    gap_b: np.ndarray

    @classmethod
    def of_cells(cls, network: Network, T: np.ndarray) -> SurfaceTemperatures:
        """Every surface at the temperature of its cell.

        Parameters
        ----------
        network : Network
            The meshed assembly.
        T : ndarray, shape (n,)
            Cell temperatures [K].

        Returns
        -------
        SurfaceTemperatures
            Copies of the cell temperatures at every exposed face and gap side [K].
        """
        return cls(face=T[network.face_cell].copy(), gap_a=T[network.gap_a].copy(), gap_b=T[network.gap_b].copy())

    def moved(self, network: Network, shift: np.ndarray) -> SurfaceTemperatures:
        """Every surface moved by its cell's temperature change ``shift``.

        Parameters
        ----------
        network : Network
            The meshed assembly.
        shift : ndarray, shape (n,)
            Temperature change of each cell [K].

        Returns
        -------
        SurfaceTemperatures
            The shifted surface temperatures [K].
        """
        return SurfaceTemperatures(
            face=self.face + shift[network.face_cell],
            gap_a=self.gap_a + shift[network.gap_a],
            gap_b=self.gap_b + shift[network.gap_b],
        )


class Boundaries:
    """Linearises the exposed faces and the gap pairs of one network.

    Parameters
    ----------
    network : Network
        The meshed assembly.
    """

    def __init__(self, network: Network):
        net, n = network, network.n_cells
        self.net = network
        blocks = range(len(net.material_blocks))
        self.face_blocks = [np.flatnonzero(net.cell_material[net.face_cell] == k) for k in blocks]
        self.gap_blocks_a = [np.flatnonzero(net.cell_material[net.gap_a] == k) for k in blocks]
        self.gap_blocks_b = [np.flatnonzero(net.cell_material[net.gap_b] == k) for k in blocks]
        self.group_faces = [np.flatnonzero(net.face_group == g) for g in range(len(net.groups))]
        # positions of each face's and gap side's conductivity in the radial-then-axial stack
        self.face_conductivity = net.face_cell + n * net.face_dir
        self.gap_a_conductivity = net.gap_a + n * net.gap_dir_a
        self.gap_b_conductivity = net.gap_b + n * net.gap_dir_b
        self._phase_cache: tuple[Phase | None, PhaseSurroundings | None] = (None, None)
        self._evaluators: dict[int, tuple] = {}

    def surroundings(self, phase: Phase) -> PhaseSurroundings:
        """The boundary laws of ``phase`` per face (kept for the phase last asked for).

        Parameters
        ----------
        phase : Phase
            The schedule phase in force.

        Returns
        -------
        PhaseSurroundings
            Convection coefficient callables per group, ambient and surroundings temperatures [K]
            and the radiating flag of every face.
        """
        cached_phase, cached = self._phase_cache
        if cached_phase is phase:
            return cached
        nf = self.net.face_cell.size
        laws = [phase.law(group) for group in self.net.groups]
        ambient, surroundings, radiates = np.empty(nf), np.empty(nf), np.empty(nf)
        for law, faces in zip(laws, self.group_faces, strict=True):
            ambient[faces] = law.ambient_temperature
            surroundings[faces] = law.surroundings_temperature
            radiates[faces] = 1.0 if law.radiation else 0.0
        radiates *= self.net.face_radiates
        arrays = PhaseSurroundings(
            convection=MergedConvection([self._evaluator(law) for law in laws], self.net.face_group),
            ambient=ambient,
            surroundings=surroundings,
            radiates=radiates,
            mean_ambient=float(ambient.mean()) if nf else None,
        )
        self._phase_cache = (phase, arrays)
        return arrays

    def _evaluator(self, law):
        """One (possibly tabulated) evaluator per law object, shared by the phases using it."""
        key = id(law)
        if key not in self._evaluators:
            self._evaluators[key] = (law, evaluator(law))
        return self._evaluators[key][1]

    def emissivity(self, lookup: PieceLookup, blocks: list[np.ndarray], surface_t: np.ndarray) -> np.ndarray:
        """Emissivity of the surfaces of ``lookup`` at ``surface_t`` [K]: one pass over the
        merged tables, or material by material (``blocks``: the surfaces of each) when a
        surface lies outside its table, so the table's range policy applies.

        Parameters
        ----------
        lookup : PieceLookup
            The merged emissivity tables as read by these surfaces.
        blocks : list of ndarray of int
            For each material block, the positions in ``surface_t`` of the surfaces of that material.
        surface_t : ndarray
            Surface temperatures [K].

        Returns
        -------
        ndarray
            Emissivity of each surface [-].
        """
        eps = self.net.tables.emissivity(lookup, surface_t)
        if eps is not None:
            return eps
        eps = np.empty(surface_t.size)
        for (material, _), faces in zip(self.net.material_blocks, blocks, strict=True):
            if faces.size:
                eps[faces] = material.emissivity(surface_t[faces])
        return eps

    def emissivities(self, surfaces: SurfaceTemperatures) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Emissivity [-] of every exposed face and of both sides of every gap pair, in one pass.

        Parameters
        ----------
        surfaces : SurfaceTemperatures
            Exposed-face and gap-side temperatures [K].

        Returns
        -------
        faces, gap_a, gap_b : ndarray
            Emissivities [-] at those temperatures.
        """
        nf, nq = surfaces.face.size, surfaces.gap_a.size
        every = np.concatenate((surfaces.face, surfaces.gap_a, surfaces.gap_b))
        eps = self.net.tables.emissivity(self.net.tables.emissivity_surfaces, every)
        if eps is None:  # a surface outside its table: each table's range policy applies
            return (
                self.emissivity(self.net.tables.emissivity_faces, self.face_blocks, surfaces.face),
                self.emissivity(self.net.tables.emissivity_gap_a, self.gap_blocks_a, surfaces.gap_a),
                self.emissivity(self.net.tables.emissivity_gap_b, self.gap_blocks_b, surfaces.gap_b),
            )
        return eps[:nf], eps[nf : nf + nq], eps[nf + nq :]

    def faces(
        self,
        phase: Phase,
        time: float,
        surface_t: np.ndarray,
        conductivity: np.ndarray,
        emissivity: np.ndarray,
    ) -> FaceExchange:
        """Convection and linearised radiation of every exposed face at ``surface_t``.

        Parameters
        ----------
        phase : Phase
            The schedule phase in force (its cooling laws).
        time : float
            Time at which the convection laws are evaluated [s].
        surface_t : ndarray, shape (f,)
            Exposed-face temperatures of the iterate [K].
        conductivity : ndarray, shape (2 n,)
            Cell conductivities [W/(m K)], radial for all cells then axial.
        emissivity : ndarray, shape (f,)
            The faces' emissivities at ``surface_t`` [-] (:meth:`emissivities`).

        Returns
        -------
        FaceExchange
            Transfer coefficients [W/K], equivalent temperatures [K] and their parts.

        Notes
        -----
        Grey radiation is linearised on its tangent at the iterate's surface temperature:
        ``q = eps sigma (Ts^4 - Tsur^4) ~ h_rad (T - t_rad)`` with ``h_rad = 4 eps sigma Ts^3``.
        """
        net = self.net
        env = self.surroundings(phase)
        h_conv = env.convection(surface_t, time)
        # grey radiation linearised on its tangent at the iterate's surface temperature:
        # q = eps sigma (Ts^4 - Tsur^4) ~ h_rad (T - t_rad) with h_rad = 4 eps sigma Ts^3
        eps = env.radiates * emissivity
        h_rad = 4.0 * eps * STEFAN_BOLTZMANN * surface_t**3
        q_rad = eps * STEFAN_BOLTZMANN * (surface_t**4 - env.surroundings**4)
        t_rad = surface_t - q_rad / np.where(h_rad > 0, h_rad, 1.0)
        h = h_conv + h_rad
        r_half = net.face_g / conductivity[self.face_conductivity]
        hA = h * net.face_area
        U = hA / (1.0 + hA * r_half)
        t_eq = np.where(h > 0, (h_conv * env.ambient + h_rad * t_rad) / np.where(h > 0, h, 1.0), env.ambient)
        return FaceExchange(
            transfer=U,
            equivalent_temperature=t_eq,
            convection=h_conv,
            radiation=h_rad,
            radiation_temperature=t_rad,
            half_cell_resistance=r_half,
            ambient=env.ambient,
        )

    def gaps(
        self,
        ts_a: np.ndarray,
        ts_b: np.ndarray,
        conductivity: np.ndarray,
        emissivity: tuple[np.ndarray, np.ndarray],
    ) -> GapExchange:
        """Grey radiation across every gap pair with surface temperatures ``ts_a``, ``ts_b``.

        Parameters
        ----------
        ts_a, ts_b : ndarray, shape (q,)
            Temperatures of the side-a and side-b faces [K].
        conductivity : ndarray, shape (2 n,)
            Cell conductivities [W/(m K)], radial for all cells then axial.
        emissivity : tuple of ndarray
            The emissivities of sides a and b at ``ts_a``, ``ts_b`` [-] (:meth:`emissivities`).

        Returns
        -------
        GapExchange
            Conductance of each pair [W/K] and the half-cell resistances of its sides [K/W].
        """
        net = self.net
        eps_a, eps_b = emissivity
        exchange = 1.0 / (1.0 / eps_a + net.gap_area_ratio * (1.0 / eps_b - 1.0))
        hA = STEFAN_BOLTZMANN * net.gap_area_a * exchange * (ts_a**2 + ts_b**2) * (ts_a + ts_b)
        r_a = net.gap_ga / conductivity[self.gap_a_conductivity]
        r_b = net.gap_gb / conductivity[self.gap_b_conductivity]
        G = 1.0 / (r_a + r_b + 1.0 / np.maximum(hA, 1e-300))
        return GapExchange(conductance=G, resistance_a=r_a, resistance_b=r_b)

    def surface_temperatures(self, T: np.ndarray, faces: FaceExchange, gaps: GapExchange) -> SurfaceTemperatures:
        """Surface temperatures from the cell temperatures and the fluxes through the half-cell resistances.

        Parameters
        ----------
        T : ndarray, shape (n,)
            Cell temperatures [K].
        faces : FaceExchange
            The exposed faces' linearised exchange.
        gaps : GapExchange
            The gap pairs' linearised exchange.

        Returns
        -------
        SurfaceTemperatures
            Exposed-face and gap-side temperatures [K].
        """
        net = self.net
        q_face = faces.transfer * (T[net.face_cell] - faces.equivalent_temperature)
        q_gap = gaps.conductance * (T[net.gap_a] - T[net.gap_b])
        return SurfaceTemperatures(
            face=T[net.face_cell] - q_face * faces.half_cell_resistance,
            gap_a=T[net.gap_a] - q_gap * gaps.resistance_a,
            gap_b=T[net.gap_b] + q_gap * gaps.resistance_b,
        )
