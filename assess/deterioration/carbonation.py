"""Carbonation of concrete: square-root-of-time law and the fib Bulletin 34 model.

The working form for an existing structure is x_c = k sqrt(t), with the rate k
[mm/sqrt(yr)] obtained from measured carbonation depths (phenolphthalein) at
the inspection age. The full fib 34 form is available for design-stage priors.
Depassivation (corrosion initiation) when x_c(t) >= cover.

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B, carbonation model (all values from memory).
.. [2] K. Tuutti, *Corrosion of Steel in Concrete*, CBI Report 4:82, Swedish Cement
   and Concrete Research Institute, Stockholm, 1982 (square-root-of-time law).
"""

from __future__ import annotations

import numpy as np

from assess.deterioration.defaults import (
    CARBONATION,
    REFERENCE_AGE_YEARS,
    SECONDS_PER_YEAR,
    check_range,
)


def carbonation_depth(age_years, rate_mm_per_sqrt_year):
    """Carbonation depth by the square-root-of-time law, x_c = k sqrt(t) [mm].

    Parameters
    ----------
    age_years : array_like
        Age of the concrete since first exposure to air t [yr], >= 0.
    rate_mm_per_sqrt_year : array_like
        Carbonation rate k [mm/sqrt(yr)], >= 0.

    Returns
    -------
    ndarray
        Carbonation depth x_c [mm].

    References
    ----------
    Tuutti (1982); fib Bulletin 34 (2006), Annex B, with W(t) = 1 (sheltered).

    Examples
    --------
    >>> float(carbonation_depth(25.0, 3.0))
    15.0
    """
    caller = "carbonation_depth"
    t = check_range(age_years, "age_years", caller, low=0.0)
    k = check_range(rate_mm_per_sqrt_year, "rate_mm_per_sqrt_year", caller, low=0.0)
    return k * np.sqrt(t)


def carbonation_rate_from_depth(depth_mm, age_years):
    """Carbonation rate k = x_c / sqrt(t) from a measured depth [mm/sqrt(yr)].

    Parameters
    ----------
    depth_mm : array_like
        Measured carbonation depth x_c [mm], >= 0.
    age_years : array_like
        Age at measurement t [yr], > 0.
    """
    caller = "carbonation_rate_from_depth"
    x = check_range(depth_mm, "depth_mm", caller, low=0.0)
    t = check_range(age_years, "age_years", caller, low=0.0, low_open=True)
    return x / np.sqrt(t)


def initiation_time(cover_mm, rate_mm_per_sqrt_year):
    """Age at which the carbonation front reaches the bar, t_i = (cover / k)^2 [yr].

    Parameters
    ----------
    cover_mm : array_like
        Concrete cover [mm], >= 0.
    rate_mm_per_sqrt_year : array_like
        Carbonation rate k [mm/sqrt(yr)], >= 0; k = 0 gives +inf.

    Returns
    -------
    ndarray
        Initiation time since first exposure [yr].
    """
    caller = "carbonation initiation_time"
    cover = check_range(cover_mm, "cover_mm", caller, low=0.0)
    k = check_range(rate_mm_per_sqrt_year, "rate_mm_per_sqrt_year", caller, low=0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (cover / k) ** 2
    return np.where(cover == 0.0, 0.0, np.where(k > 0.0, t, np.inf))


def fib34_carbonation_rate(relative_humidity, curing_days, inverse_resistance_m2_s_per_kg_m3,
                           test_method_factor=1.25, error_term_m2_s_per_kg_m3=1.0e-11,
                           co2_kg_m3=CARBONATION["co2_kg_m3"], curing_exponent=-0.567):
    """Carbonation rate of the fib 34 model before the weather function [mm/sqrt(yr)].

    k = sqrt(2 k_e k_c (k_t R_ACC,0^-1 + eps_t) C_S), converted from m/sqrt(s),
    with k_e = ((1 - RH^f_e) / (1 - RH_ref^f_e))^g_e and k_c = (t_c / 7)^b_c.

    Parameters
    ----------
    relative_humidity : array_like
        Annual mean relative humidity of the surroundings RH_real [-], in (0, 1).
    curing_days : array_like
        Period of curing t_c [d], > 0.
    inverse_resistance_m2_s_per_kg_m3 : array_like
        Inverse effective carbonation resistance from the accelerated test
        R_ACC,0^-1 [(m2/s)/(kg/m3)], >= 0.
    test_method_factor : array_like, default 1.25
        k_t [-], fib 34: N(1.25, 0.35) (from memory).
    error_term_m2_s_per_kg_m3 : array_like, default 1.0e-11
        eps_t [(m2/s)/(kg/m3)], fib 34: N(1.0e-11, 0.15e-11) (from memory).
    co2_kg_m3 : array_like, default 8.2e-4
        CO2 concentration of the air C_S [kg/m3].
    curing_exponent : array_like, default -0.567
        b_c [-], fib 34: N(-0.567, 0.024) (from memory).

    Returns
    -------
    ndarray
        Rate k [mm/sqrt(yr)]; multiply by sqrt(t) W(t) for the depth.

    References
    ----------
    fib Bulletin 34 (2006), Annex B (from memory).
    """
    caller = "fib34_carbonation_rate"
    rh = check_range(relative_humidity, "relative_humidity", caller, 0.0, 1.0,
                     low_open=True, high_open=True)
    t_c = check_range(curing_days, "curing_days", caller, low=0.0, low_open=True)
    r_inv = check_range(inverse_resistance_m2_s_per_kg_m3, "inverse_resistance_m2_s_per_kg_m3",
                        caller, low=0.0)
    rh_ref, f_e, g_e = CARBONATION["rh_ref"], CARBONATION["f_e"], CARBONATION["g_e"]
    k_e = ((1.0 - rh**f_e) / (1.0 - rh_ref**f_e)) ** g_e
    k_c = (t_c / 7.0) ** np.asarray(curing_exponent, dtype=float)
    effective = np.asarray(test_method_factor) * r_inv + np.asarray(error_term_m2_s_per_kg_m3)
    rate_m_per_sqrt_s = np.sqrt(np.maximum(2.0 * k_e * k_c * effective
                                           * np.asarray(co2_kg_m3), 0.0))
    return rate_m_per_sqrt_s * 1000.0 * np.sqrt(SECONDS_PER_YEAR)


def fib34_carbonation_depth(age_years, rate_mm_per_sqrt_year, weather_exponent=0.0,
                            age_ref_years=REFERENCE_AGE_YEARS):
    """Carbonation depth with the fib 34 weather function, x_c = k sqrt(t) (t0/t)^w [mm].

    Parameters
    ----------
    age_years : array_like
        Age t [yr], >= 0.
    rate_mm_per_sqrt_year : array_like
        Rate k from `fib34_carbonation_rate` or from measurements [mm/sqrt(yr)].
    weather_exponent : array_like, default 0
        w = (p_SR ToW)^b_w / 2 [-], in [0, 0.5); 0 for sheltered or indoor concrete.
    age_ref_years : array_like, default 0.0767
        Reference age t0 [yr].

    References
    ----------
    fib Bulletin 34 (2006), Annex B (from memory).
    """
    caller = "fib34_carbonation_depth"
    t = check_range(age_years, "age_years", caller, low=0.0)
    k = check_range(rate_mm_per_sqrt_year, "rate_mm_per_sqrt_year", caller, low=0.0)
    w = check_range(weather_exponent, "weather_exponent", caller, 0.0, 0.5, high_open=True)
    t0 = check_range(age_ref_years, "age_ref_years", caller, low=0.0, low_open=True)
    return k * t0**w * t ** (0.5 - w)


def fib34_initiation_time(cover_mm, rate_mm_per_sqrt_year, weather_exponent=0.0,
                          age_ref_years=REFERENCE_AGE_YEARS):
    """Inverse of `fib34_carbonation_depth`: t_i = (cover / (k t0^w))^(1/(0.5 - w)) [yr].

    Returns +inf where k = 0 and 0 where the cover is 0.
    """
    caller = "fib34_initiation_time"
    cover = check_range(cover_mm, "cover_mm", caller, low=0.0)
    k = check_range(rate_mm_per_sqrt_year, "rate_mm_per_sqrt_year", caller, low=0.0)
    w = check_range(weather_exponent, "weather_exponent", caller, 0.0, 0.5, high_open=True)
    t0 = check_range(age_ref_years, "age_ref_years", caller, low=0.0, low_open=True)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (cover / (k * t0**w)) ** (1.0 / (0.5 - w))
    return np.where(cover == 0.0, 0.0, np.where(k > 0.0, t, np.inf))
