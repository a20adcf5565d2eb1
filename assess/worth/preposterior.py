"""Preposterior analysis: value of information of candidate test programmes.

For J simulated outcomes z_j of a programme (theta_j drawn from the current
draws, z_j from the programme's measurement model) the N current draws are
re-weighted, w_jk proportional to L(z_j | theta_k), the best alternative is
picked for each outcome, and the results are averaged over outcomes.

Sources (from memory): Raiffa & Schlaifer (1961) *Applied Statistical Decision
Theory*, Harvard University (preposterior analysis, EVSI, EVPI); Straub (2014)
"Value of information analysis with structural reliability methods", Struct.
Saf. 49:75-85 (re-weighting one fixed prior sample); Kish (1965) *Survey
Sampling*, Wiley (effective sample size 1 / sum w^2).
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from typing import Callable, Sequence

import numpy as np
from scipy import stats

from assess.cautions import CAUTION
from assess.errors import AnalysisError, InputError
from assess.worth.decision import DecisionProblem
from assess.worth.programmes import Programme

# Outcome rows are processed in blocks so that a (block, N) array stays near this size.
_BLOCK_ELEMENTS = 2_000_000


class LowEffectiveSampleSizeWarning(UserWarning):
    """Re-weighting left too few effective draws for some simulated outcomes."""


class WorthAboveBoundWarning(UserWarning):
    """The EVSI estimate exceeds the EVPI estimate: sampling noise broke EVSI <= EVPI."""


def check_evsi_below_evpi(name: str, evsi: float, evsi_se: float, evpi: float,
                          evpi_se: float, currency: str = "") -> str | None:
    """Check the law EVSI <= EVPI on the estimates; warn and return the message when broken.

    EVSI <= EVPI holds for the exact expectations (Raiffa & Schlaifer 1961, from
    memory); the estimates carry Monte Carlo error (J outcomes for the EVSI, N
    draws for the EVPI), so an estimate may break it. The warning gives both
    estimates with their standard errors and says whether the excess is within
    3 combined standard errors (noise) or beyond (a fault in the set-up).

    Returns
    -------
    str or None
        The message, or None when EVSI <= EVPI.
    """
    if not (evsi > evpi):
        return None
    combined = math.hypot(evsi_se, evpi_se)
    unit = f" {currency}" if currency else ""
    within = evsi - evpi <= 3.0 * combined
    message = (f"programme '{name}': the value of information estimate {evsi:,.0f}{unit} "
               f"(standard error {evsi_se:,.0f}) exceeds the value of perfect information "
               f"{evpi:,.0f}{unit} (standard error {evpi_se:,.0f}), which it can never exceed; "
               + ("the excess is within 3 combined standard errors, i.e. sampling noise: "
                  "use more simulated outcomes." if within else
                  "the excess is beyond 3 combined standard errors: check the programme's "
                  "measurement model and the decision set-up."))
    warnings.warn(message, WorthAboveBoundWarning, stacklevel=3)
    return message


@dataclasses.dataclass(frozen=True, eq=False)
class WorthResult:
    """Value of information of one test programme.

    Costs are in the problem's currency at decision time; the programme cost is
    not included in ``expected_cost_with_test``.

    Attributes
    ----------
    programme : str
        Name of the programme.
    description : str
        Plain-language description of the programme.
    programme_cost : float
        Cost of the programme [currency].
    prior_decision : str
        Best alternative on current knowledge.
    prior_expected_costs : dict
        Expected cost of each alternative on current knowledge [currency].
    prior_expected_cost : float
        Expected cost of the best alternative on current knowledge [currency].
    expected_cost_with_test : float
        Preposterior expected cost E_z[min_a E[C_a | z]] [currency].
    evsi : float
        Expected value of sample information [currency], >= 0.
    evsi_standard_error : float
        Monte Carlo standard error of ``evsi`` over the J outcomes [currency].
    evpi : float
        Expected value of perfect information, upper bound of ``evsi`` [currency].
    evpi_standard_error : float
        Monte Carlo standard error of ``evpi`` over the N draws [currency].
    net_value : float
        evsi - programme_cost [currency]; > 0 means the test is expected to pay.
    target_beta : float or None
        Target reliability index used for ``probability_adequate`` [-].
    prior_beta : float
        Reliability index of the "keep" alternative on current knowledge [-].
    probability_adequate : float
        Probability that the test shows the structure adequate (posterior beta of
        "keep" >= target, or the caller's criterion) [-]; NaN if no criterion.
    posterior_beta : ndarray of shape (J,)
        Posterior reliability index of "keep" for each simulated outcome [-].
    decision_shares : dict
        Fraction of outcomes after which each alternative is best [-].
    effective_sample_size : ndarray of shape (J,)
        Kish effective sample size of the weights of each outcome [-].
    n_draws, n_outcomes : int
        N current draws and J simulated outcomes [-].
    seed : int
        Seed of the outcome streams (same seed -> same theta_j for every programme).
    warnings : tuple of str
        Plain-language warnings.
    """

    programme: str
    description: str
    programme_cost: float
    prior_decision: str
    prior_expected_costs: dict
    prior_expected_cost: float
    expected_cost_with_test: float
    evsi: float
    evsi_standard_error: float
    evpi: float
    evpi_standard_error: float
    net_value: float
    target_beta: float | None
    prior_beta: float
    probability_adequate: float
    posterior_beta: np.ndarray
    decision_shares: dict
    effective_sample_size: np.ndarray
    n_draws: int
    n_outcomes: int
    seed: int
    warnings: tuple = ()

    def to_dict(self) -> dict:
        """JSON-ready dictionary (arrays become lists, inf/NaN become None)."""

        def clean(value):
            if isinstance(value, np.ndarray):
                return [clean(v) for v in value.tolist()]
            if isinstance(value, (float, np.floating)):
                return float(value) if math.isfinite(value) else None
            if isinstance(value, np.integer):
                return int(value)
            if isinstance(value, dict):
                return {str(k): clean(v) for k, v in value.items()}
            if isinstance(value, (list, tuple)):
                return [clean(v) for v in value]
            return value

        return {f.name: clean(getattr(self, f.name)) for f in dataclasses.fields(self)}


@dataclasses.dataclass(frozen=True)
class ProgrammeRanking:
    """Programmes sorted by expected net value, with a plain-language recommendation."""

    results: list
    recommendation: str

    def to_dict(self) -> dict:
        return {"results": [r.to_dict() for r in self.results],
                "recommendation": self.recommendation}


def posterior_weights(log_likelihood) -> tuple[np.ndarray, np.ndarray]:
    """Normalised importance weights and their effective sample size.

    Parameters
    ----------
    log_likelihood : array_like of shape (J, N) or (N,)
        ln L(z_j | theta_k) up to a constant per outcome [-].

    Returns
    -------
    weights : ndarray, same shape
        w_jk = L_jk / sum_k L_jk, computed in log space [-].
    effective_sample_size : ndarray of shape (J,) or float
        Kish ESS = 1 / sum_k w_jk^2 [-].
    """
    weights = np.array(log_likelihood, dtype=float)  # a copy, reused in place below
    top = weights.max(axis=-1, keepdims=True)
    if np.any(np.isnan(top)) or np.any(top == np.inf):
        raise AnalysisError("the log-likelihood contains NaN or +inf; check the programme's "
                            "measurement model and the draws")
    if np.any(top == -np.inf):
        raise AnalysisError("a simulated outcome has zero likelihood under every draw; the "
                            "programme's simulate and log_likelihood disagree")
    # w = exp(ln L - max ln L) / sum(...): the log-space normalisation of the weights
    weights -= top
    np.exp(weights, out=weights)
    weights /= weights.sum(axis=-1, keepdims=True)
    ess = 1.0 / np.einsum("...k,...k->...", weights, weights)
    return weights, ess


def _seed_value(seed) -> int:
    if isinstance(seed, np.random.Generator):
        return int(seed.integers(0, 2 ** 63 - 1))
    if seed is None:
        return int(np.random.SeedSequence().entropy % (2 ** 63 - 1))
    if isinstance(seed, (int, np.integer)) and not isinstance(seed, bool) and seed >= 0:
        return int(seed)
    raise InputError(f"seed must be a non-negative int, a numpy Generator or None, got {seed!r}")


def _outcomes(problem, programme, n_outcomes, seed_value):
    """theta_j indices and simulated outcomes; the index stream is shared by all programmes."""
    index_stream, noise_stream = np.random.SeedSequence(seed_value).spawn(2)
    index = np.random.default_rng(index_stream).integers(0, problem.n_draws, n_outcomes)
    z = np.asarray(programme.simulate(problem.theta[index], np.random.default_rng(noise_stream)),
                   dtype=float)
    if z.ndim == 1:
        z = z[:, None]
    if z.ndim != 2 or z.shape[0] != n_outcomes:
        raise InputError(f"programme '{programme.name}': simulate must return one outcome per "
                         f"row of theta, shape ({n_outcomes}, d); got {z.shape}")
    if not np.all(np.isfinite(z)):
        raise AnalysisError(f"programme '{programme.name}': simulated outcomes contain NaN "
                            f"or inf")
    return z


def value_of_information(problem: DecisionProblem, programme: Programme, *,
                         n_outcomes: int = 500, seed=None, target_beta: float | None = None,
                         is_adequate: Callable[[np.ndarray], np.ndarray] | None = None,
                         min_effective_sample_size: float = 50.0) -> WorthResult:
    """Preposterior analysis of one test programme.

    Parameters
    ----------
    problem : DecisionProblem
        Alternatives, costs, current draws theta (N, p) and per-draw pf.
    programme : Programme
        Candidate test programme (its columns may be named; they are resolved
        against ``problem.parameter_names``).
    n_outcomes : int
        Number J of simulated outcomes [-].
    seed : int, numpy Generator or None
        Pass an int for reproducible output. The same int gives the same theta_j
        for every programme (common random numbers), so rankings are stable.
    target_beta : float, optional
        Target reliability index of the "keep" alternative over the horizon [-];
        the structure counts as adequate after outcome z if
        -Phi^-1(sum_k w_k pf[k, keep]) >= target_beta.
    is_adequate : callable, optional
        Alternative criterion: weights (J', N) -> boolean (J',), True when the
        updated knowledge shows the structure adequate. Overrides ``target_beta``
        for ``probability_adequate``.
    min_effective_sample_size : float
        Warn when the Kish ESS of the weights of any outcome is below this [-].

    Returns
    -------
    WorthResult

    Notes
    -----
    With L[k, a] the expected cost of alternative a given theta_k, a0 the best
    alternative on current knowledge and E_j[.] the re-weighted mean for outcome j:

    .. math::
        \\mathrm{EVSI} = \\frac{1}{J} \\sum_j \\Big( E_j[L_{a_0}] - \\min_a E_j[L_a] \\Big),
        \\qquad
        \\mathrm{EVPI} = \\frac{1}{N} \\sum_k \\Big( L_{k,a_0} - \\min_a L_{k,a} \\Big)

    Because E_z[E[L_a | z]] = E[L_a] (law of total expectation), the first form
    equals "prior optimal expected cost - preposterior expected cost"; averaging
    the paired difference has a far smaller variance, is never negative, and is
    exactly 0 when the weights are uniform. Re-weighting the N draws is an exact
    Bayesian update of their empirical distribution, so the only Monte Carlo error
    with respect to that distribution is the one over outcomes, reported as
    ``evsi_standard_error``; the sampling error of the draws themselves belongs
    to the caller's posterior sample.
    """
    if not isinstance(problem, DecisionProblem):
        raise InputError("problem must be a DecisionProblem")
    if not isinstance(programme, Programme):
        raise InputError(f"programme must be a Programme (e.g. CoreSampling), got "
                         f"{type(programme).__name__}")
    if isinstance(n_outcomes, bool) or not isinstance(n_outcomes, (int, np.integer)) \
            or n_outcomes < 2:
        raise InputError(f"n_outcomes must be a whole number >= 2, got {n_outcomes!r}")
    if target_beta is not None and not math.isfinite(target_beta):
        raise InputError(f"target_beta must be a finite number, got {target_beta!r}")
    seed_value = _seed_value(seed)
    label = programme.label
    programme = programme.resolve(problem.parameter_names)
    theta = problem.theta
    loss = problem.cost_per_draw
    keep_pf = problem.horizon_pf[:, problem.keep_index]
    n_draws, n_alt = loss.shape

    prior_costs = loss.mean(axis=0)
    a0 = int(np.argmin(prior_costs))
    regret = loss[:, a0] - loss.min(axis=1)
    evpi = float(regret.mean())
    evpi_se = float(regret.std(ddof=1) / math.sqrt(n_draws))

    z = _outcomes(problem, programme, int(n_outcomes), seed_value)
    gain = np.empty(n_outcomes)
    best = np.empty(n_outcomes, dtype=int)
    posterior_pf = np.empty(n_outcomes)
    ess = np.empty(n_outcomes)
    adequate = np.zeros(n_outcomes, dtype=bool)
    block = max(1, _BLOCK_ELEMENTS // n_draws)
    for start in range(0, n_outcomes, block):
        rows = slice(start, min(start + block, n_outcomes))
        log_l = np.asarray(programme.log_likelihood(z[rows], theta), dtype=float)
        if log_l.shape != (rows.stop - rows.start, n_draws):
            raise InputError(f"programme '{programme.name}': log_likelihood must return shape "
                             f"(J, N) = ({rows.stop - rows.start}, {n_draws}), got "
                             f"{log_l.shape}")
        weights, ess[rows] = posterior_weights(log_l)
        costs = weights @ loss
        best[rows] = costs.argmin(axis=1)
        gain[rows] = costs[:, a0] - costs.min(axis=1)
        posterior_pf[rows] = weights @ keep_pf
        if is_adequate is not None:
            flags = np.asarray(is_adequate(weights), dtype=bool)
            if flags.shape != (rows.stop - rows.start,):
                raise InputError(f"is_adequate must return one True/False per outcome, got "
                                 f"shape {flags.shape}")
            adequate[rows] = flags
    posterior_beta = stats.norm.isf(np.clip(posterior_pf, 0.0, 1.0))
    if is_adequate is None and target_beta is not None:
        adequate = posterior_beta >= target_beta
    probability_adequate = (float(adequate.mean())
                            if (is_adequate is not None or target_beta is not None)
                            else math.nan)

    evsi = float(gain.mean())
    evsi_se = float(gain.std(ddof=1) / math.sqrt(n_outcomes))
    notes = []
    low = ess < min_effective_sample_size
    if np.any(low):
        message = (f"programme '{programme.name}': for {int(low.sum())} of the {n_outcomes} "
                   f"simulated outcomes the re-weighted draws have an effective sample size "
                   f"below {min_effective_sample_size:g} (smallest {ess.min():.1f}); the value "
                   f"of information is then uncertain. Use more current-posterior draws.")
        warnings.warn(message, LowEffectiveSampleSizeWarning, stacklevel=2)
        notes.append(message)
    bound = check_evsi_below_evpi(programme.name, evsi, evsi_se, evpi, evpi_se,
                                  problem.currency)
    if bound:
        notes.append(bound)
    names = problem.names
    counts = np.bincount(best, minlength=n_alt) / n_outcomes
    return WorthResult(
        programme=programme.name, description=label,
        programme_cost=float(programme.cost), prior_decision=names[a0],
        prior_expected_costs={name: float(c) for name, c in zip(names, prior_costs)},
        prior_expected_cost=float(prior_costs[a0]),
        expected_cost_with_test=float(prior_costs[a0] - evsi), evsi=evsi,
        evsi_standard_error=evsi_se, evpi=evpi, evpi_standard_error=evpi_se,
        net_value=evsi - float(programme.cost), target_beta=target_beta,
        prior_beta=float(stats.norm.isf(keep_pf.mean())),
        probability_adequate=probability_adequate, posterior_beta=posterior_beta,
        decision_shares={name: float(c) for name, c in zip(names, counts)},
        effective_sample_size=ess, n_draws=n_draws, n_outcomes=int(n_outcomes),
        seed=seed_value, warnings=tuple(notes))


def rank_programmes(problem: DecisionProblem, programmes: Sequence[Programme], *,
                    n_outcomes: int = 500, seed=None, target_beta: float | None = None,
                    is_adequate: Callable[[np.ndarray], np.ndarray] | None = None,
                    min_effective_sample_size: float = 50.0) -> ProgrammeRanking:
    """Value of information of several programmes with common random numbers.

    Parameters are those of `value_of_information`; every programme is analysed
    with the same seed (the same theta_j), so differences between programmes are
    not blurred by sampling noise.

    Returns
    -------
    ProgrammeRanking
        ``results`` sorted by decreasing net value, and a plain-language
        ``recommendation`` that ends with the cautions.
    """
    programmes = list(programmes)
    if not programmes:
        raise InputError("rank_programmes needs at least one candidate programme")
    names = [p.name for p in programmes]
    if len(set(names)) != len(names):
        raise InputError(f"programme names must be unique, got {names}")
    seed_value = _seed_value(seed)
    results = [value_of_information(problem, p, n_outcomes=n_outcomes, seed=seed_value,
                                    target_beta=target_beta, is_adequate=is_adequate,
                                    min_effective_sample_size=min_effective_sample_size)
               for p in programmes]
    results.sort(key=lambda r: r.net_value, reverse=True)
    return ProgrammeRanking(results=results,
                            recommendation=recommendation_text(problem, results))


def _money(currency: str, value: float) -> str:
    return f"{currency} {value:,.0f}"


def _capitalised(text: str) -> str:
    return text[:1].upper() + text[1:]


def recommendation_text(problem: DecisionProblem, results: Sequence[WorthResult]) -> str:
    """Plain-language recommendation from results sorted by net value."""
    money = lambda value: _money(problem.currency, value)  # noqa: E731
    first = results[0]
    lines = [f"On present knowledge the best alternative is '{first.prior_decision}' "
             f"(expected total cost {money(first.prior_expected_cost)}; reliability index of "
             f"'{problem.keep}' over the horizon {first.prior_beta:.2f})."]
    if first.net_value > 0:
        focus = first
        line = (f"{_capitalised(first.description)} is expected to be worth "
                f"{money(first.evsi)} against its cost of {money(first.programme_cost)} "
                f"(net {money(first.net_value)}, Monte Carlo standard error "
                f"{money(first.evsi_standard_error)}); it ranks first of {len(results)} "
                f"candidate programme(s).")
        if first.net_value < 2.0 * first.evsi_standard_error:
            line += (" The margin is within the Monte Carlo error: rerun with more simulated "
                     "outcomes before relying on it.")
        lines.append(line)
        if len(results) > 1:
            second = results[1]
            lines.append(f"Next best: {second.description}, worth {money(second.evsi)} against "
                         f"{money(second.programme_cost)} (net {money(second.net_value)}).")
    else:
        focus = max(results, key=lambda r: r.evsi)
        lines.append(f"None of the {len(results)} candidate programme(s) is expected to pay for "
                     f"itself: the most informative, {focus.description}, is worth "
                     f"{money(focus.evsi)} against its cost of "
                     f"{money(focus.programme_cost)}. Decide on present knowledge.")
    if math.isfinite(focus.probability_adequate):
        criterion = (f"reliability index over the horizon >= {focus.target_beta:.2f}"
                     if focus.target_beta is not None else "the given criterion")
        lines.append(f"Probability that {focus.description} shows the structure adequate "
                     f"({criterion}): {focus.probability_adequate:.1%}.")
    lines.append(f"No test of any kind can be worth more than the value of perfect information, "
                 f"{money(first.evpi)}.")
    for result in results:
        lines.extend(result.warnings)
    lines.append("Results depend on the costs, the failure cost, the failure probabilities "
                 "and the measurement models entered. " + CAUTION)
    return "\n".join(lines)
