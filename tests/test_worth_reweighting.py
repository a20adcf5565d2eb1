"""Importance re-weighting of prior draws against the closed-form conjugate update.

Conjugate reference: JCSS Probabilistic Model Code, Part 3.0 "General principles",
Annex A (normal variable, unknown mean and standard deviation):
n'' = n' + n, nu'' = nu' + n, n'' m'' = n' m' + n m,
nu'' s''^2 + n'' m''^2 = nu' s'^2 + n' m'^2 + (n - 1) s^2 + n m^2,
predictive X = m'' + t_nu'' s'' sqrt(1 + 1/n''). Prior values: JCSS PMC Part 3.1, ln f_c of
ready-mixed C25 (m' = 3.65, n' = 3, s' = 0.12, nu' = 10). The normal-gamma prior is sampled
as precision ~ Gamma(nu'/2, rate nu' s'^2 / 2), mu | sigma ~ N(m', sigma^2 / n') (the
standard normal-gamma form of the same prior, from memory).
"""

import math

import numpy as np
import pytest
from scipy import stats

from assess.worth import (
    BreakoutSurvey,
    CoreSampling,
    DirectMeasurement,
    HalfCellSurvey,
    posterior_weights,
    summarise_readings,
)

M0, N0, S0, NU0 = 3.65, 3.0, 0.12, 10.0
LN_LIMIT = math.log(30.0)  # event "f_c < 30 MPa" at a random point of the zone


def _prior_draws(n_draws, seed):
    rng = np.random.default_rng(seed)
    precision = rng.gamma(NU0 / 2.0, 2.0 / (NU0 * S0 ** 2), n_draws)
    sigma = 1.0 / np.sqrt(precision)
    return np.column_stack([rng.normal(M0, sigma / math.sqrt(N0)), sigma])


def _jcss_posterior(n, mean, std):
    n2 = N0 + n
    nu2 = NU0 + n
    m2 = (N0 * M0 + n * mean) / n2
    s2 = math.sqrt((NU0 * S0 ** 2 + N0 * M0 ** 2 + (n - 1) * std ** 2 + n * mean ** 2
                    - n2 * m2 ** 2) / nu2)
    return m2, n2, s2, nu2


def _weighted_se(values, weights, ess):
    mean = weights @ values
    return math.sqrt(weights @ (values - mean) ** 2 / ess)


@pytest.mark.parametrize("n_cores", [3, 8])
def test_reweighted_posterior_matches_conjugate_update(n_cores):
    theta = _prior_draws(40_000, seed=4)
    programme = CoreSampling("cores", 0.0, n_cores, mean_column=0, sd_column=1,
                             measurement_sd=0.0)
    rng = np.random.default_rng(17)
    truth = theta[rng.integers(0, theta.shape[0], 4)]
    outcomes = programme.simulate(truth, rng)
    weights, ess = posterior_weights(programme.log_likelihood(outcomes, theta))
    pf_given_theta = stats.norm.cdf((LN_LIMIT - theta[:, 0]) / theta[:, 1])
    for j, (x_bar, sum_squares) in enumerate(outcomes):
        std = math.sqrt(sum_squares / (n_cores - 1))
        m2, n2, s2, nu2 = _jcss_posterior(n_cores, x_bar, std)
        w = weights[j]
        assert ess[j] > 500  # enough draws for the comparison to mean something
        # JCSS PMC 3.0 Annex A: posterior mean of mu is m''
        mu_mean = w @ theta[:, 0]
        assert abs(mu_mean - m2) <= 3.0 * _weighted_se(theta[:, 0], w, ess[j])
        # JCSS PMC 3.0 Annex A predictive: E[pf | data] = P(X < ln 30) = T_nu''(...)
        predictive = stats.t.cdf((LN_LIMIT - m2) / (s2 * math.sqrt(1.0 + 1.0 / n2)), nu2)
        assert abs(w @ pf_given_theta - predictive) <= 3.0 * _weighted_se(pf_given_theta, w,
                                                                          ess[j])


def test_weights_are_normalised_in_log_space():
    # log-likelihoods of -1e4 would underflow exp(); the log-space normalisation must not
    log_l = np.array([[-1.0e4, -1.0e4 + math.log(3.0)], [0.0, 0.0]])
    weights, ess = posterior_weights(log_l)
    np.testing.assert_allclose(weights, [[0.25, 0.75], [0.5, 0.5]], rtol=1e-12)
    # Kish (1965): ESS = 1 / sum w^2
    np.testing.assert_allclose(ess, [1.0 / (0.25 ** 2 + 0.75 ** 2), 2.0], rtol=1e-12)


def _difference_is_constant(a, b):
    diff = np.asarray(a) - np.asarray(b)
    return np.ptp(diff) <= 1e-9 * max(1.0, np.abs(diff).max())


def test_core_likelihood_equals_product_of_normal_densities():
    # Sufficiency (Fisher-Neyman): the likelihood of (x_bar, S) differs from the product of
    # the normal densities of the individual readings (scipy.stats.norm) by a constant.
    theta = _prior_draws(300, seed=8)
    readings = np.log([31.2, 27.5, 35.0, 29.9, 33.3])
    programme = CoreSampling("cores", 0.0, readings.size, 0, 1, measurement_sd=0.05)
    got = programme.log_likelihood(summarise_readings(readings), theta)
    total_sd = np.sqrt(theta[:, 1] ** 2 + 0.05 ** 2)
    reference = stats.norm.logpdf(readings[:, None], theta[:, 0], total_sd).sum(axis=0)
    assert got.shape == (300,) and _difference_is_constant(got, reference)


def test_breakout_and_direct_likelihoods_against_scipy():
    rng = np.random.default_rng(3)
    theta = np.column_stack([rng.normal(0.9, 0.03, 200), rng.uniform(0.02, 0.06, 200)])
    ratios = np.array([0.93, 0.87, 0.91])
    breakouts = BreakoutSurvey("b", 0.0, 3, 0, 1, measurement_sd=0.01)
    reference = stats.norm.logpdf(ratios[:, None], theta[:, 0],
                                  np.sqrt(theta[:, 1] ** 2 + 0.01 ** 2)).sum(axis=0)
    assert _difference_is_constant(breakouts.log_likelihood(summarise_readings(ratios), theta),
                                   reference)
    direct = DirectMeasurement("d", 0.0, 0, error_sd=0.02, n_repeats=3)
    reference = stats.norm.logpdf(ratios[:, None], theta[:, 0], 0.02).sum(axis=0)
    assert _difference_is_constant(direct.log_likelihood([ratios.mean()], theta), reference)


def test_half_cell_likelihood_is_binomial():
    # Indicator model (Faber & Sorensen 2002, from memory): count ~ binomial(k, q),
    # q = PoD P(active) + PFA (1 - P(active)); reference scipy.stats.binom.
    p_active = np.linspace(0.0, 1.0, 11)
    survey = HalfCellSurvey("h", 0.0, 20, 0, probability_of_detection=0.8,
                            probability_of_false_alarm=0.1)
    q = 0.8 * p_active + 0.1 * (1 - p_active)
    counts = np.array([[0.0], [7.0], [20.0]])
    got = survey.log_likelihood(counts, p_active[:, None])
    for row, count in zip(got, counts[:, 0]):
        assert _difference_is_constant(row, stats.binom.logpmf(count, 20, q))
    # P(active) given by a function of theta instead of a column: same likelihood
    mapped = HalfCellSurvey("h", 0.0, 20, lambda theta: theta[:, 0] ** 2, 0.8, 0.1)
    np.testing.assert_allclose(mapped.log_likelihood(counts, np.sqrt(p_active)[:, None]),
                               survey.log_likelihood(counts, p_active[:, None]), rtol=1e-12)
    simulated = survey.simulate(np.full((20_000, 1), 0.5), np.random.default_rng(0))
    # binomial mean k q = 20 * 0.45 = 9, sd of the mean sqrt(20 * 0.45 * 0.55 / 20000)
    assert abs(simulated.mean() - 9.0) <= 3.0 * math.sqrt(20 * 0.45 * 0.55 / 20_000)


def test_reweighted_update_agrees_with_a_full_mcmc_update():
    """The fast update of the preposterior loop against PyMC on the same simulated cores.

    Two sampled outcomes of 4 cores; the full update is NUTS on the normal-gamma
    model (assess.updating.models, pooling "none", 4 chains). Both estimate the
    same posterior mean of mu and the same E[pf | data]; the tolerance is 3
    combined Monte Carlo standard errors (reweighting: weighted sd / sqrt(ESS);
    MCMC: sd / sqrt(bulk ESS)).
    """
    from assess.priors.normal_gamma import NormalGamma
    from assess.updating.gate import require_convergence
    from assess.updating.models import group_draws, hierarchical_normal_model, sample_posterior

    prior = NormalGamma.from_jcss(M0, N0, S0, NU0)
    theta = _prior_draws(40_000, seed=8)
    n_cores = 4
    programme = CoreSampling("cores", 0.0, n_cores, mean_column=0, sd_column=1)
    rng = np.random.default_rng(23)
    for j in range(2):
        truth = theta[rng.integers(0, theta.shape[0], 1)]
        readings = truth[0, 0] + truth[0, 1] * rng.standard_normal(n_cores)
        outcome = summarise_readings(readings)
        weights, ess = posterior_weights(programme.log_likelihood(outcome[None, :], theta))
        w, ess = weights[0], float(ess[0])
        pf_given_theta = stats.norm.cdf((LN_LIMIT - theta[:, 0]) / theta[:, 1])

        # the programme's default measurement error is the update's (one source), so the
        # full update carries the same error term
        model = hierarchical_normal_model(readings, np.zeros(n_cores, int), ["zone"], prior,
                                          pooling="none",
                                          measurement_sd=programme.measurement_sd)
        idata = sample_posterior(model, seed=100 + j, draws=1000, tune=1000)
        report = require_convergence(idata, ["mu", "sigma"])
        mu, sigma = group_draws(idata, "zone")
        pf_mcmc = stats.norm.cdf((LN_LIMIT - mu) / sigma)

        for fast, full in ((theta[:, 0], mu), (pf_given_theta, pf_mcmc)):
            se = math.hypot(_weighted_se(fast, w, ess), full.std() / math.sqrt(report.min_ess_bulk))
            assert abs(w @ fast - full.mean()) <= 3.0 * se
