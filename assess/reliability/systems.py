"""First-order probability of a union of linearised failure domains (series systems and
limit states with several design points).

Each design point j gives a half-space {alpha_j . u >= beta_j} of the standard normal
space; the union of these half-spaces is the first-order approximation of the failure
domain. Its probability lies between the bounds of Ditlevsen [1]_, which use the
probabilities of single events and of pairs.

References
----------
.. [1] O. Ditlevsen, "Narrow reliability bounds for structural systems," *Journal of
   Structural Mechanics*, 7(4):453-472, 1979, doi:10.1080/03601217908905329.
.. [2] M. Hohenbichler and R. Rackwitz, "First-order concepts in system reliability,"
   *Structural Safety*, 1(3):177-188, 1983, doi:10.1016/0167-4730(83)90006-1.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import integrate, special


def _sf(x: float) -> float:
    return float(special.ndtr(-x))


def bivariate_tail(a: float, b: float, rho: float) -> float:
    """P(X > a, Y > b) for standard normals X, Y with correlation rho [-].

    Computed as the integral of phi(x) Phi((rho x - b) / sqrt(1 - rho^2)) over
    x > a with a relative tolerance, so that probabilities far in the tail
    (1e-12 and below) keep their precision.
    """
    rho = float(np.clip(rho, -1.0, 1.0))
    if rho >= 1.0 - 1e-12:
        return _sf(max(a, b))
    if rho <= -1.0 + 1e-12:
        return max(0.0, float(special.ndtr(-b)) - float(special.ndtr(a)))
    root = math.sqrt(1.0 - rho * rho)

    def integrand(t: float) -> float:
        x = a + t
        return math.exp(-0.5 * x * x) / math.sqrt(2.0 * math.pi) * float(
            special.ndtr((rho * x - b) / root))

    value, _ = integrate.quad(integrand, 0.0, math.inf, epsabs=0.0, epsrel=1e-9, limit=200)
    return min(max(value, 0.0), _sf(a), _sf(b))


def ditlevsen_bounds(betas, alphas) -> tuple[float, float]:
    """Bounds on the probability of the union of half-spaces {alpha_j . u >= beta_j} [1]_.

    Parameters
    ----------
    betas : array_like of shape (k,)
        Reliability indices of the design points [-].
    alphas : array_like of shape (k, dim)
        Unit normals at the design points (alpha = -grad G / |grad G|) [-].

    Returns
    -------
    (lower, upper) : tuple of float
        Ditlevsen's bounds, lower = p_1 + sum_i max(0, p_i - sum_{j<i} p_ij),
        upper = sum_i p_i - sum_{i>1} max_{j<i} p_ij, with the events ordered by
        decreasing p_i = Phi(-beta_i) and p_ij from the correlation
        rho_ij = alpha_i . alpha_j of the linearised safety margins [2]_.
    """
    betas = np.asarray(betas, dtype=float)
    alphas = np.atleast_2d(np.asarray(alphas, dtype=float))
    order = np.argsort(betas)
    betas, alphas = betas[order], alphas[order]
    p = np.array([_sf(b) for b in betas])
    k = betas.size
    if k == 0:
        return 0.0, 0.0
    lower, upper = float(p[0]), float(p[0])
    for i in range(1, k):
        joint = [bivariate_tail(betas[i], betas[j], float(alphas[i] @ alphas[j]))
                 for j in range(i)]
        lower += max(0.0, float(p[i]) - sum(joint))
        upper += float(p[i]) - max(joint)
    return min(lower, 1.0), min(max(upper, lower), 1.0)


__all__ = ["bivariate_tail", "ditlevsen_bounds"]
