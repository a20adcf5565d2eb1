"""Run-time check of the posterior-to-reliability family against the raw draws.

References: for a conjugate normal-gamma population the predictive of a new Y is the
Student-t of the JCSS Probabilistic Model Code, Part 3.0 Annex A (scipy.stats.t), so the
family's tail must equal it; the raw draws' predictive is the mixture
(1/D) sum Phi((y - mu_d)/sigma_d) (scipy.stats.norm), its Monte Carlo CoV the standard
error of a mean.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from assess.priors.normal_gamma import NormalGamma
from assess.updating.family_check import (
    FAMILY_CHECK_FACTOR,
    check_family,
    family_tail,
    family_warning,
    raw_quantiles,
    raw_tail,
)

POSTERIOR = NormalGamma.from_jcss(m=3.5, n=10.0, s=0.12, nu=9.0)  # ln f_c after 10 cores


def conjugate_draws(seed, n=4000):
    """Synthetic test input: exact draws of (mu, sigma) from the normal-gamma posterior."""
    rng = np.random.default_rng(seed)
    sigma = 1.0 / np.sqrt(rng.gamma(POSTERIOR.shape, 1.0 / POSTERIOR.rate, n))
    return POSTERIOR.center + POSTERIOR.z_std * sigma * rng.standard_normal(n), sigma


def heavy_sigma_draws(seed, n=4000):
    """Synthetic test input: 5 % of the draws with a three times larger sigma, a tail of
    sigma that no gamma precision fitted to all draws can follow."""
    rng = np.random.default_rng(seed)
    heavy = rng.random(n) < 0.05
    sigma = np.where(heavy, rng.lognormal(np.log(0.30), 0.1, n),
                     rng.lognormal(np.log(0.10), 0.1, n))
    return 3.5 + 0.03 * rng.standard_normal(n), sigma


@pytest.mark.parametrize("side", ["lower", "upper"])
def test_family_tail_is_the_student_t_predictive_for_a_conjugate_population(side):
    t = POSTERIOR.predictive()  # Student-t, JCSS PMC Part 3.0 Annex A
    levels = np.array([1e-2, 1e-3, 1e-4, 1e-5])
    y = t.ppf(levels) if side == "lower" else t.isf(levels)
    assert family_tail(y, POSTERIOR, side) == pytest.approx(levels, rel=2e-3)


def test_raw_quantiles_hit_their_levels():
    mu, sigma = conjugate_draws(0)
    levels = [1e-2, 1e-3, 1e-4]
    for side in ("lower", "upper"):
        y = raw_quantiles(levels, mu, sigma, side)
        assert raw_tail(y, mu, sigma, side) == pytest.approx(levels, rel=0.05)
    # the raw tail is the scipy mixture
    y0 = 3.0
    assert raw_tail(y0, mu, sigma)[0] == pytest.approx(stats.norm.cdf(y0, mu, sigma).mean(),
                                                       rel=1e-12)


def test_matching_family_passes_on_every_seed():
    for seed in range(8):
        mu, sigma = conjugate_draws(seed)
        family = NormalGamma.fit_draws(mu, sigma)
        for side in ("lower", "upper"):
            check = check_family(family, mu, sigma, side=side)
            assert check.passed, (seed, side, check)
            # at 1e-2 the draws resolve the tail well: the family is within 10 %
            assert abs(check.ratios[0] - 1.0) < 0.1


def test_heavy_tailed_draws_fire_the_warning_on_every_seed():
    failures = []
    for seed in range(5):
        mu, sigma = heavy_sigma_draws(seed)
        check = check_family(NormalGamma.fit_draws(mu, sigma), mu, sigma)
        assert not check.passed, (seed, check)
        # the family is far lighter than the draws at 1e-4, beyond the draws' own CoV
        assert check.ratios[2] < 1.0 / FAMILY_CHECK_FACTOR
        failures.append(("L1", "concrete", check))
    text = family_warning(failures)
    assert "differs from the raw posterior draws by more than a factor 1.5" in text
    assert "concrete in zone L1 (lower tail" in text
    assert family_warning([]) is None


def test_lognormal_check_passes_on_lognormal_draws_and_fires_on_a_heavy_lower_tail():
    """Lognormal draws (scipy) fitted by their log mean and sd pass on every seed; draws
    with 5 % of early initiation times at a quarter of the median do not."""
    from assess.updating.family_check import check_lognormal_tail

    for seed in range(6):
        rng = np.random.default_rng(seed)
        t = stats.lognorm(s=0.3, scale=25.0).rvs(4000, random_state=rng)
        logs = np.log(t)
        assert check_lognormal_tail(logs.mean(), logs.std(ddof=1), t).passed
        assert check_lognormal_tail(logs.mean(), logs.std(ddof=1), t, side="upper").passed
        early = np.where(rng.random(4000) < 0.05, t / 4.0, t)
        logs = np.log(early)
        assert not check_lognormal_tail(logs.mean(), logs.std(ddof=1), early).passed
