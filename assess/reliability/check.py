"""An independent, cheap check of a FORM or importance-sampling result.

FORM and importance sampling both lean on the design point(s) they found. When the
failure domain has regions that no design point describes, or the limit state is
strongly curved or not smooth, both can be wrong with no sign of it in their own
output (importance sampling then reports a small CoV around a wrong pf). Subset
simulation needs no design point, so a small run of it is an independent estimate.
The two are compared on the log scale, where both estimators are close to normal:

    z = |ln pf_method - ln pf_check| / sqrt(s_method^2 + s_check^2),
    s^2 = ln(1 + CoV^2)  (lognormal spread of each estimate; 0 for FORM).

z above 3 is a disagreement: the result gets a warning that names the method to
trust (subset simulation, which makes no assumption about the shape of the failure
domain) and ``details["check"]`` keeps both numbers.

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

CHECK_SEED = 20260611
"""Seed of a check when the caller gives none (keeps FORM deterministic)."""

_REASON = {
    "form": "FORM's linearisation at the design point does not describe this failure "
            "domain (several important regions, strong curvature or a non-smooth limit state)",
    "sorm": "SORM's quadratic fit at the design point does not describe this failure domain "
            "(several important regions or a non-smooth limit state)",
    "importance_sampling": "the importance-sampling density around the design point(s) "
                           "misses part of the failure domain, so its own CoV is too small",
}


def check_rng(seed, tag: int) -> np.random.Generator:
    """Generator for a check: its own stream derived from the run's seed and ``tag``."""
    if isinstance(seed, np.random.Generator):
        return seed
    base = CHECK_SEED if seed is None else int(seed)
    return np.random.default_rng(np.random.SeedSequence([base, tag]))


def levels_for(pf: float, p0: float = 0.1) -> int:
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
    from assess.reliability.subset import _subset

    return _subset(problem, n_per_level=n_per_level, p0=0.1, seed=check_rng(seed, tag),
                   sampler="acs", max_levels=levels_for(pf_reference), target_cov=None,
                   max_calls=None)


def checked(problem, result: ReliabilityResult, *, seed, n_per_level: int = 500,
            check: ReliabilityResult | None = None) -> ReliabilityResult:
    """``result`` with an independent subset-simulation check in ``details["check"]``.

    A disagreement beyond `Z_DISAGREE` adds a warning naming the method to trust;
    the check's evaluations are added to ``n_calls`` unless ``check`` (a run made
    before, already counted) is given.
    """
    extra_calls = 0
    if check is None:
        check, _ = run_check(problem, result.pf, seed=seed, n_per_level=n_per_level)
        extra_calls = check.n_calls
    outcome = compare(result.pf, result.cov, check)
    trust = result.method if outcome["agree"] else "subset_simulation"
    record = {"method": "subset_simulation", "pf": check.pf, "beta": check.beta,
              "cov": check.cov, "n_calls": check.n_calls, "seed": check.seed,
              "n_per_level": n_per_level, "agree": outcome["agree"], "z": outcome["z"],
              "note": outcome["note"], "trust": trust}
    warnings = list(result.warnings)
    if not outcome["agree"]:
        warnings.append(
            f"{result.method} gives pf = {result.pf:.3g} (beta {_beta_text(result.pf)}), an "
            f"independent subset-simulation check gives pf = {check.pf:.3g} (beta "
            f"{_beta_text(check.pf)}, CoV {check.cov:.2g}); {outcome['note']}. Trust subset "
            f"simulation: {_REASON.get(result.method, 'the method does not fit this problem')}")
    details = dict(result.details)
    details["check"] = record
    return dataclasses.replace(result, warnings=tuple(warnings), details=details,
                               n_calls=result.n_calls + extra_calls)


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
]
