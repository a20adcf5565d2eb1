"""Subset simulation (issue 14) on linear limit states, against the closed form.

g = beta |a| - a.u in standard normal variables has pf = Phi(-beta) exactly (closed form;
scipy.stats.norm). Each case runs the engine's defaults a modest number of times with fixed
seeds and checks, with tolerances from the estimator's own reported CoV:

- honesty: if the reported CoV is right, (n - 1) s^2 / sigma^2 of ln pf over n independent
  runs follows a chi-square law with n - 1 degrees of freedom (ln pf close to normal,
  sigma^2 = mean of ln(1 + CoV^2)); its 0.1 % and 99.9 % quantiles bound the ratio;
- bias: the mean pf of the n runs lies within 3.5 standard errors of Phi(-beta), the
  standard error taken from the reported CoVs, pf sqrt(mean(CoV^2) / n).

The 200-run study at pf 1e-4 and 1e-6 in 2 and 100 dimensions is in
benchmarks/reliability_methods.py (section 2). 2-D at pf 1e-4 is checked in
tests/test_sampling_methods.py.
"""

import math

import numpy as np
import pytest
from scipy import stats

from assess.errors import InputError
from assess.reliability import StandardNormalProblem, subset_simulation
from assess.reliability.subset import _ChainSampler
from tests.reference_problems import four_branch_series, linear_standard_normal


@pytest.mark.parametrize(("dim", "pf", "runs"), [(2, 1e-6, 60), (100, 1e-6, 30),
                                                 (100, 1e-4, 30)])
def test_reported_cov_and_mean_pf_against_the_closed_form(dim, pf, runs):
    beta = float(stats.norm.isf(pf))
    logs, covs = [], []
    for seed in range(runs):
        result = subset_simulation(linear_standard_normal(dim, beta).problem,
                                   seed=5000 + seed)
        assert result.converged and result.pf > 0
        logs.append(math.log(result.pf))
        covs.append(result.cov)
    covs = np.asarray(covs)
    ratio = np.var(logs, ddof=1) / float(np.mean(np.log1p(covs**2)))
    low, high = stats.chi2.ppf([0.001, 0.999], runs - 1) / (runs - 1)
    assert low <= ratio <= high, (ratio, low, high)
    pfs = np.exp(logs)
    exact = float(stats.norm.sf(beta))
    standard_error = exact * math.sqrt(float(np.mean(covs**2)) / runs)
    assert abs(pfs.mean() - exact) <= 3.5 * standard_error, (pfs.mean(), exact)


def test_directional_chains_keep_the_conditional_normal_law():
    # Start 4000 chains from exact draws of the standard normal conditional on the half-plane
    # a.u >= c (a unit vector; t = a.u then follows the normal truncated to [c, inf), the
    # orthogonal part stays standard normal - closed form, scipy.stats.norm). A chain kernel
    # that keeps this law invariant leaves, after 9 steps (4 of them directional),
    # P(t >= c + d) = Phi(-(c + d)) / Phi(-c); checked at 4 binomial sigmas.
    rng = np.random.default_rng(4)
    a, a_perp, c, n = np.array([0.6, 0.8]), np.array([-0.8, 0.6]), 3.0, 4000
    t = stats.norm.isf(rng.random(n) * stats.norm.sf(c))
    seeds = t[:, None] * a + rng.standard_normal(n)[:, None] * a_perp
    problem = StandardNormalProblem(lambda u: c - u @ a, 2)
    sampler = _ChainSampler("acs", rng, directional=True)
    run = sampler.run(problem, seeds, problem.g(seeds), 0.0, np.full(n, 10))
    last = run["chain_u"][-1]
    assert np.mean(np.any(run["chain_u"][-1] != seeds, axis=1)) > 0.9   # the chains moved
    for d in (0.1, 0.3, 0.6):
        exact = stats.norm.sf(c + d) / stats.norm.sf(c)
        assert abs(np.mean(last @ a >= c + d) - exact) <= 4 * math.sqrt(exact * (1 - exact) / n)
    w = last @ a_perp
    assert abs(w.mean()) <= 4 / math.sqrt(n)
    assert abs(w.var() - 1.0) <= 4 * math.sqrt(2 / n)


def test_directional_steps_only_where_they_suit():
    # Used in 2-D with one failure region; not in 100-D (fewer than 10 seeds per variable)
    # nor for the four-branch system (regions all round the origin); directional=False
    # turns them off; anything but None/True/False is refused.
    two = subset_simulation(linear_standard_normal(2, 3.0).problem, seed=1)
    assert two.details["directional_levels"] > 0
    assert subset_simulation(linear_standard_normal(100, 3.0).problem,
                             seed=1).details["directional_levels"] == 0
    assert subset_simulation(four_branch_series().problem,
                             seed=1).details["directional_levels"] == 0
    assert subset_simulation(linear_standard_normal(2, 3.0).problem, seed=1,
                             directional=False).details["directional_levels"] == 0
    with pytest.raises(InputError, match="directional"):
        subset_simulation(linear_standard_normal(2, 3.0).problem, directional="yes")
