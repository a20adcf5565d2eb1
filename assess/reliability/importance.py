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
from scipy.special import logsumexp, ndtr

from assess.errors import InputError
from assess.reliability.crude import check_int, check_real, resolve_seed
from assess.reliability.form import form
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf

MAX_IMPORTANCE_SAMPLES = 10**8
"""Upper bound on the importance samples [-] (drawn in batches; bounds the run time)."""


def centres_from_form(result) -> tuple[np.ndarray, np.ndarray]:
    """Design points and mixture weights (proportional to Phi(-beta)) of a FORM result.

    Every design point in ``details["design_points"]`` with a finite point and a
    positive beta is a centre; a FORM result without that list gives its one
    design point.
    """
    points = result.details.get("design_points")
    if not points:
        if result.design_point_u is None:
            return np.zeros((0, 0)), np.zeros(0)
        return np.atleast_2d(result.design_point_u), np.ones(1)
    centres = np.array([np.asarray(p["design_point_u"], dtype=float) for p in points])
    betas = np.array([p["beta"] for p in points], dtype=float)
    keep = np.isfinite(betas) & np.all(np.isfinite(centres), axis=1)
    keep &= np.array([bool(p.get("converged") or p.get("stalled")) for p in points])
    if not keep.any():
        keep = np.isfinite(betas) & np.all(np.isfinite(centres), axis=1)
    weights = np.array([float(ndtr(-b)) for b in betas[keep]])
    if weights.size and not np.all(weights > 0):
        weights = np.ones(weights.size)
    return centres[keep], weights


def mixture_log_density_ratio(u: np.ndarray, centres: np.ndarray,
                              log_mix: np.ndarray) -> np.ndarray:
    """ln(phi_n(u) / h(u)) for the mixture h(u) = sum_j pi_j phi_n(u - u_j) [-].

    |u - u_j|^2 is expanded as |u|^2 - 2 u.u_j + |u_j|^2, so memory stays at
    n x (number of centres) whatever the dimension.
    """
    sq = (u * u).sum(axis=1)
    cross = u @ centres.T
    centre_sq = (centres * centres).sum(axis=1)
    log_h = logsumexp(log_mix[None, :] - 0.5 * (sq[:, None] - 2.0 * cross
                                                 + centre_sq[None, :]), axis=1)
    return -0.5 * sq - log_h


def importance_sampling(problem: StandardNormalProblem, *, n: int = 2000, seed=None,
                        design_point=None, batch: int = 50_000, design_points: int = 1,
                        target_cov: float | None = None, check: bool = False,
                        check_samples: int = 500, weights=None) -> ReliabilityResult:
    """Probability of failure by importance sampling centred at the design point(s).

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure.
    n : int, default 2000
        Number of importance samples [-] (at most `MAX_IMPORTANCE_SAMPLES`,
        10**8); with ``target_cov``, the most that will be drawn.
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    design_point : array_like of shape (dim,) or (k, dim), optional
        Centre(s) of the sampling density in u-space [-]. By default FORM is run
        first (its limit-state calls are counted in ``n_calls``); it gives one
        centre per design point found.
    batch : int, default 50_000
        Samples per limit-state call; bounds memory [-].
    design_points : int, default 1
        Design points FORM seeks per limit state (`form`); above 1 a
        subset-simulation scout looks for other important regions.
    target_cov : float, optional
        Stop as soon as the CoV of the estimate is at most this value [-]
        (checked after 200 samples, then after each doubling).
    check : bool, default False
        Compare with an independent subset-simulation estimate
        (`assess.reliability.check`); a disagreement adds a warning that names
        the method to trust. ``run_method`` turns this on.
    check_samples : int, default 500
        Samples per level of the check [-].
    weights : array_like of shape (k,), optional
        Mixture weights of the given ``design_point`` rows [-] (normalised);
        default equal weights.

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
    over the design points of the modes and regions [2]_). The estimate is
    pf = (1/N) sum I[g(u_i) <= 0] w_i with w_i = phi_n(u_i) / h(u_i); the
    weights are computed in log form,
    ln w = -|u|^2/2 - logsumexp_j(ln pi_j - |u - u_j*|^2/2),
    so that large |u*| do not overflow. CoV = sqrt(Var(I w) / N) / pf.
    The method is efficient when the failure domain is well described by its
    design point(s); a region with no centre is missed with no sign of it in
    the CoV, which is why ``check`` exists.
    """
    caller = "importance_sampling"
    n = check_int(n, "n", caller, 2, MAX_IMPORTANCE_SAMPLES, "upper bound of the run time")
    batch = check_int(batch, "batch", caller, 1, 10**7, "memory per limit-state call")
    design_points = check_int(design_points, "design_points", caller, 1, 20)
    if target_cov is not None:
        target_cov = check_real(target_cov, "target_cov", caller, 0.0, 10.0)
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls
    counters = problem.counters()

    form_result = None
    warnings = []
    if design_point is None:
        form_result = form(problem, design_points=design_points, seed=rng)
        centres, mix = centres_from_form(form_result)
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
        mix = np.ones(centres.shape[0]) if weights is None else np.asarray(weights, float)
        if mix.shape != (centres.shape[0],) or not np.all(mix >= 0) or not mix.sum() > 0:
            raise InputError(f"The 'weights' parameter of {caller} must be "
                             f"{centres.shape[0]} non-negative numbers, not all zero.")
    mix = mix / mix.sum()
    log_mix = np.log(mix)

    total = 0.0
    total_sq = 0.0
    n_fail = 0
    drawn = 0
    while drawn < n:
        size = min(batch, n - drawn)
        if target_cov is not None:
            size = min(size, max(200, drawn))
        component = rng.choice(centres.shape[0], size=size, p=mix)
        u = centres[component] + rng.standard_normal((size, problem.dim))
        failed = problem.g(u) <= 0.0
        weights = np.exp(mixture_log_density_ratio(u, centres, log_mix)) * failed
        total += float(weights.sum())
        total_sq += float((weights * weights).sum())
        n_fail += int(failed.sum())
        drawn += size
        if target_cov is not None and total > 0 and _cov(total, total_sq, drawn) <= target_cov:
            break

    pf = total / drawn
    cov = _cov(total, total_sq, drawn)
    if n_fail == 0:
        warnings.append(f"no failure among {drawn} importance samples: pf = 0 is not an "
                        "estimate; check that the design point lies on the limit state")
    if target_cov is not None and not cov <= target_cov:
        warnings.append(f"the requested CoV {target_cov:g} was not reached with n = {n} "
                        f"samples (CoV {cov:.3g})")

    fields = {}
    if form_result is not None:
        fields = {"design_point_u": form_result.design_point_u,
                  "design_point_x": form_result.design_point_x,
                  "alpha": form_result.alpha,
                  "importance_factors": form_result.importance_factors}
        handled = ("series system of", "design points found", "the limit state was undefined",
                   "the limit state was infinite")
        warnings = [w for w in form_result.warnings
                    if not any(h in w for h in handled)] + warnings
    warnings += problem.nonfinite_warnings(counters)
    result = ReliabilityResult(
        method="importance_sampling", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings={"n": n, "batch": batch, "design_point_given": design_point is not None,
                  "design_points": design_points, "target_cov": target_cov},
        converged=n_fail > 0 and (form_result is None or form_result.converged),
        warnings=tuple(dict.fromkeys(warnings)),
        details={"centres": centres, "mixture_weights": mix, "n_failures": n_fail,
                 "n_samples": drawn,
                 "form_beta": form_result.beta if form_result is not None else None,
                 "form_calls": form_result.n_calls if form_result is not None else 0},
        **fields)
    if check:
        from assess.reliability.check import checked
        result = checked(problem, result,
                         seed=recorded_seed if recorded_seed is not None else rng,
                         n_per_level=check_samples)
    return result


def _cov(total: float, total_sq: float, n: int) -> float:
    """CoV of the mean of I w from its running sums [-] (NaN when pf = 0)."""
    pf = total / n
    if pf <= 0 or n < 2:
        return math.nan
    variance = max(0.0, (total_sq / n - pf * pf)) * n / (n - 1)
    return math.sqrt(variance / n) / pf
