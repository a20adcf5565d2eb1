"""Gumbel pitting factor updated with measured pit depths (`assess.deterioration.pitting`).

Outside references:
- scipy.stats.gumbel_r: maximum-likelihood location with the scale fixed
  (``gumbel_r.fit(..., fscale=beta)``), the Gumbel CDF, and numerical quadrature
  of the predictive (scipy.integrate.quad) against the closed form;
- closed form of the gamma posterior of theta = exp(mu / beta) for the Gumbel with
  known scale (exponential family in theta; Gumbel 1958, from memory);
- published prior: Stewart 2004 (mu = 5.08, alpha = 1.02 for 125 mm, from memory).
"""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.deterioration.defaults import PITTING_FACTOR
from assess.deterioration.pitting import GumbelPitting, measured_pitting_factors
from assess.model import ProbabilisticModel

BETA = float(PITTING_FACTOR.params["scale"])


def test_vague_prior_gives_the_scipy_maximum_likelihood_location():
    data = stats.gumbel_r(loc=4.2, scale=BETA).rvs(size=300, random_state=np.random.default_rng(7))
    vague = GumbelPitting(BETA, 1e-12, 1e-300)
    post = vague.update(data)
    # beta ln E[theta] = beta ln(n / sum exp(-R/beta)) = the MLE of the location
    estimate = BETA * math.log(post.shape / post.rate)
    loc, scale = stats.gumbel_r.fit(data, fscale=BETA)  # scipy MLE with known scale
    assert scale == BETA
    assert estimate == pytest.approx(loc, abs=1e-6)


def test_posterior_location_covers_the_generating_value():
    # 25 synthetic data sets, each of 8 pits: the true location lies within 4 posterior sd
    prior = GumbelPitting.published()
    rng = np.random.default_rng(11)
    for _ in range(25):
        data = stats.gumbel_r(loc=3.5, scale=BETA).rvs(size=8, random_state=rng)
        post = prior.update(data)
        assert abs(post.location_mean - 3.5) < 4.0 * post.location_sd
        assert post.location_sd < prior.location_sd


def test_published_prior_is_centred_on_the_published_location():
    prior = GumbelPitting.published()
    assert prior.location_mean == pytest.approx(PITTING_FACTOR.params["location"], abs=1e-12)
    assert prior.n_measured == 0


def test_predictive_cdf_equals_quadrature_over_the_gamma_posterior():
    post = GumbelPitting.published().update([4.0, 5.5, 6.1, 3.2])
    gamma = stats.gamma(post.shape, scale=1.0 / post.rate)
    for length in (125.0, 1000.0):
        shift = BETA * math.log(length / 125.0)
        for r in (2.0, 4.0, 6.0, 9.0):

            def integrand(theta, r=r, shift=shift):
                cdf = stats.gumbel_r.cdf(r, loc=BETA * math.log(theta) + shift, scale=BETA)
                return cdf * gamma.pdf(theta)

            lo, hi = gamma.ppf(1e-12), gamma.ppf(1.0 - 1e-12)
            expected, _ = integrate.quad(integrand, lo, hi, limit=200)
            assert post.predictive_cdf(r, length) == pytest.approx(expected, abs=1e-7)
        q = np.array([0.01, 0.3, 0.5, 0.9, 0.999])
        np.testing.assert_allclose(
            post.predictive_cdf(post.predictive_ppf(q, length), length), q, rtol=1e-10
        )


def test_member_model_variables_follow_the_predictive():
    post = GumbelPitting.published().update([4.0, 5.5, 6.1])
    model = ProbabilisticModel()
    post.add_to_model(model, "pitting_factor", 500.0)
    r = model.sample(20000, seed=5)["pitting_factor"]
    result = stats.kstest(r, lambda x: post.predictive_cdf(x, 500.0))
    assert result.pvalue > 1e-3


def test_measured_factors_use_breakouts_with_real_uniform_loss():
    # P = (D0 - d_res)/2: 0.2 mm -> R = 1.0/0.2 = 5; 0.05 mm -> left out; pit 0 -> R = 1
    r = measured_pitting_factors([1.0, 0.8, 0.0], [12.0, 12.0, 16.0], [11.6, 11.9, 15.0])
    np.testing.assert_allclose(r, [5.0, 1.0])
