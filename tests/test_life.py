"""Remaining life: annual beta(t) with common random numbers, remaining life and its band.

References
- Closed form of a time-variant R(t) - S problem (R lognormal with deterministic
  exponential decay, S normal): pf(t) = integral of F_R(s exp(k t)) f_S(s) ds, evaluated
  with scipy.integrate.quad and scipy.stats densities (outside reference).
- Faraday's law, uniform corrosion: D(t) = D0 - 2 0.0116 i_corr t_p,
  A = pi D^2 / 4; 1 uA/cm2 = 11.6 um/yr (0.01163 mm/yr computed from Faraday's constant).
- Gaussian copula with lognormal marginals: the log draws are bivariate normal; the
  standard error of a sample correlation is about (1 - rho^2) / sqrt(n) (Fisher 1921,
  from memory).
- The demo's generating parameters (demo_sites/tanners-yard/truth.json) are the outside
  reference for the corrosion posterior.
"""

import math

import numpy as np
import pytest
from scipy import integrate, optimize, stats

from assess.distributions import make_distribution
from assess.model import ProbabilisticModel
from assess.site.corrosion import CorrosionInputs, age_at, update_corrosion, zone_corrosion_inputs
from assess.site.projection import (
    ALREADY_BELOW,
    BEYOND,
    CROSSES,
    area_factor,
    beta_band,
    estimate_curves,
    project_member,
    project_site,
    remaining_life,
)

SEED = 20261202


@pytest.fixture(scope="module")
def prepared(demo_update, quick_settings):
    """Demo site updated exactly as ``assess life --quick`` does (stored posteriors are shared)."""
    site, update = demo_update
    fit = update_corrosion(site, settings=quick_settings)
    corrosion = zone_corrosion_inputs(site, fit, seed=SEED)
    return site, update, fit, corrosion


# -- synthetic problem with a reference solution ----------------------------------------
R_MEAN, R_COV, S_MEAN, S_STD, DECAY = 3.0, 0.10, 1.0, 0.15, 0.012  # [-], [-], [-], [-], [1/yr]
TARGET = 3.2


def exact_pf(t):
    """pf(t) = int F_R(s e^{k t}) f_S(s) ds (scipy quad and scipy.stats)."""
    r = make_distribution("lognormal", mean=R_MEAN, std=R_COV * R_MEAN)
    sigma_ln, mu_ln = r.params["sigma_ln"], r.params["mu_ln"]
    lo, hi = S_MEAN - 12 * S_STD, S_MEAN + 12 * S_STD

    def integrand(s):
        return stats.lognorm.cdf(s * math.exp(DECAY * t), sigma_ln, scale=math.exp(mu_ln)) \
            * stats.norm.pdf(s, S_MEAN, S_STD)

    return integrate.quad(integrand, max(lo, 1e-9), hi, epsabs=0, epsrel=1e-10, limit=200)[0]


def synthetic_curve(n_samples=3000, horizon=60):
    model = ProbabilisticModel()
    model.add("R", make_distribution("lognormal", mean=R_MEAN, std=R_COV * R_MEAN))
    model.add("S", make_distribution("normal", mean=S_MEAN, std=S_STD))

    def limit_state_at(x, t):
        return (x["R"] * np.exp(-DECAY * t) - x["S"])[:, None]

    times = np.arange(horizon + 1.0)
    estimate = estimate_curves(model, limit_state_at, times, {"R-S": [0]}, mode_names=["R-S"],
                               n_samples=n_samples, seed=7)
    return times, estimate


def test_synthetic_curve_matches_the_reference_within_3_cov():
    times, estimate = synthetic_curve()
    pf, cov = estimate.pf["R-S"], estimate.cov["R-S"]
    exact = np.array([exact_pf(t) for t in times])
    assert np.all(np.abs(pf - exact) <= 3.0 * cov * pf), np.max(np.abs(pf - exact) / (cov * pf))
    assert np.all(np.diff(pf) >= 0.0)  # common random numbers: failure set grows with t


def test_remaining_life_of_the_synthetic_case_brackets_the_exact_crossing():
    times, estimate = synthetic_curve()
    t_exact = optimize.brentq(lambda t: stats.norm.isf(exact_pf(t)) - TARGET, 0.0, 60.0)
    beta, lower, upper = beta_band(estimate.pf["R-S"], estimate.cov["R-S"], standard_errors=3.0)
    life = remaining_life(times, beta, lower, upper, TARGET)
    assert life.status == CROSSES
    assert life.earliest <= t_exact <= life.latest, (life, t_exact)
    assert abs(life.years - t_exact) <= life.latest - life.earliest


def test_remaining_life_statuses():
    times = np.arange(11.0)
    flat = np.full(11, 5.0)
    assert remaining_life(times, flat, flat - 0.1, flat + 0.1, 4.2).status == BEYOND
    assert remaining_life(times, flat - 1.0, flat - 1.1, flat - 0.9, 4.2).status == ALREADY_BELOW
    falling = 5.0 - 0.2 * times  # crosses 4.2 at t = 4 exactly (linear)
    life = remaining_life(times, falling, falling - 0.2, falling + 0.2, 4.2)
    assert life.status == CROSSES and life.years == pytest.approx(4.0)
    assert life.earliest == pytest.approx(3.0) and life.latest == pytest.approx(5.0)


def test_area_factor_follows_faraday_uniform_corrosion():
    # t_i = 10 yr, i_corr = 1 uA/cm2, D0 = 12 mm, from age 40 to age 50:
    # D = D0 - 2 x 0.01163 x t_p, A ratio = (D50 / D40)^2
    rate = 0.01163
    expected = ((12 - 2 * rate * 40) / (12 - 2 * rate * 30)) ** 2
    got = area_factor(np.array([10.0]), np.array([1.0]), 50.0, 40.0, 12.0)
    assert got[0] == pytest.approx(expected, rel=1e-3)
    assert area_factor(np.array([10.0]), np.array([1.0]), 40.0, 40.0, 12.0)[0] == 1.0
    # not initiated by age 50: no loss
    assert area_factor(np.array([60.0]), np.array([1.0]), 50.0, 40.0, 12.0)[0] == 1.0


def test_corrosion_inputs_keep_marginals_and_copula():
    rng = np.random.default_rng(3)
    rho, n = 0.6, 4000
    z = rng.multivariate_normal([0, 0], [[1, rho], [rho, 1]], size=n)
    t_i, rate = np.exp(3.0 + 0.2 * z[:, 0]), np.exp(0.1 + 0.3 * z[:, 1])
    inputs = CorrosionInputs.from_draws("Z", t_i, rate)
    se = (1 - rho**2) / math.sqrt(n)
    assert inputs.log_correlation == pytest.approx(rho, abs=3 * se)
    model = ProbabilisticModel()
    inputs.add_to_model(model)
    x = model.sample(n, seed=4)
    logs = np.log(np.column_stack([x["initiation_time"], x["corrosion_rate"]]))
    assert np.corrcoef(logs.T)[0, 1] == pytest.approx(inputs.log_correlation, abs=3 * se)
    # marginal of i_corr is the fitted lognormal (KS test against scipy)
    fitted = stats.lognorm(inputs.rate_log_sd, scale=inputs.rate_median)
    assert stats.kstest(x["corrosion_rate"], fitted.cdf).pvalue > 0.001


# -- the demo site ----------------------------------------------------------------------
def test_beta_now_equals_the_after_beta_of_assess_members(prepared):
    from assess.site.before_after import assess_members
    from assess.site.corrosion_state import present_state

    site, update, _, corrosion = prepared
    # today's state per face (corrosion model where no break-out is on the face; pits)
    present, state = present_state(site, update, corrosion, seed=SEED)
    for member in ("S4-01", "C3-C4"):
        curves = {c.mode: c for c in project_member(site, member, present, state=state,
                                                    n_samples=4000, seed=SEED)}
        after = assess_members(site, present, members=[member], importance=False,
                               options={"n_per_level": 2000}).results
        for r in after:
            curve = curves[r.mode]
            assert same_estimate(curve.pf[0], curve.cov[0], r.after.pf, r.after.cov), (
                member, r.mode, curve.beta[0], r.after.beta)


BETA_FLOOR = 6.0
"""Above this both estimates say "no decision-relevant failure probability": the JCSS PMC /
ISO 2394 annual targets are at most 4.7, and pf = Phi(-6) = 1e-9."""


def same_estimate(pf_a, cov_a, pf_b, cov_b) -> bool:
    """Two sampling estimates of one pf agree within 3 combined standard errors.

    Safe at pf = 0 (no failed sample: the CoV is undefined): two betas above `BETA_FLOOR`
    agree; a zero against a pf of decision-relevant size does not.
    """
    from assess.reliability.result import beta_from_pf

    if min(beta_from_pf(pf_a), beta_from_pf(pf_b)) >= BETA_FLOOR:
        return True
    if pf_a == 0.0 or pf_b == 0.0:
        return False
    return abs(pf_a - pf_b) <= 3.0 * math.hypot(cov_a * pf_a, cov_b * pf_b)


def test_same_estimate_is_safe_at_zero_and_one():
    assert same_estimate(0.0, math.nan, 1e-12, 0.5)          # both far beyond any target
    assert not same_estimate(0.0, math.nan, 1e-4, 0.1)        # a zero against a real pf
    assert same_estimate(1e-3, 0.05, 1.1e-3, 0.05)            # within 3 standard errors
    assert not same_estimate(1e-3, 0.01, 2e-3, 0.01)
    assert same_estimate(1.0, 0.0, 1.0, 0.0)                  # certain failure both


def test_beta_never_increases_and_remaining_life_is_consistent(prepared):
    site, update, _, corrosion = prepared
    curves = project_site(site, update, corrosion=corrosion, horizon_years=40, n_samples=1500,
                          seed=SEED)
    assert {c.member for c in curves} == set(site.members)
    for c in curves:
        finite = np.isfinite(c.beta)
        assert np.all(np.diff(c.pf) >= 0.0), (c.member, c.mode)
        assert np.all(np.diff(c.beta[finite]) <= 0.0), (c.member, c.mode)
        assert c.reference.startswith("annual")
        life = c.remaining_life
        if c.beta[0] < c.target.beta:
            assert life.status == ALREADY_BELOW
        elif np.all(c.beta >= c.target.beta):
            assert life.status == BEYOND
        else:
            k = int(np.argmax(c.beta < c.target.beta))
            assert c.years_from_assessment[k - 1] <= life.years <= c.years_from_assessment[k]
    # the top bars of an exposed deck (salts from above) lose reliability
    # (C3-C4: punching, hogging top bars); S3-02's bottom bars lie under the sheltered
    # soffit of the deck, which the deck-top chloride does not reach
    by_key = {(c.member, c.mode): c for c in curves}
    assert by_key[("C3-C4", "punching")].beta[-1] < by_key[("C3-C4", "punching")].beta[0] - 0.3
    assert by_key[("C3-C4", "punching")].section_loss["face"] == "top"
    assert by_key[("S3-02", "system")].section_loss["present_state_from"] == "corrosion model"
    assert age_at(site, site.site.assessment_date) > 50.0
