"""Intervals of beta from the estimator, "undecided" verdicts, sampling until decided, and
"no significant change" (assess.reliability.interval).

Outside references: the closed-form reliability index of g = R - S with R, S normal (Cornell
1969, `tests/reference_problems.linear_normal`), scipy.stats (lognormal quantiles, normal
quantiles, the binomial distribution of the number of misses). Counts over many seeds are
asserted at the binomial 99.9 % point (scipy.stats.binom), never one realisation.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from reference_problems import linear_normal, linear_standard_normal
from scipy import stats

from assess.reliability.crude import crude_monte_carlo
from assess.reliability.interval import (
    BELOW,
    MEETS,
    NO_RESULT,
    NO_SIGNIFICANT_CHANGE,
    UNDECIDED,
    beta_interval,
    beta_standard_error,
    change_text,
    interval_verdict,
    looks_level,
    result_interval,
    sample_until_decided,
)
from assess.reliability.result import ReliabilityResult, beta_from_pf
from assess.reliability.subset import subset_simulation

ALPHA = 0.001
"""Chance that a correct estimator exceeds an allowed count (binomial 99.9 % point)."""

EXACT_BETA = 2.5
N_CRUDE = 2000  # crude MC at pf = Phi(-2.5) = 6.2e-3: CoV about 0.28 per run


def allowed(k: int, p: float) -> int:
    return int(stats.binom.ppf(1.0 - ALPHA, k, p))


def r_minus_s():
    """g = R - S, R ~ N(mu_R, 30), S ~ N(150, 30), mu_R set for beta = 2.5 (Cornell 1969)."""
    case = linear_normal(mean_r=150.0 + EXACT_BETA * math.hypot(30.0, 30.0))
    assert case.beta == pytest.approx(EXACT_BETA)
    return case


def fake(pf, cov, n_calls=1000):
    return ReliabilityResult("crude_monte_carlo", pf, beta_from_pf(pf), cov, n_calls, seed=1)


def test_interval_is_the_lognormal_interval_of_pf_mapped_through_beta():
    # scipy.stats.lognorm with s^2 = ln(1 + CoV^2) and median pf: its 2.5 % and 97.5 %
    # points, mapped by beta = -Phi^-1(pf) (scipy.stats.norm.isf)
    pf, cov = 1e-4, 0.3
    s = math.sqrt(math.log(1 + cov**2))
    reference = stats.lognorm(s, scale=pf)
    low, high = beta_interval(pf, cov)
    assert low == pytest.approx(stats.norm.isf(reference.ppf(0.975)), rel=1e-10)
    assert high == pytest.approx(stats.norm.isf(reference.ppf(0.025)), rel=1e-10)
    assert low < beta_from_pf(pf) < high
    # a 99 % interval is wider
    low99, high99 = beta_interval(pf, cov, level=0.99)
    assert low99 < low and high99 > high


def test_interval_edges_form_and_no_failure():
    assert all(math.isnan(v) for v in beta_interval(1e-4, math.nan))  # FORM: no sampling error
    assert all(math.isnan(v) for v in beta_interval(0.0, math.nan))
    low, high = beta_interval(0.0, math.nan, pf_upper=3e-6)  # rule of three bound
    assert low == pytest.approx(stats.norm.isf(3e-6)) and high == math.inf
    # a huge CoV caps pf at 1: the lower end is -inf, never NaN
    low, high = beta_interval(0.5, 50.0)
    assert low == -math.inf and math.isfinite(high)


def test_verdict_rule_on_constructed_intervals():
    assert interval_verdict(4.3, 4.21, 4.40, 4.2) == MEETS
    assert interval_verdict(4.3, 4.20, 4.40, 4.2) == MEETS  # at the target counts as meeting
    assert interval_verdict(4.0, 3.8, 4.19, 4.2) == BELOW
    assert interval_verdict(4.21, 4.0, 4.4, 4.2) == UNDECIDED  # B4-03 of the issue
    assert interval_verdict(4.19, 4.0, 4.4, 4.2) == UNDECIDED
    assert interval_verdict(math.nan, math.nan, math.nan, 4.2) == NO_RESULT
    assert interval_verdict(4.21, math.nan, math.nan, 4.2) == MEETS  # FORM: beta alone


def test_undecided_rule_agrees_with_the_exact_beta_over_many_seeds():
    # g = R - S, exact beta 2.5 (Cornell 1969); target 2.45, so the exact side is "meets".
    # A decided verdict is on the wrong side only if the 95 % interval misses the exact beta on
    # that side: probability <= 2.5 % per run for a calibrated interval.
    case = r_minus_s()
    target, k = 2.45, 200
    verdicts, misses, point_wrong = [], 0, 0
    for seed in range(k):
        result = crude_monte_carlo(case.problem, n=N_CRUDE, seed=seed)
        low, high = result_interval(result)
        verdicts.append(interval_verdict(result.beta, low, high, target))
        misses += not low <= EXACT_BETA <= high
        point_wrong += result.beta < target
    wrong = verdicts.count(BELOW)
    assert wrong <= allowed(k, 0.025), f"{wrong} of {k} decided on the wrong side"
    assert misses <= allowed(k, 0.05), f"the 95 % interval missed the exact beta {misses} times"
    # the rule can say "undecided" (it is not the point verdict in disguise), and the point
    # verdict beta >= target is wrong far more often than the decided ones
    assert verdicts.count(UNDECIDED) > k // 4
    assert point_wrong > 3 * wrong


def test_subset_simulation_interval_covers_the_exact_beta():
    # Linear limit state in 2-D with exact beta 3.5 (closed form); subset simulation's own CoV
    # (ancestral origins) gives the interval; misses counted against binom(k, 0.05).
    k = 40
    misses = 0
    for seed in range(k):
        case = linear_standard_normal(2, 3.5)
        result = subset_simulation(case.problem, n_per_level=500, seed=seed)
        low, high = result_interval(result)
        misses += not low <= case.beta <= high
    assert misses <= allowed(k, 0.05), f"{misses} of {k} intervals miss the exact beta"


def rerun_of(case, seed):
    return lambda k: crude_monte_carlo(case.problem, n=N_CRUDE, seed=100_000 * k + seed)


def test_sampling_until_decided_honours_the_budget():
    # target = exact beta: a calibrated rule almost never decides, so it spends the budget
    case = r_minus_s()
    budget = 5 * N_CRUDE + N_CRUDE // 2
    first = crude_monte_carlo(case.problem, n=N_CRUDE, seed=3)
    result, verdict, level = sample_until_decided(first, rerun_of(case, 3), EXACT_BETA, budget)
    assert result.n_calls <= budget
    if verdict == UNDECIDED:
        assert result.n_calls == 5 * N_CRUDE and len(result.details["runs"]) == 5
    assert level == pytest.approx(1 - 0.05 / 5)  # Bonferroni over the 5 looks allowed
    # pooled: mean of the runs' pf, CoV / sqrt(k) for equal runs
    runs = result.details["runs"]
    assert result.pf == pytest.approx(np.mean([r["pf"] for r in runs]))
    assert result.cov == pytest.approx(math.sqrt(np.mean([r["cov"]**2 for r in runs]) / 5))
    # no budget, or a budget of one run: never repeated, plain 95 % level
    for no_more in (None, N_CRUDE):
        same, _, level = sample_until_decided(first, rerun_of(case, 3), EXACT_BETA, no_more)
        assert same is first and level == pytest.approx(0.95)


def test_sampling_until_decided_decides_and_agrees_with_the_exact_side():
    # target 2.35 below the exact 2.5: more samples should settle "meets" in most seeds; a
    # wrong-side verdict over all looks is bounded by 2.5 % (Bonferroni over the looks)
    case = r_minus_s()
    k, budget = 60, 20 * N_CRUDE
    verdicts = []
    for seed in range(k):
        first = crude_monte_carlo(case.problem, n=N_CRUDE, seed=seed)
        _, verdict, _ = sample_until_decided(first, rerun_of(case, seed), 2.35, budget)
        verdicts.append(verdict)
    assert verdicts.count(BELOW) <= allowed(k, 0.025)
    # the pooled CoV after 20 runs is about 0.28 / sqrt(20) = 0.063, se_beta about 0.016 x 2.8
    # (99.75 % level) = 0.045 << 0.15: nearly all decide (measured 60 of 60)
    assert verdicts.count(MEETS) >= k - allowed(k, 0.05)


def test_no_significant_change_between_two_estimates_of_the_same_beta():
    # Two independent runs of the same problem (exact beta 2.5): the change is noise and is
    # called significant in at most about 5 % of pairs (the independent-sum rule is exact for
    # independent runs); a true change of 0.5 in beta is seen in nearly every pair.
    same = r_minus_s()
    higher = linear_normal(mean_r=150.0 + 3.0 * math.hypot(30.0, 30.0))  # beta 3.0
    k = 100
    noise_called, change_seen = 0, 0
    for seed in range(k):
        a = crude_monte_carlo(same.problem, n=N_CRUDE, seed=seed)
        b = crude_monte_carlo(same.problem, n=N_CRUDE, seed=seed + 50_000)
        noise_called += change_text(a, b) != NO_SIGNIFICANT_CHANGE
        c = crude_monte_carlo(higher.problem, n=20 * N_CRUDE, seed=seed + 90_000)
        change_seen += change_text(a, c) != NO_SIGNIFICANT_CHANGE
    assert noise_called <= allowed(k, 0.05)
    assert change_seen >= k - allowed(k, 0.05)


def test_change_text_and_standard_error():
    # 4.715 -> 4.700 with CoVs of 0.45 (the example) is noise
    before = fake(float(stats.norm.sf(4.715)), 0.45)
    after = fake(float(stats.norm.sf(4.700)), 0.45)
    assert change_text(before, after) == NO_SIGNIFICANT_CHANGE
    # FORM-like results without sampling error: any change is a change
    exact = ReliabilityResult("form", float(stats.norm.sf(3.0)), 3.0, math.nan, 10)
    moved = ReliabilityResult("form", float(stats.norm.sf(3.2)), 3.2, math.nan, 10)
    assert change_text(exact, moved) == "+0.20"
    # delta method: se_beta = s pf / phi(beta), s = sqrt(ln(1 + CoV^2)); by finite differences
    pf, cov = 1e-3, 0.2
    s = math.sqrt(math.log1p(cov**2))
    slope = (stats.norm.isf(pf * math.exp(1e-6)) - stats.norm.isf(pf)) / 1e-6
    assert beta_standard_error(pf, cov) == pytest.approx(abs(slope) * s, rel=1e-4)
    assert math.isnan(beta_standard_error(0.0, 0.2))


def test_looks_level_is_bonferroni():
    assert looks_level(0.95, 1) == pytest.approx(0.95)
    assert looks_level(0.95, 10) == pytest.approx(0.995)


def test_portfolio_action_does_not_call_an_undecided_member_safe():
    from assess.portfolio.summary import recommended_action

    member = {"beta_now": 4.21, "target": 4.2, "verdict": "undecided"}
    assert recommended_action({}, member).startswith("check: undecided")
    assert recommended_action({}, {**member, "verdict": "meets target"}).startswith("keep")
