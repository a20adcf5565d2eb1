"""Marginal distributions: moments, far tails and messages, with scipy.stats as the reference."""

import math

import numpy as np
import pytest
from scipy import special, stats

from assess.distributions import KINDS, make_distribution, weibull_shape_from_cov
from assess.errors import InputError

# (kind, extra keywords, mean, std): values typical of the car-park example
# (strength [MPa], cover [mm], load effects [kN/m2], log-strength [-]).
MOMENT_CASES = [
    ("normal", {}, 30.0, 4.5),
    ("lognormal", {}, 30.0, 4.5),
    ("gumbel", {}, 3.0, 0.9),
    ("weibull", {}, 5.0, 3.0),
    ("weibull", {}, 40.0, 2.0),
    ("gamma", {}, 45.0, 9.0),
    ("uniform", {}, 2.0, 0.5),
    ("beta", {"lower": 0.0, "upper": 100.0}, 45.0, 10.0),
    ("student_t", {"nu": 5.0}, 3.4, 0.2),
]


def scipy_reference(kind, p):
    """Independent scipy object built from the native parameters (scipy's own conventions)."""
    if kind == "normal":
        return stats.norm(p["mu"], p["sigma"])
    if kind == "lognormal":
        return stats.lognorm(p["sigma_ln"], scale=math.exp(p["mu_ln"]))
    if kind == "gumbel":
        return stats.gumbel_r(p["loc"], p["scale"])
    if kind == "weibull":
        return stats.weibull_min(p["shape"], scale=p["scale"])
    if kind == "gamma":
        return stats.gamma(p["shape"], scale=p["scale"])
    if kind == "uniform":
        return stats.uniform(p["lower"], p["upper"] - p["lower"])
    if kind == "beta":
        return stats.beta(p["alpha"], p["beta"], loc=p["lower"], scale=p["upper"] - p["lower"])
    if kind == "truncated_normal":
        return stats.truncnorm((p["lower"] - p["mu"]) / p["sigma"],
                               (p["upper"] - p["mu"]) / p["sigma"], p["mu"], p["sigma"])
    if kind == "student_t":
        return stats.t(p["nu"], p["loc"], p["scale"])
    raise AssertionError(kind)


@pytest.mark.parametrize("kind, extra, mean, std", MOMENT_CASES)
def test_moments_to_native_reproduce_requested_moments(kind, extra, mean, std):
    dist = make_distribution(kind, mean=mean, std=std, **extra)
    reference = scipy_reference(kind, dist.params)  # scipy moments are the reference
    assert reference.mean() == pytest.approx(mean, rel=1e-12, abs=0)
    assert reference.std() == pytest.approx(std, rel=1e-12, abs=0)
    assert dist.mean == pytest.approx(mean, rel=1e-12, abs=0)
    assert dist.std == pytest.approx(std, rel=1e-12, abs=0)


def test_every_kind_is_covered():
    covered = {case[0] for case in MOMENT_CASES} | {"truncated_normal", "deterministic"}
    assert covered == set(KINDS)


def test_lognormal_parameters_textbook():
    # sigma_ln^2 = ln(1 + V^2), mu_ln = ln(mean) - sigma_ln^2 / 2 (JCSS PMC Part 1 Annex; textbook)
    dist = make_distribution("lognormal", mean=30.0, std=4.5)
    assert dist.params["sigma_ln"] == pytest.approx(math.sqrt(math.log(1 + 0.15**2)), rel=1e-14)
    assert dist.params["mu_ln"] == pytest.approx(
        math.log(30.0) - 0.5 * math.log(1 + 0.15**2), rel=1e-14)


def test_gumbel_parameters_textbook():
    # alpha = pi / (sigma sqrt 6), u = mu - 0.5772 / alpha (textbook, from memory)
    dist = make_distribution("gumbel", mean=3.0, std=0.9)
    alpha = math.pi / (0.9 * math.sqrt(6))
    assert 1 / dist.params["scale"] == pytest.approx(alpha, rel=1e-14)
    assert dist.params["loc"] == pytest.approx(3.0 - 0.5772156649 / alpha, rel=1e-10)


@pytest.mark.parametrize("shape, cov", [
    (1.0, 1.0),  # exponential: CoV = 1 (closed form)
    (2.0, math.sqrt(4 / math.pi - 1)),  # Rayleigh: CoV^2 = 4/pi - 1 (closed form)
])
def test_weibull_shape_closed_forms(shape, cov):
    assert weibull_shape_from_cov(cov) == pytest.approx(shape, rel=1e-12)


def test_truncated_normal_mean_std_are_the_parent_ones():
    dist = make_distribution("truncated_normal", mean=30.0, std=10.0, lower=20.0, upper=60.0)
    assert dist.params == {"mu": 30.0, "sigma": 10.0, "lower": 20.0, "upper": 60.0}
    reference = stats.truncnorm(-1.0, 3.0, loc=30.0, scale=10.0)  # scipy reference
    assert dist.mean == pytest.approx(reference.mean(), rel=1e-12)
    assert dist.mean > 30.0  # truncating the lower tail raises the mean
    assert dist.std == pytest.approx(reference.std(), rel=1e-12)
    native = make_distribution("truncated_normal", mu=30.0, sigma=10.0, lower=20.0)
    assert native.cdf(20.0) == 0.0
    assert native.params["upper"] == math.inf


def test_native_parameters_accepted():
    dist = make_distribution("weibull", shape=2.0, scale=3.0)
    reference = stats.weibull_min(2.0, scale=3.0)
    x = np.array([0.5, 3.0, 9.0])
    np.testing.assert_allclose(dist.cdf(x), reference.cdf(x), rtol=1e-14)
    np.testing.assert_allclose(dist.pdf(x), reference.pdf(x), rtol=1e-14)
    np.testing.assert_allclose(dist.logsf(x), reference.logsf(x), rtol=1e-14)
    beta = make_distribution("beta", alpha=2.0, beta=3.0, lower=10.0, upper=50.0)
    # beta mean = lower + (upper - lower) alpha / (alpha + beta) (Johnson, Kotz & Balakrishnan)
    assert beta.mean == pytest.approx(10.0 + 40.0 * 2.0 / 5.0, rel=1e-14)


TAIL_CASES = MOMENT_CASES + [
    ("truncated_normal", {"lower": 0.0}, 30.0, 4.5),  # bound far out: 6.7 parent std below
    ("truncated_normal", {"lower": 20.0, "upper": 90.0}, 30.0, 10.0),
]


def exact_truncated_normal_quantiles(p, lower_tail_u):
    """Closed form x = mu + sigma Phi^-1(Phi(a) + p Z) (Johnson, Kotz & Balakrishnan 1994, 13.10).

    Reference for truncated_normal instead of scipy's truncnorm, whose isf is off
    by about 3e-7 relative at 1e-12 (scipy 1.17).
    """
    mu, sigma = p["mu"], p["sigma"]
    a, b = (p["lower"] - mu) / sigma, (p["upper"] - mu) / sigma
    mass = stats.norm.cdf(b) - stats.norm.cdf(a)
    lower = mu + sigma * stats.norm.ppf(stats.norm.cdf(a) + stats.norm.cdf(lower_tail_u) * mass)
    upper = mu + sigma * stats.norm.isf(stats.norm.sf(b) + stats.norm.cdf(lower_tail_u) * mass)
    return lower, upper


@pytest.mark.parametrize("kind, extra, mean, std", TAIL_CASES)
def test_far_tails_against_scipy(kind, extra, mean, std):
    dist = make_distribution(kind, mean=mean, std=std, **extra)
    reference = scipy_reference(kind, dist.params)
    u = np.array([-8.0, -5.0, -1.0, 0.0, 1.0, 5.0, 8.0])
    if kind == "truncated_normal":
        lower, upper = exact_truncated_normal_quantiles(dist.params, -np.abs(u))
        expected = np.where(u < 0, lower, upper)
    else:
        expected = np.where(u < 0, reference.ppf(stats.norm.cdf(np.minimum(u, 0))),
                            reference.isf(stats.norm.sf(np.maximum(u, 0))))
    x = dist.x_from_u(u)
    np.testing.assert_allclose(x, expected, rtol=1e-12)
    # Round trip. Near a bound where the density is not zero (uniform; truncated
    # normal bound within the body) the tail probability is a difference next to
    # a value of order 1, so double precision cannot resolve Phi(-8) = 6e-16 there;
    # those are checked to |u| = 5.
    near_bound = kind == "uniform" or (kind == "truncated_normal" and extra["lower"] == 20.0)
    resolvable = np.abs(u) <= 5 if near_bound else np.ones_like(u, bool)
    np.testing.assert_allclose(dist.u_from_x(x[resolvable]), u[resolvable], rtol=0, atol=1e-7)
    # Tails at the 1e-12 level, computed with sf/cdf (1 - cdf would be noise).
    # Tolerance: 1e-9, or the probability held by a few double spacings of x if larger.
    if kind == "truncated_normal":
        x_lower, x_upper = exact_truncated_normal_quantiles(dist.params, stats.norm.ppf(1e-12))
    else:
        x_lower, x_upper = reference.ppf(1e-12), reference.isf(1e-12)
    for x_tail, probability_of, u_tail in ((x_upper, dist.sf, stats.norm.isf(1e-12)),
                                           (x_lower, dist.cdf, stats.norm.ppf(1e-12))):
        resolution = 4 * np.spacing(abs(x_tail)) * float(dist.pdf(x_tail)) / 1e-12
        assert float(probability_of(x_tail)) == pytest.approx(
            1e-12, rel=max(1e-9, resolution), abs=0)
        assert float(dist.u_from_x(x_tail)) == pytest.approx(
            u_tail, rel=0, abs=max(1e-7, resolution / abs(u_tail)))


def test_x_from_u_beyond_where_cdf_rounds_to_one():
    # Phi(9) rounds to 1.0 in double precision, so ppf(cdf(u)) would give inf;
    # the isf branch keeps x = mu + 9 sigma exactly (normal closed form).
    dist = make_distribution("normal", mean=30.0, std=4.5)
    assert stats.norm.cdf(9.0) == 1.0
    assert dist.x_from_u(9.0) == pytest.approx(30.0 + 9.0 * 4.5, rel=1e-14)
    assert dist.u_from_x(30.0 + 9.0 * 4.5) == pytest.approx(9.0, rel=1e-12)


def test_array_parameters_broadcast_elementwise():
    means = np.array([20.0, 30.0, 40.0])
    stds = np.array([3.0, 4.5, 8.0])
    u = np.array([-2.0, 0.5, 3.0])
    for kind in ("normal", "lognormal", "gumbel", "weibull", "gamma"):
        vector = make_distribution(kind, mean=means, std=stds)
        x = vector.x_from_u(u)
        assert x.shape == (3,)
        for k in range(3):
            single = make_distribution(kind, mean=means[k], std=stds[k])
            assert x[k] == pytest.approx(float(single.x_from_u(u[k])), rel=1e-12)
        np.testing.assert_allclose(vector.mean, means, rtol=1e-12)
        np.testing.assert_allclose(vector.u_from_x(x), u, atol=1e-10)
    student = make_distribution("student_t", nu=np.array([3.0, 10.0, 30.0]), loc=means, scale=1.0)
    np.testing.assert_allclose(student.x_from_u(u), stats.t(np.array([3.0, 10.0, 30.0]), means).ppf(
        special.ndtr(u)), rtol=1e-10)


def test_deterministic_takes_no_u_and_broadcasts():
    dist = make_distribution("deterministic", value=25.0)
    assert not dist.is_random
    np.testing.assert_array_equal(dist.x_from_u(np.zeros(4)), np.full(4, 25.0))
    assert dist.mean == 25.0 and dist.std == 0.0
    assert make_distribution("deterministic", mean=3.0).params["value"] == 3.0
    assert dist.cdf(24.9) == 0.0 and dist.cdf(25.0) == 1.0
    with pytest.raises(InputError, match="no standard normal coordinate"):
        dist.u_from_x(25.0)


def test_describe_is_short_text():
    assert make_distribution("lognormal", mean=30, std=4.5).describe() == \
        "lognormal(mean=30, std=4.5)"
    assert "bounds [0, 100]" in make_distribution(
        "beta", mean=45, std=10, lower=0, upper=100).describe()


@pytest.mark.parametrize("kind, kwargs, message", [
    ("lognorm", {"mean": 1, "std": 1}, r"unknown distribution kind 'lognorm'; valid kinds are: "
     r"normal, lognormal, gumbel, weibull, gamma, uniform, beta, truncated_normal, student_t, "
     r"deterministic"),
    ("normal", {"mean": 30, "std": 0}, r"std must be > 0, got 0"),
    ("gumbel", {"mean": 30, "std": -2}, r"std must be > 0, got -2"),
    ("lognormal", {"mean": -3, "std": 1}, r"lognormal mean must be > 0"),
    ("weibull", {"mean": 0, "std": 1}, r"weibull mean must be > 0"),
    ("beta", {"mean": 50, "std": 2, "lower": 0, "upper": 40},
     r"beta mean must lie strictly between the bounds"),
    ("beta", {"mean": 20, "std": 25, "lower": 0, "upper": 40}, r"std too large for a beta"),
    ("beta", {"mean": 20, "std": 5}, r"beta needs both bounds"),
    ("normal", {"mean": 30, "std": 4, "mu": 30}, r"give either mean and std or the native"),
    ("normal", {"mean": 30}, r"needs both mean and std; std is missing"),
    ("gumbel", {"loc": 1.0}, r"missing: scale"),
    ("normal", {"mean": 30, "std": 4, "shape": 2}, r"normal does not take shape"),
    ("student_t", {"mean": 3, "std": 1, "nu": 2}, r"needs nu > 2"),
    ("student_t", {"mean": 3, "std": 1}, r"needs the degrees of freedom nu"),
    ("normal", {"mean": float("nan"), "std": 1}, r"mean must be a finite number"),
    ("uniform", {"lower": 3, "upper": 1}, r"upper bound must be greater than lower bound"),
    ("deterministic", {"mean": 3, "std": 1}, r"a deterministic value has std 0"),
    ("normal", {"mean": 1, "std": np.array([1.0, 2.0, -1.0])},
     r"std must be > 0, got -1 at sample 2"),
])
def test_bad_input_messages(kind, kwargs, message):
    with pytest.raises(InputError, match=message):
        make_distribution(kind, **kwargs)


def test_name_appears_in_messages():
    with pytest.raises(InputError, match=r"^variable 'fc': lognormal mean must be > 0, got -3$"):
        make_distribution("lognormal", mean=-3.0, std=1.0, name="fc")
