"""The two bands of the remaining life: parameter uncertainty and sampling error.

Closed-form reference (outside reference: the normal distribution, scipy.stats): a
resistance R ~ N(m, s_R) whose mean m is itself uncertain, m ~ N(m0, s_m) (the "posterior"
of the parameter), a load S ~ N(mu_S, s_S) and a linear loss of resistance c t. Given m,
beta(t | m) = (m - c t - mu_S) / sqrt(s_R^2 + s_S^2) (Cornell 1969), so the remaining life
given m is T(m) = (m - mu_S - beta_T sqrt(s_R^2 + s_S^2)) / c, normal with mean
(m0 - mu_S - beta_T sqrt(.)) / c and standard deviation s_m / c: its 5 % and 95 % points,
and those of beta(t | m), are closed forms. The predictive curve (m integrated out) has
beta(t) = (m0 - c t - mu_S) / sqrt(s_m^2 + s_R^2 + s_S^2).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from assess.distributions import make_distribution
from assess.life.crossing import crossing_times, target_crossing_time
from assess.model import ProbabilisticModel
from assess.site.projection import (
    CROSSES,
    RemainingLife,
    beta_band,
    estimate_curves,
    parameter_band,
    remaining_life,
)

M0, S_M, S_R, MU_S, S_S, C = 3.0, 0.15, 0.2, 1.0, 0.3, 0.02  # [-], [-], [-], [-], [-], [1/yr]
TARGET = 3.2
SIGMA = math.hypot(S_R, S_S)
TIMES = np.arange(81.0)
Z05 = stats.norm.ppf(0.05)


def life_given(m):
    return (m - MU_S - TARGET * SIGMA) / C


def model():
    out = ProbabilisticModel()
    out.add("m", make_distribution("normal", mean=M0, std=S_M))
    out.add_conditional("R", "normal", ["m"],
                        lambda v: {"mean": v["m"], "std": np.full_like(v["m"], S_R)})
    out.add("S", make_distribution("normal", mean=MU_S, std=S_S))
    return out


def limit_state_at(x, t):
    return (x["R"] - C * t - x["S"])[:, None]


def estimate(seed, draws, n_samples=2000):
    return estimate_curves(model(), limit_state_at, TIMES, {"g": [0]}, mode_names=["g"],
                           n_samples=n_samples, seed=seed, parameters=["m"],
                           n_parameter_draws=draws)


def test_parameter_band_matches_the_closed_form_quantiles():
    draws = 200
    result = estimate(11, draws)
    lower, upper, life_low, life_high = parameter_band(result.parameter_pf["g"], TIMES, TARGET)
    # closed-form 5 % / 95 % points of T(m) and of beta(t | m)
    exact_low, exact_high = life_given(M0 + Z05 * S_M), life_given(M0 - Z05 * S_M)
    beta_low = (M0 + Z05 * S_M - C * TIMES - MU_S) / SIGMA
    beta_high = (M0 - Z05 * S_M - C * TIMES - MU_S) / SIGMA
    # standard error of a 5 % sample quantile of K draws: sqrt(p (1 - p) / K) / phi(z_p) in
    # units of the spread (asymptotic order-statistic variance, from memory); 4 of them plus
    # the conditional estimates' own noise (CoV of pf about 0.1 -> 0.05 in beta, 0.9 yr)
    quantile_se = math.sqrt(0.05 * 0.95 / draws) / stats.norm.pdf(Z05)
    tol_life = 4 * quantile_se * S_M / C + 0.9
    tol_beta = 4 * quantile_se * S_M / SIGMA + 0.05
    assert life_low == pytest.approx(exact_low, abs=tol_life)
    assert life_high == pytest.approx(exact_high, abs=tol_life)
    finite = np.isfinite(upper)
    assert finite.sum() > 60
    assert np.all(np.abs(lower - beta_low) <= tol_beta), np.max(np.abs(lower - beta_low))
    assert np.all(np.abs(upper[finite] - beta_high[finite]) <= tol_beta)
    # the predictive curve sits inside the parameter band, and its sampling band is far
    # narrower: the two bands answer different questions
    predictive = (M0 - C * TIMES - MU_S) / math.hypot(S_M, SIGMA)
    beta, s_low, s_high = beta_band(result.pf["g"], result.cov["g"])
    assert np.all(np.abs(beta - predictive) <= 1.5 * (s_high - beta) + 1e-9)  # 3 se
    life = remaining_life(TIMES, beta, s_low, s_high, TARGET, (life_low, life_high))
    assert life.status == CROSSES
    assert life.latest - life.earliest < 0.25 * (life.parameter_high - life.parameter_low)


def test_conditional_estimates_average_to_the_predictive_pf():
    # Law of total probability: E_m[pf(t | m)] = pf(t) (closed form of the predictive curve).
    # Checked at three times with 4 standard errors of the mean over the K draws (their
    # spread includes the conditional estimates' own noise).
    draws = 200
    result = estimate(12, draws)
    conditional = result.parameter_pf["g"]
    for j in (0, 40, 80):
        exact = stats.norm.sf((M0 - C * TIMES[j] - MU_S) / math.hypot(S_M, SIGMA))
        mean = conditional[:, j].mean()
        se = conditional[:, j].std(ddof=1) / math.sqrt(draws)
        assert abs(mean - exact) <= 4 * se, (j, mean, exact, se)


def test_parameter_band_covers_the_generating_life_counted_over_seeds():
    # Each seed: a fresh band from K = 40 draws and one "true" m drawn from the distribution
    # that generated it. With sample quantiles X(2), X(38) of 40 draws, the expected content
    # of the band is 36/41 = 0.878 (order statistics of a continuous law), so the misses are
    # binomial(k, 0.122); asserted at the binomial 99.9 % point (scipy.stats.binom).
    k = 30
    rng = np.random.default_rng(5)
    truths = M0 + S_M * rng.standard_normal(k)
    misses = 0
    for seed, m_true in enumerate(truths):
        result = estimate(100 + seed, 40, n_samples=1200)
        _, _, low, high = parameter_band(result.parameter_pf["g"], TIMES, TARGET)
        misses += not low <= life_given(m_true) <= high
    assert misses <= stats.binom.ppf(0.999, k, 1 - 36 / 41)
    # it can fail: the same bands against lives shifted by 3 spreads of T(m) miss nearly always


def test_the_band_would_miss_a_shifted_truth():
    result = estimate(3, 40, n_samples=1200)
    _, _, low, high = parameter_band(result.parameter_pf["g"], TIMES, TARGET)
    assert not low <= life_given(M0 + 3 * S_M) <= high
    assert not low <= life_given(M0 - 3 * S_M) <= high


def test_crossing_times_agrees_with_the_scalar_version():
    rng = np.random.default_rng(2)
    times = np.arange(21.0)
    curves = 5.0 - rng.uniform(0.0, 0.3, size=(50, 1)) * times[None, :]
    curves[0] = 3.0  # starts below
    curves[1] = 9.0  # never crosses
    curves[2, 4:] = -np.inf
    got = crossing_times(times, curves, 4.2)
    want = np.array([target_crossing_time(times, row, 4.2) for row in curves])
    assert np.array_equal(np.isnan(got), np.isnan(want))
    assert np.allclose(got[~np.isnan(got)], want[~np.isnan(want)])


def test_remaining_life_names_both_bands():
    life = RemainingLife("crosses target", 19.9, 17.6, 21.3, 50.0, 12.0, math.inf)
    assert life.text() == "19.9 yr (parameters 12.0->50 yr; sampling 17.6-21.3 yr)"
    payload = life.to_dict()
    assert payload["parameter_high"] is None and payload["parameter_high_beyond_horizon"]
    assert payload["sampling_band"] == "17.6-21.3 yr"
    assert RemainingLife("beyond horizon", math.nan, math.nan, math.nan, 50.0).text() == \
        "more than 50 yr"
