"""The path from an uncertain population into a reliability analysis.

Reference: the Student-t predictive of the normal-gamma model (JCSS Probabilistic
Model Code, Part 3.0, Annex A); its cdf from scipy.stats.t.
"""

import numpy as np
import pytest

from assess.model import ProbabilisticModel
from assess.priors.normal_gamma import NormalGamma
from assess.reliability.dispatch import run_method
from assess.updating.to_model import add_uncertain_quantity, predictive_probability_below

# JCSS PMC Part 3.1, ready-mixed C25 prior for ln f_c: m'=3.65, n'=3, s'=0.12, nu'=10.
PRIOR_C25 = NormalGamma.from_jcss(3.65, 3.0, 0.12, 10.0)


def tail_problem(population, threshold):
    model = ProbabilisticModel()
    add_uncertain_quantity(model, "fc", population)
    return model.problem(lambda x: x["fc"] - threshold)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_far_tail_of_prior_strength_equals_student_t(seed):
    threshold = 12.0  # [MPa], pf about 4e-6
    exact = predictive_probability_below(PRIOR_C25, threshold)
    result = run_method(tail_problem(PRIOR_C25, threshold), "subset_simulation", seed=seed)
    assert abs(result.pf - exact) < 3 * result.cov * exact


@pytest.mark.parametrize("seed", [4, 5])
def test_far_tail_through_fitted_posterior_draws_equals_student_t(seed):
    cores = np.log([31.2, 27.5, 35.1, 29.8, 33.0, 26.4])  # [ln MPa] test input
    posterior = PRIOR_C25.update(cores)
    p = posterior.jcss
    # Exact posterior draws (normal-gamma), as an MCMC run would give them.
    rng = np.random.default_rng(100 + seed)
    precision = rng.gamma(posterior.shape, 1.0 / posterior.rate, 4000)
    sigma = 1.0 / np.sqrt(precision)
    mu = p["m"] + rng.normal(0.0, posterior.z_std, precision.size) * sigma
    fitted = NormalGamma.fit_draws(mu, sigma)
    threshold = 15.0  # [MPa], pf about 4e-5
    exact = predictive_probability_below(posterior, threshold)
    result = run_method(tail_problem(fitted, threshold), "subset_simulation", seed=seed)
    assert abs(result.pf - exact) < 3 * result.cov * exact


def test_form_ranks_the_physical_scatter_first_for_a_well_tested_population():
    # Many tests make the parameters well known: the scatter of the strength itself
    # must dominate the importance factors.
    rng = np.random.default_rng(0)
    tested = PRIOR_C25.update(rng.normal(3.6, 0.12, 200))
    result = run_method(tail_problem(tested, 20.0), "form")
    factors = result.importance_factors
    assert factors["fc"] > 0.8
    assert sum(factors.values()) == pytest.approx(1.0, abs=1e-9)
