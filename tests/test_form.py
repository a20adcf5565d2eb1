"""FORM (improved HL-RF) against closed-form reliability indices and scipy's optimiser."""

import math

import numpy as np
import pytest
from scipy import optimize, stats

from assess.errors import AnalysisError, InputError
from assess.reliability import StandardNormalProblem, form, run_method
from tests.reference_problems import (
    form_trap,
    four_branch_series,
    four_branch_single,
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


def test_nan_limit_state_is_counted_as_failure_with_a_warning_or_raises_on_request():
    # Issue 16: an expression undefined in part of the space gives a warning with the count;
    # the points count as failed (conservative). nonfinite="error" keeps the old behaviour.
    def g(u):
        return np.where(u[:, 0] > 1.0, np.nan, 3.0 - u[:, 0])

    result = form(StandardNormalProblem(g, 2))
    assert any("undefined (NaN) at" in w and "counted as failed" in w for w in result.warnings)
    with pytest.raises(AnalysisError, match="not a finite number"):
        form(StandardNormalProblem(g, 2, nonfinite="error"))


def test_bad_options_are_input_errors():
    case = linear_normal()
    with pytest.raises(InputError, match="u0"):
        form(case.problem, u0=[0.0, 0.0, 0.0])
    with pytest.raises(InputError, match="tol"):
        form(case.problem, tol=-1.0)
    with pytest.raises(InputError, match="'auto', 'form', 'sorm'"):
        run_method(case.problem, "guess")
    with pytest.raises(InputError, match="design_points"):
        form(case.problem, design_points=0)
    with pytest.raises(InputError, match="n_per_level"):
        run_method(case.problem, "form", n_per_level=10)


def test_run_method_form_matches_direct_call_and_adds_a_check():
    direct = form(linear_normal().problem)
    dispatched = run_method(linear_normal().problem, "form", seed=3)
    assert dispatched.beta == direct.beta
    assert dispatched.seed is None
    # run_method adds the independent subset-simulation check (linear: it agrees, closed
    # form beta = 3.54) and spends its evaluations on it.
    check = dispatched.details["check"]
    assert check["agree"] and check["trust"] == "form"
    assert dispatched.n_calls > direct.n_calls
    assert abs(math.log(check["pf"] / direct.pf)) < 3 * math.sqrt(math.log1p(check["cov"]**2))


def test_curved_cubic_converges_in_few_evaluations():
    # Issue 14: "FORM takes 380 calls on a smooth two-variable cubic limit state".
    # g = x1^3 + x2^3 - 18, x1 ~ N(10, 5), x2 ~ N(9.9, 5). Reference: scipy SLSQP on
    # min |u|^2 subject to g = 0, started next to the FORM point.
    def g_u(u):
        return (10.0 + 5.0 * u[:, 0]) ** 3 + (9.9 + 5.0 * u[:, 1]) ** 3 - 18.0

    result = form(StandardNormalProblem(g_u, 2))
    assert result.converged
    assert result.n_calls <= 120, result.n_calls
    reference = optimize.minimize(
        lambda u: u @ u, x0=result.design_point_u + 0.2, method="SLSQP",
        constraints=[{"type": "eq", "fun": lambda u: g_u(u[None, :])[0] / 1000.0}],
        options={"ftol": 1e-14})
    assert reference.success
    assert result.beta == pytest.approx(math.sqrt(reference.fun), abs=1e-4)


def test_design_point_on_a_kink_stalls_quickly_with_a_warning():
    # g = 3 - u1 + 0.5 |u2|: the surface u1 = 3 + 0.5 |u2| is a wedge pointing at the origin;
    # the nearest point (3, 0) sits on the kink, where the gradient jumps and HL-RF cannot
    # settle. FORM must say so quickly instead of running to max_iter.
    problem = StandardNormalProblem(lambda u: 3.0 - u[:, 0] + 0.5 * np.abs(u[:, 1]), 2)
    result = form(problem)
    assert not result.converged
    assert any("stalled" in w and "not smooth" in w for w in result.warnings)
    assert result.details["iterations"] < 40 and result.n_calls < 400


def test_several_design_points_of_one_limit_state():
    # The four-branch system as ONE expression min(g1..g4): four design points, each at
    # beta = 3 exactly (planes at 6/sqrt(2)/sqrt(2) = 3; parabolic branches touch their
    # minimum distance 3 on u1 = u2), in the four diagonal directions.
    result = form(four_branch_single().problem, design_points=4, seed=1)
    points = result.details["design_points"]
    assert len(points) == 4
    for point in points:
        assert abs(point["beta"] - 3.0) < 1e-5
    directions = sorted(tuple(np.sign(np.round(p["design_point_u"], 6)).astype(int))
                        for p in points)
    assert directions == [(-1, -1), (-1, 1), (1, -1), (1, 1)]
    # Ditlevsen bounds of four half-spaces at beta = 3 with normals at 90 degrees: the
    # pairs are independent (rho = 0) or disjoint (rho = -1), so both bounds equal
    # 4 Phi(-3) - 2 Phi(-3)^2 to within the pair terms.
    # Neighbouring half-spaces are independent (rho = 0), opposite ones disjoint (rho = -1),
    # so their union has probability 4 p - 4 p^2 exactly (inclusion-exclusion, p = Phi(-3));
    # Ditlevsen's bounds must bracket it.
    low, high = result.details["first_order_bounds"]
    p = stats.norm.sf(3.0)
    exact = 4 * p - 4 * p * p
    assert low <= exact * (1 + 1e-9) and high >= exact * (1 - 1e-9)
    assert any("4 design points found" in w for w in result.warnings)


def test_two_design_points_of_the_parabola_match_scipy():
    # Der Kiureghian & Dakessian (1998) parabola: two local design points, one on each side;
    # each checked against scipy SLSQP started next to it.
    result = form(parabolic().problem, design_points=4, seed=2)
    points = sorted(result.details["design_points"], key=lambda p: p["design_point_u"][0])
    assert len(points) == 2
    assert points[0]["design_point_u"][0] < 0 < points[1]["design_point_u"][0]

    def g_scalar(u):
        return 5.0 - u[1] - 0.5 * (u[0] - 0.1) ** 2

    for point in points:
        reference = optimize.minimize(lambda u: u @ u, x0=point["design_point_u"] + 0.2,
                                      constraints=[{"type": "eq", "fun": g_scalar}],
                                      method="SLSQP", options={"ftol": 1e-14})
        assert point["beta"] == pytest.approx(math.sqrt(reference.fun), abs=1e-5)


def test_form_far_from_the_answer_is_flagged_by_its_check():
    # Issue 14: g = R - S/(S - 40) (reference: one-dimensional quadrature, beta 2.04).
    # Plain FORM wanders off (issue: beta 78.5, "converged"); through run_method the
    # independent subset-simulation check disagrees and the warning says to trust it.
    case = form_trap()
    plain = form(case.problem)
    assert abs(plain.beta - case.beta) > 1.0
    checked = run_method(form_trap().problem, "form", seed=4)
    check = checked.details["check"]
    assert not check["agree"]
    assert check["trust"] in ("subset_simulation", "importance_sampling")
    assert any("Trust" in w for w in checked.warnings)
    assert abs(math.log(check["pf"] / case.pf)) < 3 * math.sqrt(math.log1p(check["cov"]**2))
