"""Reliability on a polynomial-chaos surrogate, accepted only where the surrogate is
right near the failure boundary.

For an expensive limit state, the expansion (`assess.surrogate.chaos`) is fitted on a
Latin-hypercube design, and subset simulation runs on the expansion (cheap). The
expansion's own leave-one-out error measures its fit where the design points are,
mostly near the mean; what decides pf is the fit near the failure boundary. So the
deepest subset level on the surrogate - samples of the surrogate's last intermediate
domain, which straddles its limit state - is checked: ``check_points`` of them are
evaluated on the true limit state, and the signs compared. When fewer than
``tolerance`` times the surrogate's failures among them change sign, the surrogate's pf
is accepted, provided the expansion's leave-one-out error is also small (a surrogate
that fits badly overall can miss whole failure regions, which the boundary check cannot
see). Otherwise those points (and, for a poor overall fit, more Latin-hypercube points)
join the design, the expansion is refitted ("refined"), and the check repeats until
``max_samples`` true evaluations are spent - then the method refuses with a message
(`AnalysisError`).

References
----------
.. [1] G. Blatman and B. Sudret, "Adaptive sparse polynomial chaos expansion based on
   least angle regression," *Journal of Computational Physics*, 230(6):2345-2367, 2011.
.. [2] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001.
"""

from __future__ import annotations

import math

import numpy as np

from assess.errors import AnalysisError
from assess.reliability.crude import check_int, check_real, resolve_seed
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf
from assess.reliability.subset import DEFAULT_P0, _subset
from assess.surrogate.chaos import (
    chaos_for_problem,
    families_for_model,
    fit_chaos,
    germ_map_for,
    latin_hypercube_u,
)
from assess.surrogate.polynomials import HERMITE


def _surrogate_problem(problem, chaos) -> StandardNormalProblem:
    return StandardNormalProblem(chaos.predict, problem.dim, problem.names,
                                 problem.to_physical)


def chaos_reliability(problem: StandardNormalProblem, *, seed=None, n_samples: int = 200,
                      max_samples: int = 1000, tolerance: float = 0.1,
                      check_points: int = 100, max_degree: int = 5,
                      n_per_level: int = 2000, max_loo: float = 1e-2) -> ReliabilityResult:
    """Probability of failure on a polynomial-chaos surrogate, checked at its boundary.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space (several modes: their minimum is fitted). With
        a ``model`` attribute (a `ProbabilisticModel`, set by problem files) the
        polynomial families are matched to the marginals.
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    n_samples : int, default 200
        First experimental design (Latin hypercube) [-].
    max_samples : int, default 1000
        Most true limit-state evaluations, design and checks together [-].
    tolerance : float, default 0.1
        Accepted share of sign changes among the surrogate's failed check points
        [-].
    check_points : int, default 100
        True evaluations per boundary check [-].
    max_degree : int, default 5
        Highest total degree tried [-].
    n_per_level : int, default 2000
        Samples per level of subset simulation on the surrogate [-].
    max_loo : float, default 0.01
        Largest accepted relative leave-one-out error of the expansion [-]: a
        surrogate that fits the design points badly (a non-smooth limit state,
        e.g. a minimum of several modes) can miss whole failure regions, which
        the boundary check cannot see.

    Returns
    -------
    ReliabilityResult
        pf from subset simulation on the surrogate; ``cov`` combines its CoV with
        the share of sign changes at the boundary; ``n_calls`` counts true
        evaluations only; ``details``: ``sobol`` (first and total indices by
        variable), ``loo_error``, ``degree``, ``n_terms``, ``boundary_checks``
        (per round: points, surrogate failures, true failures, sign changes) and
        ``surrogate_evaluations``. The design point and importance factors come
        from FORM on the surrogate (no true evaluations).

    Raises
    ------
    AnalysisError
        The surrogate is still wrong at the boundary when ``max_samples`` true
        evaluations are spent, or it shows no failure at all.
    """
    caller = "polynomial_chaos"
    n_samples = check_int(n_samples, "n_samples", caller, 10, 10**6)
    max_samples = check_int(max_samples, "max_samples", caller, n_samples, 10**7)
    tolerance = check_real(tolerance, "tolerance", caller, 0.0, 1.0)
    check_points = check_int(check_points, "check_points", caller, 10, 10**5)
    max_degree = check_int(max_degree, "max_degree", caller, 1, 20)
    n_per_level = check_int(n_per_level, "n_per_level", caller, 100, 10**6)
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls
    counters = problem.counters()
    model = getattr(problem, "model", None)

    chaos, (design_u, design_g) = chaos_for_problem(problem, n_samples, seed=rng, model=model,
                                                    max_degree=max_degree)
    if model is not None:
        families, params = families_for_model(model)
    else:
        families, params = [HERMITE] * problem.dim, [None] * problem.dim
    germ_map = germ_map_for(families, problem.to_physical, problem.names, params)
    checks, surrogate_calls = [], 0
    while True:
        surrogate = _surrogate_problem(problem, chaos)
        sus, (last_u, last_g) = _subset(surrogate, n_per_level=n_per_level, p0=DEFAULT_P0, seed=rng,
                                        sampler="acs", max_levels=40, target_cov=None,
                                        max_calls=None)
        surrogate_calls += surrogate.n_calls
        if sus.pf == 0.0:
            raise AnalysisError(
                "the polynomial-chaos surrogate shows no failure down to pf of about "
                f"{sus.details.get('pf_upper', 0):.1g}; it cannot stand in for the limit "
                "state here - use auto or subset_simulation on the limit state itself")
        pick = rng.choice(last_u.shape[0], size=min(check_points, last_u.shape[0]),
                          replace=False)
        points = last_u[pick]
        g_true = problem.g(points)
        g_surrogate = last_g[pick]
        fail_s = int(np.count_nonzero(g_surrogate <= 0))
        fail_t = int(np.count_nonzero(g_true <= 0))
        changed = int(np.count_nonzero((g_true <= 0) != (g_surrogate <= 0)))
        share = changed / max(fail_s, 1)
        checks.append({"points": int(points.shape[0]), "surrogate_failures": fail_s,
                       "true_failures": fail_t, "sign_changes": changed,
                       "share": share, "pf_surrogate": sus.pf, "n_design": design_u.shape[0],
                       "loo_error": chaos.loo_error, "degree": chaos.degree})
        if share <= tolerance and fail_s > 0 and chaos.loo_error <= max_loo:
            break
        spent = problem.n_calls - calls_before
        extra = 0 if chaos.loo_error <= max_loo else n_samples // 2
        if spent + check_points + extra > max_samples:
            raise AnalysisError(
                f"the polynomial-chaos surrogate is not accurate enough: {changed} of "
                f"{points.shape[0]} points checked near its failure boundary change sign "
                f"({share:.0%} of its {fail_s} failures there, tolerance {tolerance:.0%}) and "
                f"its leave-one-out error is {chaos.loo_error:.2g} (at most {max_loo:g}) "
                f"after {spent} true evaluations (max_samples={max_samples}); use auto or "
                "subset_simulation on the limit state itself, or allow more samples")
        design_u = np.vstack([design_u, points])
        design_g = np.concatenate([design_g, g_true])
        if extra:
            more_u = latin_hypercube_u(extra, problem.dim, rng)
            design_u = np.vstack([design_u, more_u])
            design_g = np.concatenate([design_g, problem.g(more_u)])
        chaos = fit_chaos(design_u, design_g, families=families, names=problem.names,
                          germ_map=germ_map, max_degree=max_degree)

    cov = math.hypot(sus.cov, share) if math.isfinite(sus.cov) else math.nan
    # design point and importance factors from FORM on the surrogate (no true evaluations)
    from assess.reliability.form import form
    first_order = form(_surrogate_problem(problem, chaos))
    fields = {}
    if math.isfinite(first_order.beta):
        fields = {"design_point_u": first_order.design_point_u,
                  "design_point_x": first_order.design_point_x, "alpha": first_order.alpha,
                  "importance_factors": first_order.importance_factors}
    warnings = [w for w in sus.warnings]
    warnings += problem.nonfinite_warnings(counters)
    return ReliabilityResult(
        method="polynomial_chaos", pf=sus.pf, beta=beta_from_pf(sus.pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings={"n_samples": n_samples, "max_samples": max_samples, "tolerance": tolerance,
                  "check_points": check_points, "max_degree": max_degree,
                  "n_per_level": n_per_level},
        converged=sus.converged, warnings=tuple(warnings),
        details={"sobol": chaos.sobol(), "loo_error": chaos.loo_error,
                 "degree": chaos.degree, "n_terms": int(chaos.coefficients.size),
                 "mean": chaos.mean, "std": math.sqrt(chaos.variance),
                 "boundary_checks": checks, "surrogate_evaluations": surrogate_calls,
                 "cov_subset_simulation": sus.cov, "families": [f.name for f in families],
                 "form_beta_on_surrogate": first_order.beta},
        **fields)


__all__ = ["chaos_reliability"]
