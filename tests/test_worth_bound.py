"""Run-time check of EVSI <= EVPI (Raiffa & Schlaifer 1961, *Applied Statistical Decision
Theory*, from memory: sample information is never worth more than perfect information).

The law holds for the exact expectations; with few simulated outcomes the EVSI estimate
is noisy and can exceed the EVPI estimate. The analysis must then warn, giving both
estimates with their standard errors, and never stay silent.
"""

import math
import warnings

import numpy as np
from scipy import stats

from assess.worth import (
    Alternative,
    DecisionProblem,
    DirectMeasurement,
    WorthAboveBoundWarning,
    check_evsi_below_evpi,
    value_of_information,
)

N_DRAWS = 400


def _problem():
    """Two alternatives; pf of 'keep' depends on one parameter mu ~ N(0, 1) (invented)."""
    rng = np.random.default_rng(7)
    mu = rng.standard_normal(N_DRAWS)
    keep = stats.norm.cdf(-2.0 + mu)  # weak draws fail often
    strengthen = np.full(N_DRAWS, 1e-4)
    return DecisionProblem(
        alternatives=[Alternative("keep as is", 0.0), Alternative("strengthen", 2.0e4)],
        failure_cost=1.0e6, theta=mu[:, None], parameter_names=["mu"],
        pf=np.column_stack([keep, strengthen]))


def test_a_nearly_perfect_test_with_few_outcomes_breaks_the_bound_and_warns():
    # A reading of mu with error 1e-3 is nearly perfect information: each outcome picks one
    # draw, so the EVSI estimate is the mean regret of J = 3 random draws, while the EVPI is
    # the mean regret of all N draws. With J = 3 the EVSI estimate is above the EVPI for
    # some seeds (noise) and below for others; each case must be reported accordingly.
    problem = _problem()
    programme = DirectMeasurement("exact mu", 100.0, "mu", error_sd=1e-3)
    above = below = 0
    for seed in range(20):
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            result = value_of_information(problem, programme, n_outcomes=3, seed=seed)
        flagged = [w for w in caught if issubclass(w.category, WorthAboveBoundWarning)]
        if result.evsi > result.evpi:
            above += 1
            assert len(flagged) == 1
            text = str(flagged[0].message)
            assert f"{result.evsi_standard_error:,.0f}" in text
            assert f"{result.evpi_standard_error:,.0f}" in text
            assert any("exceeds the value of perfect information" in n for n in result.warnings)
        else:
            below += 1
            assert not flagged
    assert above >= 1 and below >= 1


def test_many_outcomes_keep_the_bound_without_warning():
    problem = _problem()
    programme = DirectMeasurement("rough mu", 100.0, "mu", error_sd=1.0)
    with warnings.catch_warnings():
        warnings.simplefilter("error", WorthAboveBoundWarning)
        result = value_of_information(problem, programme, n_outcomes=2000, seed=1)
    assert result.evsi <= result.evpi


def test_the_check_says_noise_or_fault_from_the_standard_errors():
    with warnings.catch_warnings(record=True):
        warnings.simplefilter("always")
        noise = check_evsi_below_evpi("a", 105.0, 3.0, 100.0, 2.0)
        fault = check_evsi_below_evpi("b", 200.0, 3.0, 100.0, 2.0)
        none = check_evsi_below_evpi("c", 99.0, 3.0, 100.0, 2.0)
    # 5 <= 3 hypot(3, 2) = 10.8: within noise; 100 > 10.8: beyond
    assert "sampling noise" in noise and math.hypot(3, 2) * 3 > 5
    assert "beyond 3 combined standard errors" in fault
    assert none is None
