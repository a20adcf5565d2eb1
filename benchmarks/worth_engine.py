"""Speed and output of the value-of-information engine on an invented car-park deck.

Run: ``python benchmarks/worth_engine.py [--draws 4000] [--outcomes 500] [--seed 1]``

Five candidate programmes are analysed with common random numbers on N current
draws and J simulated outcomes; the table gives EVSI, its Monte Carlo standard
error, the net value, the probability that the test shows the deck adequate and
the wall time per programme, followed by the recommendation text. The member
model, draws and costs are invented for the benchmark (not a published case).
"""

from __future__ import annotations

import argparse
import math
import sys
import time
import warnings
from pathlib import Path

import numpy as np
from scipy import stats

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.worth import (  # noqa: E402
    Alternative,
    BreakoutSurvey,
    CoreSampling,
    DecisionProblem,
    HalfCellSurvey,
    recommendation_text,
    value_of_information,
)

R0 = 2.45  # median capacity / median load of the undamaged deck [-] (invented)
NAMES = ["mu_lnfc", "sigma_lnfc", "ratio_mean", "ratio_sd", "p_active"]
TARGET_BETA = 2.5  # invented target for the horizon of the benchmark


def current_draws(n_draws: int, seed: int) -> np.ndarray:
    """Invented current-posterior draws of the deck parameters."""
    rng = np.random.default_rng(seed)
    # normal-gamma draws for ln f_c around the JCSS C25 ready-mixed prior (m' = 3.65,
    # n' = 3, s' = 0.12, nu' = 10; JCSS PMC Part 3.1)
    sigma = 1.0 / np.sqrt(rng.gamma(5.0, 2.0 / (10.0 * 0.12 ** 2), n_draws))
    mu = rng.normal(3.65, sigma / math.sqrt(3.0))
    ratio_mean = np.clip(rng.normal(0.88, 0.05, n_draws), 0.5, 1.0)
    ratio_sd = rng.uniform(0.02, 0.08, n_draws)
    p_active = rng.beta(2.0, 4.0, n_draws)
    return np.column_stack([mu, sigma, ratio_mean, ratio_sd, p_active])


def deck_failure_probability(theta, capacity_factor=1.0, load_factor=1.0):
    """pf over the horizon of an invented deck: lognormal capacity vs lognormal load.

    ln R = ln(R0 r) + (mu - ln 35) / 3 (r = residual area ratio), with a further section
    loss of 0.08 if corrosion is active; load lognormal with CoV 0.25 and 10 % model
    uncertainty.
    """
    mu, sigma, ratio, ratio_sd, p_active = theta.T
    spread_fixed = 0.25 ** 2 + 0.10 ** 2

    def pf(loss):
        r = np.clip(ratio - loss, 0.05, None)
        median_margin = (math.log(R0 * capacity_factor / load_factor) + np.log(r)
                         + (mu - math.log(35.0)) / 3.0)
        spread = np.sqrt(spread_fixed + (sigma / 3.0) ** 2 + (ratio_sd / r) ** 2)
        return stats.norm.sf(median_margin / spread)

    return p_active * pf(0.08) + (1.0 - p_active) * pf(0.0)


def deck_problem(n_draws: int, seed: int) -> DecisionProblem:
    theta = current_draws(n_draws, seed)
    pf = np.column_stack([deck_failure_probability(theta),
                          deck_failure_probability(theta, capacity_factor=1.3),
                          deck_failure_probability(theta, load_factor=0.8),
                          np.full(n_draws, 1e-6)])
    alternatives = [Alternative("keep as is", 0.0),
                    Alternative("strengthen", 100e3, "bonded CFRP strips, capacity x 1.3"),
                    Alternative("restrict load", 150e3, "close to heavy vehicles, load x 0.8"),
                    Alternative("replace", 500e3, "new deck")]
    return DecisionProblem(alternatives, failure_cost=2.0e7, theta=theta,
                           parameter_names=NAMES, pf=pf)


def programmes():
    return [
        CoreSampling("3 cores L2", 3_000.0, 3, "mu_lnfc", "sigma_lnfc", measurement_sd=0.06,
                     description="drilling 3 more cores in zone L2"),
        CoreSampling("6 cores L2", 5_000.0, 6, "mu_lnfc", "sigma_lnfc", measurement_sd=0.06,
                     description="drilling 6 more cores in zone L2"),
        BreakoutSurvey("4 break-outs", 6_000.0, 4, "ratio_mean", "ratio_sd", 0.02,
                       description="opening 4 break-outs to measure bar section loss"),
        BreakoutSurvey("8 break-outs", 10_000.0, 8, "ratio_mean", "ratio_sd", 0.02,
                       description="opening 8 break-outs to measure bar section loss"),
        HalfCellSurvey("half-cell 60", 2_500.0, 60, "p_active", 0.8, 0.15,
                       description="a half-cell potential survey of 60 grid points"),
    ]


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--draws", type=int, default=4000)
    parser.add_argument("--outcomes", type=int, default=500)
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args(argv)

    start = time.perf_counter()
    problem = deck_problem(args.draws, args.seed)
    setup = time.perf_counter() - start
    print(f"N = {args.draws} draws, J = {args.outcomes} outcomes, seed {args.seed}; "
          f"problem set-up {setup * 1e3:.0f} ms")
    results, times = [], []
    for programme in programmes():
        start = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            result = value_of_information(problem, programme, n_outcomes=args.outcomes,
                                          seed=args.seed, target_beta=TARGET_BETA)
        times.append(time.perf_counter() - start)
        results.append(result)

    first = results[0]
    print(f"prior decision '{first.prior_decision}', expected cost EUR "
          f"{first.prior_expected_cost:,.0f}, beta(keep) {first.prior_beta:.2f}, "
          f"EVPI EUR {first.evpi:,.0f} (se {first.evpi_standard_error:,.0f})")
    header = (f"{'programme':<14}{'cost':>9}{'EVSI':>10}{'MC se':>8}{'net value':>11}"
              f"{'P(adequate)':>13}{'min ESS':>9}{'time [s]':>10}")
    print(header)
    print("-" * len(header))
    for result, seconds in zip(results, times):
        print(f"{result.programme:<14}{result.programme_cost:>9,.0f}{result.evsi:>10,.0f}"
              f"{result.evsi_standard_error:>8,.0f}{result.net_value:>11,.0f}"
              f"{result.probability_adequate:>13.2f}{result.effective_sample_size.min():>9.0f}"
              f"{seconds:>10.3f}")
    print()
    ranked = sorted(results, key=lambda r: r.net_value, reverse=True)
    print(recommendation_text(problem, ranked))


if __name__ == "__main__":
    main()
