"""Crude Monte Carlo estimate of a probability of failure, plus the seed and option
helpers shared by the sampling methods.

References
----------
.. [1] R. Y. Rubinstein and D. P. Kroese, *Simulation and the Monte Carlo Method*,
   3rd ed. Wiley, 2016, ch. 1 (estimator of a probability and its relative error).
"""

from __future__ import annotations

import math
from numbers import Integral, Real

import numpy as np

from assess.errors import InputError
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf


def resolve_seed(seed, caller: str) -> tuple[np.random.Generator, int | None]:
    """Random generator and the seed to record for a stochastic method.

    Parameters
    ----------
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls. ``None`` draws a fresh
        32-bit seed from the operating system and records it, so the run can
        still be repeated. A Generator is used as given (its state is not an
        int, so the recorded seed is None).
    caller : str
        Name of the calling method, for the error message.

    Returns
    -------
    rng : numpy.random.Generator
    recorded_seed : int or None
    """
    if isinstance(seed, np.random.Generator):
        return seed, None
    if seed is None:
        seed = int(np.random.SeedSequence().generate_state(1)[0])
    if isinstance(seed, bool) or not isinstance(seed, Integral) or seed < 0:
        raise InputError(f"The 'seed' parameter of {caller} must be a non-negative int, "
                         f"a numpy Generator or None. Got {seed!r} instead.")
    return np.random.default_rng(int(seed)), int(seed)


MAX_CRUDE_SAMPLES = 10**9
"""Upper bound on the samples of crude Monte Carlo [-]: drawn in chunks, so memory stays
small, but 10**9 evaluations already take minutes to hours."""


def check_int(value, name: str, caller: str, minimum: int, maximum: int | None = None,
              why: str = "") -> int:
    """Validated integer option (``minimum`` and ``maximum`` inclusive)."""
    if (isinstance(value, bool) or not isinstance(value, Integral) or value < minimum
            or (maximum is not None and value > maximum)):
        upper = "inf)" if maximum is None else f"{maximum:_}]".replace("_", " ")
        reason = f" ({why})" if why and maximum is not None else ""
        raise InputError(f"The {name!r} parameter of {caller} must be an int in the range "
                         f"[{minimum}, {upper}{reason}. Got {value!r} instead.")
    return int(value)


def check_real(value, name: str, caller: str, low: float, high: float) -> float:
    """Validated real option in the open interval (low, high)."""
    if (isinstance(value, bool) or not isinstance(value, Real)
            or not (low < float(value) < high)):
        raise InputError(f"The {name!r} parameter of {caller} must be a number in the open "
                         f"interval ({low}, {high}). Got {value!r} instead.")
    return float(value)


def crude_monte_carlo(problem: StandardNormalProblem, *, n: int = 10**6, seed=None,
                      chunk: int = 100_000) -> ReliabilityResult:
    """Probability of failure by crude Monte Carlo sampling in standard normal space.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state in u-space; g <= 0 is failure (a series system uses its
        minimum over modes).
    n : int, default 10**6
        Number of samples [-], at most `MAX_CRUDE_SAMPLES` (10**9).
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    chunk : int, default 100_000
        Samples drawn and evaluated per limit-state call; bounds memory to about
        ``chunk * dim * 8`` bytes [-].

    Returns
    -------
    ReliabilityResult
        ``pf`` = N_f / n, ``cov`` = sqrt((1 - pf) / (n pf)) [-]. When no sample
        fails, pf = 0, beta = inf, cov = NaN, and a warning gives the one-sided
        95 % upper bound 3/n (the "rule of three").

    Notes
    -----
    The number of samples needed for a target CoV delta is
    N = (1 - pf) / (pf delta^2) [1]_.

    References
    ----------
    .. [1] R. Y. Rubinstein and D. P. Kroese, *Simulation and the Monte Carlo
       Method*, 3rd ed. Wiley, 2016.
    .. [2] B. D. Jovanovic and P. S. Levy, "A look at the rule of three,"
       *The American Statistician*, 51(2):137-139, 1997, doi:10.1080/00031305.1997.10473947.
    """
    caller = "crude_monte_carlo"
    n = check_int(n, "n", caller, 1, MAX_CRUDE_SAMPLES, "upper bound of the run time")
    chunk = check_int(chunk, "chunk", caller, 1, 10**7, "memory per limit-state call")
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls
    counters = problem.counters()

    n_fail = 0
    remaining = n
    while remaining > 0:
        size = min(chunk, remaining)
        u = rng.standard_normal((size, problem.dim))
        n_fail += int(np.count_nonzero(problem.g(u) <= 0.0))
        remaining -= size

    pf = n_fail / n
    warnings = []
    details = {"n_failures": n_fail}
    if n_fail == 0:
        upper = min(1.0, 3.0 / n)
        details["pf_upper_95"] = upper
        warnings.append(
            f"no failure among {n} samples: pf = 0 is not an estimate; the one-sided 95 % "
            f"upper bound is 3/n = {upper:.3g} (beta > {beta_from_pf(upper):.2f}); "
            "use subset simulation or importance sampling for small pf")
        cov = math.nan
    else:
        cov = math.sqrt((1.0 - pf) / (n * pf))
    warnings += problem.nonfinite_warnings(counters)
    return ReliabilityResult(
        method="crude_monte_carlo", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings={"n": n, "chunk": chunk}, converged=n_fail > 0, warnings=tuple(warnings),
        details=details)
