"""Nataf correlation correction: the Gaussian-copula correlation that reproduces a target.

In the Nataf model each variable is mapped to a standard normal z_i = Phi^-1(F_i(x_i))
and z is jointly normal with correlation matrix R0. The Pearson correlation rho_ij of
the physical variables and the normal-space correlation rho0_ij are linked by

    rho_ij = E[ (x_i - mu_i)/sigma_i * (x_j - mu_j)/sigma_j ],  (z_i, z_j) ~ N2(0, 0; rho0_ij)

(Liu & Der Kiureghian 1986, eq. 9). This module solves that relation for rho0: with
exact closed forms for normal and lognormal pairs and, for any other pair, a 2-D
Gauss-Hermite quadrature of the expectation and Brent's root finding.

References
----------
P.-L. Liu and A. Der Kiureghian, "Multivariate distribution models with prescribed
marginals and covariances", Probabilistic Engineering Mechanics 1(2), 105-112, 1986,
doi:10.1016/0266-8920(86)90033-0.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np
from numpy.polynomial import hermite_e
from scipy import optimize

from assess.distributions import Distribution
from assess.errors import InputError

QUADRATURE_POINTS = 32
"""Gauss-Hermite points per dimension (32 x 32 = 1024 evaluations per rho0)."""

_nodes, _weights = hermite_e.hermegauss(QUADRATURE_POINTS)
_weights = _weights / np.sqrt(2.0 * np.pi)  # weights of the standard normal density
_RHO0_LIMIT = 1.0 - 1e-10


def _label(dist: Distribution, fallback: str) -> str:
    return f"'{dist.name}'" if dist.name else fallback


def _check_marginal(dist: Distribution, label: str) -> None:
    if not isinstance(dist, Distribution):
        raise InputError(f"{label} is not a Distribution (build it with make_distribution)")
    if not dist.is_random:
        raise InputError(f"variable {label} is deterministic and cannot be correlated")
    if not dist.is_scalar:
        raise InputError(f"variable {label} has parameters that vary per sample; only "
                         "variables with fixed parameters can be correlated")
    if not np.isfinite(dist.std):
        raise InputError(f"variable {label} ({dist.describe()}) has no finite variance, so a "
                         "Pearson correlation is not defined for it")


def _standardised_values(dist: Distribution) -> np.ndarray:
    return (dist.x_from_u(_nodes) - dist.mean) / dist.std


def correlation_from_normal(dist_i: Distribution, dist_j: Distribution, rho0: float) -> float:
    """Pearson correlation of x_i, x_j when their normal images have correlation rho0.

    Evaluates Liu & Der Kiureghian (1986) eq. 9 by 2-D Gauss-Hermite quadrature
    (`QUADRATURE_POINTS` per dimension), writing z_j = rho0 z_i + sqrt(1 - rho0^2) v
    with z_i, v independent standard normal.

    Parameters
    ----------
    dist_i, dist_j : Distribution
        Marginals with fixed parameters and finite variance.
    rho0 : float
        Correlation in standard normal space, in [-1, 1] [-].

    Returns
    -------
    float
        Correlation coefficient of the physical variables [-].
    """
    h_i = _standardised_values(dist_i)
    z_j = rho0 * _nodes[:, None] + np.sqrt(max(0.0, 1.0 - rho0**2)) * _nodes[None, :]
    h_j = (dist_j.x_from_u(z_j) - dist_j.mean) / dist_j.std
    return float(np.einsum("a,b,a,ab->", _weights, _weights, h_i, h_j))


def _closed_form(dist_i: Distribution, dist_j: Distribution, rho: float):
    """rho0 from Liu & Der Kiureghian (1986) Table 2 closed forms, or None if not covered."""
    kinds = (dist_i.kind, dist_j.kind)
    if kinds == ("normal", "normal"):
        return rho
    if set(kinds) == {"normal", "lognormal"}:
        log_dist = dist_i if dist_i.kind == "lognormal" else dist_j
        delta = log_dist.std / log_dist.mean
        return rho * delta / np.sqrt(np.log1p(delta**2))
    if kinds == ("lognormal", "lognormal"):
        delta_i = dist_i.std / dist_i.mean
        delta_j = dist_j.std / dist_j.mean
        argument = 1.0 + rho * delta_i * delta_j
        if argument <= 0:
            return np.inf
        return np.log(argument) / np.sqrt(np.log1p(delta_i**2) * np.log1p(delta_j**2))
    return None


def nataf_correlation(dist_i: Distribution, dist_j: Distribution, rho: float) -> float:
    """Normal-space correlation rho0 that gives the Pearson correlation rho in x-space.

    Closed forms (Liu & Der Kiureghian 1986, Table 2, exact):

    - normal-normal: rho0 = rho
    - normal-lognormal(delta_j): rho0 = rho * delta_j / sqrt(ln(1 + delta_j^2))
    - lognormal-lognormal: rho0 = ln(1 + rho delta_i delta_j) /
      sqrt(ln(1 + delta_i^2) ln(1 + delta_j^2))

    (delta = coefficient of variation). Other pairs: `correlation_from_normal`
    solved for rho0 with Brent's method.

    Parameters
    ----------
    dist_i, dist_j : Distribution
        Marginals with fixed parameters and finite variance.
    rho : float
        Target Pearson correlation, in (-1, 1) [-].

    Returns
    -------
    float
        rho0 [-].

    Raises
    ------
    InputError
        If the pair cannot reach `rho` with any rho0 in [-1, 1] (the attainable
        range of a Nataf pair is narrower than [-1, 1] unless both are normal).
    """
    label_i = _label(dist_i, "#1")
    label_j = _label(dist_j, "#2")
    _check_marginal(dist_i, label_i)
    _check_marginal(dist_j, label_j)
    rho = float(rho)
    if not -1.0 < rho < 1.0:
        raise InputError(f"correlation between {label_i} and {label_j} must lie strictly "
                         f"between -1 and 1, got {rho:.6g}")
    if rho == 0.0:
        return 0.0
    rho0 = _closed_form(dist_i, dist_j, rho)
    if rho0 is None:
        low = correlation_from_normal(dist_i, dist_j, -_RHO0_LIMIT)
        high = correlation_from_normal(dist_i, dist_j, _RHO0_LIMIT)
        if low < rho < high:
            return float(optimize.brentq(
                lambda r0: correlation_from_normal(dist_i, dist_j, r0) - rho,
                -_RHO0_LIMIT, _RHO0_LIMIT, xtol=1e-12))
        rho0 = np.inf
    if abs(rho0) >= 1.0:
        low = correlation_from_normal(dist_i, dist_j, -_RHO0_LIMIT)
        high = correlation_from_normal(dist_i, dist_j, _RHO0_LIMIT)
        raise InputError(
            f"correlation {rho:.6g} between {label_i} ({dist_i.describe()}) and {label_j} "
            f"({dist_j.describe()}) cannot be reached with these marginals; the attainable "
            f"range is about [{low:.3f}, {high:.3f}]")
    return float(rho0)


def _pd_failure(R: np.ndarray, labels: Sequence[str], which: str) -> InputError:
    values, vectors = np.linalg.eigh(R)
    vector = vectors[:, 0]
    involved = [labels[k] for k in np.argsort(-np.abs(vector)) if abs(vector[k]) > 0.2]
    return InputError(
        f"{which}correlation matrix is not positive definite (smallest eigenvalue "
        f"{values[0]:.3g}); the correlations among {', '.join(involved)} are inconsistent "
        "with each other")


def _cholesky_or_error(R: np.ndarray, labels: Sequence[str], which: str) -> np.ndarray:
    try:
        return np.linalg.cholesky(R)
    except np.linalg.LinAlgError:
        raise _pd_failure(R, labels, which) from None


def corrected_correlation_matrix(dists: Sequence[Distribution], R, *,
                                 names: Sequence[str] | None = None) -> np.ndarray:
    """Nataf-corrected correlation matrix R0 of the normal images of `dists`.

    Parameters
    ----------
    dists : sequence of Distribution
        Marginals with fixed parameters, one per row/column of `R`.
    R : array_like, shape (m, m)
        Target Pearson correlation matrix of the physical variables [-].
    names : sequence of str, optional
        Variable names for messages; defaults to each distribution's ``name``
        or its position.

    Returns
    -------
    ndarray, shape (m, m)
        R0 [-], symmetric with unit diagonal.

    Raises
    ------
    InputError
        R not square/symmetric, diagonal not 1, |rho| > 1, a pair that cannot
        reach its correlation, or R or R0 not positive definite.
    """
    R = np.asarray(R, dtype=float)
    m = len(dists)
    if names is None:
        names = [d.name if d.name else f"#{k + 1}" for k, d in enumerate(dists)]
    labels = [f"'{n}'" for n in names]
    if R.shape != (m, m):
        raise InputError(f"correlation matrix has shape {R.shape}, expected ({m}, {m}) for "
                         f"{m} variables")
    if not np.all(np.isfinite(R)):
        raise InputError("correlation matrix contains a value that is not a finite number")
    if not np.allclose(R, R.T, rtol=0.0, atol=1e-12):
        i, j = np.argwhere(~np.isclose(R, R.T, rtol=0.0, atol=1e-12))[0]
        raise InputError(f"correlation matrix is not symmetric: ({labels[i]}, {labels[j]}) is "
                         f"{R[i, j]:.6g} but ({labels[j]}, {labels[i]}) is {R[j, i]:.6g}")
    if not np.allclose(np.diag(R), 1.0, rtol=0.0, atol=1e-12):
        k = int(np.argmax(np.abs(np.diag(R) - 1.0)))
        raise InputError(f"correlation of {labels[k]} with itself must be 1, got {R[k, k]:.6g}")
    off = ~np.eye(m, dtype=bool)
    if np.any(np.abs(R[off]) > 1.0):
        i, j = np.argwhere((np.abs(R) > 1.0) & off)[0]
        raise InputError(f"correlation between {labels[i]} and {labels[j]} must lie in "
                         f"[-1, 1], got {R[i, j]:.6g}")
    _cholesky_or_error(R, labels, "")
    R0 = np.eye(m)
    for i in range(m):
        for j in range(i + 1, m):
            if R[i, j] != 0.0:
                R0[i, j] = R0[j, i] = nataf_correlation(dists[i], dists[j], R[i, j])
    _cholesky_or_error(R0, labels, "after the Nataf correction the ")
    return R0


__all__ = ["nataf_correlation", "corrected_correlation_matrix", "correlation_from_normal",
           "QUADRATURE_POINTS"]
