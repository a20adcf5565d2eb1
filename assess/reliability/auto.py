"""Let the tool choose: subset simulation, FORM from every region it shows, importance
sampling on the design points, and a cross-check of the two estimates.

The steps, each on the same limit state:

1. Subset simulation (no design point needed) gives an estimate that does not depend
   on the shape of the failure domain, and its deepest samples show where the
   important regions are.
2. FORM searches start from the mean point and from one sample of each region
   (`assess.reliability.design_points`), per failure mode, at most `FORM_ITERATIONS`
   iterations each.
3. Importance sampling on the mixture of all design points found, until its CoV
   reaches ``target_cov`` (or ``n`` samples).
4. The two estimates are compared on the log scale (`assess.reliability.check`). If
   they agree, the importance-sampling estimate (the smaller CoV) is reported. If
   importance sampling is significantly higher, it is reported too: its weighted
   failed samples show failure mass that subset simulation missed. If it is
   significantly lower, or FORM found no usable design point, subset simulation is
   reported, repeated until ``target_cov`` or the evaluation budget. A disagreement
   always gives a warning that says which estimate was trusted and why.

When no sample fails even at the deepest level (very reliable modes with no usable
design point), pf is 0 and ``details`` holds the upper bound ``pf_upper`` and the
matching lower bound ``beta_lower``; beta is never NaN.

References
----------
.. [1] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001, doi:10.1016/S0266-8920(01)00019-4.
.. [2] R. E. Melchers, "Importance sampling in structural systems," *Structural
   Safety*, 6(1):3-10, 1989, doi:10.1016/0167-4730(89)90003-9.
.. [3] A. Der Kiureghian and T. Dakessian, "Multiple design points in first and
   second-order reliability," *Structural Safety*, 20(1):37-49, 1998.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from assess.reliability.check import trust_between
from assess.reliability.crude import check_int, check_real, resolve_seed
from assess.reliability.form import form_with_starts
from assess.reliability.importance import (
    MAX_IMPORTANCE_SAMPLES,
    centres_from_form,
    importance_sampling,
)
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf
from assess.reliability.subset import DEFAULT_P0, MAX_SAMPLES_PER_LEVEL, _pool, _subset

DEFAULT_LEVEL_SAMPLES = 500
"""Samples per level of the subset-simulation step when none are given [-]."""
DEFAULT_MAX_IMPORTANCE = 4000
"""Most importance samples when none are given [-]."""
DEFAULT_BUDGET = 200_000
"""Limit-state evaluations the method may spend repeating subset simulation [-]."""
MAX_LEVELS = 40
"""Deepest subset-simulation level: pf down to about 0.2**40 = 1e-28 (beta about 11) [-]."""
FORM_ITERATIONS = 20
"""Most iterations of each FORM search inside auto [-]. The design points only centre the
importance density, and the check guards the estimate; on a smooth limit state a search
converges in far fewer, while on a non-smooth one (a max or min in a capacity formula) it
oscillates near the limit state until the cap. Measured on the demo site's member modes
(benchmarks/members_method.py): 100 -> 20 iterations cut auto's time by about half with
the same estimate."""
CONFIRMATION_RUNS = 2
"""Further subset-simulation runs, pooled, before a disagreement is declared (a single
run's estimate has long tails) [-]."""

_HANDLED = ("series system of", "design points found", "the limit state was undefined",
            "the limit state was infinite")


def _summary(result: ReliabilityResult, note: str = "") -> dict:
    return {"method": result.method, "pf": result.pf, "beta": result.beta, "cov": result.cov,
            "n_calls": result.n_calls, "converged": result.converged, "note": note}


def auto(problem: StandardNormalProblem, *, seed=None, n_per_level: int | None = None,
         n: int | None = None, target_cov: float = 0.1, design_points: int = 4,
         max_calls: int | None = None) -> ReliabilityResult:
    """Probability of failure by the method the problem calls for, cross-checked.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure (several modes: series
        system).
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    n_per_level : int, optional
        Samples per level of subset simulation [-]; default 500 (the site steps
        pass 500 or 1000).
    n : int, optional
        Most importance samples [-]; default 4000.
    target_cov : float, default 0.1
        CoV aimed at [-]: importance sampling stops there; subset simulation is
        repeated towards it when it is the answer, within ``max_calls``.
    design_points : int, default 4
        Most design points sought per failure mode [-].
    max_calls : int, optional
        Budget of evaluations for repeating subset simulation [-]; default
        200 000. 0: one subset-simulation run, never repeated (the site steps pass 0
        and repeat the whole estimate only where a verdict stays undecided,
        `assess.reliability.interval.sample_until_decided`).

    Returns
    -------
    ReliabilityResult
        ``method`` "auto"; pf, beta, cov of the estimate chosen; the FORM design
        point and importance factors of the governing design point; in
        ``details``: ``chosen`` (the method reported), ``tried`` (every step with
        its pf, CoV and evaluations), ``check`` (the comparison), the
        ``design_points`` found and, when nothing failed, ``pf_upper`` and
        ``beta_lower``.
    """
    caller = "auto"
    rng, recorded_seed = resolve_seed(seed, caller)
    n_per_level = check_int(DEFAULT_LEVEL_SAMPLES if n_per_level is None else n_per_level,
                            "n_per_level", caller, 20, MAX_SAMPLES_PER_LEVEL, "memory")
    n_max = check_int(DEFAULT_MAX_IMPORTANCE if n is None else n, "n", caller, 100,
                      MAX_IMPORTANCE_SAMPLES, "upper bound of the run time")
    target_cov = check_real(target_cov, "target_cov", caller, 0.0, 10.0)
    design_points = check_int(design_points, "design_points", caller, 1, 20)
    budget = check_int(DEFAULT_BUDGET if max_calls is None else max_calls, "max_calls",
                       caller, 0)
    calls_before = problem.n_calls
    counters = problem.counters()
    settings = {"n_per_level": n_per_level, "n": n_max, "target_cov": target_cov,
                "design_points": design_points, "max_calls": budget}
    warnings: list[str] = []
    tried: list[dict] = []

    # 1. subset simulation: an estimate that needs no design point, and the scout
    sus, (scout_u, scout_g) = _subset(problem, n_per_level=n_per_level, p0=DEFAULT_P0, seed=rng,
                                      sampler="acs", max_levels=MAX_LEVELS, target_cov=None,
                                      max_calls=None)
    tried.append(_summary(sus, "needs no design point; its deepest samples scout the regions"))

    # 2. FORM from the mean point and from each region the scout shows
    n_modes = problem.g_modes(np.zeros((1, problem.dim))).shape[1]
    form_result = form_with_starts(problem, np.zeros(problem.dim), scout_u, scout_g,
                                   n_modes=n_modes, design_points=design_points,
                                   max_iter=FORM_ITERATIONS)
    centres, weights = centres_from_form(form_result)
    usable = centres.shape[0] > 0 and math.isfinite(form_result.beta) and form_result.beta > 0
    n_points = centres.shape[0]
    tried.append(_summary(form_result, f"{n_points} design point(s) found"))
    warnings += [f"FORM: {w}" for w in form_result.warnings
                 if not any(h in w for h in _HANDLED)]

    # 3. importance sampling on the mixture of the design points
    chosen = sus
    runs = [sus]
    check_record: dict = {}
    if usable:
        imp = importance_sampling(problem, n=n_max, seed=rng, design_point=centres,
                                  weights=weights, target_cov=target_cov)
        decision = trust_between(imp.pf, imp.cov, sus, "importance_sampling")
        tried.append(_summary(imp, f"mixture over {n_points} design point(s)"))
        if not decision["agree"]:
            # A disagreement may be a large fluctuation of the one subset-simulation run
            # (its distribution has long tails): confirm with further runs, pooled, before
            # either estimate is declared wrong.
            for _ in range(CONFIRMATION_RUNS):
                extra, _ = _subset(problem, n_per_level=n_per_level, p0=DEFAULT_P0, seed=rng,
                                   sampler="acs", max_levels=MAX_LEVELS, target_cov=None,
                                   max_calls=None)
                runs.append(extra)
                decision = trust_between(imp.pf, imp.cov, _pooled(runs), "importance_sampling")
                if decision["agree"]:
                    break
            if len(runs) > 1:
                tried.append({"method": "subset_simulation", "pf": _pooled(runs).pf,
                              "beta": _pooled(runs).beta, "cov": _pooled(runs).cov,
                              "n_calls": sum(r.n_calls for r in runs[1:]), "converged": True,
                              "note": f"{len(runs) - 1} confirming run(s), pooled"})
        reference = _pooled(runs)
        check_record = {"estimate": "importance_sampling", "pf": imp.pf, "cov": imp.cov,
                        "check": "subset_simulation", "check_pf": reference.pf,
                        "check_cov": reference.cov, "check_runs": len(runs), **decision}
        if decision["trust"] == "importance_sampling" and imp.pf > 0:
            chosen = imp
        else:
            check_record["trust"] = "subset_simulation"
        if not decision["agree"]:
            warnings.append(
                f"importance sampling on {n_points} design point(s) gives pf = {imp.pf:.3g} "
                f"(CoV {imp.cov:.2g}) and subset simulation pf = {reference.pf:.3g} (CoV "
                f"{reference.cov:.2g}, {len(runs)} run(s)); {decision['note']}. Trusting "
                f"{check_record['trust'].replace('_', ' ')}: {decision['reason']}")
    else:
        warnings.append("FORM found no usable design point (beta "
                        f"{form_result.beta:.3g}); the answer is subset simulation's")

    # 4. subset simulation as the answer: repeat towards the target CoV
    if chosen is sus and sus.pf > 0:
        spent = problem.n_calls - calls_before
        while (_pooled_cov(runs) > target_cov
               and problem.n_calls - calls_before + sus.n_calls <= budget):
            extra, _ = _subset(problem, n_per_level=n_per_level, p0=DEFAULT_P0, seed=rng,
                               sampler="acs", max_levels=MAX_LEVELS, target_cov=None,
                               max_calls=None)
            runs.append(extra)
        added = problem.n_calls - calls_before - spent
        if added:
            tried.append({"method": "subset_simulation", "pf": _pooled(runs).pf,
                          "beta": _pooled(runs).beta, "cov": _pooled_cov(runs),
                          "n_calls": added, "converged": True,
                          "note": f"runs pooled towards CoV {target_cov:g} ({len(runs)} in all)"})
        if _pooled_cov(runs) > target_cov and budget > 0:
            warnings.append(f"subset simulation reached CoV {_pooled_cov(runs):.2g}, above "
                            f"the {target_cov:g} aimed at, within the budget of {budget} "
                            "evaluations")

    if chosen is sus:
        pooled = _pool([{"pf": r.pf, "cov": r.cov} for r in runs])
        pf = pooled["pf"] if len(runs) > 1 else sus.pf
        cov = _pooled_cov(runs)
        converged = all(r.converged for r in runs)
        warnings += [w for r in runs for w in r.warnings if not any(h in w for h in _HANDLED)]
        name = "subset_simulation"
    else:
        pf, cov, converged, name = chosen.pf, chosen.cov, chosen.converged, chosen.method
        warnings += [w for w in chosen.warnings if not any(h in w for h in _HANDLED)]

    details = {"chosen": name, "tried": tried, "check": check_record,
               "design_points": form_result.details.get("design_points", []),
               "form_beta": form_result.beta}
    if "first_order_bounds" in form_result.details:
        details["first_order_bounds"] = form_result.details["first_order_bounds"]
    if pf == 0.0:
        upper = sus.details.get("pf_upper", 3.0 / n_per_level)
        details["pf_upper"] = upper
        details["beta_lower"] = beta_from_pf(upper)
        warnings.append(
            f"no sample failed down to subset level {sus.details.get('n_levels')}: pf is "
            f"below about {upper:.2g} (beta above {beta_from_pf(upper):.2f}); this is a bound, "
            "not an estimate")
    warnings += problem.nonfinite_warnings(counters)
    fields = {}
    if usable:
        fields = {"design_point_u": form_result.design_point_u,
                  "design_point_x": form_result.design_point_x,
                  "alpha": form_result.alpha,
                  "importance_factors": form_result.importance_factors}
    return ReliabilityResult(
        method="auto", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed, settings=settings,
        converged=bool(converged), warnings=tuple(dict.fromkeys(warnings)), details=details,
        **fields)


def _pooled(runs: list) -> ReliabilityResult:
    """The mean of independent subset-simulation runs as one result (pf, beta, cov)."""
    if len(runs) == 1:
        return runs[0]
    pf = float(np.mean([r.pf for r in runs]))
    return dataclasses.replace(runs[0], pf=pf, beta=beta_from_pf(pf), cov=_pooled_cov(runs),
                               n_calls=sum(r.n_calls for r in runs))


def _pooled_cov(runs: list) -> float:
    covs = np.array([r.cov for r in runs], dtype=float)
    if not np.all(np.isfinite(covs)):
        return math.inf
    return float(math.sqrt(float(np.mean(covs**2)) / len(runs)))


__all__ = ["DEFAULT_BUDGET", "DEFAULT_LEVEL_SAMPLES", "DEFAULT_MAX_IMPORTANCE", "FORM_ITERATIONS",
           "auto"]
