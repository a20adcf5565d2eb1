"""Raiffa & Schlaifer closed-form value of information, and the Monte Carlo engine against it.

Source of every closed form here: Raiffa & Schlaifer (1961) *Applied Statistical
Decision Theory*, Harvard University, two actions with linear loss, normal prior on an
unknown mean, normal sampling with known standard deviation (from memory).
"""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.errors import InputError
from assess.worth import (
    Alternative,
    DecisionProblem,
    DirectMeasurement,
    TwoActionLinearLoss,
    posterior_sd,
    preposterior_sd,
    unit_normal_loss,
    value_of_information,
)


@pytest.mark.parametrize("u", [-2.0, -0.5, 0.0, 0.3, 1.0, 2.5, 4.0])
def test_unit_normal_loss_against_numerical_integration(u):
    # Raiffa & Schlaifer (1961): G(u) = integral_u^inf (x - u) phi(x) dx; reference by
    # scipy.integrate.quad of that definition.
    reference, _ = integrate.quad(lambda x: (x - u) * stats.norm.pdf(x), u, np.inf,
                                  epsabs=1e-13, epsrel=1e-12)
    assert unit_normal_loss(u) == pytest.approx(reference, rel=1e-9, abs=1e-13)


def test_unit_normal_loss_tabulated_values():
    # G(0) = 1/sqrt(2 pi) = 0.3989 and G(1) = 0.0833 (computed).
    assert unit_normal_loss(0.0) == pytest.approx(0.3989, abs=5e-5)
    assert unit_normal_loss(1.0) == pytest.approx(0.0833, abs=5e-5)


def test_preposterior_variance_identity():
    # Raiffa & Schlaifer (1961): sigma*^2 = sigma'^2 - sigma''^2 with
    # sigma''^2 = 1 / (1/sigma'^2 + n/sigma^2) (conjugate normal update).
    prior_sd, sampling_sd, n = 0.07, 0.12, np.array([1, 3, 10, 100])
    s2 = posterior_sd(prior_sd, sampling_sd, n) ** 2
    assert np.allclose(s2, 1.0 / (1.0 / prior_sd ** 2 + n / sampling_sd ** 2), rtol=1e-12)
    assert np.allclose(preposterior_sd(prior_sd, sampling_sd, n) ** 2, prior_sd ** 2 - s2,
                       rtol=1e-10)


def test_closed_form_evsi_equals_its_defining_integral():
    # Definition (Raiffa & Schlaifer 1961): EVSI = E over the posterior mean m'' ~ N(m', s*^2)
    # of the loss avoided. With m' < mu_b the prior choice is the act that is best below
    # mu_b; the test avoids k_t (m'' - mu_b) when m'' > mu_b. Integrated with
    # scipy.integrate.quad.
    problem = TwoActionLinearLoss(prior_mean=0.2, prior_sd=1.5, break_even=0.9, loss_slope=40.0)
    s_star = preposterior_sd(1.5, 2.0, 3)
    reference, _ = integrate.quad(
        lambda m: 40.0 * max(0.0, m - 0.9) * stats.norm.pdf(m, 0.2, s_star), 0.9, np.inf)
    assert problem.evsi(2.0, 3) == pytest.approx(reference, rel=1e-8)
    evpi_reference, _ = integrate.quad(
        lambda m: 40.0 * max(0.0, m - 0.9) * stats.norm.pdf(m, 0.2, 1.5), 0.9, np.inf)
    assert problem.evpi() == pytest.approx(evpi_reference, rel=1e-8)


def test_closed_form_limits():
    # Raiffa & Schlaifer (1961): EVSI(0) = 0, EVSI increases with n towards EVPI.
    problem = TwoActionLinearLoss(prior_mean=0.0, prior_sd=1.0, break_even=0.5, loss_slope=1.0)
    values = problem.evsi(1.0, np.array([0, 1, 4, 16, 10_000]))
    assert values[0] == 0.0
    assert np.all(np.diff(values) > 0)
    assert values[-1] == pytest.approx(problem.evpi(), rel=1e-3)
    n_best, gain = problem.best_sample_size(1.0, fixed_cost=0.01, cost_per_observation=0.002)
    assert n_best >= 1 and gain == pytest.approx(
        problem.evsi(1.0, n_best) - 0.01 - 0.002 * n_best)
    assert problem.best_sample_size(1.0, fixed_cost=1.0, cost_per_observation=0.0) == (0, 0.0)


def test_closed_form_rejects_bad_input():
    with pytest.raises(InputError, match="prior_sd"):
        TwoActionLinearLoss(prior_mean=0.0, prior_sd=0.0, break_even=0.5, loss_slope=1.0)


# Engine set-up equivalent to the closed form. Costs linear in mu through pf:
# keep: C = 0 + C_F (P0 - b mu); repair: C = c_r + C_F p_r. Break-even
# mu_b = (P0 - p_r - c_r/C_F)/b; loss slope k_t = C_F b. pf stays in [0, 1] for |mu| < 8.
FAILURE_COST = 1.0e6
P0, SLOPE, P_REPAIR = 0.5, 0.05, 0.1


def _linear_problem(prior_mean, prior_sd, break_even, n_draws):
    # Prior draws of mu on stratified quantiles, so that their empirical distribution
    # matches N(m', sigma'^2) closely (the closed form is for the exact normal prior).
    u = (np.arange(n_draws) + 0.5) / n_draws
    mu = prior_mean + prior_sd * stats.norm.ppf(u)
    repair_cost = FAILURE_COST * (P0 - P_REPAIR - SLOPE * break_even)
    pf = np.column_stack([P0 - SLOPE * mu, np.full(n_draws, P_REPAIR)])
    problem = DecisionProblem(
        alternatives=[Alternative("keep as is", 0.0), Alternative("repair", repair_cost)],
        failure_cost=FAILURE_COST, theta=mu[:, None], parameter_names=["mu"], pf=pf)
    closed = TwoActionLinearLoss(prior_mean=prior_mean, prior_sd=prior_sd,
                                 break_even=break_even, loss_slope=FAILURE_COST * SLOPE)
    return problem, closed


# A few far-tail outcomes can have an ESS a little below 50 among the 12000 draws.
@pytest.mark.filterwarnings("ignore::assess.worth.LowEffectiveSampleSizeWarning")
@pytest.mark.parametrize("prior_mean, prior_sd, break_even, sampling_sd, n", [
    (0.0, 1.0, 0.5, 1.0, 1),
    (0.0, 1.0, 0.5, 1.0, 4),
    (1.0, 0.8, 0.4, 2.5, 3),
])
def test_engine_reproduces_raiffa_schlaifer_evsi_and_evpi(prior_mean, prior_sd, break_even,
                                                          sampling_sd, n):
    problem, closed = _linear_problem(prior_mean, prior_sd, break_even, n_draws=12_000)
    programme = DirectMeasurement(name="n readings of mu", cost=0.0, column="mu",
                                  error_sd=sampling_sd, n_repeats=n)
    result = value_of_information(problem, programme, n_outcomes=2500, seed=11)
    # Raiffa & Schlaifer (1961): EVSI(n) = k_t sigma* G(D*), within 3 Monte Carlo SE.
    expected_evsi = closed.evsi(sampling_sd, n)
    assert abs(result.evsi - expected_evsi) <= 3.0 * result.evsi_standard_error
    # Raiffa & Schlaifer (1961): EVPI = k_t sigma' G(D'), within 3 Monte Carlo SE.
    assert abs(result.evpi - closed.evpi()) <= 3.0 * result.evpi_standard_error
    # the 3-SE band must be narrower than about half the EVSI, or the check could not fail
    assert result.evsi_standard_error < 0.15 * expected_evsi
    assert math.isclose(result.expected_cost_with_test,
                        result.prior_expected_cost - result.evsi)
