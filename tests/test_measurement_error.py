"""Measurement error as an explicit term: the update and the value-of-information programmes.

References: the normal model with a known additive error y = x + e (e.g. Gelman et al.,
*Bayesian Data Analysis*, 3rd ed., 2013, ch. 3 and 18: a reading's variance is
sigma^2 + sd_e^2); the marginal posterior of sigma under a flat mean prior, written
below in closed form and evaluated with scipy/numpy quadrature.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import tomllib
from scipy import integrate, stats

from assess.priors.normal_gamma import NormalGamma
from assess.site.worth_decision import CoverSurvey
from assess.updating.measurement_error import (
    MEASUREMENT_ERRORS,
    PROGRAMME_RECORD_KINDS,
    QUANTITY_RECORD_KINDS,
    measurement_sd,
    quantity_measurement_sd,
)
from assess.updating.models import hierarchical_normal_model
from assess.worth.decision_file import parse_decision_setup
from assess.worth.programmes import BreakoutSurvey, CoreSampling

TRUE_SD, ERROR_SD, N = 4.0, 3.0, 400  # [mm]-like units; synthetic test input
# A vague normal-gamma (n, nu -> 0): prior p(mu, sigma) ~ 1/sigma^2 in (mu, sigma), see below.
VAGUE = NormalGamma.from_jcss(m=40.0, n=1e-8, s=1.0, nu=1e-8, log_scale=False)


def readings(seed=3):
    """Synthetic test input, not a reference: true values N(40, 4^2) plus errors N(0, 3^2)."""
    rng = np.random.default_rng(seed)
    return 40.0 + TRUE_SD * rng.standard_normal(N) + ERROR_SD * rng.standard_normal(N)


def test_every_method_states_a_value_and_a_source():
    for kind in ("cores", "tensile", "cover", "carbonation", "chloride", "halfcell",
                 "section_loss"):
        entry = MEASUREMENT_ERRORS[kind]
        assert entry.sd > 0 and entry.source and entry.unit
    assert MEASUREMENT_ERRORS["cover"].sd == 3.0  # BS 1881-204 (from memory), see the module


def test_model_log_density_adds_the_error_in_quadrature():
    """pooling "none": y ~ N(mu, sqrt(sigma^2 + e^2)) with the normal-gamma prior (scipy)."""
    y = readings()[:20]
    prior = NormalGamma.from_jcss(m=41.0, n=3.0, s=5.0, nu=10.0, log_scale=False)
    model = hierarchical_normal_model(y, np.zeros(y.size, int), ["Z"], prior, pooling="none",
                                      measurement_sd=ERROR_SD)
    logp = model.compile_logp(jacobian=False)
    likelihood = model.compile_logp(vars=[model["y"]], jacobian=False)
    for q, z in ((0.05, 0.3), (0.2, -1.0), (0.01, 2.0)):
        sigma = 1.0 / math.sqrt(q)
        mu = prior.center + z * sigma
        expected_like = stats.norm.logpdf(y, mu, math.hypot(sigma, ERROR_SD)).sum()
        expected = (stats.gamma.logpdf(q, prior.shape, scale=1.0 / prior.rate)
                    + stats.norm.logpdf(z, prior.z_mean, prior.z_std) + expected_like)
        point = {"precision_log__": np.array([math.log(q)]), "zloc": np.array([z])}
        assert float(likelihood(point)) == pytest.approx(expected_like, rel=1e-12)
        # abs 1e-5: PyTensor's gamma log-density and scipy's differ by about 2e-6
        assert float(logp(point)) == pytest.approx(expected, abs=1e-5)


def closed_form_sigma_posterior(y, sigma_grid, error_sd):
    """p(sigma | y) for p(mu, sigma) ~ 1/sigma^2 and y_i ~ N(mu, v), v = sigma^2 + e^2.

    Integrating mu out of the normal likelihood gives v^(-(n-1)/2) exp(-S / (2 v)),
    S = sum (y_i - ybar)^2 (Gelman et al. 2013, sect. 3.2, with v in place of sigma^2)."""
    n, s = y.size, float(np.sum((y - y.mean()) ** 2))
    v = sigma_grid**2 + error_sd**2
    log_post = -2.0 * np.log(sigma_grid) - 0.5 * (n - 1) * np.log(v) - s / (2.0 * v)
    w = np.exp(log_post - log_post.max())
    return w / integrate.trapezoid(w, sigma_grid)


def test_population_sd_posterior_excludes_the_known_error():
    y = readings()
    model = hierarchical_normal_model(y, np.zeros(y.size, int), ["Z"], VAGUE, pooling="none",
                                      measurement_sd=ERROR_SD)
    logp = model.compile_logp(jacobian=False)
    sigma_grid = np.linspace(2.0, 6.5, 91)
    mu_grid = y.mean() + np.linspace(-1.5, 1.5, 61)
    # Model density in (q, z) -> density in (sigma, mu): |dq/dsigma| |dz/dmu| = 2 sigma^-4.
    log_post = np.array([[float(logp({"precision_log__": np.array([-2.0 * math.log(s)]),
                                       "zloc": np.array([(m - VAGUE.center) / s])}))
                          + math.log(2.0) - 4.0 * math.log(s) for m in mu_grid]
                         for s in sigma_grid])
    joint = np.exp(log_post - log_post.max())
    marginal = integrate.trapezoid(joint, mu_grid, axis=1)
    marginal /= integrate.trapezoid(marginal, sigma_grid)
    reference = closed_form_sigma_posterior(y, sigma_grid, ERROR_SD)
    mean_model = integrate.trapezoid(sigma_grid * marginal, sigma_grid)
    mean_ref = integrate.trapezoid(sigma_grid * reference, sigma_grid)
    sd_ref = math.sqrt(integrate.trapezoid((sigma_grid - mean_ref) ** 2 * reference,
                                           sigma_grid))
    # the model's posterior of sigma is the closed form (grid error only: 1 % of an sd)
    assert mean_model == pytest.approx(mean_ref, abs=0.01 * sd_ref)
    # and it is about the true spread (4), not the spread of the readings (5): 4 posterior sd
    assert abs(mean_ref - TRUE_SD) < 4.0 * sd_ref
    assert abs(mean_ref - math.hypot(TRUE_SD, ERROR_SD)) > 4.0 * sd_ref


def test_the_update_and_the_programmes_use_the_same_values():
    # materials populations
    for quantity, kind in QUANTITY_RECORD_KINDS.items():
        assert quantity_measurement_sd(quantity) == MEASUREMENT_ERRORS[kind].sd
    # programme classes default to the update's value
    assert CoreSampling("c", 1.0, 3, 0, 1).measurement_sd == measurement_sd("cores")
    assert BreakoutSurvey("b", 1.0, 3, 0, 1).measurement_sd == measurement_sd("section_loss")
    assert CoverSurvey("v", 1.0, 3, 0, 1).measurement_sd == measurement_sd("cover")
    # a decision file without measurement_sd takes the update's value for every kind
    data = tomllib.loads("""
        failure_cost = 1e6
        horizon = 10
        discount_rate = 0.02
        [alternatives.replace]
        cost = 1000
        [[programmes]]
        name = "c"
        kind = "cores"
        count = 3
        cost = 1
        [[programmes]]
        name = "b"
        kind = "breakouts"
        count = 3
        cost = 1
        [[programmes]]
        name = "v"
        kind = "cover"
        count = 3
        cost = 1
    """)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        setup = parse_decision_setup(data)
    for spec in setup.programmes:
        assert spec.measurement_sd == measurement_sd(PROGRAMME_RECORD_KINDS[spec.kind])
    # a different value is kept (the user's choice) but warned about
    data["programmes"][0]["measurement_sd"] = 0.12
    with pytest.warns(UserWarning, match="differs from the measurement error"):
        setup = parse_decision_setup(data)
    assert setup.programmes[0].measurement_sd == 0.12


def test_an_error_is_carried_to_the_scale_of_the_model():
    # delta method: sd(ln(x + e)) ~ sd_e / x for a linear error on a log-scale model
    covers = np.array([30.0, 35.0, 40.0])
    assert quantity_measurement_sd("cover", log=True, values=covers) == pytest.approx(3.0 / 35.0)
    assert quantity_measurement_sd("cover", log=False, values=covers) == 3.0
    assert quantity_measurement_sd("concrete", log=True, values=covers) == 0.05


def test_a_planned_half_cell_survey_counts_its_effective_readings():
    """The value-of-information survey uses the weighting of the update: n_eff of the count
    on the default grid (closed form of n_eff checked in tests/test_halfcell_grid.py)."""
    from assess.site.worth_decision import effective_half_cell_count
    from assess.updating.spatial import effective_number, grid_coordinates

    for count in (1, 10, 40, 200):
        expected = max(1, round(effective_number(*grid_coordinates(count))))
        assert effective_half_cell_count(count) == expected
    assert effective_half_cell_count(40) < 40 / 2  # 40 readings at 0.5 m: far fewer


def test_carbonation_reports_the_front_scatter_without_the_reading_error():
    """front_scatter = sqrt(max(sigma^2 - e^2, 0)): the reading error (1 mm) taken out of
    the whole scatter of a reading (error and front in quadrature)."""
    from assess.updating.carbonation import CarbonationPriors, carbonation_model

    priors = CarbonationPriors.from_exposure("sheltered soffit")
    model = carbonation_model([10.0, 12.0, 0.0], [30.0, 30.0, 40.0], [0, 0, 0], ["A"],
                              priors=priors)
    import pytensor

    scatter = pytensor.function([model["measurement_sd"]], model["front_scatter"])
    e = priors.reading_error_mm
    for sigma in (0.5, 1.0, 2.5):
        got = scatter(sigma)
        assert float(got) == pytest.approx(math.sqrt(max(sigma**2 - e**2, 0.0)), abs=1e-12)
