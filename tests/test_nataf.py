"""Nataf correlation correction against closed forms, published factors and Monte Carlo."""

import math

import numpy as np
import pytest

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.nataf import corrected_correlation_matrix, correlation_from_normal, nataf_correlation


def lognormal(cov, name=None):
    return make_distribution("lognormal", mean=1.0, std=cov, name=name)


def normal(name=None):
    return make_distribution("normal", mean=0.0, std=1.0, name=name)


def test_lognormal_pair_closed_form_value():
    # delta 0.15 / 0.25, rho 0.5 -> rho0 = 0.506 (computed from the
    # Liu & Der Kiureghian 1986 Table 2 closed form)
    rho0 = nataf_correlation(lognormal(0.15), lognormal(0.25), 0.5)
    assert rho0 == pytest.approx(0.506, abs=5e-4)


@pytest.mark.parametrize("pair, rho, closed_form", [
    # Liu & Der Kiureghian (1986), Table 2: N-LN rho0 = rho delta / sqrt(ln(1 + delta^2))
    (("N", 0.25), 0.5, 0.5 * 0.25 / math.sqrt(math.log(1 + 0.25**2))),
    (("N", 1.0), -0.6, -0.6 * 1.0 / math.sqrt(math.log(2.0))),
    # LN-LN rho0 = ln(1 + rho d1 d2) / sqrt(ln(1 + d1^2) ln(1 + d2^2))
    ((0.15, 0.25), 0.5, math.log(1 + 0.5 * 0.15 * 0.25)
     / math.sqrt(math.log(1 + 0.15**2) * math.log(1 + 0.25**2))),
    ((0.3, 0.6), -0.4, math.log(1 - 0.4 * 0.3 * 0.6)
     / math.sqrt(math.log(1 + 0.3**2) * math.log(1 + 0.6**2))),
])
def test_closed_forms_agree_with_quadrature(pair, rho, closed_form):
    first = normal() if pair[0] == "N" else lognormal(pair[0])
    second = lognormal(pair[1])
    rho0 = nataf_correlation(first, second, rho)
    assert rho0 == pytest.approx(closed_form, rel=1e-12)
    # the quadrature of Liu & Der Kiureghian eq. 9 at that rho0 gives back rho
    assert correlation_from_normal(first, second, rho0) == pytest.approx(rho, abs=1e-9)
    assert nataf_correlation(second, first, rho) == pytest.approx(rho0, rel=1e-12)


def test_normal_pair_is_unchanged():
    assert nataf_correlation(normal(), normal(), 0.37) == 0.37
    assert correlation_from_normal(normal(), normal(), 0.37) == pytest.approx(0.37, abs=1e-12)


@pytest.mark.parametrize("other, factor, tolerance", [
    # normal-uniform: exact factor sqrt(pi/3) = 1.0233 (E[z Phi(z)] = 1/(2 sqrt(pi)));
    # Liu & Der Kiureghian (1986) Table 4 lists 1.023 (from memory)
    (make_distribution("uniform", mean=0.0, std=1.0), math.sqrt(math.pi / 3), 1e-9),
    # normal-Gumbel (type I largest): Table 4 factor 1.031 (from memory)
    (make_distribution("gumbel", mean=0.0, std=1.0), 1.031, 5e-4),
    # normal-exponential: Table 4 factor 1.107 (from memory)
    (make_distribution("gamma", mean=1.0, std=1.0), 1.107, 5e-4),
    # normal-Rayleigh (Weibull shape 2): Table 4 factor 1.014 (from memory)
    (make_distribution("weibull", shape=2.0, scale=1.0), 1.014, 5e-4),
])
def test_normal_pair_factors_liu_der_kiureghian_table_4(other, factor, tolerance):
    for rho in (0.5, -0.3):
        assert nataf_correlation(normal(), other, rho) / rho == pytest.approx(factor, abs=tolerance)


def test_monte_carlo_reproduces_target_pearson_correlation():
    gumbel = make_distribution("gumbel", mean=10.0, std=3.0)
    weibull = make_distribution("weibull", mean=5.0, std=3.0)
    rho = -0.6
    rho0 = nataf_correlation(gumbel, weibull, rho)
    n = 200_000
    # standard error of a correlation coefficient, (1 - rho^2)/sqrt(n) (bivariate-normal theory)
    tolerance = 3 * (1 - rho**2) / math.sqrt(n)
    assert abs(rho0 - rho) > 3 * tolerance  # the correction matters at this sample size
    rng = np.random.default_rng(20240611)
    z1 = rng.standard_normal(n)
    z2 = rho0 * z1 + math.sqrt(1 - rho0**2) * rng.standard_normal(n)
    x1, x2 = gumbel.x_from_u(z1), weibull.x_from_u(z2)
    assert np.corrcoef(x1, x2)[0, 1] == pytest.approx(rho, abs=tolerance)


def test_unattainable_correlation_rejected():
    # A strongly skewed pair cannot reach a strong negative correlation (Frechet bound).
    with pytest.raises(InputError, match=r"cannot be reached.*attainable range"):
        nataf_correlation(lognormal(1.0, "a"), lognormal(1.0, "b"), -0.8)
    with pytest.raises(InputError, match=r"'g'.*'w'.*cannot be reached"):
        nataf_correlation(make_distribution("gumbel", mean=10, std=3, name="g"),
                          make_distribution("weibull", mean=5, std=3, name="w"), -0.95)


def test_deterministic_and_infinite_variance_rejected():
    with pytest.raises(InputError, match="deterministic"):
        nataf_correlation(normal(), make_distribution("deterministic", value=1.0), 0.5)
    with pytest.raises(InputError, match="no finite variance"):
        nataf_correlation(normal(), make_distribution("student_t", nu=2.0, loc=0.0, scale=1.0), 0.5)


def test_matrix_corrected_pairwise():
    dists = [normal("a"), lognormal(0.25, "b"), lognormal(0.15, "c")]
    R = np.array([[1.0, 0.5, 0.0], [0.5, 1.0, 0.5], [0.0, 0.5, 1.0]])
    R0 = corrected_correlation_matrix(dists, R)
    assert R0[0, 1] == R0[1, 0] == pytest.approx(nataf_correlation(dists[0], dists[1], 0.5))
    assert R0[1, 2] == pytest.approx(0.506, abs=5e-4)  # closed-form value (computed)
    assert R0[0, 2] == 0.0
    np.testing.assert_array_equal(np.diag(R0), 1.0)


def test_non_positive_definite_target_rejected_with_names():
    dists = [normal("fc"), normal("fy"), normal("cover")]
    R = np.array([[1.0, 0.9, 0.9], [0.9, 1.0, -0.9], [0.9, -0.9, 1.0]])
    with pytest.raises(InputError, match=r"^correlation matrix is not positive definite") as caught:
        corrected_correlation_matrix(dists, R)
    for name in ("'fc'", "'fy'", "'cover'"):
        assert name in str(caught.value)


def test_positive_definite_target_that_fails_after_correction():
    # det R = 1 - 2 * 0.7^2 = 0.02 > 0; N-LN(delta=1) scales 0.7 by 1/sqrt(ln 2) = 1.2011,
    # so det R0 = 1 - 2 * 0.8408^2 < 0 (closed forms of Liu & Der Kiureghian 1986).
    dists = [normal("load"), lognormal(1.0, "r1"), lognormal(1.0, "r2")]
    R = np.array([[1.0, 0.7, 0.7], [0.7, 1.0, 0.0], [0.7, 0.0, 1.0]])
    assert np.linalg.eigvalsh(R).min() > 0
    with pytest.raises(InputError, match=r"after the Nataf correction the correlation matrix is "
                                         r"not positive definite"):
        corrected_correlation_matrix(dists, R)


@pytest.mark.parametrize("R, message", [
    ([[1.0, 0.3], [0.2, 1.0]], r"not symmetric: \('x', 'y'\) is 0.3 but \('y', 'x'\) is 0.2"),
    ([[1.0, 0.3], [0.3, 0.9]], r"correlation of 'y' with itself must be 1"),
    ([[1.0, 1.2], [1.2, 1.0]], r"must lie in \[-1, 1\], got 1.2"),
    ([[1.0, 0.3, 0.0], [0.3, 1.0, 0.0], [0.0, 0.0, 1.0]], r"shape \(3, 3\), expected \(2, 2\)"),
])
def test_matrix_validation_messages(R, message):
    with pytest.raises(InputError, match=message):
        corrected_correlation_matrix([normal("x"), normal("y")], R)
