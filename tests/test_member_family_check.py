"""The posterior family checked at each member's own tail level.

References: the first-order marginal level of a quantity at the design point,
p = Phi(-beta sqrt(alpha^2)) (e.g. Madsen, Krenk & Lind, *Methods of Structural Safety*,
1986, ch. 5; from memory; scipy.stats.norm); for exact draws of a conjugate normal-gamma
population the predictive is the Student-t of the JCSS Probabilistic Model Code, Part 3.0
Annex A (scipy.stats.t), so the family is known exactly and must pass; draws whose sigma is a
lognormal mixture no gamma precision can follow must fail at a far level. Tolerances from the
raw estimate's own CoV (standard error of a mean of D draws).
"""

from __future__ import annotations

import types

import numpy as np
import pytest
from scipy import stats

from assess.priors.normal_gamma import NormalGamma
from assess.site.member_family import member_family_checks, member_family_warning
from assess.updating.family_check import (
    MEMBER_LEVEL_FLOOR,
    check_family_at_member,
    member_tail_level,
    raw_quantiles,
)

POSTERIOR = NormalGamma.from_jcss(m=3.5, n=10.0, s=0.12, nu=9.0)  # ln f_c after 10 cores


def conjugate_draws(seed, n=4000):
    """Synthetic test input: exact draws of (mu, sigma) from the normal-gamma posterior."""
    rng = np.random.default_rng(seed)
    sigma = 1.0 / np.sqrt(rng.gamma(POSTERIOR.shape, 1.0 / POSTERIOR.rate, n))
    return POSTERIOR.center + POSTERIOR.z_std * sigma * rng.standard_normal(n), sigma


def heavy_sigma_draws(seed, n=4000):
    """Synthetic test input: sigma lognormal, 5 % of the draws three times larger."""
    rng = np.random.default_rng(seed)
    heavy = rng.random(n) < 0.05
    sigma = np.where(heavy, rng.lognormal(np.log(0.30), 0.1, n),
                     rng.lognormal(np.log(0.10), 0.1, n))
    return 3.5 + 0.03 * rng.standard_normal(n), sigma


def test_member_level_is_the_first_order_marginal_probability():
    beta = np.array([3.1, 3.8, 4.7, 0.0, 9.0])
    alpha2 = np.array([0.25, 0.5, 0.64, 0.3, 1.0])
    expected = stats.norm.cdf(-beta * np.sqrt(alpha2))
    expected = np.clip(expected, MEMBER_LEVEL_FLOOR, 0.5)
    assert member_tail_level(beta, alpha2) == pytest.approx(expected, rel=1e-12)
    assert member_tail_level(-3.8, 0.5) == pytest.approx(stats.norm.cdf(-3.8 * 0.5**0.5))


@pytest.mark.parametrize("beta, alpha2", [(3.1, 0.3), (3.8, 0.5), (4.7, 0.6)])
def test_the_exact_family_passes_at_the_member_level_on_every_seed(beta, alpha2):
    level = float(stats.norm.cdf(-beta * alpha2**0.5))
    t = POSTERIOR.predictive()  # Student-t, JCSS PMC Part 3.0 Annex A
    for seed in range(2):
        mu, sigma = conjugate_draws(seed)
        family = NormalGamma.fit_draws(mu, sigma)
        for side in ("lower", "upper"):
            check = check_family_at_member(family, mu, sigma, beta=beta, alpha2=alpha2,
                                           side=side)
            assert check.levels == pytest.approx((level,), rel=1e-12)
            assert check.passed, (seed, side, check)
            # and within 4 CoVs of the draws (plus 5 % for the fit's own sampling error)
            assert abs(np.log(check.ratios[0])) < 4.0 * check.cov[0] + 0.05
        # the draws' tail at the Student-t quantile of the member's level (closed form) is
        # that level, within 4 CoVs of the mean of D terms
        terms = stats.norm.cdf(t.ppf(level), mu, sigma)
        cov = terms.std(ddof=1) / np.sqrt(terms.size) / terms.mean()
        assert abs(terms.mean() / level - 1.0) < 4.0 * cov
        # and the raw quantile the check uses hits the level (log-linear interpolation on
        # a 100-point grid: 5 %, as for the fixed levels)
        y = raw_quantiles([level], mu, sigma, "lower")[0]
        assert stats.norm.cdf(y, mu, sigma).mean() == pytest.approx(level, rel=0.05)


def test_heavy_sigma_draws_fail_far_out_and_pass_near_the_median():
    for seed in range(3):
        mu, sigma = heavy_sigma_draws(seed)
        family = NormalGamma.fit_draws(mu, sigma)
        far = check_family_at_member(family, mu, sigma, beta=4.7, alpha2=0.8)
        assert not far.passed and far.ratios[0] < 1.0 / 1.5, (seed, far)
        near = check_family_at_member(family, mu, sigma, beta=1.0, alpha2=0.2)
        assert near.passed, (seed, near)


def member_case(draws, *, alpha2=0.5, beta=4.2, x_fc=20.0, local_concrete=False):
    """Stand-ins for a site, an update and one member result (the wiring only; the
    numbers of the check come from the functions tested above)."""
    population = NormalGamma.fit_draws(*draws)
    after = {"L3": {"concrete": population, "steel": population}}
    local = {"L3": {(None, "bottom"): {"concrete": NormalGamma.fit_draws(*draws)}}} \
        if local_concrete else {}
    update = types.SimpleNamespace(
        after=after, before={"L3": {}}, after_local=local, idata=object(),
        family_checks={"L3/concrete/lower": {}, "L3/steel/lower": {}})
    site = types.SimpleNamespace(members={"B3-04": types.SimpleNamespace(tension_face="bottom")})
    form = types.SimpleNamespace(
        beta=beta, importance_factors={"fc": alpha2 * 0.6, "fc.location": alpha2 * 0.3,
                                       "fc.precision": alpha2 * 0.1, "fy": 0.001},
        design_point_x={"fc": x_fc, "fy": 500.0})
    result = types.SimpleNamespace(member="B3-04", mode="flexure", zone="L3", form_after=form)
    return site, update, [result]


def test_site_wiring_checks_the_quantities_that_matter_on_the_design_point_side():
    draws = heavy_sigma_draws(0)
    site, update, results = member_case(draws)
    checks = member_family_checks(site, update, results, draws=lambda z, q: draws)
    # fy has alpha^2 = 0.001 < 0.01: not checked; fc merged 0.5 at beta 4.2
    assert [(c.quantity, c.check.side) for c in checks] == [("concrete", "lower")]
    assert checks[0].check.levels[0] == pytest.approx(stats.norm.cdf(-4.2 * 0.5**0.5))
    text = member_family_warning(checks)
    assert "B3-04 flexure: concrete in zone L3 (lower tail" in text
    assert "more than a factor 1.5" in text
    # a design point above the median (exp(3.5) = 33 MPa) is checked on the upper tail
    site, update, results = member_case(draws, x_fc=60.0)
    assert member_family_checks(site, update, results,
                                draws=lambda z, q: draws)[0].check.side == "upper"
    # a member on a local population has no zone draws to compare: not checked here
    site, update, results = member_case(draws, local_concrete=True)
    assert member_family_checks(site, update, results, draws=lambda z, q: draws) == []


def test_a_level_beyond_what_the_draws_resolve_is_said_so():
    # beta 4.5 with alpha^2 = 1: p = Phi(-4.5) = 3.4e-6; 4000 draws of the exact family
    # estimate that tail with a CoV above 0.3, so the check is "not resolved", not "passed"
    draws = conjugate_draws(2)
    site, update, results = member_case(draws, alpha2=1.0, beta=4.5)
    checks = member_family_checks(site, update, results, draws=lambda z, q: draws)
    assert checks[0].check.levels[0] == pytest.approx(stats.norm.cdf(-4.5))
    assert checks[0].check.cov[0] > 0.3 and not checks[0].resolved
    assert "too few to check" in member_family_warning(checks)


def test_site_wiring_is_silent_for_the_exact_family():
    draws = conjugate_draws(1)
    site, update, results = member_case(draws)
    checks = member_family_checks(site, update, results, draws=lambda z, q: draws)
    assert len(checks) == 1 and checks[0].check.passed and checks[0].resolved
    assert member_family_warning(checks) is None
