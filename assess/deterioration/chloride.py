"""Chloride ingress into concrete: the fib Bulletin 34 error-function model.

All functions are pure numpy and broadcast over every argument, so one call
evaluates a whole sample of parameters.

Canonical units: depth and cover [mm], age [yr], diffusion coefficients
[mm2/yr] (1e-12 m2/s = 31.56 mm2/yr; see `m2_per_s_to_mm2_per_year`), chloride
contents in one consistent unit, normally [% by mass of binder].

Time-dependent diffusion - the two conventions
-----------------------------------------------
A chloride profile measured at age t and fitted with the error-function
solution gives an *apparent* diffusion coefficient that is an average over
(0, t]. fib Bulletin 34 writes this average directly as

    D_app(t) = k_e D_ref (t_ref / t)^a            (convention ``"average"``)

and inserts it with the age t into the error function. If instead D_ref is an
*instantaneous* coefficient D(tau) = D_ref (t_ref/tau)^a, Fick's second law with
a time-varying coefficient is solved exactly by the error function with the
integral int_0^t D(tau) dtau = k_e D_ref t_ref^a t^(1-a) / (1 - a) in place of
D t (convention ``"instantaneous"``, needs a < 1). The two differ by the factor
1/(1 - a); mixing them is a common source of error (Frederiksen, Mejlbro and
Nilsson 2008). Both are available; ``"average"`` is the default and is what a
profile fitted at the inspection age provides.

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B, eq. (B1.1)-(B1.3) (from memory).
.. [2] J. Crank, *The Mathematics of Diffusion*, 2nd ed. Oxford: Clarendon Press,
   1975, eq. (2.45) and section 5.2 (time-dependent diffusion coefficient).
.. [3] J. M. Frederiksen, L. Mejlbro and L.-O. Nilsson, "Fick's 2nd law - complete
   solutions for chloride ingress into concrete," Lund University, Report
   TVBM-3146, 2008.
"""

from __future__ import annotations

import numpy as np
from scipy import special

from assess.deterioration.defaults import (
    M2_PER_S_TO_MM2_PER_YEAR,
    REFERENCE_TEMPERATURE_K,
    check_range,
)
from assess.errors import InputError

CONVENTIONS = ("average", "instantaneous")


def m2_per_s_to_mm2_per_year(diffusion_m2_per_s):
    """Convert a diffusion coefficient from [m2/s] to [mm2/yr] (factor 3.156e13)."""
    return np.asarray(diffusion_m2_per_s, dtype=float) * M2_PER_S_TO_MM2_PER_YEAR


def temperature_factor(temperature_coefficient_k, annual_mean_temperature_k,
                       reference_temperature_k=REFERENCE_TEMPERATURE_K):
    """Temperature factor k_e of the diffusion coefficient [-].

    k_e = exp(b_e (1/T_ref - 1/T_real))

    Parameters
    ----------
    temperature_coefficient_k : array_like
        Regression variable b_e [K]; fib 34: N(4800, 700) (from memory).
    annual_mean_temperature_k : array_like
        Annual mean temperature of the concrete surroundings T_real [K].
    reference_temperature_k : array_like, default 293
        Reference temperature T_ref [K].

    References
    ----------
    fib Bulletin 34 (2006), Annex B (from memory).
    """
    caller = "temperature_factor"
    t_real = check_range(annual_mean_temperature_k, "annual_mean_temperature_k", caller,
                         low=0.0, low_open=True)
    t_ref = check_range(reference_temperature_k, "reference_temperature_k", caller,
                        low=0.0, low_open=True)
    b_e = np.asarray(temperature_coefficient_k, dtype=float)
    return np.exp(b_e * (1.0 / t_ref - 1.0 / t_real))


def _check_convention(convention, caller):
    if convention not in CONVENTIONS:
        raise InputError(f"The 'diffusion_convention' parameter of {caller} must be one of "
                         f"{CONVENTIONS}. Got {convention!r} instead.")


def _exposure_coefficient(d_app_ref, age_ref, ageing_exponent, temp_factor, convention,
                          caller):
    """Checked inputs and K such that int D dt = K t^(1-a) [mm2 / yr^(1-a)]."""
    _check_convention(convention, caller)
    d_ref = check_range(d_app_ref, "d_app_ref_mm2_per_year", caller, low=0.0)
    t_ref = check_range(age_ref, "age_ref_years", caller, low=0.0, low_open=True)
    a = check_range(ageing_exponent, "ageing_exponent", caller, 0.0, 1.0,
                    high_open=convention == "instantaneous")
    k_e = check_range(temp_factor, "temperature_factor", caller, low=0.0)
    coefficient = k_e * d_ref * t_ref**a
    if convention == "instantaneous":
        coefficient = coefficient / (1.0 - a)
    return coefficient, a


def apparent_diffusion_coefficient(age_years, d_app_ref_mm2_per_year, age_ref_years,
                                   ageing_exponent, temperature_factor=1.0,
                                   diffusion_convention="average"):
    """Apparent (time-averaged) chloride diffusion coefficient at an age [mm2/yr].

    This is the D_app(t) that, used with the age t in the error function, gives
    the chloride profile at t - what a profile fitted at age t would report.

    Parameters
    ----------
    age_years : array_like
        Age of the concrete since first exposure t [yr], > 0.
    d_app_ref_mm2_per_year : array_like
        Diffusion coefficient at the reference age [mm2/yr]; an average over
        (0, t_ref] for ``"average"``, the instantaneous value at t_ref for
        ``"instantaneous"``.
    age_ref_years : array_like
        Reference age t_ref [yr] (fib 34: t0 = 0.0767 yr for D_RCM,0; or the
        inspection age for a D_app fitted to a profile).
    ageing_exponent : array_like
        Ageing exponent a [-], in [0, 1] ([0, 1) for ``"instantaneous"``).
    temperature_factor : array_like, default 1
        k_e [-], see `temperature_factor`.
    diffusion_convention : {"average", "instantaneous"}
        Meaning of ``d_app_ref_mm2_per_year`` (see module notes).

    Returns
    -------
    ndarray
        D_app(t) = k_e D_ref (t_ref/t)^a, times 1/(1-a) for ``"instantaneous"``
        [mm2/yr].
    """
    caller = "apparent_diffusion_coefficient"
    coefficient, a = _exposure_coefficient(d_app_ref_mm2_per_year, age_ref_years,
                                           ageing_exponent, temperature_factor,
                                           diffusion_convention, caller)
    t = check_range(age_years, "age_years", caller, low=0.0, low_open=True)
    return coefficient * t ** (-a)


def chloride_content(depth_mm, age_years, surface_chloride, d_app_ref_mm2_per_year,
                     age_ref_years, ageing_exponent, initial_chloride=0.0, delta_x_mm=0.0,
                     temperature_factor=1.0, diffusion_convention="average"):
    """Chloride content at a depth and age, error-function solution of Fick's 2nd law.

    C(x, t) = C0 + (C_S - C0) erfc((x - dx) / (2 sqrt(D_app(t) t)))  for x > dx,
    C(x, t) = C_S                                                   for x <= dx,

    with D_app(t) = k_e D_ref (t_ref/t)^a (see module notes for the conventions).

    Parameters
    ----------
    depth_mm : array_like
        Depth below the exposed surface x [mm] (the cover, for depassivation).
    age_years : array_like
        Age since first chloride exposure t [yr], >= 0.
    surface_chloride : array_like
        Surface content C_S, or substitute surface content C_S,dx at depth dx
        [% by mass of binder].
    d_app_ref_mm2_per_year : array_like
        Diffusion coefficient at the reference age [mm2/yr], >= 0.
    age_ref_years : array_like
        Reference age t_ref [yr], > 0.
    ageing_exponent : array_like
        Ageing exponent a [-].
    initial_chloride : array_like, default 0
        Initial (background) content C0 [% by mass of binder].
    delta_x_mm : array_like, default 0
        Depth of the convection zone dx [mm], >= 0.
    temperature_factor : array_like, default 1
        k_e [-].
    diffusion_convention : {"average", "instantaneous"}
        Meaning of ``d_app_ref_mm2_per_year``.

    Returns
    -------
    ndarray
        Chloride content C(x, t) [% by mass of binder], broadcast shape of the inputs.

    References
    ----------
    fib Bulletin 34 (2006), Annex B (from memory); Crank (1975), eq. (2.45).

    Examples
    --------
    >>> round(float(chloride_content(20.0, 10.0, 1.0, 10.0, 10.0, 0.0)), 6)  # erfc(1)
    0.157299
    """
    caller = "chloride_content"
    coefficient, a = _exposure_coefficient(d_app_ref_mm2_per_year, age_ref_years,
                                           ageing_exponent, temperature_factor,
                                           diffusion_convention, caller)
    t = check_range(age_years, "age_years", caller, low=0.0)
    dx = check_range(delta_x_mm, "delta_x_mm", caller, low=0.0)
    x = np.asarray(depth_mm, dtype=float)
    c_s = np.asarray(surface_chloride, dtype=float)
    c_0 = np.asarray(initial_chloride, dtype=float)
    depth_beyond = x - dx
    exposure = coefficient * t ** (1.0 - a)
    with np.errstate(divide="ignore", invalid="ignore"):
        z = depth_beyond / (2.0 * np.sqrt(exposure))
    inside = c_0 + (c_s - c_0) * special.erfc(z)
    return np.where(depth_beyond <= 0.0, np.broadcast_to(c_s, inside.shape), inside)


def initiation_time(cover_mm, critical_chloride, surface_chloride, d_app_ref_mm2_per_year,
                    age_ref_years, ageing_exponent, initial_chloride=0.0, delta_x_mm=0.0,
                    temperature_factor=1.0, diffusion_convention="average"):
    """Age at which the chloride content at the cover reaches the critical content [yr].

    Closed-form inverse of `chloride_content`. With K = k_e D_ref t_ref^a
    (divided by 1 - a for ``"instantaneous"``), C(x, t) = C_crit gives

        t^(1-a) = ((x - dx) / (2 erfcinv(r)))^2 / K,   r = (C_crit - C0) / (C_S - C0).

    Special cases: 0 if C_crit <= C0 or (x <= dx and C_crit < C_S); +inf if
    C_crit >= C_S, D_ref = 0, or a = 1 with the threshold not reached at once
    (a = 1 freezes the profile: under ``"average"`` int D dt is constant in t).

    Parameters
    ----------
    cover_mm : array_like
        Concrete cover to the bar x = a [mm].
    critical_chloride : array_like
        Critical chloride content C_crit [% by mass of binder].
    surface_chloride, d_app_ref_mm2_per_year, age_ref_years, ageing_exponent,
    initial_chloride, delta_x_mm, temperature_factor, diffusion_convention
        As in `chloride_content`.

    Returns
    -------
    ndarray
        Corrosion initiation time t_i since first exposure [yr]; inf where never.

    References
    ----------
    fib Bulletin 34 (2006), Annex B, depassivation limit state (from memory).
    """
    caller = "initiation_time"
    coefficient, a = _exposure_coefficient(d_app_ref_mm2_per_year, age_ref_years,
                                           ageing_exponent, temperature_factor,
                                           diffusion_convention, caller)
    dx = check_range(delta_x_mm, "delta_x_mm", caller, low=0.0)
    x = np.asarray(cover_mm, dtype=float)
    c_crit = np.asarray(critical_chloride, dtype=float)
    c_s = np.asarray(surface_chloride, dtype=float)
    c_0 = np.asarray(initial_chloride, dtype=float)
    depth_beyond = x - dx

    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ratio = (c_crit - c_0) / (c_s - c_0)
        z = special.erfcinv(np.clip(ratio, 0.0, 1.0))
        needed_exposure = (depth_beyond / (2.0 * z)) ** 2
        base = needed_exposure / coefficient
        frozen = a >= 1.0
        t_power = np.where(frozen, 1.0, 1.0 / np.where(frozen, 1.0, 1.0 - a))
        t_grow = base**t_power
        t_frozen = np.where(base <= 1.0, 0.0, np.inf)
        t = np.where(frozen, t_frozen, t_grow)
        t = np.where(coefficient > 0.0, t, np.inf)

    never = c_crit >= np.maximum(c_s, c_0)
    at_once = (c_crit <= c_0) | ((depth_beyond <= 0.0) & (c_crit < c_s))
    t = np.where(never & ~at_once, np.inf, t)
    return np.where(at_once, 0.0, t)
