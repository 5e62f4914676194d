"""Average Nusselt number correlations, as plain vectorised functions.

Every function takes dimensionless groups (floats or numpy arrays) and returns the
average Nusselt number on the stated length scale. Nothing here knows about air or
surfaces; :mod:`heatstack.operations.environment` turns these into cooling laws.

Symbols: ``Ra = g beta dT L^3 / (nu alpha)`` Rayleigh number, ``Re`` Reynolds
number, ``Pr`` Prandtl number, all [-].

Ranges of validity: every correlation knows the range of its source
(:data:`VALIDITY_RANGES`, each with the source named). A group outside it is still
evaluated (the correlation extrapolates) and gives one
:class:`~heatstack.errors.HeatstackWarning` per correlation and run, which the run keeps
and its report shows. The lower ends of the free-convection ranges are not warned: every
surface passes through small Rayleigh numbers as it nears the air temperature, where its
convected heat is small anyway.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..property_table import warn_once

__all__ = [
    "VALIDITY_RANGES",
    "ValidityRange",
    "warn_outside_range",
    "DISC_TRANSITION_REYNOLDS",
    "PLATE_TRANSITION_REYNOLDS",
    "nu_vertical_plate",
    "nu_horizontal_cylinder",
    "nu_cylinder_crossflow",
    "nu_horizontal_plate",
    "nu_rotating_disc",
    "nu_flat_plate_forced",
    "nu_mixed",
]

#: Reynolds number ``omega r^2 / nu`` of laminar-turbulent transition on a free disc [-].
DISC_TRANSITION_REYNOLDS = 2.4e5
#: Reynolds number ``V x / nu`` of transition on a flat plate in parallel flow [-].
PLATE_TRANSITION_REYNOLDS = 5.0e5


@dataclass(frozen=True)
class ValidityRange:
    """The range of a dimensionless group over which a correlation was established.

    Attributes
    ----------
    correlation : str
        What the correlation is, e.g. ``"cylinder in cross-flow (Churchill and Bernstein)"``.
    group : str
        The group checked: ``"Re"``, ``"Ra"`` or ``"Re Pr"``.
    low, high : float
        The range [-]; ``low`` 0 for no lower end.
    source : str
        Where the range comes from (book, edition, equation; "from memory" where so).
    """

    correlation: str
    group: str
    low: float
    high: float
    source: str


#: The range of validity of each correlation of this module, by function name.
VALIDITY_RANGES: dict[str, ValidityRange] = {
    "nu_vertical_plate": ValidityRange(
        "vertical plate, free convection (Churchill and Chu)",
        "Ra",
        0.0,
        1e12,
        "Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., eq. 9.26, data up to "
        "Ra = 1e12 (from memory)",
    ),
    "nu_horizontal_cylinder": ValidityRange(
        "horizontal cylinder, free convection (Churchill and Chu)",
        "Ra",
        0.0,
        1e12,
        "Incropera et al., 6th ed., eq. 9.34, Ra_D <= 1e12 (from memory)",
    ),
    "nu_horizontal_plate_upper": ValidityRange(
        "horizontal plate, hot side up, free convection (McAdams)",
        "Ra",
        0.0,
        1e11,
        "Incropera et al., 6th ed., eqs. 9.30-9.31, 1e4 <= Ra <= 1e11 (from memory)",
    ),
    "nu_horizontal_plate_lower": ValidityRange(
        "horizontal plate, hot side down, free convection (McAdams)",
        "Ra",
        0.0,
        1e10,
        "Incropera et al., 6th ed., eq. 9.32, 1e5 <= Ra <= 1e10 (from memory)",
    ),
    "nu_cylinder_crossflow": ValidityRange(
        "cylinder in cross-flow (Churchill and Bernstein)",
        "Re Pr",
        0.2,
        np.inf,
        "Incropera et al., 6th ed., eq. 7.54, Re Pr >= 0.2 (from memory)",
    ),
    "nu_cylinder_crossflow_reynolds": ValidityRange(
        "cylinder in cross-flow (Churchill and Bernstein)",
        "Re",
        0.0,
        1e7,
        "Churchill and Bernstein 1977, data up to Re of about 1e7 (from memory)",
    ),
    "nu_rotating_disc": ValidityRange(
        "disc rotating in still air (Cobb and Saunders; Dorfman)",
        "Re",
        0.0,
        1e7,
        "Cobb and Saunders 1956 and Dorfman 1963, measured up to Re of about 1e6-1e7 (from memory)",
    ),
    "nu_flat_plate_forced": ValidityRange(
        "flat plate in parallel flow (laminar, then mixed)",
        "Re",
        0.0,
        1e8,
        "Incropera et al., 6th ed., eq. 7.38, 5e5 < Re_L <= 1e8, 0.6 <= Pr <= 60 (from memory)",
    ),
}


def warn_outside_range(name: str, values: float | np.ndarray) -> None:
    """Warn (once per correlation and run) when a group lies outside the correlation's range.

    Exact zeros are not checked (no flow: the forced part of a law is then zero, not
    extrapolated); nor are values that are not finite (the caller's checks see to them).

    Parameters
    ----------
    name : str
        A key of :data:`VALIDITY_RANGES`.
    values : float or ndarray
        The group's values [-] (Reynolds, Rayleigh, or Reynolds times Prandtl).
    """
    valid = VALIDITY_RANGES[name]
    values = np.asarray(values, dtype=float)
    checked = values[np.isfinite(values) & (values != 0.0)]
    if checked.size == 0:
        return
    low, high = float(checked.min()), float(checked.max())
    if low >= valid.low and high <= valid.high:
        return
    if low < valid.low:
        where = f"{valid.group} = {low:.3g} is below its range of validity, {valid.group} >= {valid.low:g}"
    else:
        where = f"{valid.group} = {high:.3g} is above its range of validity, {valid.group} <= {valid.high:g}"
    warn_once(
        "convection correlation",
        name,
        f"{valid.correlation}: {where} ({valid.source}); the coefficient is extrapolated",
        stacklevel=3,
    )


def _churchill_chu(ra: np.ndarray, pr: np.ndarray, base: float, pr_ref: float) -> np.ndarray:
    ra = np.asarray(ra, dtype=float)
    shape = (1.0 + (pr_ref / np.asarray(pr, dtype=float)) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    root = base + 0.387 * ra ** (1.0 / 6.0) / shape
    return root * root


def nu_vertical_plate(ra: float | np.ndarray, pr: float | np.ndarray) -> np.ndarray:
    """Free convection from an isothermal vertical plate, laminar to turbulent.

    ``Nu_L = {0.825 + 0.387 Ra_L^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}^2``.

    Parameters
    ----------
    ra : float or ndarray
        Rayleigh number on the plate height [-], >= 0.
    pr : float or ndarray
        Prandtl number [-].

    Returns
    -------
    ndarray
        Average Nusselt number on the plate height [-].

    References
    ----------
    Churchill, S.W. and Chu, H.H.S., 1975, Correlating equations for laminar and
    turbulent free convection from a vertical plate, Int. J. Heat Mass Transfer 18,
    1323-1329.
    """
    warn_outside_range("nu_vertical_plate", ra)
    return _churchill_chu(ra, pr, 0.825, 0.492)


def nu_horizontal_cylinder(ra: float | np.ndarray, pr: float | np.ndarray) -> np.ndarray:
    """Free convection from an isothermal long horizontal cylinder.

    ``Nu_D = {0.60 + 0.387 Ra_D^(1/6) / [1 + (0.559/Pr)^(9/16)]^(8/27)}^2``.

    Parameters
    ----------
    ra : float or ndarray
        Rayleigh number on the diameter [-], >= 0 (recommended up to 1e12).
    pr : float or ndarray
        Prandtl number [-].

    Returns
    -------
    ndarray
        Average Nusselt number on the diameter [-].

    References
    ----------
    Churchill, S.W. and Chu, H.H.S., 1975, Correlating equations for laminar and
    turbulent free convection from a horizontal cylinder, Int. J. Heat Mass
    Transfer 18, 1049-1053.
    """
    warn_outside_range("nu_horizontal_cylinder", ra)
    return _churchill_chu(ra, pr, 0.60, 0.559)


def nu_cylinder_crossflow(re: float | np.ndarray, pr: float | np.ndarray) -> np.ndarray:
    """Forced convection from a cylinder in cross-flow, all Reynolds numbers (Re Pr > 0.2).

    ``Nu_D = 0.3 + 0.62 Re^(1/2) Pr^(1/3) / [1 + (0.4/Pr)^(2/3)]^(1/4)
    [1 + (Re/282000)^(5/8)]^(4/5)``.

    Parameters
    ----------
    re : float or ndarray
        Reynolds number on the diameter [-], >= 0.
    pr : float or ndarray
        Prandtl number at the film temperature [-].

    Returns
    -------
    ndarray
        Average Nusselt number on the diameter [-].

    References
    ----------
    Churchill, S.W. and Bernstein, M., 1977, A correlating equation for forced
    convection from gases and liquids to a circular cylinder in crossflow, J. Heat
    Transfer 99, 300-306.
    """
    re = np.asarray(re, dtype=float)
    pr = np.asarray(pr, dtype=float)
    warn_outside_range("nu_cylinder_crossflow", re * pr)
    warn_outside_range("nu_cylinder_crossflow_reynolds", re)
    lead = 0.62 * np.sqrt(re) * np.cbrt(pr) / (1.0 + (0.4 / pr) ** (2.0 / 3.0)) ** 0.25
    return 0.3 + lead * (1.0 + (re / 282000.0) ** 0.625) ** 0.8


def nu_horizontal_plate(ra: float | np.ndarray, upper_surface: bool | np.ndarray) -> np.ndarray:
    """Free convection from a horizontal isothermal plate, on the length ``A / P``.

    Upper surface of a hot plate (or lower surface of a cold one):
    ``0.54 Ra^(1/4)`` for ``Ra <= 1e7``, ``0.15 Ra^(1/3)`` above.
    Lower surface of a hot plate (or upper surface of a cold one):
    ``0.27 Ra^(1/4)`` for ``Ra <= 1e10``, ``0.15 Ra^(1/3)`` above (the last branch
    lies outside the published range and only keeps the function defined).

    Parameters
    ----------
    ra : float or ndarray
        Rayleigh number on ``L = A / P`` (area over perimeter) [-], >= 0.
    upper_surface : bool or ndarray of bool
        True where buoyancy lifts the heated air away from the surface.

    Returns
    -------
    ndarray
        Average Nusselt number on ``A / P`` [-].

    Notes
    -----
    The published correlations start at ``Ra ~ 1e4`` (upper) and ``3e5`` (lower);
    below, the same power laws are used and tend to zero with ``Ra``. The step at
    ``Ra = 1e7`` on the upper surface (about 6 %) is that of the source.

    References
    ----------
    McAdams, W.H., 1954, Heat Transmission, 3rd ed., McGraw-Hill, New York, ch. 7.
    Lloyd, J.R. and Moran, W.R., 1974, Natural convection adjacent to horizontal
    surface of various planforms, J. Heat Transfer 96, 443-447.
    """
    ra = np.asarray(ra, dtype=float)
    upper_side = np.broadcast_to(np.asarray(upper_surface, dtype=bool), ra.shape)
    warn_outside_range("nu_horizontal_plate_upper", ra[upper_side])
    warn_outside_range("nu_horizontal_plate_lower", ra[~upper_side])
    quarter = ra**0.25
    third = 0.15 * np.cbrt(ra)
    upper = np.where(ra <= 1e7, 0.54 * quarter, third)
    lower = np.where(ra <= 1e10, 0.27 * quarter, third)
    return np.where(upper_surface, upper, lower)


def nu_rotating_disc(re: float | np.ndarray) -> np.ndarray:
    """Average Nusselt number ``h R / k`` of one face of a disc rotating in still air.

    With ``Re = omega R^2 / nu`` the rotational Reynolds number at the rim:
    laminar everywhere for ``Re <= Re_c = 2.4e5``, ``Nu = 0.33 Re^(1/2)``. Above,
    the face is laminar inside ``r_c = R (Re_c/Re)^(1/2)`` and turbulent outside,
    and the area average of the local laws is

    ``Nu = 0.33 Re^(1/2) (Re_c/Re) + 0.015 Re^(4/5) [1 - (Re_c/Re)^(1.3)]``,

    where the turbulent local law ``Nu_r = 0.0195 Re_r^(4/5)`` averages to
    ``0.015 Re^(4/5)`` over a fully turbulent face. The composite is continuous at
    transition and tends to ``0.015 Re^(4/5)`` far above it.

    Parameters
    ----------
    re : float or ndarray
        Rotational Reynolds number at the rim [-], >= 0.

    Returns
    -------
    ndarray
        Average Nusselt number on the radius [-] for air (Pr about 0.7).

    Notes
    -----
    The coefficients 0.33 (laminar, where the local coefficient is uniform over the
    face) and 0.015 (turbulent average), and the transition at 2.4e5, are for air and
    are quoted from memory of the sources below; the laminar-turbulent composite is
    derived here from them.

    References
    ----------
    Cobb, E.C. and Saunders, O.A., 1956, Heat transfer from a rotating disk,
    Proc. R. Soc. Lond. A 236, 343-351.
    Dorfman, L.A., 1963, Hydrodynamic Resistance and the Heat Loss of Rotating
    Solids, Oliver and Boyd, Edinburgh.
    """
    re = np.asarray(re, dtype=float)
    warn_outside_range("nu_rotating_disc", re)
    laminar_fraction = np.minimum(1.0, DISC_TRANSITION_REYNOLDS / np.maximum(re, 1e-300))
    laminar = 0.33 * np.sqrt(re) * laminar_fraction
    turbulent = 0.015 * re**0.8 * (1.0 - laminar_fraction**1.3)
    return laminar + turbulent


def nu_flat_plate_forced(re: float | np.ndarray, pr: float | np.ndarray) -> np.ndarray:
    """Average Nusselt number of an isothermal flat plate in parallel flow.

    Laminar (``Re_L <= 5e5``): ``Nu = 0.664 Re^(1/2) Pr^(1/3)``; mixed laminar and
    turbulent above: ``Nu = (0.037 Re^(4/5) - A) Pr^(1/3)`` with
    ``A = 0.037 Re_c^(4/5) - 0.664 Re_c^(1/2)`` (= 871 for ``Re_c = 5e5``), which is
    continuous at transition.

    Parameters
    ----------
    re : float or ndarray
        Reynolds number on the plate length in the flow direction [-], >= 0.
    pr : float or ndarray
        Prandtl number at the film temperature [-], 0.6-60.

    Returns
    -------
    ndarray
        Average Nusselt number on the plate length [-].

    References
    ----------
    Incropera, F.P., DeWitt, D.P., Bergman, T.L. and Lavine, A.S., 2007,
    Fundamentals of Heat and Mass Transfer, 6th ed., Wiley, ch. 7, eqs. 7.30 and
    7.38.
    """
    re = np.asarray(re, dtype=float)
    warn_outside_range("nu_flat_plate_forced", re)
    rec = PLATE_TRANSITION_REYNOLDS
    offset = 0.037 * rec**0.8 - 0.664 * np.sqrt(rec)
    laminar = 0.664 * np.sqrt(re)
    mixed = 0.037 * re**0.8 - offset
    return np.where(re <= rec, laminar, mixed) * np.cbrt(np.asarray(pr, dtype=float))


def nu_mixed(nu_forced: float | np.ndarray, nu_natural: float | np.ndarray, exponent: float = 3.0) -> np.ndarray:
    """Mixed (combined) convection ``Nu^n = Nu_F^n + Nu_N^n``, assisting or transverse flow.

    Parameters
    ----------
    nu_forced, nu_natural : float or ndarray
        Forced- and natural-convection Nusselt numbers on the same length [-], >= 0.
    exponent : float
        Blending exponent n [-]; 3 for assisting and transverse flows.

    Returns
    -------
    ndarray
        Combined Nusselt number [-], between ``max(Nu_F, Nu_N)`` and ``Nu_F + Nu_N``.

    References
    ----------
    Churchill, S.W., 1977, A comprehensive correlating equation for laminar,
    assisting, forced and free convection, AIChE J. 23, 10-16.
    """
    f = np.asarray(nu_forced, dtype=float)
    n = np.asarray(nu_natural, dtype=float)
    return (f**exponent + n**exponent) ** (1.0 / exponent)
