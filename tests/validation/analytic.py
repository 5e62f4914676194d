"""Closed-form and series reference solutions for the validation tests.

Everything here is written out from the published solutions cited beside each
function and evaluated with numpy / scipy only (scipy.special for the error and
Bessel functions, scipy.optimize.brentq for the eigenvalues). Nothing here calls
heatstack: the references are independent of the code under test.

Equation numbers marked "from memory" were quoted without the book at hand.
"""

from __future__ import annotations

import numpy as np
from scipy.optimize import brentq
from scipy.special import erfc, j0, j1, jn_zeros

#: Stefan-Boltzmann constant [W/(m^2 K^4)] (CODATA 2018, exact in the SI).
SIGMA = 5.670374419e-8


# --------------------------------------------------------------------------- semi-infinite solid


def semi_infinite_constant_flux(x, t, q, k, alpha):
    """Temperature rise [K] at depth ``x`` [m] of a semi-infinite solid under a surface flux ``q``.

    Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 6th ed.,
    eq. 5.59 (case 2, constant surface heat flux; from memory); Carslaw & Jaeger, Conduction
    of Heat in Solids, 2nd ed., sec. 2.9 (from memory)::

        T - Ti = (2 q / k) sqrt(alpha t / pi) exp(-x^2 / (4 alpha t)) - (q x / k) erfc(x / (2 sqrt(alpha t)))

    At ``x = 0`` this is the surface rise ``2 q sqrt(alpha t / pi) / k``.
    """
    x = np.asarray(x, dtype=float)
    s = np.sqrt(alpha * t)
    return 2.0 * q / k * s / np.sqrt(np.pi) * np.exp(-(x**2) / (4.0 * s * s)) - q * x / k * erfc(x / (2.0 * s))


# --------------------------------------------------------------------------- plane wall


def plane_wall_eigenvalues(biot: float, n: int) -> np.ndarray:
    """First ``n`` positive roots of ``zeta tan zeta = Bi``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.39c (from memory);
    Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 3.11 (from memory).
    Root ``m`` (m = 0, 1, ...) lies in ``(m pi, m pi + pi/2)``; the bracketing function
    ``zeta sin zeta - Bi cos zeta`` has no poles.
    """
    f = lambda z: z * np.sin(z) - biot * np.cos(z)  # noqa: E731
    return np.array([brentq(f, m * np.pi, m * np.pi + 0.5 * np.pi, xtol=1e-15, rtol=1e-15) for m in range(n)])


def plane_wall_theta(x_star, fourier: float, biot: float, terms: int = 200) -> np.ndarray:
    """Dimensionless temperature ``(T - T_inf) / (Ti - T_inf)`` of a plane wall.

    Wall of half-thickness L, symmetric (or adiabatic at x = 0), convection with Bi = h L / k
    at x = L, uniform initial temperature. ``x_star = x / L``, ``Fo = alpha t / L^2``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 5.39a and 5.39b (from
    memory)::

        theta* = sum C_n exp(-zeta_n^2 Fo) cos(zeta_n x*),   C_n = 4 sin zeta_n / (2 zeta_n + sin 2 zeta_n)
    """
    zeta = plane_wall_eigenvalues(biot, terms)
    c = 4.0 * np.sin(zeta) / (2.0 * zeta + np.sin(2.0 * zeta))
    x = np.atleast_1d(np.asarray(x_star, dtype=float))
    return np.sum(c * np.exp(-(zeta**2) * fourier) * np.cos(np.outer(x, zeta)), axis=1)


# --------------------------------------------------------------------------- infinite cylinder


def cylinder_eigenvalues(biot: float, n: int) -> np.ndarray:
    """First ``n`` positive roots of ``zeta J1(zeta) / J0(zeta) = Bi``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.49c (from memory);
    Carslaw & Jaeger, Conduction of Heat in Solids, 2nd ed., sec. 7.7 (from memory).
    Root ``m`` lies between the (m-1)-th zero of J1 (0 for the first) and the m-th zero of
    J0; the bracketing function is ``zeta J1(zeta) - Bi J0(zeta)``.
    """
    lower = np.concatenate(([0.0], jn_zeros(1, n - 1))) if n > 1 else np.array([0.0])
    upper = jn_zeros(0, n)
    f = lambda z: z * j1(z) - biot * j0(z)  # noqa: E731
    return np.array([brentq(f, a, b, xtol=1e-15, rtol=1e-15) for a, b in zip(lower, upper, strict=True)])


def cylinder_theta(r_star, fourier: float, biot: float, terms: int = 200) -> np.ndarray:
    """Dimensionless temperature ``(T - T_inf) / (Ti - T_inf)`` of a long solid cylinder.

    Radius r_o, convection with Bi = h r_o / k at r = r_o, uniform initial temperature.
    ``r_star = r / r_o``, ``Fo = alpha t / r_o^2``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 5.49a and 5.49b (from
    memory)::

        theta* = sum C_n exp(-zeta_n^2 Fo) J0(zeta_n r*),   C_n = (2 / zeta_n) J1(zeta_n) / (J0(zeta_n)^2 + J1(zeta_n)^2)
    """
    zeta = cylinder_eigenvalues(biot, terms)
    c = 2.0 / zeta * j1(zeta) / (j0(zeta) ** 2 + j1(zeta) ** 2)
    r = np.atleast_1d(np.asarray(r_star, dtype=float))
    return np.sum(c * np.exp(-(zeta**2) * fourier) * j0(np.outer(r, zeta)), axis=1)


# --------------------------------------------------------------------------- steady conduction


def annulus_heat_rate(t1: float, t2: float, r1: float, r2: float, k: float, length: float) -> float:
    """Radial heat rate [W] through a cylindrical wall with surface temperatures t1 (r1), t2 (r2).

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eqs. 3.27 and 3.28 (from
    memory): ``q_r = (T1 - T2) / R``, ``R = ln(r2 / r1) / (2 pi L k)``.
    """
    return (t1 - t2) / (np.log(r2 / r1) / (2.0 * np.pi * length * k))


def annulus_profile(r, t1: float, t2: float, r1: float, r2: float) -> np.ndarray:
    """Steady temperature [K] in a cylindrical wall, no generation, constant k.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 3.26 (from memory):
    ``T(r) = T1 + (T2 - T1) ln(r / r1) / ln(r2 / r1)``.
    """
    return t1 + (t2 - t1) * np.log(np.asarray(r, dtype=float) / r1) / np.log(r2 / r1)


# --------------------------------------------------------------------------- lumped capacitance


def lumped_convection_theta(t, h: float, area: float, rho_c_volume: float) -> np.ndarray:
    """``(T - T_inf) / (Ti - T_inf) = exp(-h A t / (rho V c))``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.6 (from memory).
    ``rho_c_volume`` is the heat capacity ``rho V c`` [J/K].
    """
    return np.exp(-h * area * np.asarray(t, dtype=float) / rho_c_volume)


def lumped_radiation_time(
    temperature: float, t_initial: float, t_sur: float, emissivity: float, area: float, rho_c_volume: float
) -> float:
    """Time [s] for a lumped body cooling by radiation alone to reach ``temperature``.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.18 (from memory)::

        t = rho V c / (4 eps A sigma Tsur^3) * { ln|(Tsur + T)/(Tsur - T)| - ln|(Tsur + Ti)/(Tsur - Ti)|
                                                 + 2 [atan(T / Tsur) - atan(Ti / Tsur)] }
    """

    def part(x: float) -> float:
        return np.log(abs((t_sur + x) / (t_sur - x))) + 2.0 * np.arctan(x / t_sur)

    return rho_c_volume / (4.0 * emissivity * area * SIGMA * t_sur**3) * (part(temperature) - part(t_initial))


def lumped_radiation_time_to_zero_kelvin(
    temperature: float, t_initial: float, emissivity: float, area: float, rho_c_volume: float
) -> float:
    """As :func:`lumped_radiation_time` with surroundings at 0 K.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 5.19 (from memory):
    ``t = rho V c / (3 eps A sigma) (1/T^3 - 1/Ti^3)``.
    """
    return rho_c_volume / (3.0 * emissivity * area * SIGMA) * (temperature**-3 - t_initial**-3)


def invert_time(time_of_temperature, time: float, t_low: float, t_high: float) -> float:
    """The temperature at which a monotone ``time_of_temperature(T)`` equals ``time`` (brentq)."""
    return brentq(lambda x: time_of_temperature(x) - time, t_low, t_high, xtol=1e-12, rtol=1e-15)


# --------------------------------------------------------------------------- plane composite wall


def series_wall_heat_rate(t_hot: float, t_cold: float, resistances) -> float:
    """Heat rate [W] through thermal resistances [K/W] in series.

    Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 3.19 (composite wall,
    ``q = (T_inf,1 - T_inf,n) / sum R_t``) with the contact resistance ``R_tc = 1 / (h_c A)``
    of sec. 3.1.4 (eq. 3.20; from memory).
    """
    return (t_hot - t_cold) / float(np.sum(resistances))
