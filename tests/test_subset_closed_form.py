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

from assess.reliability import subset_simulation
from tests.reference_problems import linear_standard_normal


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
