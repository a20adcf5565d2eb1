"""The "auto" method (let the tool choose): closed forms, published benchmarks with several
design points, the FORM trap of issue 14 and very reliable limit states."""

import math

import numpy as np
import pytest
from scipy import stats

from assess.reliability import StandardNormalProblem, auto, run_method
from tests.reference_problems import (
    form_trap,
    four_branch_series,
    four_branch_single,
    linear_pf_1e6,
    linear_standard_normal,
    parabolic,
)


def _within(result, reference_pf, rel_quote=0.0, sigmas=3.0):
    """|ln pf - ln ref| <= sigmas x sd(ln pf) (+ the quoting precision of a published value)."""
    spread = math.sqrt(math.log1p(result.cov**2))
    return abs(math.log(result.pf / reference_pf)) <= sigmas * spread + rel_quote


def test_linear_100_dimensions_small_pf():
    # Closed form pf = 1e-6: importance sampling on the design point is chosen and reaches
    # the CoV aimed at (0.1); the subset-simulation check agrees.
    result = run_method(linear_pf_1e6(100).problem, "auto", seed=1)
    assert result.details["chosen"] == "importance_sampling"
    assert result.cov <= 0.1
    assert _within(result, 1e-6)
    assert result.details["check"]["agree"]
    assert result.importance_factors is not None


@pytest.mark.parametrize("make_case", [four_branch_single, four_branch_series])
def test_several_equally_important_regions(make_case):
    # Four-branch system (Waarts 2000, pf = 4.46e-3 from memory, checked by crude MC in
    # tests/test_sampling_methods.py), as one expression and as four modes: all four
    # design points are found and the mixture estimate matches.
    case = make_case()
    result = run_method(case.problem, "auto", seed=2)
    assert len(result.details["design_points"]) == 4
    assert _within(result, case.pf, rel_quote=0.5e-5 / case.pf)
    assert result.converged


def test_parabola_with_two_design_points():
    # Der Kiureghian & Dakessian (1998), pf = 3.0e-3 (from memory, checked by crude MC in
    # tests/test_sampling_methods.py).
    case = parabolic()
    result = run_method(case.problem, "auto", seed=3)
    assert len(result.details["design_points"]) == 2
    assert _within(result, case.pf, rel_quote=0.5e-4 / case.pf)


def test_form_trap_is_answered_by_subset_simulation():
    # Issue 14: g = R - S/(S - 40); pf by quadrature (beta 2.04). FORM gives no usable design
    # point (or a wrong one); the answer comes from sampling and says why.
    case = form_trap()
    result = run_method(case.problem, "auto", seed=4)
    assert _within(result, case.pf)
    assert result.details["tried"][0]["method"] == "subset_simulation"
    assert result.warnings


@pytest.mark.parametrize("beta", [6.0, 8.0, 10.0])
def test_very_reliable_modes_give_a_number_not_nan(beta):
    # Closed form pf = Phi(-beta) in 20 standard normals; beta 6-10 (very reliable member
    # modes): no NaN, the estimate within 3 of its own standard deviations on the log scale.
    case = linear_standard_normal(20, beta)
    result = run_method(case.problem, "auto", seed=5, n_per_level=500)
    assert math.isfinite(result.beta) and math.isfinite(result.cov)
    assert _within(result, case.pf)


def test_no_failure_gives_a_bound_not_nan():
    # A limit state that never fails: pf = 0, beta = +inf, and the bound of the deepest
    # subset level in details (never NaN).
    problem = StandardNormalProblem(lambda u: 40.0 + 0.0 * u[:, 0], 3)
    result = auto(problem, seed=6)
    assert result.pf == 0.0 and result.beta == math.inf
    assert 0 < result.details["pf_upper"] < 1
    assert result.details["beta_lower"] == pytest.approx(stats.norm.isf(
        result.details["pf_upper"]))
    assert any("a bound, not an estimate" in w for w in result.warnings)


def test_site_options_and_reproducibility():
    # The site steps call run_method(problem, "auto", seed=..., n_per_level=500 | 1000).
    first = run_method(linear_pf_1e6(2).problem, "auto", seed=7, n_per_level=1000)
    again = run_method(linear_pf_1e6(2).problem, "auto", seed=7, n_per_level=1000)
    assert (first.pf, first.cov, first.n_calls) == (again.pf, again.cov, again.n_calls)
    assert first.settings["n_per_level"] == 1000
    assert first.seed == 7
    other = run_method(linear_pf_1e6(2).problem, "auto", seed=8, n_per_level=500)
    assert other.pf != first.pf


def test_nan_region_is_reported_once_and_counted_as_failure():
    # Issue 16: an expression undefined in part of the space (u1 < -2.5) gives one warning
    # with its count, and those points count as failed (conservative): the exact pf is then
    # P(u2 > 2.5 or u1 < -2.5) = 1 - Phi(2.5)^2 (independent, closed form).
    problem = StandardNormalProblem(
        lambda u: np.where(u[:, 0] < -2.5, np.nan, 2.5 - u[:, 1]), 2)
    result = auto(problem, seed=9)
    nan_warnings = [w for w in result.warnings if "undefined (NaN)" in w]
    assert len(nan_warnings) == 1
    assert problem.n_nan > 0
    exact = 1.0 - stats.norm.cdf(2.5) ** 2
    assert _within(result, exact)
