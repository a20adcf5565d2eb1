"""Probability of corrosion initiation: vectorised sampling against independent references."""

import math

import numpy as np
import pytest
from scipy import special, stats

from assess.deterioration import chloride
from assess.deterioration.defaults import (
    AGEING_EXPONENT,
    CONVECTION_ZONE_DEPTH,
    CRITICAL_CHLORIDE,
    TEMPERATURE_COEFFICIENT,
    DistributionSpec,
)
from assess.deterioration.initiation import (
    first_crossing_time,
    initiation_probability,
    sample_initiation_times,
)
from assess.errors import InputError

T0 = 28.0 / 365.25


def car_park_deck():
    """Illustrative deck parameters: fib 34 (from memory) tables plus invented site values."""
    return {
        "cover_mm": DistributionSpec("lognormal", {"mean": 45.0, "sd": 10.0}),
        "critical_chloride": CRITICAL_CHLORIDE,
        "surface_chloride": DistributionSpec("lognormal", {"mean": 3.0, "sd": 1.2}),
        "d_app_ref_mm2_per_year": DistributionSpec("lognormal", {"mean": 315.6, "sd": 63.1}),
        "age_ref_years": T0,
        "ageing_exponent": AGEING_EXPONENT["GGBS"],
        "initial_chloride": 0.05,
        "delta_x_mm": CONVECTION_ZONE_DEPTH["splash"],
        "temperature_coefficient_k": TEMPERATURE_COEFFICIENT,
        "annual_mean_temperature_k": stats.norm(283.0, 3.0),
    }


def brute_force_initiated_fraction(ages, n, chunk, seed):
    """Independent numpy code of the same model: draw, evaluate C(cover, t), compare to C_crit."""
    rng = np.random.default_rng(seed)

    def lognormal(mean, sd, size):
        s2 = math.log(1 + (sd / mean) ** 2)
        return rng.lognormal(math.log(mean) - s2 / 2, math.sqrt(s2), size)

    def beta4(mean, sd, lo, hi, size):
        m, v = (mean - lo) / (hi - lo), (sd / (hi - lo)) ** 2
        common = m * (1 - m) / v - 1
        return lo + (hi - lo) * rng.beta(m * common, (1 - m) * common, size)

    hits = np.zeros(len(ages))
    for _ in range(n // chunk):
        cover = lognormal(45.0, 10.0, chunk)
        c_crit = beta4(0.6, 0.15, 0.2, 2.0, chunk)
        c_s = lognormal(3.0, 1.2, chunk)
        d_ref = lognormal(315.6, 63.1, chunk)
        a = beta4(0.45, 0.20, 0.0, 1.0, chunk)
        dx = beta4(8.9, 5.6, 0.0, 50.0, chunk)
        b_e = rng.normal(4800.0, 700.0, chunk)
        t_real = rng.normal(283.0, 3.0, chunk)
        k_e = np.exp(b_e * (1 / 293.0 - 1 / t_real))
        for j, age in enumerate(ages):
            d_app = k_e * d_ref * (T0 / age) ** a
            z = np.maximum(cover - dx, 0.0) / (2 * np.sqrt(d_app * age))
            content = 0.05 + (c_s - 0.05) * special.erfc(z)
            hits[j] += np.count_nonzero(content >= c_crit)
    return hits / n


def test_initiation_probability_matches_brute_force_monte_carlo():
    ages = np.array([5.0, 15.0, 40.0])
    n_ref = 10**7
    p_ref = brute_force_initiated_fraction(ages, n_ref, 10**6, seed=20240601)
    result = initiation_probability(ages, car_park_deck(), n=10**6, seed=11)
    assert result.probability.shape == ages.shape
    se_ref = np.sqrt(p_ref * (1 - p_ref) / n_ref)
    combined = np.sqrt(result.standard_error**2 + se_ref**2)
    # both are binomial estimates of the same probability: agree within 3 standard errors
    assert np.all(np.abs(result.probability - p_ref) <= 3 * combined), (result.probability, p_ref)
    assert np.all(np.diff(result.probability) > 0)


def test_only_cover_random_has_closed_form_probability():
    # With only the cover normal, P(t_i <= t) = Phi((x*(t) - mu) / sigma), where x*(t) is the
    # depth at which C(x, t) = C_crit: x* = dx + 2 erfcinv(r) sqrt(D_ref t_ref^a t^(1-a))
    mu, sigma, c_s, c_crit, c_0, d_ref, a, dx = 40.0, 8.0, 2.5, 0.6, 0.05, 250.0, 0.3, 6.0
    ages = np.array([3.0, 10.0, 30.0])
    r = (c_crit - c_0) / (c_s - c_0)
    x_star = dx + 2 * special.erfcinv(r) * np.sqrt(d_ref * T0**a * ages ** (1 - a))
    expected = stats.norm.cdf((x_star - mu) / sigma)
    dists = {"cover_mm": stats.norm(mu, sigma), "critical_chloride": c_crit,
             "surface_chloride": c_s, "d_app_ref_mm2_per_year": d_ref, "age_ref_years": T0,
             "ageing_exponent": a, "initial_chloride": c_0, "delta_x_mm": dx}
    result = initiation_probability(ages, dists, n=400_000, seed=5, chunk=100_000)
    se = np.sqrt(expected * (1 - expected) / result.n_samples)
    assert np.all(np.abs(result.probability - expected) <= 3 * se)


def test_carbonation_probability_closed_form():
    # t_i = (cover/k)^2 <= t  <=>  cover <= k sqrt(t): P = Phi((k sqrt(t) - mu) / sigma)
    k, mu, sigma = 4.0, 30.0, 6.0
    ages = np.array([20.0, 50.0, 80.0])
    expected = stats.norm.cdf((k * np.sqrt(ages) - mu) / sigma)
    dists = {"cover_mm": DistributionSpec("normal", {"mean": mu, "sd": sigma}),
             "rate_mm_per_sqrt_year": k}
    result = initiation_probability(ages, dists, n=300_000, seed=9, model="carbonation")
    se = np.sqrt(expected * (1 - expected) / result.n_samples)
    assert np.all(np.abs(result.probability - expected) <= 3 * se)


def test_sampled_times_agree_with_probability_and_are_reproducible():
    dists = car_park_deck()
    times = sample_initiation_times(dists, 20_000, seed=3)
    again = sample_initiation_times(dists, 20_000, seed=3)
    np.testing.assert_array_equal(times, again)
    result = initiation_probability([10.0, 30.0], dists, n=20_000, seed=3, chunk=20_000)
    np.testing.assert_array_equal(result.probability,
                                  [np.mean(times <= 10.0), np.mean(times <= 30.0)])
    assert result.seed == 3


def test_bisection_matches_closed_form_inverse():
    rng = np.random.default_rng(4)
    n = 500
    cover, c_s = rng.uniform(20, 60, n), rng.uniform(1.0, 4.0, n)
    c_crit, d_ref, a = rng.uniform(0.3, 0.9, n), rng.uniform(50, 500, n), rng.uniform(0, 0.7, n)
    closed = chloride.initiation_time(cover, c_crit, c_s, d_ref, T0, a)

    def content(age):
        return chloride.chloride_content(cover, age, c_s, d_ref, T0, a)

    solved = first_crossing_time(content, c_crit, max_age_years=1e4, tolerance_years=1e-7)
    finite = closed < 1e4
    np.testing.assert_allclose(solved[finite], closed[finite], rtol=0, atol=2e-7)
    assert np.all(np.isinf(solved[~finite]))


def test_bad_distribution_dict_names_the_key():
    dists = car_park_deck()
    dists["cover"] = 40.0
    with pytest.raises(InputError, match="cover"):
        initiation_probability(10.0, dists, n=10, seed=1)
    with pytest.raises(InputError, match="rate_mm_per_sqrt_year"):
        initiation_probability(10.0, {"cover_mm": 30.0}, n=10, seed=1, model="carbonation")
    with pytest.raises(InputError, match="temperature"):
        initiation_probability(10.0, {**car_park_deck(), "temperature_factor": 1.0}, n=10,
                               seed=1)


@pytest.mark.parametrize("spec", [
    CRITICAL_CHLORIDE, AGEING_EXPONENT["CEM I"], CONVECTION_ZONE_DEPTH["splash"],
    DistributionSpec("lognormal", {"mean": 3.0, "sd": 1.2})])
def test_distribution_specs_have_their_published_moments(spec):
    # fib 34 states Beta variables by mean, sd and bounds (from memory); check the conversion
    dist = spec.to_scipy()
    assert dist.mean() == pytest.approx(spec.params["mean"], rel=1e-12)
    assert dist.std() == pytest.approx(spec.params["sd"], rel=1e-12)
    if spec.kind == "beta":
        assert dist.support() == pytest.approx((spec.params["lower"], spec.params["upper"]))


def test_impossible_beta_spread_is_rejected():
    with pytest.raises(InputError, match="too large"):
        DistributionSpec("beta", {"mean": 0.5, "sd": 0.6, "lower": 0.0, "upper": 1.0})
