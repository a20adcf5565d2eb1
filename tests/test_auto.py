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
    # it picks subset simulation and flags FORM (beta -0.23 here, 78.5 in the issue)
    assert result.details["chosen"] == "subset_simulation"
    assert any(w.startswith("FORM") for w in result.warnings)


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


def test_one_pass_gives_one_subset_run():
    # max_calls=0 (the site steps): when subset simulation is the answer (the FORM trap of
    # issue 14, pf by quadrature) it is one run, its own CoV, no warning about the CoV aimed
    # at; the estimate is still within 3 of its standard deviations of the exact pf.
    case = form_trap()
    result = run_method(case.problem, "auto", seed=4, n_per_level=500, max_calls=0)
    assert result.details["chosen"] == "subset_simulation"
    assert [t["method"] for t in result.details["tried"]] == ["subset_simulation", "form"]
    assert result.cov == pytest.approx(result.details["tried"][0]["cov"])
    assert not any("aimed at" in w for w in result.warnings)
    assert _within(result, case.pf)


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


def test_auto_interval_feeds_the_verdict_rule():
    # Closed form: linear g in 2 standard normals with beta = 3.5 exactly. The site steps read
    # auto's CoV as for any sampling estimate (assess.reliability.interval): its interval at
    # 3 sigma (99.73 %) holds the exact beta, the verdict is decided against targets 0.5 away
    # (interval half-width here about 0.05) and undecided at the exact beta, and two runs
    # pooled (the verdict loop's repetition) have the CoV sqrt(mean CoV^2 / 2).
    from assess.reliability.interval import interval_verdict, pool_runs, result_interval

    case = linear_standard_normal(2, 3.5)
    first = run_method(case.problem, "auto", seed=11, n_per_level=500)
    assert first.details["chosen"] == "importance_sampling" and first.details["check"]["agree"]
    low, high = result_interval(first, 0.9973)
    assert low <= case.beta <= high
    low95, high95 = result_interval(first)
    assert interval_verdict(first.beta, low95, high95, case.beta - 0.5) == "meets target"
    assert interval_verdict(first.beta, low95, high95, case.beta + 0.5) == "below target"
    assert interval_verdict(first.beta, low95, high95, first.beta) == "undecided"
    second = run_method(case.problem, "auto", seed=12, n_per_level=500)
    pooled = pool_runs([first, second])
    assert pooled.cov == pytest.approx(math.sqrt((first.cov**2 + second.cov**2) / 2 / 2))
    assert _within(pooled, case.pf)


def test_site_steps_default_to_auto():
    # Issue 14: "auto" is the default of the site steps (members, life, history); it gets the
    # subset-simulation level size of the run (quick 500, full 1000), which is part of the
    # result-cache key; --method still chooses the others ("common practice": a setting test).
    import inspect

    from assess.errors import InputError
    from assess.site.before_after import assess_members
    from assess.site.settings import DEFAULT_METHOD, RunSettings

    assert DEFAULT_METHOD == "auto" == RunSettings().method
    assert inspect.signature(assess_members).parameters["method"].default == "auto"
    # one pass of auto (max_calls 0): the verdict loop repeats only undecided estimates
    assert RunSettings(quick=True).reliability_options == {"n_per_level": 500, "max_calls": 0}
    assert RunSettings().reliability_options == {"n_per_level": 1000, "max_calls": 0}
    assert RunSettings(method="subset_simulation").reliability_options == {"n_per_level": 1000}
    assert RunSettings(method="form").reliability_options == {}
    with pytest.raises(InputError, match="--method"):
        RunSettings(method="guess")


def test_members_step_takes_the_drivers_from_auto_form_search():
    # The members step reads the importance factors of auto's own FORM search instead of a
    # second FORM run. Linear g with weights a_i: FORM is exact, beta = 3.5 and alpha_i^2 =
    # a_i^2 / |a|^2 (closed form); another method gives None (a FORM run is made instead).
    from assess.site.before_after import form_part

    case = linear_standard_normal(3, 3.5)
    result = run_method(case.problem, "auto", seed=13, n_per_level=500, max_calls=0)
    form = form_part(result)
    assert form.method == "form" and form.converged
    assert form.beta == pytest.approx(3.5, abs=1e-4)
    weights = 1.0 + np.arange(3) / 3
    expected = weights**2 / np.sum(weights**2)
    assert np.allclose(sorted(form.importance_factors.values()), sorted(expected), atol=1e-4)
    assert form_part(run_method(case.problem, "subset_simulation", seed=13)) is None
