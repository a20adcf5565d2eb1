"""How far a sampled reliability index can be trusted: its interval, a verdict that may be
"undecided", and whether a change between two estimates is more than their noise.

A sampling method returns pf with the coefficient of variation of its estimate, CoV. The
interval of pf is taken lognormal, pf exp(-/+ z s) with s^2 = ln(1 + CoV^2) (so it stays
positive; the lognormal with the same mean and CoV, common practice for small-probability
estimators), and mapped through beta = -Phi^-1(pf) [-]. z is the two-sided normal quantile of
the confidence level (`CONFIDENCE`, 95 %). FORM and SORM are not sampling estimates: their
interval is empty (NaN, NaN) and their verdict is read from beta alone.

Change between two estimates: |beta_after - beta_before| is compared with z times the standard
error of the difference, se^2 = se_before^2 + se_after^2, se_beta = s pf / phi(beta) (delta
method on ln pf). Before and after share their random numbers (common random numbers), which
correlates the two errors positively and makes the true noise of the difference smaller:
adding the two variances as if independent is on the safe side (it calls a change "no
significant change" more often, never less).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

CONFIDENCE = 0.95
"""Two-sided confidence level of every interval on beta [-]."""

MEETS, BELOW, UNDECIDED, NO_RESULT = "meets target", "below target", "undecided", "no result"
NO_SIGNIFICANT_CHANGE = "no significant change"


def _z(level: float) -> float:
    return float(stats.norm.isf((1.0 - level) / 2.0))


def log_sd(cov: float) -> float:
    """Standard deviation of ln pf of a lognormal with coefficient of variation ``cov`` [-]."""
    return math.sqrt(math.log1p(cov * cov))


def beta_interval(pf: float, cov: float, level: float = CONFIDENCE,
                  pf_upper: float | None = None) -> tuple[float, float]:
    """Interval (low, high) of beta = -Phi^-1(pf) from a sampling estimate of pf [-].

    Parameters
    ----------
    pf : float
        Estimated probability of failure [-].
    cov : float
        Coefficient of variation of the estimate [-]; NaN for FORM/SORM (no sampling error).
    level : float
        Two-sided confidence level [-].
    pf_upper : float, optional
        Upper bound of pf when no failed sample was found (pf = 0, e.g. the rule of three of
        subset simulation, ``details["pf_upper"]``); gives the lower end, the upper is +inf.

    Returns
    -------
    (low, high) : tuple of float
        NaN, NaN when there is no sampling error to state (cov NaN with pf > 0), or when
        pf = 0 without a bound.
    """
    if pf is None or cov is None or not math.isfinite(pf):
        return math.nan, math.nan
    if pf <= 0.0:
        if pf_upper is not None and 0.0 < pf_upper <= 1.0:
            return float(stats.norm.isf(pf_upper)), math.inf
        return math.nan, math.nan
    if not math.isfinite(cov):
        return math.nan, math.nan
    spread = _z(level) * log_sd(cov)
    pf_low, pf_high = pf * math.exp(-spread), min(pf * math.exp(spread), 1.0)
    return float(stats.norm.isf(pf_high)), float(stats.norm.isf(pf_low))


def result_interval(result, level: float = CONFIDENCE) -> tuple[float, float]:
    """`beta_interval` of a `ReliabilityResult` (its pf, cov and ``details["pf_upper"]``)."""
    return beta_interval(result.pf, result.cov, level,
                         pf_upper=(result.details or {}).get("pf_upper"))


def interval_verdict(beta: float, low: float, high: float, target: float) -> str:
    """"meets target" when the whole interval is at or above the target, "below target" when
    it is wholly below, else "undecided"; "no result" when beta is NaN.

    Without an interval (NaN ends: FORM, SORM) the verdict is read from beta alone.
    """
    if beta is None or math.isnan(beta):
        return NO_RESULT
    if math.isnan(low) or math.isnan(high):
        return MEETS if beta >= target else BELOW
    if low >= target:
        return MEETS
    if high < target:
        return BELOW
    return UNDECIDED


def beta_standard_error(pf: float, cov: float) -> float:
    """Standard error of beta from the CoV of pf, s pf / phi(beta) (delta method) [-].

    NaN without a sampling error (cov NaN) or at pf = 0 or 1.
    """
    if pf is None or cov is None or not (0.0 < pf < 1.0) or not math.isfinite(cov):
        return math.nan
    beta = stats.norm.isf(pf)
    return float(log_sd(cov) * pf / stats.norm.pdf(beta))


def change_text(before, after, level: float = CONFIDENCE) -> str:
    """"no significant change" when |beta_after - beta_before| is within z times the standard
    error of the difference (independent sum, on the safe side under common random numbers);
    else the signed change, e.g. ``"+0.35"``. "-" when either beta is not finite.

    ``before`` and ``after`` are `ReliabilityResult` (or anything with pf, beta, cov).
    """
    b0, b1 = before.beta, after.beta
    if not (math.isfinite(b0) and math.isfinite(b1)):
        return "-"
    if significant_change(before, after, level):
        return f"{b1 - b0:+.2f}"
    return NO_SIGNIFICANT_CHANGE


def significant_change(before, after, level: float = CONFIDENCE) -> bool:
    """Whether the change of beta exceeds its noise (see `change_text`); a change between two
    results without sampling error (FORM) counts as significant when nonzero."""
    b0, b1 = float(before.beta), float(after.beta)
    errors = np.array([beta_standard_error(before.pf, before.cov),
                       beta_standard_error(after.pf, after.cov)])
    errors = np.where(np.isfinite(errors), errors, 0.0)
    noise = _z(level) * math.sqrt(float(errors @ errors))
    return abs(b1 - b0) > noise


__all__ = ["BELOW", "CONFIDENCE", "MEETS", "NO_RESULT", "NO_SIGNIFICANT_CHANGE", "UNDECIDED",
           "beta_interval", "beta_standard_error", "change_text", "interval_verdict", "log_sd",
           "result_interval", "significant_change"]


def pool_runs(runs: list):
    """One `ReliabilityResult` from independent runs of the same method and sample size.

    pf is the plain mean of the runs' pf (unbiased; weighting by each run's estimated variance
    would favour the runs whose pf came out low). Its CoV is sqrt(mean(CoV_i^2) / k) for k
    runs of equal size, the rule `assess.reliability.subset` uses for its repetitions [-];
    the calls add up. A single run is returned unchanged.
    """
    import dataclasses

    from assess.reliability.result import beta_from_pf

    if len(runs) == 1:
        return runs[0]
    pfs = np.array([r.pf for r in runs], dtype=float)
    covs = np.array([r.cov for r in runs], dtype=float)
    pf = float(pfs.mean())
    cov = (float(math.sqrt(float(np.mean(covs**2)) / len(runs)))
           if pf > 0 and np.all(np.isfinite(covs)) else math.nan)
    details = dict(runs[0].details or {})
    details["runs"] = [{"pf": r.pf, "cov": r.cov, "seed": r.seed, "n_calls": r.n_calls}
                       for r in runs]
    if pf > 0:
        details.pop("pf_upper", None)
    warnings = []
    for r in runs:
        warnings += [w for w in r.warnings if w not in warnings]
    return dataclasses.replace(runs[0], pf=pf, beta=beta_from_pf(pf), cov=cov,
                               n_calls=int(sum(r.n_calls for r in runs)),
                               converged=all(r.converged for r in runs),
                               warnings=tuple(warnings), details=details)


def looks_level(level: float, looks: int) -> float:
    """Confidence level of each of ``looks`` looks at a repeated estimate, 1 - (1 - level) /
    looks (Bonferroni), so that the chance of a wrong-side verdict over all looks stays at
    most (1 - level) / 2 per side [-]."""
    return 1.0 - (1.0 - level) / max(int(looks), 1)


def sample_until_decided(first, rerun, target: float, max_calls: int | None,
                         level: float = CONFIDENCE):
    """Repeat a sampling estimate with new random numbers until its verdict is decided.

    Parameters
    ----------
    first : ReliabilityResult
        The first run.
    rerun : callable
        ``rerun(k)`` returns the k-th independent repetition (k = 1, 2, ...), same method
        and sample size, new seed stream.
    target : float
        Target reliability index [-].
    max_calls : int or None
        Budget of limit-state calls for this verdict, the first run included [-]; None or
        a budget below two runs means no repetition.
    level : float
        Overall confidence level of the verdict [-].

    Returns
    -------
    (result, verdict, level_used)
        The pooled `ReliabilityResult`; "meets target", "below target", "undecided" or
        "no result"; and the confidence level of the interval each look used.

    Notes
    -----
    Looking again after every repetition and stopping when decided would raise the chance
    of a wrong-side verdict with the number of looks (measured on g = R - S with the target
    at the exact beta and up to 20 looks at 95 %: 16 % of runs decided, either way, against
    5 % for one look). Each look therefore uses the Bonferroni level `looks_level` over the
    K = max_calls // (calls of the first run) looks the budget allows; with no budget for a
    repetition (K = 1) the interval is the plain ``level`` one. Stops when decided, when the
    next run would exceed the budget, or when the estimate has no sampling error (FORM,
    SORM: nothing to repeat).
    """
    looks = 1 if max_calls is None or first.n_calls <= 0 else max(max_calls // first.n_calls, 1)
    used = looks_level(level, looks)
    runs = [first]
    pooled = first
    while True:
        low, high = result_interval(pooled, used)
        decision = interval_verdict(pooled.beta, low, high, target)
        if decision != UNDECIDED or looks == 1:
            return pooled, decision, used
        spent = sum(r.n_calls for r in runs)
        per_run = max(r.n_calls for r in runs)
        if spent + per_run > max_calls:  # type: ignore[operator]
            return pooled, decision, used
        runs.append(rerun(len(runs)))
        pooled = pool_runs(runs)


__all__ += ["looks_level", "pool_runs", "sample_until_decided"]
