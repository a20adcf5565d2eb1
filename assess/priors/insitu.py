"""From the strength of standard cylinders f_co to the in-situ strength f_c of concrete.

Source: JCSS Probabilistic Model Code, Part 3.1 "Concrete properties", the
probabilistic model (read in the JCSS text):

    f_c = alpha(t, tau) * f_co ** lambda * Y1                                   [MPa]
    alpha(t, tau) = alpha1(tau) * alpha2(t)
    alpha1(tau) = alpha3_inf + (1 - alpha3_inf) * exp(-a_tau * tau),  alpha3_inf ~ 0.8, a_tau = 0.04
    alpha2(t) = a + b ln(t),  a = 0.6, b = 0.12 ("under normal conditions")

with t the age of the concrete at loading [days], tau the duration of loading
[days], lambda = 0.96 (JCSS: lognormal with mean 0.96 and CoV 0.005, "generally
it suffices to take lambda deterministically"; taken deterministic here) and Y1 a
lognormal job variable with mean 1.0 and CoV 0.06 (JCSS table "Data for
parameters Y_i"). f_co follows the JCSS prior table of ln f_co
(`assess.priors.concrete_prior`).

What is modelled here is the strength that a core drilled from the structure
measures: a short-term test, so tau = 0 and alpha1 = 1. The reduction for
sustained loading (alpha1 -> 0.8) belongs to a resistance model under long-term
load, not to the population that cores observe.

Age: the logarithmic law a + b ln(t) keeps growing (1.78 at 52 years); it is
evaluated at most at `AGE_CAP_DAYS` = 365 days (alpha2 = 1.31). The cap is our
judgement, not JCSS: the later gain of Portland-cement concrete is small
(EN 1992-1-1, 3.1.2: beta_cc(t) levels off after about a year; from memory).
"""

from __future__ import annotations

import math

from assess.errors import InputError
from assess.priors.normal_gamma import NormalGamma

#: JCSS PMC 3.1: exponent lambda of f_co (mean value, taken deterministic) [-].
LAMBDA = 0.96
#: JCSS PMC 3.1: coefficient of variation of the lognormal job variable Y1 (mean 1) [-].
Y1_COV = 0.06
#: JCSS PMC 3.1: alpha3(inf) ~ 0.8 and a_tau = 0.04 [1/day] of alpha1(tau).
ALPHA3_INF, A_TAU = 0.8, 0.04
#: JCSS PMC 3.1: a = 0.6 and b = 0.12 of alpha2(t) = a + b ln t (t in days), normal conditions.
ALPHA2_A, ALPHA2_B = 0.6, 0.12
#: Largest age at which alpha2 is evaluated [days] (judgement, see the module text).
AGE_CAP_DAYS = 365.0

_SOURCE = "JCSS PMC Part 3.1: f_c = alpha(t, tau) f_co^lambda Y1 (lambda 0.96, Y1 LN CoV 0.06)"


def alpha1(tau_days: float) -> float:
    """Load-duration factor alpha1(tau) of JCSS PMC 3.1 [-]; tau = duration of loading [days]."""
    if not tau_days >= 0:
        raise InputError(f"load duration must be >= 0 days, got {tau_days!r}")
    return ALPHA3_INF + (1.0 - ALPHA3_INF) * math.exp(-A_TAU * tau_days)


def alpha2(t_days: float) -> float:
    """Age factor alpha2(t) = 0.6 + 0.12 ln t of JCSS PMC 3.1 [-]; t = age at loading [days]."""
    if not t_days > 0:
        raise InputError(f"concrete age must be > 0 days, got {t_days!r}")
    return ALPHA2_A + ALPHA2_B * math.log(t_days)


def alpha(t_days: float, tau_days: float = 0.0) -> float:
    """alpha(t, tau) = alpha1(tau) alpha2(t) of JCSS PMC 3.1 [-]."""
    return alpha1(tau_days) * alpha2(t_days)


def y1_log_parameters(cov: float = Y1_COV) -> tuple[float, float]:
    """Mean and standard deviation of ln Y1 for a lognormal Y1 with mean 1 and CoV ``cov`` [-]."""
    sigma = math.sqrt(math.log1p(cov * cov))
    return -0.5 * sigma * sigma, sigma


def insitu_strength_prior(
    f_co: NormalGamma,
    age_days: float,
    *,
    load_duration_days: float = 0.0,
    age_cap_days: float = AGE_CAP_DAYS,
    lam: float = LAMBDA,
    y1_cov: float = Y1_COV,
) -> NormalGamma:
    """Normal-gamma population of ln f_c in situ from that of ln f_co (JCSS PMC 3.1).

    Parameters
    ----------
    f_co : NormalGamma
        Population of ln f_co [ln MPa] (standard cylinders, 28 days; JCSS prior table).
    age_days : float
        Age of the concrete [days]; alpha2 is evaluated at the age bounded to
        [28 days, ``age_cap_days``] (alpha2(28) = 1.0: the standard test age).
    load_duration_days : float
        Duration of loading tau [days]; 0 for the short-term strength that cores measure.
    lam, y1_cov : float
        lambda [-] and the CoV of Y1 [-]; default the JCSS values 0.96 and 0.06.

    Returns
    -------
    NormalGamma
        ln f_c = ln alpha + lambda ln f_co + ln Y1 [ln MPa]. Within the structure the
        scatter of ln f_c is lambda times that of ln f_co: s = lambda s', same nu'.
        Y1 is one value per job (JCSS index j), so it moves the job mean: the mean
        gets centre ln alpha + lambda m' + E[ln Y1] and the equivalent sample size n
        is chosen so that the Student-t predictive variance of ln f_c equals the
        exact one, lambda^2 s'^2 (1 + 1/n') nu'/(nu' - 2) + Var[ln Y1]:

            1/n = 1/n' + Var[ln Y1] (nu' - 2) / (nu' lambda^2 s'^2)

        (moment matching; the Student-t family cannot hold the sum exactly).
    """
    if not (f_co.n > 0 and f_co.nu > 2 and f_co.s > 0):
        raise InputError(
            f"the in-situ transformation needs a proper prior of ln f_co with nu > 2; got "
            f"n={f_co.n}, nu={f_co.nu}, s={f_co.s} ({f_co.source})"
        )
    if abs(f_co.rho) > 1e-12 or abs(f_co.z_mean) > 1e-12:
        raise InputError("the in-situ transformation takes a conjugate prior (rho = 0, z_mean = 0)")
    t_eff = min(max(float(age_days), 28.0), float(age_cap_days))
    factor = alpha(t_eff, load_duration_days)
    y1_mean, y1_sigma = y1_log_parameters(y1_cov)
    s = lam * f_co.s
    nu = f_co.nu
    inverse_n = 1.0 / f_co.n + y1_sigma**2 * (nu - 2.0) / (nu * s * s)
    center = math.log(factor) + lam * f_co.m + y1_mean
    source = (
        f"{f_co.source}; in situ: {_SOURCE}, alpha = {factor:.3f} (alpha2 at "
        f"{t_eff:.0f} days, alpha1 at tau = {load_duration_days:g} days)"
    )
    return NormalGamma.from_jcss(center, 1.0 / inverse_n, s, nu, source=source)


def age_days(year_built: int, on) -> float:
    """Age [days] on date ``on`` of concrete cast in mid-``year_built`` (1 July assumed)."""
    import datetime as dt

    return float((on - dt.date(int(year_built), 7, 1)).days)


__all__ = [
    "AGE_CAP_DAYS",
    "ALPHA2_A",
    "ALPHA2_B",
    "ALPHA3_INF",
    "A_TAU",
    "LAMBDA",
    "Y1_COV",
    "age_days",
    "alpha",
    "alpha1",
    "alpha2",
    "insitu_strength_prior",
    "y1_log_parameters",
]
