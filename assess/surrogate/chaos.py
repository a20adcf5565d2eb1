"""Polynomial chaos expansion by least squares (full or sparse) with leave-one-out error,
and Sobol indices from its coefficients.

    M(u) ~ sum_a c_a Psi_a(xi(u)),  Psi_a(xi) = prod_i p^(i)_{a_i}(xi_i)

with p^(i) the orthonormal family of input i (`assess.surrogate.polynomials`), so that
the mean is c_0, the variance D = sum_{a != 0} c_a^2 and the Sobol indices follow from
the coefficients alone [1]_:

    S_i  = sum over a with a_i > 0 and a_j = 0 (j != i) of c_a^2 / D   (first order)
    S_Ti = sum over a with a_i > 0 of c_a^2 / D                        (total).

Sparse regression is orthogonal matching pursuit [3]_ on the candidate basis, with the
number of terms (and the degree) chosen by the corrected leave-one-out error, as in the
adaptive sparse expansions of Blatman & Sudret [2]_ (who use least-angle regression).

References
----------
.. [1] B. Sudret, "Global sensitivity analysis using polynomial chaos expansions,"
   *Reliability Engineering & System Safety*, 93(7):964-979, 2008,
   doi:10.1016/j.ress.2007.04.002.
.. [2] G. Blatman and B. Sudret, "Adaptive sparse polynomial chaos expansion based on
   least angle regression," *Journal of Computational Physics*, 230(6):2345-2367, 2011,
   doi:10.1016/j.jcp.2010.12.021 (corrected leave-one-out error, hyperbolic truncation).
.. [3] Y. C. Pati, R. Rezaiifar and P. S. Krishnaprasad, "Orthogonal matching pursuit,"
   *Proc. 27th Asilomar Conference on Signals, Systems and Computers*, 1993, pp. 40-44,
   doi:10.1109/ACSSC.1993.342465.
.. [4] O. Chapelle, V. Vapnik and Y. Bengio, "Model selection for small sample
   regression," *Machine Learning*, 48:9-23, 2002 (the correction factor of the
   leave-one-out error).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Sequence

import numpy as np
from scipy.stats import qmc
from threadpoolctl import threadpool_limits

from assess.errors import AnalysisError, InputError
from assess.surrogate.polynomials import HERMITE, Family, family_for


def multi_indices(dim: int, degree: int, q: float = 1.0) -> np.ndarray:
    """Multi-indices a with total degree <= ``degree`` and hyperbolic q-norm
    (sum a_i^q)^(1/q) <= degree [2]_, shape (P, dim), the constant term first."""
    if dim < 1 or degree < 0:
        raise InputError(f"need dim >= 1 and degree >= 0, got {dim}, {degree}")
    out = []

    def grow(prefix: list, left: int):
        if len(prefix) == dim:
            out.append(prefix)
            return
        for k in range(left + 1):
            grow(prefix + [k], left - k)

    grow([], degree)
    indices = np.array(out, dtype=int)
    if q < 1.0:
        norm = (indices.astype(float) ** q).sum(axis=1) ** (1.0 / q)
        indices = indices[norm <= degree + 1e-9]
    order = np.lexsort(tuple(indices.T[::-1]) + (indices.sum(axis=1),))
    return indices[order]


@dataclasses.dataclass
class PolynomialChaos:
    """A fitted expansion.

    Attributes
    ----------
    families : list of Family
        One per input (u column).
    indices : ndarray (P, dim)
        Multi-indices of the terms kept.
    coefficients : ndarray (P,)
    names : list of str
        Input names (for the Sobol indices).
    loo_error : float
        Relative leave-one-out error, corrected [2]_, [4]_ [-].
    n_samples : int
        Size of the experimental design [-].
    degree : int
    germ_map : callable
        u (n, dim) -> xi (n, dim).
    """

    families: list
    indices: np.ndarray
    coefficients: np.ndarray
    names: list
    loo_error: float
    n_samples: int
    degree: int
    germ_map: Callable

    @property
    def mean(self) -> float:
        """Mean of the model [units of the output]: the constant coefficient."""
        constant = np.all(self.indices == 0, axis=1)
        return float(self.coefficients[constant].sum())

    @property
    def variance(self) -> float:
        """Variance of the model: sum of the squared non-constant coefficients."""
        constant = np.all(self.indices == 0, axis=1)
        return float((self.coefficients[~constant] ** 2).sum())

    def predict(self, u: np.ndarray) -> np.ndarray:
        """The expansion at standard normal points u, shape (n,)."""
        return design_matrix(self.families, self.indices, self.germ_map(
            np.atleast_2d(u))) @ self.coefficients

    def sobol(self) -> dict:
        """First-order and total Sobol indices by input name, from the coefficients [1]_.

        Returns
        -------
        dict
            ``{"first": {name: S_i}, "total": {name: S_Ti}}`` [-]; zeros when the
            variance is zero.
        """
        variance = self.variance
        active = self.indices > 0
        squares = self.coefficients ** 2
        first, total = {}, {}
        for i, name in enumerate(self.names):
            only = active[:, i] & (active.sum(axis=1) == 1)
            first[name] = float(squares[only].sum() / variance) if variance > 0 else 0.0
            total[name] = float(squares[active[:, i]].sum() / variance) if variance > 0 else 0.0
        return {"first": first, "total": total}


def design_matrix(families: Sequence[Family], indices: np.ndarray, xi: np.ndarray) -> np.ndarray:
    """Psi_a(xi) for every row of xi and every multi-index, shape (n, P)."""
    xi = np.atleast_2d(xi)
    n, dim = xi.shape
    top = int(indices.max()) if indices.size else 0
    psi = np.ones((n, indices.shape[0]))
    for i in range(dim):
        values = families[i].evaluate(xi[:, i], top)
        psi *= values[:, indices[:, i]]
    return psi


def germ_map_for(families: Sequence[Family], to_physical=None, names=None, params=None):
    """u -> xi: Hermite-in-u columns pass through; matched families use the physical
    value of their input (``to_physical(u)[name]``) and its distribution parameters."""
    matched = [k for k, f in enumerate(families) if f.source != "u"]
    if not matched or to_physical is None:
        return lambda u: np.asarray(u, dtype=float)

    def germ(u):
        u = np.asarray(u, dtype=float)
        x = to_physical(u)
        xi = u.copy()
        for k in matched:
            xi[:, k] = families[k].germ(np.asarray(x[names[k]], dtype=float), u[:, k],
                                         params[k])
        return xi

    return germ


def families_for_model(model) -> tuple[list[Family], list]:
    """Matched families (Askey scheme) for the u columns of a `ProbabilisticModel`.

    Only when every random variable is an independent root; with correlations or
    conditional variables each u column gets Hermite in u, and the Sobol indices then
    refer to the u columns (each owned by one variable, in `random_names` order).
    """
    names = model.random_names
    try:
        _, correlation, _ = model.correlation_matrix()
        independent = bool(np.allclose(correlation, np.eye(correlation.shape[0])))
        marginals = [model.marginal(name) for name in names]
    except InputError:
        independent, marginals = False, []
    if not independent:
        return [HERMITE] * len(names), [None] * len(names)
    families = [family_for(m) for m in marginals]
    params = [m.params if f.source != "u" else None for m, f in zip(marginals, families)]
    return families, params


def latin_hypercube_u(n: int, dim: int, rng: np.random.Generator) -> np.ndarray:
    """n points of a Latin hypercube mapped to standard normal space [-] (scipy qmc)."""
    sampler = qmc.LatinHypercube(d=dim, seed=rng)
    from scipy.special import ndtri
    return ndtri(np.clip(sampler.random(n), 1e-12, 1 - 1e-12))


def _loo(psi: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, float]:
    """Least-squares coefficients and the corrected relative leave-one-out error."""
    n, p = psi.shape
    gram = psi.T @ psi
    try:
        inverse = np.linalg.inv(gram)
    except np.linalg.LinAlgError:
        return np.zeros(p), math.inf
    coefficients = inverse @ (psi.T @ y)
    hat = np.einsum("ij,jk,ik->i", psi, inverse, psi)
    if np.any(hat >= 1.0 - 1e-10) or n <= p:
        return coefficients, math.inf
    residual = (y - psi @ coefficients) / (1.0 - hat)
    variance = float(np.var(y))
    if variance <= 0:
        return coefficients, 0.0
    error = float(np.mean(residual**2)) / variance
    # T(P, N) = N / (N - P) (1 + tr(C^-1) / N) with C = Psi^T Psi / N, so tr(C^-1) / N
    # = tr((Psi^T Psi)^-1) [4]_
    correction = (n / (n - p)) * (1.0 + float(np.trace(inverse)))
    return coefficients, error * correction


_PATIENCE = 10   # matching pursuit stops 10 terms after the best leave-one-out error


def _omp(psi: np.ndarray, y: np.ndarray, max_terms: int) -> tuple[np.ndarray, float]:
    """Orthogonal matching pursuit [3]_; the active set with the smallest corrected
    leave-one-out error. Returns (coefficients over all columns, error)."""
    n, p = psi.shape
    norms = np.linalg.norm(psi, axis=0)
    norms[norms == 0] = 1.0
    active = [0]                      # the constant term always
    best = (np.zeros(p), math.inf)
    residual = y - psi[:, 0] * (psi[:, 0] @ y) / (psi[:, 0] @ psi[:, 0])
    since_best = 0
    for _ in range(min(max_terms, p, n - 2)):
        coefficients, error = _loo(psi[:, active], y)
        if error < best[1]:
            full = np.zeros(p)
            full[active] = coefficients
            best = (full, error)
            since_best = 0
        else:
            since_best += 1
            if since_best > _PATIENCE:
                return best
        correlation = np.abs(psi.T @ residual) / norms
        correlation[active] = -1.0
        k = int(np.argmax(correlation))
        if correlation[k] <= 0:
            break
        active.append(k)
        sub = psi[:, active]
        try:
            coefficients = np.linalg.solve(sub.T @ sub, sub.T @ y)
        except np.linalg.LinAlgError:
            active.pop()
            break
        residual = y - sub @ coefficients
    coefficients, error = _loo(psi[:, active], y)
    if error < best[1]:
        full = np.zeros(p)
        full[active] = coefficients
        best = (full, error)
    return best


def fit_chaos(u: np.ndarray, y: np.ndarray, *, families: Sequence[Family] | None = None,
              names: Sequence[str] | None = None, germ_map=None, max_degree: int = 5,
              q: float = 1.0, sparse: bool = True) -> PolynomialChaos:
    """Fit an expansion to model values y at standard normal points u.

    Parameters
    ----------
    u : ndarray (n, dim)
        Experimental design in standard normal space [-].
    y : ndarray (n,)
        Model values there [units of the output].
    families : list of Family, optional
        One per input; default Hermite in u.
    names : list of str, optional
        Input names; default u1 .. u<dim>.
    germ_map : callable, optional
        u -> xi (see `germ_map_for`); default identity.
    max_degree : int, default 5
        Degrees 1 .. max_degree are tried (stopping after two degrees without
        improvement); the smallest corrected leave-one-out error wins [2]_.
    q : float, default 1.0
        Hyperbolic truncation (q < 1 keeps fewer interaction terms) [2]_.
    sparse : bool, default True
        Orthogonal matching pursuit (True) or full least squares (False; needs
        more samples than terms).

    Returns
    -------
    PolynomialChaos
    """
    # The regressions use many small matrices; a multi-threaded BLAS only adds contention
    # there (60 times slower on a busy 2-core machine), so one thread is used while fitting
    # (threadpoolctl comes with pymc).
    with threadpool_limits(limits=1):
        return _fit(u, y, families=families, names=names, germ_map=germ_map,
                    max_degree=max_degree, q=q, sparse=sparse)


def _fit(u, y, *, families, names, germ_map, max_degree, q, sparse) -> PolynomialChaos:
    u = np.atleast_2d(np.asarray(u, dtype=float))
    y = np.asarray(y, dtype=float).ravel()
    n, dim = u.shape
    if y.size != n:
        raise InputError(f"{y.size} model values for {n} points")
    if not np.all(np.isfinite(y)):
        raise AnalysisError("the model returned values that are not finite numbers at some "
                            "design points; a polynomial surrogate cannot be fitted")
    families = list(families) if families is not None else [HERMITE] * dim
    names = list(names) if names is not None else [f"u{i + 1}" for i in range(dim)]
    germ_map = germ_map or (lambda v: v)
    xi = germ_map(u)
    best = None
    worse = 0
    for degree in range(1, max_degree + 1):
        indices = multi_indices(dim, degree, q)
        if not sparse and indices.shape[0] >= n - 1:
            break
        psi = design_matrix(families, indices, xi)
        if sparse:
            coefficients, error = _omp(psi, y, max_terms=max(1, n // 2))
        else:
            coefficients, error = _loo(psi, y)
        if best is None or error < best[2]:
            best = (indices, coefficients, error, degree)
            worse = 0
        else:
            worse += 1
            if worse >= 2:
                break
    if best is None:
        raise AnalysisError(f"{n} design points are too few for a degree-1 expansion in "
                            f"{dim} variables with full least squares")
    indices, coefficients, error, degree = best
    keep = (coefficients != 0) | np.all(indices == 0, axis=1)
    return PolynomialChaos(families=families, indices=indices[keep],
                           coefficients=coefficients[keep], names=names, loo_error=error,
                           n_samples=n, degree=degree, germ_map=germ_map)


def chaos_for_problem(problem, n_samples: int, *, seed=None, model=None, max_degree: int = 5,
                      q: float = 1.0, sparse: bool = True) -> tuple[PolynomialChaos, tuple]:
    """Fit an expansion of a problem's limit state (system minimum) on a Latin-hypercube
    design of ``n_samples`` points; with ``model`` the families are matched to its
    marginals (`families_for_model`). Returns the expansion and the design (u, g)."""
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    u = latin_hypercube_u(n_samples, problem.dim, rng)
    g = problem.g(u)
    families, params = (families_for_model(model) if model is not None
                        else ([HERMITE] * problem.dim, [None] * problem.dim))
    germ_map = germ_map_for(families, problem.to_physical, problem.names, params)
    chaos = fit_chaos(u, g, families=families, names=problem.names, germ_map=germ_map,
                      max_degree=max_degree, q=q, sparse=sparse)
    return chaos, (u, g)


__all__ = ["PolynomialChaos", "chaos_for_problem", "design_matrix", "families_for_model",
           "fit_chaos", "germ_map_for", "latin_hypercube_u", "multi_indices"]
