"""Prior tables from design information and the normal-gamma update."""

import math
import warnings

import numpy as np
import pytest
from scipy import stats

from assess.errors import InputError
from assess.priors import (
    CONCRETE_PRIORS,
    MODEL_UNCERTAINTY,
    NormalGamma,
    bar_area_prior,
    concrete_prior,
    cover_prior,
    imposed_load_prior,
    looks_characteristic,
    model_uncertainty_prior,
    parse_concrete_class,
    predictive_cdf,
    predictive_lognormal,
    predictive_quantile,
    resistance_model_uncertainty,
    self_weight_prior,
    steel_yield_prior,
    superimposed_dead_prior,
    update_normal_gamma,
    update_normal_gamma_summary,
    warn_if_characteristic,
)

# JCSS PMC Part 3.1 prior table for ln f_c with the [computed] columns
# "median e^m'" and "predictive 5 %" [MPa].
JCSS_TABLE = [
    ("ready-mixed", "C15", 3.40, 3.0, 0.14, 10, 30.0, 22.4),
    ("ready-mixed", "C25", 3.65, 3.0, 0.12, 10, 38.5, 29.9),
    ("ready-mixed", "C35", 3.85, 3.0, 0.09, 10, 47.0, 38.9),
    ("ready-mixed", "C45", 3.98, 3.0, 0.07, 10, 53.5, 46.2),
    ("precast", "C25", 3.80, 3.0, 0.09, 10, 44.7, 37.0),
    ("precast", "C35", 3.95, 3.0, 0.08, 10, 51.9, 43.9),
    ("precast", "C45", 4.08, 4.0, 0.07, 10, 59.1, 51.3),
    ("precast", "C55", 4.15, 4.0, 0.05, 10, 63.4, 57.3),
]


@pytest.mark.parametrize("production, cls, m, n, s, nu, median, p05", JCSS_TABLE)
def test_concrete_prior_table_and_predictive_5_percent(production, cls, m, n, s, nu, median, p05):
    prior = concrete_prior(cls, production)
    assert (prior.m, prior.n, prior.s, prior.nu) == pytest.approx((m, n, s, nu), rel=1e-12)
    assert "JCSS" in prior.source
    assert math.exp(prior.m) == pytest.approx(median, abs=0.1)
    assert predictive_quantile(prior, 0.05) == pytest.approx(p05, abs=0.1)


# EN 1990:2002 Annex D Table D1, "V unknown" k_n for the 5 % fractile.
# Tolerance 0.015: the tabulated values are rounded (n = 20: table 1.76, t-formula 1.772).
EN1990_D1_V_UNKNOWN = {3: 3.37, 4: 2.63, 5: 2.33, 6: 2.18, 8: 2.00, 10: 1.92, 20: 1.76, 30: 1.73}


@pytest.mark.parametrize("n, k_n", sorted(EN1990_D1_V_UNKNOWN.items()))
def test_vague_prior_reproduces_en1990_table_d1(n, k_n):
    rng = np.random.default_rng(n)
    logs = rng.normal(3.6, 0.1, n)
    vague = NormalGamma.from_jcss(0.0, 0.0, 0.0, 0.0, source="vague")
    post = update_normal_gamma(vague, logs)
    assert post.n == n and post.nu == n - 1
    assert post.m == pytest.approx(logs.mean()) and post.s == pytest.approx(logs.std(ddof=1))
    # EN 1990 D7.2 lognormal form: X_k = exp(m_y - k_n s_y)
    k = (post.m - math.log(predictive_quantile(post, 0.05))) / post.s
    assert k == pytest.approx(k_n, abs=0.015)


def test_update_equals_textbook_normal_gamma_posterior():
    # Standard conjugate result (kappa, mu, alpha, beta) (from memory), with predictive
    # Student-t(2 alpha, mu, sqrt(beta (kappa + 1)/(alpha kappa))) evaluated with scipy.
    prior = concrete_prior("C25")
    logs = np.log([31.0, 35.5, 28.2, 33.9, 30.4])
    post = update_normal_gamma(prior, logs)
    kappa0, mu0, alpha0, beta0 = prior.n, prior.m, prior.nu / 2, prior.nu * prior.s ** 2 / 2
    n, xbar = logs.size, logs.mean()
    kappa = kappa0 + n
    mu = (kappa0 * mu0 + n * xbar) / kappa
    alpha = alpha0 + n / 2
    beta = beta0 + 0.5 * np.sum((logs - xbar) ** 2) + kappa0 * n * (xbar - mu0) ** 2 / (2 * kappa)
    assert post.n == kappa and post.m == pytest.approx(mu)
    assert post.nu == pytest.approx(2 * alpha) and post.s ** 2 == pytest.approx(2 * beta / post.nu)
    scale = math.sqrt(beta * (kappa + 1) / (alpha * kappa))
    for p in (0.001, 0.05, 0.5, 0.95):
        expected = math.exp(stats.t.ppf(p, 2 * alpha, loc=mu, scale=scale))
        assert predictive_quantile(post, p) == pytest.approx(expected, rel=1e-12)
    x = np.array([20.0, 30.0, 40.0])
    np.testing.assert_allclose(predictive_cdf(post, x),
                               stats.t.cdf(np.log(x), 2 * alpha, loc=mu, scale=scale), rtol=1e-12)


def test_sequential_updating_equals_batch():
    prior = concrete_prior("C35", "precast")
    a, b = np.log([41.0, 44.5, 39.8]), np.log([46.1, 40.2, 43.3, 45.0])
    batch = update_normal_gamma(prior, np.concatenate([a, b]))
    seq = update_normal_gamma(update_normal_gamma(prior, a), b)
    for name in ("m", "n", "s", "nu"):
        assert getattr(seq, name) == pytest.approx(getattr(batch, name), rel=1e-12)
    summary = update_normal_gamma_summary(prior, n=3, mean=a.mean(), std=a.std(ddof=1))
    assert summary.s == pytest.approx(update_normal_gamma(prior, a).s)


def test_predictive_quantile_and_cdf_are_inverse_and_lognormal_close():
    post = update_normal_gamma(concrete_prior("C25"), np.log([30.0, 34.0, 32.0, 29.0]))
    q = predictive_quantile(post, np.array([0.01, 0.05, 0.5]))
    np.testing.assert_allclose(predictive_cdf(post, q), [0.01, 0.05, 0.5], rtol=1e-10)
    mu, sigma = predictive_lognormal(post)
    # t with nu'' = 14: variance ratio nu/(nu - 2) (standard result) -> close at the median
    assert math.exp(mu) == pytest.approx(predictive_quantile(post, 0.5))
    assert sigma == pytest.approx(post.s * math.sqrt((1 + 1 / post.n) * post.nu / (post.nu - 2)))


def test_predictive_needs_enough_information():
    vague = NormalGamma.from_jcss(0.0, 0.0, 0.0, 0.0, "vague")
    with pytest.raises(InputError, match="two test results"):
        predictive_quantile(update_normal_gamma(vague, [3.5]), 0.05)
    with pytest.raises(InputError, match="at least one"):
        update_normal_gamma(vague, [])


def test_concrete_class_lookup_edge_cases():
    assert parse_concrete_class("C25/30") == 25 and parse_concrete_class("c 35") == 35
    assert concrete_prior("C25/30").m == 3.65
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # interpolation is a stated step, not a warning
        mid = concrete_prior("C30")
    assert "interpolated between C25 and C35" in mid.source
    assert mid.m == pytest.approx(3.75) and mid.s == pytest.approx(0.105)
    with pytest.warns(UserWarning, match="unconservative"):
        low = concrete_prior("C12")
    assert low.m == CONCRETE_PRIORS["ready-mixed"][15][0]
    with pytest.raises(InputError, match="production"):
        concrete_prior("C25", "in-situ")
    with pytest.raises(InputError, match="concrete class"):
        concrete_prior("strong")


def test_steel_yield_prior():
    # JCSS PMC 3.2: mean = nominal + 2 sigma, sigma = 30 MPa (sqrt(19^2 + 22^2 + 8^2) = 30.1)
    assert math.sqrt(19 ** 2 + 22 ** 2 + 8 ** 2) == pytest.approx(30.0, abs=0.15)
    b500 = steel_yield_prior("B500B")
    assert (b500.kind, b500.mean, b500.std) == ("normal", 560.0, 30.0)
    assert b500.cov == pytest.approx(0.054, abs=0.0005)  # computed
    assert steel_yield_prior("S410").mean == 470.0
    with pytest.raises(InputError, match="grade"):
        steel_yield_prior("mild")
    area = bar_area_prior()
    assert (area.mean, area.cov) == (1.0, 0.02)  # JCSS PMC 3.2 bar area CoV


def test_cover_prior_jcss_deviations():
    # JCSS PMC 3.10: slab top steel about 10 mm above nominal, sigma about 10 mm
    top = cover_prior(30.0, "slab", "top")
    assert (top.kind, top.mean, top.std) == ("lognormal", 40.0, 10.0)
    dist = top.to_scipy()
    assert dist.mean() == pytest.approx(40.0) and dist.std() == pytest.approx(10.0)
    assert dist.cdf(0.0) == 0.0  # bounded below
    beam = cover_prior(35.0, "beam", "bottom", distribution="gamma")
    assert beam.mean == 30.0  # deviation mean -5 (midpoint of -10..0)
    assert beam.to_scipy().std() == pytest.approx(7.5)
    assert cover_prior(40.0, "column").mean == 42.5
    with pytest.raises(InputError, match="no cover model"):
        cover_prior(30.0, "slab", "side")


def test_self_weight_prior_matches_simulation():
    # Product of independent normals: gamma ~ N(25, 1.0), h ~ N(250.75, 5.5) mm (JCSS 3.10:
    # mu_Y = 0.003*250 = 0.75 mm, sigma_Y = 4 + 0.006*250 = 5.5 mm). Monte Carlo check with
    # tolerance 4 standard errors of the estimators.
    prior = self_weight_prior(250.0)
    n = 200_000
    rng = np.random.default_rng(2024)
    g = rng.normal(25.0, 1.0, n) * rng.normal(250.75, 5.5, n) / 1000.0
    assert prior.mean == pytest.approx(6.26875)
    assert abs(g.mean() - prior.mean) < 4 * prior.std / math.sqrt(n)
    assert abs(g.std() - prior.std) < 4 * prior.std / math.sqrt(2 * n)


def test_superimposed_dead_prior():
    assert superimposed_dead_prior(1.5).cov == pytest.approx(0.10)
    assert superimposed_dead_prior(1.5, thickness_measured=False).cov == pytest.approx(0.20)


def test_imposed_load_gumbel_and_period_shift():
    # 50-year Gumbel, mean 0.6 q_k, CoV 0.35 (Eurocode calibration studies, from memory)
    q50 = imposed_load_prior(2.5, "F", 50)
    assert q50.kind == "gumbel" and q50.mean == pytest.approx(1.5) and q50.cov == pytest.approx(0.35)
    # Max-stability, checked independently with scipy: F_T(x) = F_50(x)^(T/50)
    q100 = imposed_load_prior(2.5, "F", 100)
    x = np.array([1.0, 2.0, 3.0, 4.0])
    np.testing.assert_allclose(q100.to_scipy().cdf(x), q50.to_scipy().cdf(x) ** 2, rtol=1e-10)
    assert q100.std == pytest.approx(q50.std)
    # annual CoV 0.30 -> 50-year CoV 0.157 (computed)
    annual_to_50 = imposed_load_prior(2.5, "F", 50, mean_ratio=0.3, cov=0.30, model_period_years=1)
    assert annual_to_50.cov == pytest.approx(0.157, abs=0.001)


def test_imposed_load_refuses_invalid_down_scaling():
    with pytest.raises(InputError, match="valid for reference periods"):
        imposed_load_prior(2.5, "F", 1)
    with pytest.warns(UserWarning, match="outside the range"):
        imposed_load_prior(4.0, "F", 50)


def test_model_uncertainty_table_and_pairings():
    # JCSS PMC Part 3.9
    assert MODEL_UNCERTAINTY["jcss_rc_bending"][:3] == ("lognormal", 1.2, 0.15)
    assert MODEL_UNCERTAINTY["jcss_rc_shear"][:3] == ("lognormal", 1.4, 0.25)
    jcss = model_uncertainty_prior("jcss_rc_shear")
    assert jcss.to_scipy().mean() == pytest.approx(1.4) and jcss.cov == pytest.approx(0.25)
    assert resistance_model_uncertainty("shear", "mean").mean == 1.0
    # both coefficient routes give the same mean capacity: 0.23 * 1.0 = 0.18 * (0.23/0.18)
    assert 0.18 * resistance_model_uncertainty("shear", "characteristic").mean == pytest.approx(0.23)
    assert resistance_model_uncertainty("shear", "characteristic", key="jcss_rc_shear").mean == 1.4
    with pytest.raises(InputError, match="counted twice"):
        resistance_model_uncertainty("shear", "mean", key="jcss_rc_shear")
    with pytest.raises(InputError, match="counted twice"):
        resistance_model_uncertainty("punching", "mean", key="jcss_rc_shear")
    with pytest.raises(InputError, match="MODEL_UNCERTAINTY"):
        model_uncertainty_prior("unknown")


def test_looks_characteristic():
    assert looks_characteristic(30, "concrete_strength")
    assert not looks_characteristic(38.5, "concrete_strength")
    assert looks_characteristic(500.0, "steel_yield") and not looks_characteristic(560.0, "steel_yield")
    assert looks_characteristic(2.5, "imposed_load")
    with pytest.warns(UserWarning, match="mean value"):
        assert warn_if_characteristic(25.0, "concrete_strength", "f_c mean")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert not warn_if_characteristic(33.0, "concrete_strength", "f_c mean")


def test_prior_sampling_is_seeded():
    prior = steel_yield_prior("B500")
    a, b = prior.sample(1000, seed=3), prior.sample(1000, seed=3)
    np.testing.assert_array_equal(a, b)
    assert a.shape == (1000,)


def test_insitu_transformation_jcss_parameters():
    """JCSS PMC Part 3.1 (read): f_c = alpha(t, tau) f_co^lambda Y1, alpha = alpha1(tau) alpha2(t),
    alpha1 = 0.8 + 0.2 exp(-0.04 tau), alpha2 = 0.6 + 0.12 ln t, lambda = 0.96, Y1 LN(1, 0.06)."""
    from assess.priors import insitu

    assert (insitu.LAMBDA, insitu.Y1_COV) == (0.96, 0.06)
    # alpha2(28 days) = 0.6 + 0.12 ln 28 = 0.99986: the standard test age
    assert insitu.alpha2(28.0) == pytest.approx(0.6 + 0.12 * math.log(28.0), rel=1e-12)
    assert insitu.alpha2(28.0) == pytest.approx(1.0, abs=2e-4)
    assert insitu.alpha2(365.0) == pytest.approx(1.30799, abs=1e-5)  # hand: 0.6 + 0.12 * 5.89990
    assert insitu.alpha1(0.0) == 1.0 and insitu.alpha1(1e6) == pytest.approx(0.8)
    assert insitu.alpha1(10.0) == pytest.approx(0.8 + 0.2 * math.exp(-0.4), rel=1e-12)
    assert insitu.alpha(365.0, 10.0) == pytest.approx(insitu.alpha1(10.0) * insitu.alpha2(365.0))
    # ln Y1 of a lognormal with mean 1, CoV 0.06 (closed form)
    mu1, s1 = insitu.y1_log_parameters()
    assert stats.lognorm(s1, scale=math.exp(mu1)).mean() == pytest.approx(1.0, rel=1e-12)
    assert stats.lognorm(s1, scale=math.exp(mu1)).std() == pytest.approx(0.06, rel=1e-12)

    f_co = concrete_prior("C25")  # JCSS table: m' 3.65, n' 3, s' 0.12, nu' 10
    age = 52 * 365.25  # older than the cap: alpha2 at 365 days
    f_c = insitu.insitu_strength_prior(f_co, age)
    a = insitu.alpha2(365.0)
    # centre: ln alpha + lambda m' + E[ln Y1]; scatter within the structure lambda s'
    assert f_c.m == pytest.approx(math.log(a) + 0.96 * 3.65 + mu1, rel=1e-12)
    assert f_c.s == pytest.approx(0.96 * 0.12, rel=1e-12) and f_c.nu == 10
    # predictive variance of ln f_c equals the exact one of ln alpha + lambda ln f_co + ln Y1:
    # lambda^2 Var_t[ln f_co] + Var[ln Y1], with Var_t = s'^2 (1 + 1/n') nu'/(nu' - 2)
    exact = 0.96**2 * f_co.predictive().var() + s1**2
    assert f_c.predictive().var() == pytest.approx(exact, rel=1e-10)
    # and its mean: E[ln f_c] = ln alpha + lambda m' + E[ln Y1]
    assert f_c.predictive().mean() == pytest.approx(math.log(a) + 0.96 * 3.65 + mu1, rel=1e-12)
    # a young structure (100 days) uses alpha2(100); load duration enters through alpha1
    young = insitu.insitu_strength_prior(f_co, 100.0, load_duration_days=1e6)
    assert young.m - f_c.m == pytest.approx(math.log(0.8 * insitu.alpha2(100.0) / a), rel=1e-12)
    # Monte Carlo of the JCSS product f_co^lambda * alpha * Y1 with f_co from the JCSS
    # Student-t: the 5 % quantile of the moment-matched population matches within 4 sigma
    rng = np.random.default_rng(3)
    n = 200_000
    ln_fco = f_co.predictive().rvs(size=n, random_state=rng)
    ln_fc = math.log(a) + 0.96 * ln_fco + rng.normal(mu1, s1, n)
    q_mc = np.quantile(ln_fc, 0.05)
    dens = stats.gaussian_kde(ln_fc[:20_000])(q_mc)[0]
    se = math.sqrt(0.05 * 0.95 / n) / dens  # standard error of a sample quantile
    assert f_c.predictive().ppf(0.05) == pytest.approx(q_mc, abs=4 * se)
