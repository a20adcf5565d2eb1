"""Importance sampling around the FORM design point(s).

References
----------
.. [1] C. G. Bucher, "Adaptive sampling - an iterative fast Monte Carlo procedure,"
   *Structural Safety*, 5(2):119-126, 1988, doi:10.1016/0167-4730(88)90020-3.
.. [2] R. E. Melchers, "Importance sampling in structural systems,"
   *Structural Safety*, 6(1):3-10, 1989, doi:10.1016/0167-4730(89)90003-9.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.special import logsumexp

from assess.errors import InputError
from assess.reliability.crude import check_int, resolve_seed
from assess.reliability.form import form
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf


def _centres_from_form(problem: StandardNormalProblem) -> tuple[np.ndarray, np.ndarray, object]:
    """Design point(s) and mixture weights from a FORM run (one centre per mode)."""
    result = form(problem)
    modes = result.details.get("modes")
    if not modes:
        return result.design_point_u[None, :], np.ones(1), result
    centres = np.array([m["design_point_u"] for m in modes])
    weights = np.array([m["pf"] for m in modes])
    keep = np.isfinite(weights) & np.all(np.isfinite(centres), axis=1)
    return centres[keep], weights[keep], result


def importance_sampling(problem: StandardNormalProblem, *, n: int = 2000, seed=None,
                        design_point=None, batch: int = 50_000) -> ReliabilityResult:
    """Probability of failure by importance sampling centred at the design point.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure.
    n : int, default 2000
        Number of importance samples [-].
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    design_point : array_like of shape (dim,) or (k, dim), optional
        Centre(s) of the sampling density in u-space [-]. By default FORM is run
        first (its limit-state calls are counted in ``n_calls``); for a series
        system it gives one centre per mode.
    batch : int, default 50_000
        Samples per limit-state call; bounds memory [-].

    Returns
    -------
    ReliabilityResult
        pf, beta, cov (from the sample variance of I w), the centre(s) in
        ``details["centres"]``, and the FORM design point / importance factors
        when FORM was run.

    Notes
    -----
    Sampling density h(u) = sum_j pi_j phi_n(u - u_j*) with pi_j proportional
    to Phi(-beta_j) (one component for a single design point [1]_, a mixture
    over the modes' design points for a series system [2]_). The estimate is
    pf = (1/N) sum I[g(u_i) <= 0] w_i with w_i = phi_n(u_i) / h(u_i); the
    weights are computed in log form,
    ln w = -|u|^2/2 - logsumexp_j(ln pi_j - |u - u_j*|^2/2),
    so that large |u*| do not overflow. CoV = sqrt(Var(I w) / N) / pf.
    The method is efficient when the failure domain is well described by its
    design point(s); several unlisted design points make it biased low.
    """
    caller = "importance_sampling"
    n = check_int(n, "n", caller, 2)
    batch = check_int(batch, "batch", caller, 1)
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls

    form_result = None
    warnings = []
    if design_point is None:
        centres, mix, form_result = _centres_from_form(problem)
        if not form_result.converged:
            warnings.append("FORM did not converge: the sampling density is centred at its "
                            "last iterate; check the cov and compare with subset simulation")
        if centres.shape[0] == 0:
            centres, mix = np.zeros((1, problem.dim)), np.ones(1)
    else:
        centres = np.atleast_2d(np.asarray(design_point, dtype=float))
        if centres.shape[1] != problem.dim or not np.all(np.isfinite(centres)):
            raise InputError(f"The 'design_point' parameter of {caller} must have "
                             f"{problem.dim} finite coordinates per row. Got shape "
                             f"{centres.shape} instead.")
        mix = np.ones(centres.shape[0])
    mix = mix / mix.sum()
    log_mix = np.log(mix)

    total = 0.0
    total_sq = 0.0
    n_fail = 0
    remaining = n
    while remaining > 0:
        size = min(batch, remaining)
        component = rng.choice(centres.shape[0], size=size, p=mix)
        u = centres[component] + rng.standard_normal((size, problem.dim))
        failed = problem.g(u) <= 0.0
        log_h = logsumexp(log_mix - 0.5 * ((u[:, None, :] - centres[None, :, :])**2).sum(axis=2),
                          axis=1)
        weights = np.exp(-0.5 * (u * u).sum(axis=1) - log_h) * failed
        total += float(weights.sum())
        total_sq += float((weights * weights).sum())
        n_fail += int(failed.sum())
        remaining -= size

    pf = total / n
    variance = max(0.0, (total_sq / n - pf * pf)) * n / (n - 1)
    cov = math.sqrt(variance / n) / pf if pf > 0 else math.nan
    if n_fail == 0:
        warnings.append(f"no failure among {n} importance samples: pf = 0 is not an "
                        "estimate; check that the design point lies on the limit state")

    fields = {}
    if form_result is not None:
        fields = {"design_point_u": form_result.design_point_u,
                  "design_point_x": form_result.design_point_x,
                  "alpha": form_result.alpha,
                  "importance_factors": form_result.importance_factors}
    return ReliabilityResult(
        method="importance_sampling", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings={"n": n, "batch": batch, "design_point_given": design_point is not None},
        converged=n_fail > 0 and (form_result is None or form_result.converged),
        warnings=tuple(warnings),
        details={"centres": centres, "mixture_weights": mix, "n_failures": n_fail,
                 "form_beta": form_result.beta if form_result is not None else None,
                 "form_calls": form_result.n_calls if form_result is not None else 0},
        **fields)
