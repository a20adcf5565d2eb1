"""FORM (improved HL-RF) against closed-form reliability indices and scipy's optimiser."""

import math

import numpy as np
import pytest
from scipy import optimize, stats

from assess.errors import AnalysisError, InputError
from assess.reliability import StandardNormalProblem, form, run_method
from tests.reference_problems import (
    four_branch_series,
    linear_100d,
    linear_normal,
    lognormal_r_s,
    parabolic,
)


def test_linear_normal_beta_design_point_and_importance_factors():
    # Closed form (Cornell 1969): beta = (mu_R - mu_S)/sqrt(s_R^2 + s_S^2),
    # alpha_R^2 = s_R^2/(s_R^2 + s_S^2), design point R* = S*.
    case = linear_normal(mean_r=300.0, std_r=30.0, mean_s=150.0, std_s=40.0)
    result = form(case.problem)
    assert result.converged
    assert abs(result.beta - 150.0 / 50.0) < 1e-6
    assert result.pf == pytest.approx(stats.norm.sf(3.0), rel=1e-6)
    assert result.importance_factors["R"] == pytest.approx(0.36, abs=1e-8)
    assert result.importance_factors["S"] == pytest.approx(0.64, abs=1e-8)
    assert result.design_point_x["R"] == pytest.approx(result.design_point_x["S"], abs=1e-6)
    # alpha = -grad G/|grad G| points from the mean towards failure (u* = beta alpha):
    # the resistance falls below its mean, the load effect rises above it.
    assert result.alpha[0] < 0 < result.alpha[1]
    assert np.allclose(result.design_point_u, result.beta * result.alpha, atol=1e-8)
    assert math.isnan(result.cov)
    assert result.n_calls == 1 + 2 * 3  # mode check + two gradient calls of dim + 1 points
    assert result.details["iterations"] <= 10


def test_negative_beta_when_the_mean_point_fails():
    # Closed form: beta = (mu_R - mu_S)/sqrt(...) < 0 when the mean point is in the failure domain.
    case = linear_normal(mean_r=100.0, std_r=30.0, mean_s=150.0, std_s=40.0)
    result = form(case.problem)
    assert abs(result.beta - (-1.0)) < 1e-6
    assert result.pf == pytest.approx(stats.norm.cdf(1.0), rel=1e-6)


def test_lognormal_r_s_is_exact():
    # Closed form for lognormal R and S: beta = (lambda_R - lambda_S)/sqrt(zeta_R^2 + zeta_S^2);
    # the failure surface is a plane in u, although g is nonlinear.
    case = lognormal_r_s()
    result = form(case.problem)
    assert result.converged
    assert abs(result.beta - case.beta) < 1e-6
    assert result.design_point_x["R"] == pytest.approx(result.design_point_x["S"], rel=1e-6)
    assert sum(result.importance_factors.values()) == pytest.approx(1.0, abs=1e-12)
    assert result.details["iterations"] <= 10


def test_linear_100_standard_normals():
    # Closed form: g = beta |a| - a.u has reliability index beta = 4.2.
    case = linear_100d()
    result = form(case.problem)
    assert abs(result.beta - 4.2) < 1e-6
    assert result.details["iterations"] <= 10


def test_parabolic_design_point_matches_scipy_constrained_minimisation():
    # Independent reference: scipy SLSQP on min |u|^2 subject to g(u) = 0 from the same side.
    case = parabolic()
    result = form(case.problem)
    assert result.converged

    def g_scalar(u):
        return 5.0 - u[1] - 0.5 * (u[0] - 0.1) ** 2

    reference = optimize.minimize(lambda u: u @ u, x0=result.design_point_u + 0.3,
                                  constraints=[{"type": "eq", "fun": g_scalar}],
                                  method="SLSQP", options={"ftol": 1e-14})
    assert reference.success
    assert result.beta == pytest.approx(math.sqrt(reference.fun), abs=1e-5)
    assert np.allclose(result.design_point_u, reference.x, atol=1e-3)


def test_non_convergence_is_a_warning_not_an_exception():
    result = form(parabolic().problem, max_iter=2)
    assert not result.converged
    assert any("did not converge" in w for w in result.warnings)


def test_series_system_runs_each_mode_and_warns():
    # Four-branch system: each branch has beta = 3 exactly (branches 3, 4 are planes at
    # distance 6/sqrt(2)/sqrt(2) = 3; branches 1, 2 reach their minimum distance 3 on u1 = u2).
    result = form(four_branch_series().problem)
    modes = result.details["modes"]
    assert len(modes) == 4
    for mode in modes:
        assert abs(mode["beta"] - 3.0) < 1e-5
    assert abs(result.beta - 3.0) < 1e-5
    low, high = result.details["series_bounds"]
    assert low == pytest.approx(stats.norm.sf(3.0), rel=1e-4)
    assert high == pytest.approx(4 * stats.norm.sf(3.0), rel=1e-4)
    assert any("series system" in w for w in result.warnings)


def test_nan_limit_state_raises_analysis_error():
    problem = StandardNormalProblem(lambda u: np.where(u[:, 0] > 1.0, np.nan, 3.0 - u[:, 0]), 2)
    with pytest.raises(AnalysisError, match="not a finite number"):
        form(problem)


def test_bad_options_are_input_errors():
    case = linear_normal()
    with pytest.raises(InputError, match="u0"):
        form(case.problem, u0=[0.0, 0.0, 0.0])
    with pytest.raises(InputError, match="tol"):
        form(case.problem, tol=-1.0)
    with pytest.raises(InputError, match="'form', 'importance_sampling'"):
        run_method(case.problem, "sorm")
    with pytest.raises(InputError, match="n_per_level"):
        run_method(case.problem, "form", n_per_level=10)


def test_run_method_form_matches_direct_call():
    direct = form(linear_normal().problem)
    dispatched = run_method(linear_normal().problem, "form", seed=3)
    assert dispatched.beta == direct.beta
    assert dispatched.seed is None
