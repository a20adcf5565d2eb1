"""MCMC updating against closed-form answers.

References
- JCSS Probabilistic Model Code, Part 3.0 "General principles", Annex A: the
  normal-gamma conjugate update and its Student-t predictive.
- EN 1990:2002 Annex D, D7.2 and Table D1 ("V unknown"): the 5 % characteristic
  value x_k = m - t_{n-1,0.95} s sqrt(1 + 1/n) on logs, the Bayesian predictive
  with a vague prior.
"""

import numpy as np
import pytest
from scipy import stats

from assess.errors import ConvergenceError
from assess.priors.normal_gamma import NormalGamma
from assess.updating.gate import check_convergence, require_convergence
from assess.updating.models import group_draws, hierarchical_normal_model, sample_posterior

# JCSS PMC Part 3.1, prior for ln f_c of ready-mixed C25: m'=3.65, n'=3, s'=0.12, nu'=10.
PRIOR_C25 = NormalGamma.from_jcss(3.65, 3.0, 0.12, 10.0, source="JCSS PMC 3.1 C25 ready-mixed")
# Six core strengths [MPa] as a lab might report them (test input, not a reference).
CORES = np.array([31.2, 27.5, 35.1, 29.8, 33.0, 26.4])


def quantile_tolerance(p, ess, density):
    """3 standard errors of a sample p-quantile: sqrt(p(1-p)/ESS) / f(q)."""
    return 3.0 * np.sqrt(p * (1 - p) / ess) / density


@pytest.fixture(scope="module")
def conjugate_run():
    y = np.log(CORES)
    model = hierarchical_normal_model(y, np.zeros(y.size, int), ["A"], PRIOR_C25, pooling="none")
    idata = sample_posterior(model, seed=11, draws=1000, tune=1000)
    return y, idata


def test_conjugate_posterior_and_predictive_fractile_match_student_t(conjugate_run):
    y, idata = conjugate_run
    report = require_convergence(idata, ["mu", "sigma"])
    closed = PRIOR_C25.update(y)
    mu, sigma = group_draws(idata, "A")
    p = closed.jcss
    # Posterior of mu is Student-t: m'' + t_nu'' s''/sqrt(n'') (JCSS Annex A).
    mu_post = stats.t(df=p["nu"], loc=p["m"], scale=p["s"] / np.sqrt(p["n"]))
    assert abs(mu.mean() - mu_post.mean()) < 3 * mu_post.std() / np.sqrt(report.min_ess_bulk)
    # 5 % fractile of the predictive strength.
    rng = np.random.default_rng(5)
    y_new = mu + sigma * rng.standard_normal(mu.size)
    predictive = closed.predictive()
    q_exact = predictive.ppf(0.05)
    tol = quantile_tolerance(0.05, min(report.min_ess_bulk, mu.size), predictive.pdf(q_exact))
    assert abs(np.quantile(y_new, 0.05) - q_exact) < tol


def test_fitted_family_recovers_conjugate_parameters(conjugate_run):
    y, idata = conjugate_run
    closed = PRIOR_C25.update(y).jcss
    fitted = NormalGamma.fit_draws(*group_draws(idata, "A")).jcss
    # Large-shape asymptotics of the gamma MLE: Var(k_hat) ~ 2 k^2 / N, so the relative
    # standard error of nu = 2k is sqrt(2/N); the same holds for n = 1/z_std^2. N = ESS.
    ess = check_convergence(idata, ["mu", "sigma"]).min_ess_bulk
    assert fitted["nu"] == pytest.approx(closed["nu"], rel=3 * np.sqrt(2.0 / ess))
    assert fitted["n"] == pytest.approx(closed["n"], rel=3 * np.sqrt(2.0 / ess))
    assert fitted["m"] == pytest.approx(closed["m"], abs=3 * closed["s"] / np.sqrt(closed["n"] * ess))


def test_vague_prior_characteristic_value_reproduces_en1990_annex_d():
    y = np.log(CORES)
    model = hierarchical_normal_model(y, np.zeros(y.size, int), ["A"], None, pooling="none")
    idata = sample_posterior(model, seed=7, draws=1000, tune=1000)
    report = require_convergence(idata, ["mu", "sigma"])
    mu, sigma = group_draws(idata, "A")
    rng = np.random.default_rng(9)
    y_new = mu + sigma * rng.standard_normal(mu.size)
    n = y.size
    # EN 1990 Annex D Table D1, V unknown, n = 6: k_n = 2.18.
    k_n = stats.t.ppf(0.95, n - 1) * np.sqrt(1 + 1 / n)
    assert k_n == pytest.approx(2.18, abs=0.01)
    x_k = y.mean() - k_n * y.std(ddof=1)
    predictive = stats.t(df=n - 1, loc=y.mean(), scale=y.std(ddof=1) * np.sqrt(1 + 1 / n))
    tol = quantile_tolerance(0.05, min(report.min_ess_bulk, mu.size), predictive.pdf(x_k))
    assert np.quantile(y_new, 0.05) == pytest.approx(x_k, abs=tol)


def test_gate_rejects_a_non_identifiable_model_and_names_the_variable():
    import pymc as pm

    with pm.Model() as model:
        a = pm.Flat("a")
        b = pm.Flat("b")
        pm.Normal("y", mu=a + b, sigma=1.0, observed=np.array([0.1, -0.3, 0.2]))
    idata = sample_posterior(model, seed=1, draws=200, tune=200, target_accept=0.8)
    with pytest.raises(ConvergenceError, match=r"(a|b): (R-hat|bulk ESS|tail ESS)"):
        require_convergence(idata, ["a", "b"])
