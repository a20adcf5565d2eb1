"""Laws that any value-of-information analysis must obey, and the decision bookkeeping.

Laws (Raiffa & Schlaifer 1961, *Applied Statistical Decision Theory*, from memory):
the expected value of sample information is never negative and never above the
expected value of perfect information; it vanishes for an uninformative test and
tends to the EVPI for a perfect measurement of the variable that decides; a more
informative experiment is worth at least as much (Blackwell 1953, "Equivalent
comparisons of experiments", Ann. Math. Stat. 24(2):265-272, from memory).
"""

import math
import warnings

import numpy as np
import pytest
from scipy import stats

from assess.errors import InputError
from assess.worth import (
    Alternative,
    BreakoutSurvey,
    CoreSampling,
    CustomProgramme,
    DecisionProblem,
    DirectMeasurement,
    HalfCellSurvey,
    LowEffectiveSampleSizeWarning,
    discount_factors,
    rank_programmes,
    value_of_information,
)

N_DRAWS = 4000
# JCSS PMC Part 3.1, prior for ln f_c of ready-mixed C25: m' = 3.65, n' = 3, s' = 0.12,
# nu' = 10. The member and costs below are invented.
M0, N0, S0, NU0 = 3.65, 3.0, 0.12, 10.0
LN_REQUIRED = math.log(24.0)
OTHER_SD = 0.10
FAILURE_COST = 1.0e7


def _draws(seed=1):
    rng = np.random.default_rng(seed)
    precision = rng.gamma(NU0 / 2.0, 2.0 / (NU0 * S0 ** 2), N_DRAWS)
    sigma = 1.0 / np.sqrt(precision)
    mu = rng.normal(M0, sigma / math.sqrt(N0))
    p_active = rng.beta(2.0, 5.0, N_DRAWS)
    ratio_mean = rng.normal(0.9, 0.04, N_DRAWS)
    ratio_sd = rng.uniform(0.02, 0.06, N_DRAWS)
    return np.column_stack([mu, sigma, p_active, ratio_mean, ratio_sd])


NAMES = ["mu", "sigma", "p_active", "ratio_mean", "ratio_sd"]


def _problem(sigma_in_pf=True, seed=1):
    theta = _draws(seed)
    mu, sigma = theta[:, 0], theta[:, 1]
    spread = np.sqrt((sigma if sigma_in_pf else S0) ** 2 + OTHER_SD ** 2)

    def pf(capacity_factor):
        return stats.norm.cdf((LN_REQUIRED - math.log(capacity_factor) - mu) / spread)

    return DecisionProblem(
        alternatives=[Alternative("keep as is", 0.0), Alternative("strengthen", 40e3),
                      Alternative("replace", 400e3)],
        failure_cost=FAILURE_COST, theta=theta, parameter_names=NAMES,
        pf=np.column_stack([pf(1.0), pf(1.25), np.full(N_DRAWS, 1e-6)]))


def _combined_se(*results):
    return math.sqrt(sum(r.evsi_standard_error ** 2 for r in results))


@pytest.fixture(scope="module")
def problem():
    return _problem()


@pytest.mark.filterwarnings("ignore::assess.worth.LowEffectiveSampleSizeWarning")
def test_value_is_never_negative_nor_above_perfect_information(problem):
    programmes = [
        CoreSampling("3 cores", 3000.0, 3, "mu", "sigma", measurement_sd=0.05),
        CoreSampling("12 cores", 9000.0, 12, "mu", "sigma", measurement_sd=0.05),
        DirectMeasurement("mean strength", 1000.0, "mu", error_sd=0.05),
        HalfCellSurvey("half-cell", 2000.0, 40, "p_active", 0.8, 0.1),
        BreakoutSurvey("break-outs", 4000.0, 4, "ratio_mean", "ratio_sd", 0.01),
    ]
    results = {p.name: value_of_information(problem, p, n_outcomes=400, seed=3)
               for p in programmes}
    for result in results.values():
        assert result.evsi >= 0.0
        assert result.evsi <= result.evpi + 3.0 * math.hypot(result.evsi_standard_error,
                                                              result.evpi_standard_error)
        assert math.isclose(result.net_value, result.evsi - result.programme_cost)
    # Blackwell (1953): 12 cores are more informative than 3, hence worth at least as much.
    few, many = results["3 cores"], results["12 cores"]
    assert many.evsi >= few.evsi - 3.0 * _combined_se(few, many)
    # the strength tests inform this decision, so their value is clearly positive
    assert many.evsi > 3.0 * many.evsi_standard_error


def test_value_tends_to_zero_as_measurement_error_grows(problem):
    errors = [0.02, 0.05, 0.1, 0.2, 0.5, 5.0]  # prior sd of mu is about 0.075 ln MPa
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LowEffectiveSampleSizeWarning)
        values = [value_of_information(problem, DirectMeasurement(f"sd {e}", 0.0, "mu", e),
                                       n_outcomes=400, seed=5) for e in errors]
    evsi = np.array([v.evsi for v in values])
    # strictly smaller while the reading can still change the decision, then zero: a
    # reading too coarse to ever overturn the prior choice is worth nothing
    positive = evsi > 0
    assert positive[0] and np.all(np.diff(positive.astype(int)) <= 0)
    assert np.all(np.diff(evsi[positive]) < 0) and np.all(np.diff(evsi) <= 0)
    # a reading with 70 times the prior spread tells next to nothing
    assert evsi[-1] < 0.01 * values[0].evpi


def test_value_tends_to_perfect_information_as_measurement_error_shrinks():
    # pf of every alternative depends on mu alone, so measuring mu exactly is perfect
    # information; the weights then collapse, which must raise the low-ESS warning.
    problem = _problem(sigma_in_pf=False)
    with pytest.warns(LowEffectiveSampleSizeWarning, match="effective sample size"):
        result = value_of_information(problem, DirectMeasurement("exact", 0.0, "mu", 1e-5),
                                      n_outcomes=1000, seed=7)
    assert abs(result.evsi - result.evpi) <= 3.0 * math.hypot(result.evsi_standard_error,
                                                              result.evpi_standard_error)
    assert result.warnings and result.effective_sample_size.min() < 50


def test_uninformative_programmes_are_worth_exactly_zero(problem):
    # PoD = PFA: the count of indications does not depend on the corrosion state.
    blind_survey = HalfCellSurvey("blind survey", 500.0, 30, "p_active", 0.3, 0.3)
    # a likelihood that does not depend on theta at all
    unrelated = CustomProgramme(
        "unrelated", 100.0,
        simulate_outcomes=lambda theta, rng: rng.normal(size=(theta.shape[0], 1)),
        outcome_log_likelihood=lambda z, theta: np.broadcast_to(
            -0.5 * np.asarray(z)[:, :1] ** 2, (np.shape(z)[0], theta.shape[0])))
    for programme in (blind_survey, unrelated):
        result = value_of_information(problem, programme, n_outcomes=300, seed=9,
                                      target_beta=2.0)
        assert result.evsi == 0.0
        assert result.net_value == -programme.cost
        assert result.decision_shares[result.prior_decision] == 1.0
        # the posterior equals the prior, so "adequate" is the prior verdict every time
        assert result.probability_adequate == float(result.prior_beta >= 2.0)
        assert np.allclose(result.posterior_beta, result.prior_beta, rtol=1e-9)


def test_common_random_numbers_and_reproducibility(problem):
    cores = CoreSampling("6 cores", 5000.0, 6, "mu", "sigma", 0.05,
                         description="drilling 6 more cores in zone L2")
    survey = HalfCellSurvey("survey", 2500.0, 40, "p_active", 0.85, 0.15)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LowEffectiveSampleSizeWarning)
        ranking = rank_programmes(problem, [survey, cores], n_outcomes=300, seed=21,
                                  target_beta=2.5)
        alone = value_of_information(problem, cores, n_outcomes=300, seed=21, target_beta=2.5)
        again = value_of_information(problem, cores, n_outcomes=300, seed=21, target_beta=2.5)
    assert alone.to_dict() == again.to_dict()
    ranked_cores = next(r for r in ranking.results if r.programme == "6 cores")
    assert ranked_cores.evsi == alone.evsi
    nets = [r.net_value for r in ranking.results]
    assert nets == sorted(nets, reverse=True)
    text = ranking.recommendation
    top = ranking.results[0]
    assert top.description[1:] in text
    assert "Decision support only" in text and "licensed structural engineer" in text
    assert "depend on" in text


def test_adequacy_criterion_given_as_function_matches_target_beta(problem):
    # beta >= target  <=>  E[pf | z] <= Phi(-target) (beta = -Phi^-1(pf), monotone)
    keep_pf = problem.horizon_pf[:, problem.keep_index]
    survey = HalfCellSurvey("survey", 2500.0, 40, "p_active", 0.85, 0.15)
    cores = CoreSampling("cores", 5000.0, 6, "mu", "sigma", 0.05)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LowEffectiveSampleSizeWarning)
        # prior beta is 2.43; the survey hardly moves it, the cores do
        for programme, target in ((survey, 2.43), (cores, 2.5)):
            limit = stats.norm.sf(target)
            by_target = value_of_information(problem, programme, n_outcomes=200, seed=4,
                                             target_beta=target)
            by_function = value_of_information(problem, programme, n_outcomes=200, seed=4,
                                               is_adequate=lambda w: w @ keep_pf <= limit)
            assert by_function.probability_adequate == by_target.probability_adequate
            assert 0.0 < by_target.probability_adequate < 1.0
    no_criterion = value_of_information(problem, survey, n_outcomes=50, seed=4)
    assert math.isnan(no_criterion.probability_adequate)


def test_annual_form_and_discounting():
    theta = _draws()[:200]
    rng = np.random.default_rng(2)
    annual = rng.uniform(0.0, 2e-3, size=(200, 2, 25))
    alternatives = [Alternative("keep as is", 0.0), Alternative("repair", 5e4)]
    undiscounted = DecisionProblem(alternatives, 1e6, theta, NAMES, annual_pf=annual)
    horizon = DecisionProblem(alternatives, 1e6, theta, NAMES, pf=annual.sum(axis=2))
    np.testing.assert_allclose(undiscounted.expected_costs(), horizon.expected_costs(),
                               rtol=1e-12)
    # present value of a constant annual amount: sum_t (1+r)^-t = (1 - (1+r)^-T) / r
    # (annuity factor, standard financial mathematics)
    rate, years, p = 0.03, 25, 1e-3
    assert discount_factors(rate, years).sum() == pytest.approx(
        (1 - (1 + rate) ** -years) / rate, rel=1e-12)
    constant = DecisionProblem(alternatives, 1e6, theta, NAMES,
                               annual_pf=np.full((200, 2, years), p), discount_rate=rate)
    expected_failure = 1e6 * p * (1 - (1 + rate) ** -years) / rate
    np.testing.assert_allclose(constant.expected_costs(),
                               [expected_failure, 5e4 + expected_failure], rtol=1e-12)
    np.testing.assert_allclose(constant.horizon_pf, years * p, rtol=1e-12)


def test_bad_inputs_name_what_is_wrong():
    theta = _draws()[:10]
    alternatives = [Alternative("keep as is", 0.0), Alternative("repair", 5e4)]
    with pytest.raises(InputError, match=r"pf.*\[0, 1\]"):
        DecisionProblem(alternatives, 1e6, theta, NAMES, pf=np.full((10, 2), 1.5))
    with pytest.raises(InputError, match=r"shape \(N, A\) = \(10, 2\)"):
        DecisionProblem(alternatives, 1e6, theta, NAMES, pf=np.zeros((10, 3)))
    with pytest.raises(InputError, match="exactly one of pf"):
        DecisionProblem(alternatives, 1e6, theta, NAMES)
    with pytest.raises(InputError, match="annual form"):
        DecisionProblem(alternatives, 1e6, theta, NAMES, pf=np.zeros((10, 2)),
                        discount_rate=0.02)
    with pytest.raises(InputError, match="unique"):
        DecisionProblem([Alternative("a", 0.0), Alternative("a", 1.0)], 1e6, theta, NAMES,
                        pf=np.zeros((10, 2)))
    problem = DecisionProblem(alternatives, 1e6, theta, NAMES, pf=np.zeros((10, 2)))
    with pytest.raises(InputError, match=r"no parameter named 'mean_lnfc'.*'mu'"):
        value_of_information(problem, CoreSampling("c", 1.0, 3, "mean_lnfc", "sigma"),
                             n_outcomes=10, seed=0)
    with pytest.raises(InputError, match="n_cores"):
        CoreSampling("c", 1.0, 0, "mu", "sigma")
    with pytest.raises(InputError, match="probability_of_detection"):
        HalfCellSurvey("h", 1.0, 10, "p_active", 1.2, 0.1)
