"""Corrosion propagation: penetration, uniform section loss and pitting of bars.

Units: corrosion current density i_corr [uA/cm2], time [yr], depths and
diameters [mm], areas [mm2]. All functions broadcast over their arguments.

References
----------
.. [1] M. Faraday, "Experimental researches in electricity, seventh series,"
   *Phil. Trans. R. Soc. Lond.*, vol. 124, pp. 77-122, 1834 (law of electrolysis).
.. [2] K. A. T. Vu and M. G. Stewart, "Structural reliability of concrete bridges
   including improved chloride-induced corrosion models," *Struct. Saf.*, vol. 22,
   no. 4, pp. 313-333, 2000 (from memory).
.. [3] D. V. Val and R. E. Melchers, "Reliability of deteriorating RC slab
   bridges," *J. Struct. Eng.*, vol. 123, no. 12, pp. 1638-1644, 1997 (from memory).
.. [4] M. G. Stewart, "Spatial variability of pitting corrosion and its influence
   on structural fragility and reliability of RC beams in flexure," *Struct.
   Saf.*, vol. 26, 2004 (from memory).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from assess.deterioration.defaults import (
    PITTING_FACTOR,
    PITTING_REFERENCE_LENGTH_MM,
    SECONDS_PER_YEAR,
    check_range,
)
from assess.errors import InputError
from assess.reliability.crude import resolve_seed

IRON_MOLAR_MASS_G_PER_MOL = 55.845
"""Standard atomic weight of iron [g/mol] (IUPAC)."""

IRON_VALENCE = 2
"""Electrons per dissolved iron atom, Fe -> Fe2+ [-]."""

FARADAY_CONSTANT_C_PER_MOL = 96485.33212
"""Faraday constant F [C/mol] (CODATA 2018)."""

STEEL_DENSITY_G_PER_CM3 = 7.85
"""Density of reinforcing steel [g/cm3] (common practice)."""

FARADAY_MM_PER_YEAR_PER_UA_CM2 = (
    1.0e-6 * IRON_MOLAR_MASS_G_PER_MOL / (IRON_VALENCE * FARADAY_CONSTANT_C_PER_MOL)
    * SECONDS_PER_YEAR / STEEL_DENSITY_G_PER_CM3 * 10.0)
"""Uniform penetration rate of 1 uA/cm2 by Faraday's law [mm/yr]: 0.01163.

i M / (z F rho) with i = 1e-6 A/cm2 gives cm/s; times seconds per year and 10 mm/cm.
The literature rounds it to 0.0116 mm/yr (11.6 um/yr)."""

RESIDUAL_AREA_RULES = ("uniform_then_pit", "pit_only", "uniform")


def time_since_initiation(age_years, initiation_time_years):
    """Propagation time t_p = max(t - t_i, 0) [yr]; 0 where t_i is +inf."""
    t = np.asarray(age_years, dtype=float)
    t_i = np.asarray(initiation_time_years, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(np.isfinite(t_i), np.maximum(t - t_i, 0.0), 0.0)


def penetration_depth(corrosion_rate_ua_cm2, propagation_time_years):
    """Uniform corrosion penetration at a constant rate, P = 0.0116 i_corr t_p [mm].

    Parameters
    ----------
    corrosion_rate_ua_cm2 : array_like
        Corrosion current density i_corr [uA/cm2], >= 0.
    propagation_time_years : array_like
        Time since initiation t_p [yr], >= 0.

    References
    ----------
    Faraday's law of electrolysis; constant `FARADAY_MM_PER_YEAR_PER_UA_CM2`.
    """
    caller = "penetration_depth"
    i_corr = check_range(corrosion_rate_ua_cm2, "corrosion_rate_ua_cm2", caller, low=0.0)
    t_p = check_range(propagation_time_years, "propagation_time_years", caller, low=0.0)
    return FARADAY_MM_PER_YEAR_PER_UA_CM2 * i_corr * t_p


def vu_stewart_initial_rate(water_cement_ratio, cover_mm):
    """Corrosion rate in the first year after initiation, Vu & Stewart 2000 [uA/cm2].

    i_corr(1) = 37.8 (1 - w/c)^-1.64 / cover (cover in mm; w/c 0.5, cover 50 mm
    gives about 2.3 uA/cm2).

    Parameters
    ----------
    water_cement_ratio : array_like
        Water/cement ratio w/c [-], in (0, 1).
    cover_mm : array_like
        Concrete cover [mm], > 0.

    References
    ----------
    Vu and Stewart (2000), Struct. Saf. 22(4) (from memory).
    """
    caller = "vu_stewart_initial_rate"
    wc = check_range(water_cement_ratio, "water_cement_ratio", caller, 0.0, 1.0,
                     low_open=True, high_open=True)
    cover = check_range(cover_mm, "cover_mm", caller, low=0.0, low_open=True)
    return 37.8 * (1.0 - wc) ** -1.64 / cover


def vu_stewart_corrosion_rate(propagation_time_years, initial_rate_ua_cm2):
    """Time-variant corrosion rate, i_corr(t_p) = 0.85 i_corr(1) t_p^-0.29 [uA/cm2].

    Vu & Stewart state it for t_p >= 1 yr (the rate slows as rust builds up).
    It is returned for every t_p > 0 (+inf at t_p = 0) so that its integral from
    0 equals `vu_stewart_penetration`, the form behind their bar-diameter
    expression D(t) = D0 - 1.0508 (1 - w/c)^-1.64 / cover (t - t_i)^0.71.

    References
    ----------
    Vu and Stewart (2000), Struct. Saf. 22(4) (from memory).
    """
    caller = "vu_stewart_corrosion_rate"
    t_p = check_range(propagation_time_years, "propagation_time_years", caller, low=0.0)
    i_1 = check_range(initial_rate_ua_cm2, "initial_rate_ua_cm2", caller, low=0.0)
    with np.errstate(divide="ignore"):
        return 0.85 * i_1 * t_p ** -0.29


def vu_stewart_penetration(propagation_time_years, initial_rate_ua_cm2):
    """Penetration under the Vu & Stewart rate, 0.0116 (0.85/0.71) i_corr(1) t_p^0.71 [mm].

    Exact integral of `vu_stewart_corrosion_rate` over (0, t_p].

    References
    ----------
    Vu and Stewart (2000), Struct. Saf. 22(4) (from memory).
    """
    caller = "vu_stewart_penetration"
    t_p = check_range(propagation_time_years, "propagation_time_years", caller, low=0.0)
    i_1 = check_range(initial_rate_ua_cm2, "initial_rate_ua_cm2", caller, low=0.0)
    return FARADAY_MM_PER_YEAR_PER_UA_CM2 * 0.85 / 0.71 * i_1 * t_p**0.71


def uniform_residual_diameter(bar_diameter_mm, penetration_mm):
    """Bar diameter after uniform corrosion, D = max(D0 - 2 P, 0) [mm].

    Parameters
    ----------
    bar_diameter_mm : array_like
        Original diameter D0 [mm], >= 0.
    penetration_mm : array_like
        Uniform penetration P per side [mm], >= 0 (e.g. `penetration_depth`).
    """
    caller = "uniform_residual_diameter"
    d0 = check_range(bar_diameter_mm, "bar_diameter_mm", caller, low=0.0)
    p = check_range(penetration_mm, "penetration_mm", caller, low=0.0)
    return np.maximum(d0 - 2.0 * p, 0.0)


def pit_depth(penetration_mm, pitting_factor):
    """Maximum pit depth p = R P, from the uniform penetration P [mm].

    Parameters
    ----------
    penetration_mm : array_like
        Average (uniform) penetration P [mm].
    pitting_factor : array_like
        R = p_max / p_av [-], >= 1 (4-8 after Gonzalez et al. 1995; Gumbel after
        Stewart 2004, see `pitting_factor_distribution`).

    References
    ----------
    Val and Melchers (1997), J. Struct. Eng. 123(12) (from memory).
    """
    caller = "pit_depth"
    p = check_range(penetration_mm, "penetration_mm", caller, low=0.0)
    r = check_range(pitting_factor, "pitting_factor", caller, low=1.0)
    return r * p


def pit_area(pit_depth_mm, bar_diameter_mm):
    """Cross-section area lost to a hemispherical pit, Val & Melchers 1997 [mm2].

    The pit is a circle of radius p centred on the bar surface. With
    a = 2 p sqrt(1 - (p/D0)^2), theta1 = 2 arcsin(a/D0), theta2 = 2 arcsin(a/(2p)),
    A1 = (theta1 (D0/2)^2 - a |D0/2 - p^2/D0|) / 2 and A2 = (theta2 p^2 - a p^2/D0) / 2:

        A_pit = A1 + A2                  for p <= D0/sqrt(2)
        A_pit = pi D0^2/4 - A1 + A2      for D0/sqrt(2) < p <= D0
        A_pit = pi D0^2/4                for p > D0

    Parameters
    ----------
    pit_depth_mm : array_like
        Pit depth p [mm]; values <= 0 give 0.
    bar_diameter_mm : array_like
        Bar diameter D0 [mm], >= 0.

    Returns
    -------
    ndarray
        Pit area A_pit [mm2].

    References
    ----------
    Val and Melchers (1997), J. Struct. Eng. 123(12):1638-1644 (from memory).
    """
    d0 = check_range(bar_diameter_mm, "bar_diameter_mm", "pit_area", low=0.0)
    p = np.maximum(np.asarray(pit_depth_mm, dtype=float), 0.0)
    full = 0.25 * math.pi * d0**2
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.clip(p / d0, 0.0, 1.0)
        a = 2.0 * p * np.sqrt(1.0 - ratio**2)
        theta1 = 2.0 * np.arcsin(np.clip(a / d0, 0.0, 1.0))
        theta2 = 2.0 * np.arcsin(np.sqrt(1.0 - ratio**2))  # a / (2p), safe at p = 0
        a1 = 0.5 * (theta1 * (0.5 * d0) ** 2 - a * np.abs(0.5 * d0 - p**2 / d0))
        a2 = 0.5 * (theta2 * p**2 - a * p**2 / d0)
    area = np.where(p <= d0 / math.sqrt(2.0), a1 + a2,
                    np.where(p <= d0, full - a1 + a2, full))
    return np.where((p <= 0.0) | (d0 <= 0.0), 0.0, area)


def residual_bar_area(bar_diameter_mm, penetration_mm, pitting_factor=1.0,
                      rule="uniform_then_pit"):
    """Remaining cross-section area of one corroding bar [mm2].

    Parameters
    ----------
    bar_diameter_mm : array_like
        Original diameter D0 [mm].
    penetration_mm : array_like
        Average (uniform) penetration P [mm].
    pitting_factor : array_like, default 1
        R = p_max / P [-], >= 1.
    rule : {"uniform_then_pit", "pit_only", "uniform"}
        How uniform and pitting corrosion are combined:

        - ``"uniform_then_pit"`` (default): the bar first loses P all round
          (D_u = D0 - 2P); the deepest pit reaches p_max = R P below the original
          surface, i.e. (R - 1) P below the corroded surface, and is cut from the
          reduced bar: A = pi D_u^2/4 - A_pit((R - 1) P, D_u). Nothing is counted
          twice; R = 1 gives pure uniform loss.
        - ``"pit_only"``: Val & Melchers (1997): A = pi D0^2/4 - A_pit(R P, D0),
          the rest of the perimeter keeps its original size.
        - ``"uniform"``: A = pi D_u^2/4, pitting ignored.

    Returns
    -------
    ndarray
        Residual area [mm2], >= 0.
    """
    caller = "residual_bar_area"
    if rule not in RESIDUAL_AREA_RULES:
        raise InputError(f"The 'rule' parameter of {caller} must be one of "
                         f"{RESIDUAL_AREA_RULES}. Got {rule!r} instead.")
    d0 = check_range(bar_diameter_mm, "bar_diameter_mm", caller, low=0.0)
    p_av = check_range(penetration_mm, "penetration_mm", caller, low=0.0)
    r = check_range(pitting_factor, "pitting_factor", caller, low=1.0)
    if rule == "pit_only":
        return np.maximum(0.25 * math.pi * d0**2 - pit_area(r * p_av, d0), 0.0)
    d_u = np.maximum(d0 - 2.0 * p_av, 0.0)
    uniform_area = 0.25 * math.pi * d_u**2
    if rule == "uniform":
        return uniform_area
    return np.maximum(uniform_area - pit_area((r - 1.0) * p_av, d_u), 0.0)


def residual_area_ratio(bar_diameter_mm, penetration_mm, pitting_factor=1.0,
                        rule="uniform_then_pit"):
    """Residual bar area as a fraction of the original area, A(t) / A0 [-].

    Same parameters as `residual_bar_area`; D0 must be > 0.
    """
    d0 = check_range(bar_diameter_mm, "bar_diameter_mm", "residual_area_ratio", low=0.0,
                     low_open=True)
    return residual_bar_area(d0, penetration_mm, pitting_factor, rule) / (0.25 * math.pi * d0**2)


def pitting_factor_distribution(bar_length_mm=PITTING_REFERENCE_LENGTH_MM,
                                reference_length_mm=PITTING_REFERENCE_LENGTH_MM,
                                location=PITTING_FACTOR.params["location"],
                                scale=PITTING_FACTOR.params["scale"]):
    """Gumbel distribution of the pitting factor R for a bar of given length.

    The maximum over L/L0 independent reference lengths keeps the scale and shifts
    the location: mu_L = mu_0 + scale ln(L / L0) (scale = 1/alpha).

    Parameters
    ----------
    bar_length_mm : float, default 125
        Length of bar L over which the deepest pit is sought [mm], > 0.
    reference_length_mm : float, default 125
        Length L0 of the fitted data [mm].
    location, scale : float
        Gumbel parameters mu_0 and 1/alpha_0 for L0 [-]; defaults 5.08 and 1/1.02
        (Stewart 2004, from memory).

    Returns
    -------
    scipy.stats frozen distribution
        ``gumbel_r`` for R [-].

    References
    ----------
    Stewart (2004), Struct. Saf. 26 (from memory); extreme-value scaling of the
    largest-value Gumbel distribution.
    """
    caller = "pitting_factor_distribution"
    length = float(check_range(bar_length_mm, "bar_length_mm", caller, low=0.0, low_open=True))
    ref = float(check_range(reference_length_mm, "reference_length_mm", caller, low=0.0,
                            low_open=True))
    return stats.gumbel_r(loc=location + scale * math.log(length / ref), scale=scale)


def sample_pitting_factor(size, seed, bar_length_mm=PITTING_REFERENCE_LENGTH_MM, **kwargs):
    """Random pitting factors R >= 1 for a bar of given length [-].

    Draws from `pitting_factor_distribution` (extra keyword arguments go there)
    and lifts the rare draws below 1 to 1, since a pit is never shallower than
    the average penetration.

    Parameters
    ----------
    size : int or tuple of int
        Output shape.
    seed : int or numpy.random.Generator
        Pass an int for reproducible output across calls.
    """
    rng, _ = resolve_seed(seed, "sample_pitting_factor")
    dist = pitting_factor_distribution(bar_length_mm, **kwargs)
    return np.maximum(dist.rvs(size=size, random_state=rng), 1.0)
