"""Corrosion updating: Faraday section loss, half-cell mixture evidence and the gate.

References
- Faraday's law: 1 uA/cm2 = 0.0116 mm/yr of uniform penetration; A/A0 = (1 - 2P/D0)^2
  (assess.deterioration.corrosion, numpy, as the reference of the pytensor expression).
- Half-cell readings as indicators, f(E | active), f(E | passive) normal (Faber &
  Sorensen 2002, Struct. Saf. 24, from memory; illustrative numbers of
  assess.deterioration.defaults.HALF_CELL_LIKELIHOOD).
- With half-cell readings only, the posterior of ln t_i is one-dimensional; its mean
  by quadrature with scipy.stats densities is the outside reference for MCMC.
- Prior P(active at t) = Phi((ln t - m) / sqrt(s_ti^2 + s^2)): the normal-normal
  convolution, E[Phi((x - U)/s)] for U ~ N(m, s_ti^2).
- Break-outs opened at quantile q of the spatial scatter: the local initiation time is
  the q-quantile of the lognormal scatter about the zone median, scipy.stats.lognorm.ppf.
- Rate prior: median of the exposure-class lognormal, log-sd at least 1.0 (DuraCrete
  2000 CoV 1.3-1.5 of corrosion rates, from memory): sqrt(ln(1 + CoV^2)) in [0.97, 1.09].
"""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.deterioration.corrosion import (
    penetration_depth,
    residual_area_ratio,
    time_since_initiation,
)
from assess.deterioration.defaults import HALF_CELL_LIKELIHOOD
from assess.errors import InputError
from assess.updating.corrosion import (
    BREAKOUT_QUANTILE,
    HALF_CELL_READING_ERROR_MV,
    RATE_LOG_SD_MIN,
    SPATIAL_LOG_SD,
    CorrosionFit,
    CorrosionModelSettings,
    HalfCellData,
    SectionLossData,
    ZoneCorrosionPrior,
    breakout_initiation_factor,
    corrosion_model,
    fit_corrosion,
    residual_area_ratio_tensor,
)
from assess.updating.gate import require_convergence
from assess.updating.spatial import (
    CORRELATION_LENGTH_M,
    DEFAULT_GRID_SPACING_M,
    effective_number,
    grid_coordinates,
)

PRIOR_A = ZoneCorrosionPrior.from_exposure("exposed deck", initiation_median_years=15.0,
                                           initiation_log_sd=0.5)
PRIOR_B = ZoneCorrosionPrior.from_exposure("exposed deck", initiation_median_years=30.0,
                                           initiation_log_sd=0.5)
PRIORS = {"A": PRIOR_A, "B": PRIOR_B}
TRUE_A = {"corrosion_rate": 1.5, "initiation_time": 12.0}  # [uA/cm2], [yr]
TRUE_B_INITIATION = 12.0  # [yr]
SURVEY_AGE = 20.0  # [yr]
BAR_DIAMETER = 12.0  # [mm]


def breakout_initiation(zone_median, quantile=BREAKOUT_QUANTILE, s=SPATIAL_LOG_SD):
    """Local initiation time at a break-out: the q-quantile of LN(ln t_i, s) (scipy)."""
    return stats.lognorm(s=s, scale=zone_median).ppf(quantile)


def synthetic_section_loss(seed=11):
    """Synthetic test input, not a reference: A/A0 of five bars at each of two campaigns
    (25 and 40 yr) generated INSIDE the test from the uniform Faraday model with known
    i_corr and zone t_i, at break-outs opened at the default quantile 0.1 of the spatial
    scatter of initiation, and a normal reading error of 0.01 (fixed seed)."""
    rng = np.random.default_rng(seed)
    age = np.repeat([25.0, 40.0], 5)
    p = penetration_depth(TRUE_A["corrosion_rate"],
                          time_since_initiation(age, breakout_initiation(
                              TRUE_A["initiation_time"])))
    noise = 0.01 * rng.standard_normal(age.size)
    ratio = residual_area_ratio(BAR_DIAMETER, p, rule="uniform") + noise
    return SectionLossData(age_years=age, residual_area_ratio=ratio,
                           bar_diameter_mm=np.full(age.size, BAR_DIAMETER),
                           zone_index=np.zeros(age.size, int))


def synthetic_half_cell(zone_position, n=30, seed=12):
    """Synthetic test input, not a reference: n readings at the survey age, each location
    active with probability Phi(ln(t / t_i) / s) for the known t_i, its potential drawn
    from HALF_CELL_LIKELIHOOD of its state (fixed seed)."""
    rng = np.random.default_rng(seed)
    p_active = stats.norm.cdf(math.log(SURVEY_AGE / TRUE_B_INITIATION) / SPATIAL_LOG_SD)
    active = rng.random(n) < p_active
    h = HALF_CELL_LIKELIHOOD
    e = np.where(active, rng.normal(h["active_mean_mv"], h["active_sd_mv"], n),
                 rng.normal(h["passive_mean_mv"], h["passive_sd_mv"], n))
    return HalfCellData(age_years=np.full(n, SURVEY_AGE), potential_mv_cse=e,
                        zone_index=np.full(n, zone_position))


@pytest.fixture(scope="module")
def fitted() -> CorrosionFit:
    # Zone A: section loss only; zone B: half-cell readings only (independent a priori).
    # 1000 draws: t_i and i_corr of zone A are strongly correlated (intercept and slope).
    return fit_corrosion(["A", "B"], priors=PRIORS, seed=5,
                         section_loss=synthetic_section_loss(),
                         half_cell=synthetic_half_cell(1), draws=1000, tune=1000)


def half_cell_log_posterior_scipy(log_ti_grid, readings: HalfCellData, prior):
    """Reference log posterior of ln t_i (up to a constant) with scipy densities.

    One survey without coordinates: its readings sit on a square grid at the default
    spacing and enter with the weight n_eff / n of the tempered likelihood
    (assess.updating.spatial); each state's sd is widened by the reading error in
    quadrature (ASTM C876 precision, assess.updating.measurement_error)."""
    h = HALF_CELL_LIKELIHOOD
    e, t = np.asarray(readings.potential_mv_cse), np.asarray(readings.age_years)
    f_a = stats.norm.pdf(e, h["active_mean_mv"], math.hypot(h["active_sd_mv"],
                                                             HALF_CELL_READING_ERROR_MV))
    f_p = stats.norm.pdf(e, h["passive_mean_mv"], math.hypot(h["passive_sd_mv"],
                                                              HALF_CELL_READING_ERROR_MV))
    p = stats.norm.cdf((np.log(t) - log_ti_grid[:, None]) / SPATIAL_LOG_SD)
    weight = effective_number(*grid_coordinates(e.size, DEFAULT_GRID_SPACING_M),
                              CORRELATION_LENGTH_M) / e.size
    log_like = weight * np.log(p * f_a + (1 - p) * f_p).sum(axis=1)
    return log_like + stats.norm.logpdf(log_ti_grid, math.log(prior.initiation_median_years),
                                        prior.initiation_log_sd)


def grid_for(prior):
    m, s = math.log(prior.initiation_median_years), prior.initiation_log_sd
    return np.linspace(m - 8 * s, m + 8 * s, 4001)


def test_tensor_residual_ratio_equals_numpy_faraday_model():
    rng = np.random.default_rng(0)
    n = 300
    d0 = rng.uniform(6.0, 32.0, n)
    rate = rng.uniform(0.01, 30.0, n)
    age = rng.uniform(1.0, 80.0, n)
    t_i = rng.uniform(0.0, 60.0, n)
    expected = residual_area_ratio(d0, penetration_depth(rate, time_since_initiation(age, t_i)),
                                   rule="uniform")
    got = residual_area_ratio_tensor(d0, rate, age, t_i).eval()
    assert (age < t_i).any() and (expected == 0.0).any()  # no loss and full loss exercised
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-15)


def test_rate_prior_is_the_class_median_with_the_duracrete_spread():
    # assess.deterioration.defaults.CORROSION_RATE["exposed deck"]: mean 1.0, sd 0.5 uA/cm2,
    # i.e. a lognormal with log-sd sqrt(ln 1.25) = 0.47 and median exp(-s^2 / 2).
    s = math.sqrt(math.log1p(0.5**2))
    assert PRIOR_A.rate_median == pytest.approx(math.exp(-0.5 * s**2))
    # DuraCrete 2000 (from memory): CoV 1.3-1.5 -> log-sd 0.97-1.09; the table is narrower.
    assert math.sqrt(math.log1p(1.3**2)) <= RATE_LOG_SD_MIN <= math.sqrt(math.log1p(1.5**2))
    assert PRIOR_A.rate_log_sd == RATE_LOG_SD_MIN
    # "internal": mean 0.03, sd 0.02 uA/cm2 -> median 0.03 / sqrt(1 + (2/3)^2) = 0.025.
    internal = ZoneCorrosionPrior.from_exposure("internal", 80.0, 0.3)
    assert internal.rate_median == pytest.approx(0.03 / math.sqrt(1 + (0.02 / 0.03) ** 2))
    assert internal.rate_log_sd == RATE_LOG_SD_MIN


def test_breakout_factor_is_the_quantile_of_the_spatial_scatter():
    # Reference: scipy.stats.lognorm(s, scale=1).ppf(q), the q-quantile of exp(s eps).
    for q, s in ((0.1, 0.7), (0.25, 0.45), (0.5, 0.6), (0.9, 1.1)):
        assert breakout_initiation_factor(q, s) == pytest.approx(
            stats.lognorm(s=s, scale=1.0).ppf(q), rel=1e-12)
    assert breakout_initiation_factor(0.5, 0.7) == pytest.approx(1.0)  # random placement
    np.testing.assert_allclose(breakout_initiation_factor(0.1, np.array([0.5, 0.7])),
                               stats.lognorm(s=np.array([0.5, 0.7])).ppf(0.1), rtol=1e-12)
    with pytest.raises(InputError, match="breakout_quantile"):
        CorrosionModelSettings(breakout_quantile=1.0)
    with pytest.raises(InputError, match="spatial_log_sd"):
        CorrosionModelSettings(spatial_log_sd=0.0)


def test_section_loss_density_uses_the_breakout_initiation_time():
    # At a point, the model's log density is the sum of the scipy normal densities of the
    # ratios about the Faraday prediction at the break-out's local initiation time, plus
    # the two lognormal priors (scipy.stats.norm on the logs).
    data = synthetic_section_loss()
    sd, log_ti, log_rate = 0.02, math.log(14.0), math.log(1.3)
    for q in (0.1, 0.5):
        model = corrosion_model(["A"], priors={"A": PRIOR_A}, section_loss=data, ratio_sd=sd,
                                breakout_quantile=q)
        got = float(model.compile_logp()({"log_initiation_time": np.array([log_ti]),
                                          "log_corrosion_rate": np.array([log_rate])}))
        local = breakout_initiation(math.exp(log_ti), q)
        age = np.asarray(data.age_years)
        predicted = residual_area_ratio(
            BAR_DIAMETER, penetration_depth(math.exp(log_rate), time_since_initiation(age, local)),
            rule="uniform")
        expected = (stats.norm.logpdf(data.residual_area_ratio, predicted, sd).sum()
                    + stats.norm.logpdf(log_ti, math.log(PRIOR_A.initiation_median_years),
                                        PRIOR_A.initiation_log_sd)
                    + stats.norm.logpdf(log_rate, math.log(PRIOR_A.rate_median),
                                        PRIOR_A.rate_log_sd))
        assert got == pytest.approx(expected, rel=1e-9)


def test_half_cell_model_density_matches_scipy_mixture():
    readings = synthetic_half_cell(0)
    model = corrosion_model(["B"], priors={"B": PRIOR_B}, half_cell=readings)
    logp = model.compile_logp()
    grid = grid_for(PRIOR_B)[::200]
    got = np.array([float(logp({"log_initiation_time": np.array([u]),
                                "log_corrosion_rate": np.array([0.0])})) for u in grid])
    expected = half_cell_log_posterior_scipy(grid, readings, PRIOR_B)
    # The rate prior adds the same constant at every grid point.
    np.testing.assert_allclose(got - got[0], expected - expected[0], atol=1e-8)


def test_half_cell_evidence_moves_probability_of_activity_monotonically():
    prior_p = float(PRIOR_B.probability_active(SURVEY_AGE))
    grid = grid_for(PRIOR_B)
    posterior_p, medians = [], []
    for level in (-100.0, -275.0, -450.0):  # from clearly passive to clearly active
        readings = HalfCellData(age_years=np.full(10, SURVEY_AGE),
                                potential_mv_cse=np.full(10, level), zone_index=np.zeros(10, int))
        log_post = half_cell_log_posterior_scipy(grid, readings, PRIOR_B)
        w = np.exp(log_post - log_post.max())
        w /= integrate.simpson(w, x=grid)
        p_loc = stats.norm.cdf((math.log(SURVEY_AGE) - grid) / SPATIAL_LOG_SD)
        posterior_p.append(integrate.simpson(p_loc * w, x=grid))
        cdf = integrate.cumulative_simpson(w, x=grid, initial=0.0)
        medians.append(math.exp(np.interp(0.5, cdf, grid)))
    assert posterior_p[0] < prior_p < posterior_p[2]
    assert posterior_p[0] < posterior_p[1] < posterior_p[2]
    assert medians[0] > PRIOR_B.initiation_median_years > medians[2]
    assert medians[0] > medians[1] > medians[2]


@pytest.mark.slow
def test_section_loss_at_two_ages_recovers_rate_and_initiation(fitted):
    draws = fitted.zone_draws("A")
    for key, true in TRUE_A.items():
        low, high = np.quantile(draws[key], [0.03, 0.97])
        assert low < true < high, (key, low, high)
    # The data, not the prior, set the rate: the posterior is much narrower than the prior.
    assert np.log(draws["corrosion_rate"]).std() < 0.5 * PRIOR_A.rate_log_sd


@pytest.mark.slow
def test_half_cell_only_zone_moves_initiation_the_right_way(fitted):
    # Mostly active readings at 20 yr against a prior median of 30 yr: t_i must come down,
    # P(active) must go up, and the MCMC mean of ln t_i must equal the quadrature mean.
    t_i = fitted.zone_draws("B")["initiation_time"]
    assert np.median(t_i) < PRIOR_B.initiation_median_years
    assert fitted.probability_active("B", SURVEY_AGE) > PRIOR_B.probability_active(SURVEY_AGE)
    grid = grid_for(PRIOR_B)
    w = np.exp(half_cell_log_posterior_scipy(grid, synthetic_half_cell(1), PRIOR_B))
    mean = integrate.simpson(grid * w, x=grid) / integrate.simpson(w, x=grid)
    u = np.log(t_i)
    ess = fitted.gate.table["initiation_time[B]"]["ess_bulk"]
    assert abs(u.mean() - mean) < 4.0 * u.std() / math.sqrt(ess)


@pytest.mark.slow
def test_convergence_gate_passes(fitted):
    assert fitted.gate.passed and fitted.gate.divergences == 0
    require_convergence(fitted.idata, ["initiation_time", "corrosion_rate"],
                        what="corrosion test")


def test_prior_fitted_to_initiation_draws_recovers_lognormal():
    # Reference: scipy.stats.lognorm samples with known median and log-sd; the percentile
    # estimates have standard error about 1.5 s / sqrt(n) (normal order statistics).
    n, median, s = 40000, 25.0, 0.6
    draws = stats.lognorm(s=s, scale=median).rvs(size=n, random_state=np.random.default_rng(2))
    draws[:200] = np.inf  # a few draws never initiate
    prior = ZoneCorrosionPrior.from_initiation_draws("exposed deck", draws)
    tol = 3 * 1.5 * s / math.sqrt(n)
    assert abs(math.log(prior.initiation_median_years) - math.log(median)) < tol + 0.01 * s
    assert abs(prior.initiation_log_sd - s) < tol + 0.02 * s


def test_missing_zone_prior_and_bad_ratio_are_rejected():
    with pytest.raises(InputError, match="no entry for zone"):
        corrosion_model(["A", "C"], priors=PRIORS)
    data = synthetic_section_loss()
    bad = SectionLossData(data.age_years, np.where(np.arange(10) == 3, 1.5,
                                                   data.residual_area_ratio),
                          data.bar_diameter_mm, data.zone_index)
    with pytest.raises(InputError, match="Position 3"):
        corrosion_model(["A"], priors={"A": PRIOR_A}, section_loss=bad)
