"""Carbonation-rate updating: recovery, a quadrature reference and the gate.

References
- Square-root-of-time law x_c = k sqrt(t) (Tuutti 1982; fib Bulletin 34 Annex B with
  W(t) = 1, from memory).
- With the reading sd known, the posterior of k in one zone is one-dimensional:
  p(k | x) proportional to lognormal prior x normal (or, for zero readings, normal-cdf)
  likelihood. Its mean by numerical quadrature with scipy.stats densities is the
  outside reference for the MCMC mean.
- Least squares through the origin, k_hat = sum(x sqrt t) / sum t: the posterior mean
  approaches it when the prior is weak relative to the data.
"""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.deterioration.carbonation import carbonation_depth
from assess.errors import ConvergenceError, InputError
from assess.updating.carbonation import CarbonationPriors, carbonation_model, fit_carbonation
from assess.updating.gate import require_convergence

KNOWN_SD = 1.5  # [mm] reading sd, known in the conjugate-like check
PRIORS = CarbonationPriors.from_exposure("sheltered soffit", measurement_sd_mm=KNOWN_SD)
TRUE_RATE = {"A": 3.5, "B": 0.3}  # [mm/sqrt(yr)]


def synthetic_depths(seed=7):
    """Synthetic test input, not a reference: phenolphthalein depths generated INSIDE the
    test from x = k sqrt(t) with known k and normal reading error (fixed seed), at two
    campaigns (ages 30 and 42 yr); negative readings are recorded as 0 mm."""
    rng = np.random.default_rng(seed)
    depth, age, zone = [], [], []
    for z, name in enumerate(("A", "B")):
        t = np.repeat([30.0, 42.0], 6)
        x = carbonation_depth(t, TRUE_RATE[name]) + KNOWN_SD * rng.standard_normal(t.size)
        depth.append(np.maximum(x, 0.0))
        age.append(t)
        zone.append(np.full(t.size, z))
    return np.concatenate(depth), np.concatenate(age), np.concatenate(zone)


@pytest.fixture(scope="module")
def fitted():
    depth, age, zone = synthetic_depths()
    assert (depth[zone == 1] == 0.0).any()  # zone B exercises the censored readings
    return fit_carbonation(depth, age, zone, ["A", "B"], priors=PRIORS, seed=4, draws=500,
                           tune=1000)


def quadrature_posterior_mean(x, t, priors):
    """Posterior mean and sd of k by quadrature (scipy densities, censoring at 0)."""
    prior = stats.lognorm(s=priors.rate_log_sd, scale=priors.rate_median)
    sd = priors.measurement_sd_mm

    k_grid = np.linspace(1e-4, 15.0, 30001)
    mu = k_grid[:, None] * np.sqrt(t)
    log_like = np.where(x > 0, stats.norm.logpdf(x, mu, sd), stats.norm.logcdf(-mu / sd))
    log_post = prior.logpdf(k_grid) + log_like.sum(axis=1)
    w = np.exp(log_post - log_post.max())
    norm = integrate.simpson(w, x=k_grid)
    mean = integrate.simpson(k_grid * w, x=k_grid) / norm
    var = integrate.simpson((k_grid - mean) ** 2 * w, x=k_grid) / norm
    return mean, math.sqrt(var)


@pytest.mark.slow
def test_rates_recovered_within_94_percent_intervals(fitted):
    for zone, true in TRUE_RATE.items():
        k = fitted.zone_draws(zone)["carbonation_rate"]
        low, high = np.quantile(k, [0.03, 0.97])
        assert low < true < high, (zone, low, high)


@pytest.mark.slow
def test_posterior_mean_matches_quadrature_and_least_squares(fitted):
    depth, age, zone = synthetic_depths()
    ess = fitted.gate.table
    for z, name in enumerate(("A", "B")):
        x, t = depth[zone == z], age[zone == z]
        k = fitted.zone_draws(name)["carbonation_rate"]
        mean, sd = quadrature_posterior_mean(x, t, PRIORS)
        mcse = k.std() / math.sqrt(ess[f"carbonation_rate[{name}]"]["ess_bulk"])
        assert abs(k.mean() - mean) < 4.0 * mcse, (name, k.mean(), mean, mcse)
        assert k.std() == pytest.approx(sd, rel=0.1)
    # Zone A has no zero reading: the data dominate the prior, so the posterior mean is
    # the least-squares estimate through the origin within one posterior sd.
    x, t = depth[zone == 0], age[zone == 0]
    k_hat = np.sum(x * np.sqrt(t)) / np.sum(t)
    k = fitted.zone_draws("A")["carbonation_rate"]
    assert abs(k.mean() - k_hat) < k.std()
    # and its sd is the least-squares standard error sigma / sqrt(sum t), within 10 %.
    assert k.std() == pytest.approx(KNOWN_SD / math.sqrt(np.sum(t)), rel=0.1)


@pytest.mark.slow
def test_convergence_gate_passes(fitted):
    assert fitted.gate.passed and fitted.gate.divergences == 0
    require_convergence(fitted.idata, ["carbonation_rate"], what="carbonation test")


def test_estimated_sd_model_log_density_matches_scipy():
    depth, age, zone = synthetic_depths()
    priors = CarbonationPriors.from_exposure("sheltered soffit")
    model = carbonation_model(depth, age, zone, ["A", "B"], priors=priors)
    log_k, sd = np.array([1.2, -1.0]), 2.2
    point = {"log_carbonation_rate": log_k, "measurement_sd_log__": math.log(sd)}
    mu = np.exp(log_k)[zone] * np.sqrt(age)
    expected = (stats.norm.logpdf(log_k, math.log(priors.rate_median), priors.rate_log_sd).sum()
                + stats.halfnorm.logpdf(sd, scale=priors.measurement_sd_scale_mm)
                + np.where(depth > 0, stats.norm.logpdf(depth, mu, sd),
                           stats.norm.logcdf(-mu / sd)).sum())
    # abs 1e-6: PyMC's normal log-cdf and scipy's agree to about 1e-8 per censored term.
    assert float(model.compile_logp(jacobian=False)(point)) == pytest.approx(expected, abs=1e-6)


@pytest.mark.slow
def test_short_run_fails_the_gate_naming_the_variable():
    depth, age, zone = synthetic_depths()
    with pytest.raises(ConvergenceError, match="carbonation_rate"):
        fit_carbonation(depth, age, zone, ["A", "B"], priors=PRIORS, seed=1, draws=30,
                        tune=30, chains=1)


def test_negative_depth_is_rejected():
    depth, age, zone = synthetic_depths()
    depth[2] = -1.0
    with pytest.raises(InputError, match="'depth_mm'.*Position 2"):
        carbonation_model(depth, age, zone, ["A", "B"], priors=PRIORS)
