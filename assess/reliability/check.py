"""An independent, cheap check of a FORM or importance-sampling result.

FORM and importance sampling both lean on the design point(s) they found. When the
failure domain has regions that no design point describes, or the limit state is
strongly curved or not smooth, both can be wrong with no sign of it in their own
output (importance sampling then reports a small CoV around a wrong pf). Subset
simulation needs no design point, so a small run of it is an independent estimate.
The two are compared on the log scale, where both estimators are close to normal:

    z = |ln pf_method - ln pf_check| / sqrt(s_method^2 + s_check^2),
    s^2 = ln(1 + CoV^2)  (lognormal spread of each estimate; 0 for FORM).

z above 3 is a disagreement. A single subset-simulation run has long tails, so a
disagreement is confirmed with up to two further runs (pooled) first. Which estimate to
trust then depends on the direction:

- the estimate below the check: the design points miss part of the failure domain
  (another region, strong curvature, a kink) - trust subset simulation;
- importance sampling above the check: its failed samples, weighted by exact density
  ratios, show failure mass that subset simulation's Markov chains did not reach (a
  narrow region, a funnel-shaped tail of a parameter-uncertainty variable) - trust
  importance sampling;
- FORM or SORM above the check: importance sampling at the design point(s) decides.

The result gets a warning that names the method to trust and ``details["check"]``
keeps the numbers.

References
----------
.. [1] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001, doi:10.1016/S0266-8920(01)00019-4.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from assess.reliability.result import ReliabilityResult, beta_from_pf

Z_DISAGREE = 3.0
"""Standard deviations (log scale) beyond which a result and its check disagree [-]."""

CONFIRMATION_RUNS = 2
"""Further check runs, pooled, before a disagreement is declared [-]: a single subset-
simulation run has long tails, so one run alone would raise false alarms."""

CHECK_SEED = 20260611
"""Seed of a check when the caller gives none (keeps FORM deterministic)."""

_REASON = {
    "form": "FORM's linearisation at the design point does not describe this failure "
            "domain (several important regions, strong curvature or a non-smooth limit state)",
    "sorm": "SORM's quadratic fit at the design point does not describe this failure domain "
            "(several important regions or a non-smooth limit state)",
    "importance_sampling": "the importance-sampling density around the design point(s) "
                           "misses part of the failure domain, so its own CoV is too small",
    "cross_entropy": "the cross-entropy sampling density misses part of the failure domain "
                     "(too few mixture components for its important regions), so its own "
                     "CoV is too small",
}


def check_rng(seed, tag: int) -> np.random.Generator:
    """Generator for a check: its own stream derived from the run's seed and ``tag``."""
    if isinstance(seed, np.random.Generator):
        return seed
    base = CHECK_SEED if seed is None else int(seed)
    return np.random.default_rng(np.random.SeedSequence([base, tag]))


def levels_for(pf: float, p0: float = 0.2) -> int:
    """Subset-simulation levels enough to go two levels below ``pf`` (4 to 60); 40
    (pf about 1e-40) when pf is not known [-]."""
    if not (pf > 0.0 and math.isfinite(pf)):
        return 40
    return int(min(60, max(4, math.ceil(math.log(pf) / math.log(p0)) + 2)))


def log_spread(cov: float) -> float:
    """Standard deviation of ln(pf) of an estimate with coefficient of variation ``cov``
    (lognormal) [-]; 0 for a missing CoV (FORM)."""
    if cov is None or not math.isfinite(cov):
        return 0.0
    return math.sqrt(math.log1p(cov * cov))


def compare(pf: float, cov: float, check: ReliabilityResult) -> dict:
    """Agreement between an estimate (pf, cov) and a subset-simulation check.

    Returns
    -------
    dict
        ``agree`` (bool), ``z`` (standard deviations on the log scale, or None
        when one of the two is zero) and ``note`` (plain words).
    """
    if check.pf > 0.0 and pf > 0.0:
        spread = math.hypot(log_spread(cov), log_spread(check.cov))
        z = abs(math.log(pf / check.pf)) / spread if spread > 0 else math.inf
        agree = z <= Z_DISAGREE
        note = (f"they differ by {z:.1f} standard deviations on the log scale "
                f"({'within' if agree else 'beyond'} {Z_DISAGREE:g})")
        return {"agree": agree, "z": z, "note": note}
    if check.pf == 0.0:
        upper = check.details.get("pf_upper", math.nan)
        agree = not (pf > upper)
        note = (f"the check found no failure (pf below about {upper:.3g}); "
                + ("consistent" if agree else "the estimate lies above that bound"))
        return {"agree": agree, "z": None, "note": note}
    return {"agree": False, "z": None,
            "note": f"the estimate is 0 while the check found pf = {check.pf:.3g}"}


def run_check(problem, pf_reference: float, *, seed, n_per_level: int = 500,
              tag: int = 1) -> tuple[ReliabilityResult, tuple]:
    """A subset-simulation run deep enough for ``pf_reference``, and its last-level samples."""
    from assess.reliability.subset import DEFAULT_P0, _subset

    return _subset(problem, n_per_level=n_per_level, p0=DEFAULT_P0, seed=check_rng(seed, tag),
                   sampler="acs", max_levels=levels_for(pf_reference, DEFAULT_P0),
                   target_cov=None,
                   max_calls=None)


def trust_between(pf: float, cov: float, check: ReliabilityResult, method: str) -> dict:
    """Which of a sampling estimate (pf, cov) by ``method`` and a subset-simulation
    check to trust: the comparison of `compare` plus ``trust`` and ``reason``."""
    outcome = compare(pf, cov, check)
    if outcome["agree"]:
        return {**outcome, "trust": method, "reason": "the two agree"}
    if method in ("importance_sampling", "cross_entropy") and pf > check.pf:
        return {**outcome, "trust": method,
                "reason": "importance sampling's failed samples show failure mass that "
                          "subset simulation's Markov chains did not reach (a narrow region "
                          "or a funnel-shaped tail), so subset simulation is too low"}
    return {**outcome, "trust": "subset_simulation",
            "reason": _REASON.get(method, "the method does not fit this problem")}


def checked(problem, result: ReliabilityResult, *, seed, n_per_level: int = 500,
            check: ReliabilityResult | None = None) -> ReliabilityResult:
    """``result`` with an independent subset-simulation check in ``details["check"]``.

    A disagreement beyond `Z_DISAGREE` adds a warning naming the method to trust;
    for FORM or SORM above the check, 1000 importance samples at the design
    point(s) decide. Evaluations of the check are added to ``n_calls`` unless
    ``check`` (a run made before, already counted) is given.
    """
    calls_before = problem.n_calls
    if check is None:
        check, _ = run_check(problem, result.pf, seed=seed, n_per_level=n_per_level)
    decision = trust_between(result.pf, result.cov, check, result.method)
    runs = [check]
    tag = 10
    while not decision["agree"] and len(runs) <= CONFIRMATION_RUNS:
        # a single check run has long tails: confirm a disagreement with further runs,
        # pooled, before it is declared
        tag += 1
        runs.append(run_check(problem, result.pf, seed=seed, n_per_level=n_per_level,
                              tag=tag)[0])
        check = _pool_runs(runs)
        decision = trust_between(result.pf, result.cov, check, result.method)
    arbiter = None
    if result.method in ("form", "sorm") and not decision["agree"] and result.pf > check.pf:
        arbiter = _arbiter(problem, result, seed)
        if arbiter is not None:
            by_sampling = trust_between(arbiter.pf, arbiter.cov, check, "importance_sampling")
            decision = {**decision, "trust": by_sampling["trust"],
                        "reason": ("importance sampling at the design point(s) "
                                   + ("agrees with the check" if by_sampling["agree"] else
                                      "decides: " + by_sampling["reason"])
                                   + "; " + _REASON[result.method])}
    record = {"method": "subset_simulation", "pf": check.pf, "beta": check.beta,
              "cov": check.cov, "n_calls": check.n_calls, "seed": check.seed,
              "n_per_level": n_per_level, "runs": len(runs), "agree": decision["agree"],
              "z": decision["z"], "note": decision["note"], "trust": decision["trust"]}
    if arbiter is not None:
        record["importance_sampling"] = {"pf": arbiter.pf, "beta": arbiter.beta,
                                         "cov": arbiter.cov, "n_calls": arbiter.n_calls}
    warnings = list(result.warnings)
    if not decision["agree"]:
        trusted = decision["trust"].replace("_", " ")
        text = (f"{result.method} gives pf = {result.pf:.3g} (beta {_beta_text(result.pf)}), an "
                f"independent subset-simulation check gives pf = {check.pf:.3g} (beta "
                f"{_beta_text(check.pf)}, CoV {check.cov:.2g}); {decision['note']}.")
        if arbiter is not None:
            text += (f" Importance sampling at the design point(s) gives pf = "
                     f"{arbiter.pf:.3g} (CoV {arbiter.cov:.2g}).")
        warnings.append(f"{text} Trust {trusted}: {decision['reason']}")
    details = dict(result.details)
    details["check"] = record
    return dataclasses.replace(result, warnings=tuple(warnings), details=details,
                               n_calls=result.n_calls + problem.n_calls - calls_before)


def _pool_runs(runs: list) -> ReliabilityResult:
    """Mean of independent subset-simulation runs, CoV sqrt(mean CoV^2 / runs)."""
    pf = float(np.mean([r.pf for r in runs]))
    covs = np.array([r.cov for r in runs], dtype=float)
    cov = (float(np.sqrt(np.mean(covs**2) / len(runs))) if np.all(np.isfinite(covs))
           else math.nan)
    return dataclasses.replace(runs[0], pf=pf, beta=beta_from_pf(pf), cov=cov,
                               n_calls=sum(r.n_calls for r in runs))


def _arbiter(problem, result: ReliabilityResult, seed):
    """1000 importance samples on the design points of a FORM or SORM result."""
    from assess.reliability.importance import centres_from_form, importance_sampling

    details = result.details.get("form", result.details)
    holder = dataclasses.replace(result, details=details)
    centres, weights = centres_from_form(holder)
    if centres.shape[0] == 0 or not np.all(np.isfinite(centres)):
        return None
    return importance_sampling(problem, n=1000, seed=check_rng(seed, 2), design_point=centres,
                               weights=weights)


def _beta_text(pf: float) -> str:
    beta = beta_from_pf(pf)
    return f"{beta:.2f}" if math.isfinite(beta) else ("> 8" if beta > 0 else "-inf")


__all__ = [
    "CHECK_SEED",
    "Z_DISAGREE",
    "check_rng",
    "checked",
    "compare",
    "levels_for",
    "log_spread",
    "run_check",
    "trust_between",
]
