"""Sampling methods (importance sampling, subset simulation, crude Monte Carlo) against
closed-form and published probabilities of failure.

Tolerances come from each estimator's own reported coefficient of variation (3 CoV).
"""

import math

import numpy as np
import pytest
from scipy import stats

from assess.errors import AnalysisError, InputError
from assess.reliability import (
    StandardNormalProblem,
    crude_monte_carlo,
    form,
    importance_sampling,
    run_method,
    subset_simulation,
)
from tests.reference_problems import (
    four_branch_series,
    four_branch_single,
    linear_100d,
    linear_normal,
    linear_pf_1e6,
    linear_standard_normal,
    lognormal_r_s,
    parabolic,
)

SEEDS = (11, 22, 33)

# (method, options) pairs sampled on every exact reference problem.
METHOD_CASES = [
    ("importance_sampling", {}),
    ("subset_simulation", {}),
    ("subset_simulation", {"sampler": "mma"}),
    ("crude_monte_carlo", {"n": 200_000}),
]


def _within_three_cov(result, reference_pf, reference_rel_tol=0.0):
    """|pf - ref| <= 3 CoV ref (+ the quoting precision of a published reference).

    The CoV is relative to the true pf, so the standard deviation of the estimator is
    CoV times the reference value.
    """
    tolerance = (3.0 * result.cov + reference_rel_tol) * reference_pf
    return abs(result.pf - reference_pf) <= tolerance


@pytest.mark.parametrize("method, options", METHOD_CASES)
@pytest.mark.parametrize("make_case", [linear_normal, lognormal_r_s])
def test_exact_two_variable_problems(make_case, method, options):
    # Closed-form pf (Cornell 1969 linear normal; lognormal R-S), see tests/reference_problems.py.
    for seed in SEEDS:
        case = make_case()
        result = run_method(case.problem, method, seed=seed, **options)
        assert result.converged, result.warnings
        assert _within_three_cov(result, case.pf), (seed, result.pf, result.cov, case.pf)
        assert result.beta == pytest.approx(stats.norm.isf(result.pf))
        assert result.n_calls == case.problem.n_calls


@pytest.mark.parametrize("method, options", METHOD_CASES[:3])
def test_linear_100_dimensions(method, options):
    # Closed form: beta = 4.2 in 100 standard normals (pf = 1.33e-5).
    for seed in SEEDS[:2]:
        case = linear_100d()
        result = run_method(case.problem, method, seed=seed, **options)
        assert _within_three_cov(result, case.pf), (seed, result.pf, result.cov, case.pf)


@pytest.mark.parametrize("method", ["importance_sampling", "subset_simulation"])
def test_reported_cov_agrees_loosely_with_the_spread_over_seeds(method):
    # With 10 seeds the sample CoV itself scatters by about 1/sqrt(2*9) = 24 %; subset
    # simulation's reported cov is a lower bound (levels assumed uncorrelated, Au & Beck 2001),
    # so the ratio is checked within a factor of 2.
    pfs, covs = [], []
    for seed in range(10):
        result = run_method(linear_normal().problem, method, seed=seed)
        pfs.append(result.pf)
        covs.append(result.cov)
    spread = np.std(pfs, ddof=1) / np.mean(pfs)
    assert 0.5 <= spread / np.mean(covs) <= 2.0, (spread, np.mean(covs))


def test_crude_monte_carlo_cov_formula():
    # Binomial estimator: cov = sqrt((1 - pf)/(n pf)) (e.g. Rubinstein & Kroese 2016, ch. 1).
    result = crude_monte_carlo(lognormal_r_s().problem, n=50_000, seed=5, chunk=7_000)
    assert result.n_calls == 50_000
    assert result.cov == pytest.approx(math.sqrt((1 - result.pf) / (50_000 * result.pf)))


def test_published_references_against_large_crude_monte_carlo():
    # Recalled published values (four-branch: Waarts 2000; parabolic: Der Kiureghian &
    # Dakessian 1998) checked with 10^7 direct numpy samples each: the difference must stay
    # within 3 CoV of this Monte Carlo run plus half a unit of the last quoted digit.
    rng = np.random.default_rng(2024)
    for case in (four_branch_series(), parabolic()):
        n, failures = 10_000_000, 0
        for _ in range(10):
            u = rng.standard_normal((n // 10, 2))
            failures += int(np.count_nonzero(case.problem.g(u) <= 0.0))
        pf_mc = failures / n
        cov_mc = math.sqrt((1 - pf_mc) / (n * pf_mc))
        rounding = 0.5 * 10.0 ** (math.floor(math.log10(case.pf)) - case.significant_digits + 1)
        assert abs(case.pf - pf_mc) <= 3 * cov_mc * pf_mc + rounding, (case.name, pf_mc, case.pf)


def test_series_system_four_branch():
    # Published reference pf = 4.46e-3 (Waarts 2000, from memory; verified above by crude MC).
    case = four_branch_series()
    rel_tol = 0.5e-5 / case.pf
    for seed in SEEDS:
        sus = subset_simulation(four_branch_series().problem, seed=seed)
        assert _within_three_cov(sus, case.pf, rel_tol), (seed, sus.pf, sus.cov)
        # Importance sampling uses one centre per branch design point (mixture density).
        imp = importance_sampling(four_branch_series().problem, seed=seed)
        assert imp.details["centres"].shape == (4, 2)
        assert _within_three_cov(imp, case.pf, rel_tol), (seed, imp.pf, imp.cov)


def test_parabolic_two_design_points():
    # Published reference pf = 3.0e-3 (Der Kiureghian & Dakessian 1998, from memory; verified
    # above by crude MC). Subset simulation needs no design point; importance sampling needs both
    # design points, found by FORM from two start points.
    case = parabolic()
    rel_tol = 0.5e-4 / case.pf
    for seed in SEEDS:
        sus = subset_simulation(parabolic().problem, seed=seed)
        assert _within_three_cov(sus, case.pf, rel_tol), (seed, sus.pf, sus.cov)
    points = [form(parabolic().problem, u0=[-1.0, 1.0]).design_point_u,
              form(parabolic().problem, u0=[1.0, 1.0]).design_point_u]
    assert points[0][0] < 0 < points[1][0]
    for seed in SEEDS:
        imp = importance_sampling(parabolic().problem, seed=seed, design_point=points)
        assert _within_three_cov(imp, case.pf, rel_tol), (seed, imp.pf, imp.cov)


def test_small_pf_subset_simulation_2d():
    # Closed form pf = 1e-6 (linear, beta = 4.753).
    case = linear_pf_1e6(2)
    result = subset_simulation(case.problem, seed=7)
    assert _within_three_cov(result, case.pf)
    levels = result.details["levels"]
    thresholds = [level["threshold"] for level in levels]
    assert thresholds == sorted(thresholds, reverse=True) and thresholds[-1] == 0.0
    # Each intermediate threshold is the p0 = 0.2 quantile (the default); repeated chain
    # states (rejected proposals) can tie at the threshold, which only raises the fraction
    # a little.
    for level in levels[:-1]:
        assert 0.2 <= level["conditional_probability"] < 0.22
    assert all(0.1 < level["acceptance_rate"] < 0.9 for level in levels[1:])


def test_same_seed_same_numbers_and_seed_none_is_recorded():
    for method in ("importance_sampling", "subset_simulation", "crude_monte_carlo"):
        options = {"n": 20_000} if method == "crude_monte_carlo" else {}
        first = run_method(lognormal_r_s().problem, method, seed=123, **options)
        second = run_method(lognormal_r_s().problem, method, seed=123, **options)
        other = run_method(lognormal_r_s().problem, method, seed=124, **options)
        assert (first.pf, first.cov, first.n_calls) == (second.pf, second.cov, second.n_calls)
        assert first.pf != other.pf
        drawn = run_method(lognormal_r_s().problem, method, seed=None, **options)
        assert isinstance(drawn.seed, int)
        again = run_method(lognormal_r_s().problem, method, seed=drawn.seed, **options)
        assert again.pf == drawn.pf
        from_generator = run_method(lognormal_r_s().problem, method,
                                    seed=np.random.default_rng(123), **options)
        assert from_generator.pf == first.pf and from_generator.seed is None


def test_no_failure_safeguards():
    case = linear_pf_1e6(2)
    crude = crude_monte_carlo(case.problem, n=1000, seed=1)
    assert crude.pf == 0.0 and crude.beta == math.inf and not crude.converged
    assert crude.details["pf_upper_95"] == pytest.approx(3e-3)
    assert any("3/n" in w for w in crude.warnings)
    sus = subset_simulation(linear_pf_1e6(2).problem, seed=1, max_levels=2)
    assert not sus.converged
    assert any("max_levels" in w for w in sus.warnings)


def test_flat_limit_state_stops_subset_simulation_with_a_warning():
    problem = StandardNormalProblem(lambda u: np.where(u[:, 0] > 3.0, -1.0, 1.0), 2)
    result = subset_simulation(problem, seed=3)
    assert not result.converged
    assert any("flat" in w for w in result.warnings)


@pytest.mark.parametrize("method", ["importance_sampling", "subset_simulation",
                                    "crude_monte_carlo"])
def test_nan_limit_state_gives_a_warning_with_the_count(method):
    # Issue 16: g undefined (NaN) for u1 > 2 only; each method finishes, counts the NaN
    # points as failed and says how many there were. The count is checked against the
    # calls: a NaN point is a failed point, so it never exceeds the evaluations.
    def g(u):
        return np.where(u[:, 0] > 2.0, np.nan, 3.0 - u[:, 0])

    options = {"n": 10_000} if method == "crude_monte_carlo" else {}
    if method == "importance_sampling":
        options = {"design_point": [3.0, 0.0]}
    problem = StandardNormalProblem(g, 2)
    result = run_method(problem, method, seed=1, **options)
    messages = [w for w in result.warnings if "undefined (NaN) at" in w]
    assert len(messages) == 1
    count = int(messages[0].split("undefined (NaN) at ")[1].split(" of ")[0])
    assert 0 < count <= result.n_calls
    assert problem.n_nan >= count
    # Counted as failures: P(u1 > 2) = Phi(-2) lies within the estimate's 3 CoV.
    if method != "importance_sampling":
        assert abs(result.pf - stats.norm.sf(2.0)) <= 3 * result.cov * stats.norm.sf(2.0)
    with pytest.raises(AnalysisError, match="not a finite number"):
        run_method(StandardNormalProblem(g, 2, nonfinite="error"), method, seed=1, **options)


@pytest.mark.parametrize("method, option, limit", [
    ("crude_monte_carlo", "n", "1 000 000 000"),
    ("importance_sampling", "n", "100 000 000"),
    ("subset_simulation", "n_per_level", "1 000 000"),
])
def test_huge_sample_sizes_are_refused_before_any_work(method, option, limit):
    # Issue 16: --samples 10**12 must be a clean InputError, not a memory blow-up.
    problem = linear_normal().problem
    with pytest.raises(InputError, match=limit):
        run_method(problem, method, seed=1, **{option: 10**12})
    assert problem.n_calls == 0


def test_subset_level_memory_bound():
    # n_per_level x dim is bounded (2e7 values per level) even below the per-level bound.
    with pytest.raises(InputError, match="memory of one level"):
        subset_simulation(linear_pf_1e6(100).problem, n_per_level=500_000)


def test_reported_cov_of_subset_simulation_matches_the_spread_of_ln_pf():
    # Issue 14: the reported CoV must be honest. 60 independent runs (2-D, pf = 1e-4,
    # closed form): if the reported CoV is right, (n - 1) s^2 / sigma^2 of ln pf follows a
    # chi-square law with n - 1 degrees of freedom (ln pf close to normal); the 0.1 % and
    # 99.9 % quantiles bound the ratio. The 200-run study is in benchmarks/.
    n = 60
    logs, covs = [], []
    for seed in range(n):
        result = subset_simulation(linear_standard_normal(2, stats.norm.isf(1e-4)).problem,
                                   seed=1000 + seed)
        logs.append(math.log(result.pf))
        covs.append(result.cov)
    sigma2 = float(np.mean(np.log1p(np.square(covs))))
    ratio = np.var(logs, ddof=1) / sigma2
    low, high = stats.chi2.ppf([0.001, 0.999], n - 1) / (n - 1)
    assert low <= ratio <= high, (ratio, low, high)
    # and the estimator is unbiased within its standard error (mean of 60 runs)
    pfs = np.exp(logs)
    assert abs(pfs.mean() - 1e-4) <= 3 * pfs.std(ddof=1) / math.sqrt(n)


def test_subset_simulation_until_a_requested_cov():
    # Independent runs are pooled until the CoV is at most the one asked for.
    case = linear_standard_normal(2, stats.norm.isf(1e-4))
    result = subset_simulation(case.problem, n_per_level=500, seed=3, target_cov=0.15)
    assert result.cov <= 0.15
    assert len(result.details["runs"]) > 1
    assert result.converged
    assert abs(result.pf - case.pf) <= 3 * result.cov * case.pf
    short = subset_simulation(linear_standard_normal(2, stats.norm.isf(1e-4)).problem,
                              n_per_level=500, seed=3, target_cov=0.01, max_calls=20_000)
    assert short.n_calls <= 20_000 and short.cov > 0.01
    assert any("not reached" in w for w in short.warnings)


def test_importance_sampling_at_one_design_point_is_caught_by_its_check():
    # Issue 14: the four-branch system written as one limit state has four equally
    # important regions (reference pf 4.46e-3, Waarts 2000, from memory; checked above by
    # crude MC). Centred at one design point, importance sampling reports about a quarter
    # of pf with a small CoV; its check disagrees and names subset simulation.
    case = four_branch_single()
    alone = run_method(four_branch_single().problem, "importance_sampling", seed=2,
                       design_points=1)
    assert alone.pf < 0.5 * case.pf
    assert not alone.details["check"]["agree"]
    assert alone.details["check"]["trust"] == "subset_simulation"
    assert any("Trust subset simulation" in w for w in alone.warnings)
    # With the design-point search (run_method's default) it centres on all four.
    found = run_method(four_branch_single().problem, "importance_sampling", seed=2)
    assert found.details["centres"].shape == (4, 2)
    assert found.details["check"]["agree"]
    assert abs(found.pf - case.pf) <= (3 * found.cov + 0.5e-5 / case.pf) * case.pf


def test_bad_sampling_options_are_input_errors():
    problem = linear_normal().problem
    with pytest.raises(InputError, match="sampler"):
        subset_simulation(problem, sampler="gibbs")
    with pytest.raises(InputError, match="p0"):
        subset_simulation(problem, p0=0.7)
    with pytest.raises(InputError, match="seed"):
        crude_monte_carlo(problem, seed=1.5)
    with pytest.raises(InputError, match="design_point"):
        importance_sampling(problem, design_point=[1.0, 2.0, 3.0])
