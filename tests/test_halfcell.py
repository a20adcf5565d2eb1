"""Half-cell potentials: ASTM C876 bands and the Bayesian probability of active corrosion."""

import numpy as np
import pytest
from scipy import stats

from assess.deterioration import halfcell
from assess.deterioration.defaults import HALF_CELL_LIKELIHOOD
from assess.errors import InputError

PARAMS = {"active_mean_mv": -420.0, "active_sd_mv": 60.0,
          "passive_mean_mv": -140.0, "passive_sd_mv": 90.0}


def test_astm_c876_bands():
    # ASTM C876 (from memory): > -200 mV CSE low, -200..-350 uncertain, < -350 high
    e = np.array([[-100.0, -199.9, -200.0], [-275.0, -350.0, -350.1]])
    np.testing.assert_array_equal(halfcell.astm_c876_class(e),
                                  [["low", "low", "uncertain"], ["uncertain", "uncertain", "high"]])


def test_likelihood_is_normal_density():
    e = np.linspace(-700, 0, 15)
    np.testing.assert_allclose(halfcell.potential_likelihood(e, "active", PARAMS),
                               stats.norm.pdf(e, -420.0, 60.0), rtol=1e-12)
    np.testing.assert_allclose(halfcell.potential_likelihood(e, "passive"),
                               stats.norm.pdf(e, HALF_CELL_LIKELIHOOD["passive_mean_mv"],
                                              HALF_CELL_LIKELIHOOD["passive_sd_mv"]), rtol=1e-12)


def test_posterior_equals_direct_bayes_formula():
    e = np.linspace(-600, -50, 12)[:, None]
    prior = np.array([0.01, 0.2, 0.5, 0.9])
    f_a = stats.norm.pdf(e, -420.0, 60.0)
    f_p = stats.norm.pdf(e, -140.0, 90.0)
    # Bayes' rule: P(a|E) = f(E|a) P(a) / (f(E|a) P(a) + f(E|p) (1 - P(a)))
    direct = f_a * prior / (f_a * prior + f_p * (1 - prior))
    got = halfcell.posterior_active_probability(e, prior, PARAMS)
    assert got.shape == (12, 4)
    np.testing.assert_allclose(got, direct, rtol=1e-10)


def test_posterior_is_monotone_and_bounded():
    e = np.linspace(-800, 100, 200)
    post = halfcell.posterior_active_probability(e, 0.3)
    # equal spreads: the likelihood ratio grows as the potential becomes more negative
    assert np.all(np.diff(post) < 0)
    assert np.all((post >= 0) & (post <= 1)) and np.all(np.isfinite(post))
    priors = np.linspace(0.05, 0.95, 19)
    assert np.all(np.diff(halfcell.posterior_active_probability(-300.0, priors)) > 0)
    np.testing.assert_array_equal(halfcell.posterior_active_probability(-500.0, [0.0, 1.0]),
                                  [0.0, 1.0])
    # far tail: the log-space form stays finite where the densities underflow
    assert halfcell.posterior_active_probability(-3000.0, 0.5) == pytest.approx(1.0)


def test_several_readings_equal_sequential_updates():
    readings = np.array([-380.0, -300.0, -410.0])
    joint = halfcell.posterior_active_probability(readings, 0.25, PARAMS, reading_axis=0)
    p = 0.25
    for e in readings:
        p = halfcell.posterior_active_probability(e, p, PARAMS)
    assert joint == pytest.approx(p, rel=1e-12)


def test_threshold_indication_posterior():
    pod, pfa = halfcell.detection_probabilities(-350.0, PARAMS)
    assert pod == pytest.approx(stats.norm.cdf(-350.0, -420.0, 60.0))
    assert pfa == pytest.approx(stats.norm.cdf(-350.0, -140.0, 90.0))
    prior = 0.2
    hit = halfcell.posterior_from_indication([True, False], prior, pod, pfa)
    assert hit[0] == pytest.approx(pod * prior / (pod * prior + pfa * (1 - prior)))
    assert hit[1] == pytest.approx((1 - pod) * prior
                                   / ((1 - pod) * prior + (1 - pfa) * (1 - prior)))
    # total probability: the average posterior over the indication equals the prior
    p_hit = pod * prior + pfa * (1 - prior)
    assert hit[0] * p_hit + hit[1] * (1 - p_hit) == pytest.approx(prior)


def test_invalid_inputs():
    with pytest.raises(InputError, match="state"):
        halfcell.potential_likelihood(-300.0, "pitting")
    with pytest.raises(InputError, match="prior_active"):
        halfcell.posterior_active_probability(-300.0, 1.5)
    with pytest.raises(InputError, match="passive_sd_mv"):
        halfcell.potential_likelihood(-300.0, "passive", {**PARAMS, "passive_sd_mv": 0.0})
