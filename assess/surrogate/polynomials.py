"""Orthonormal polynomials matched to input distributions (the Wiener-Askey scheme).

Each family is orthonormal with respect to a probability density w on its germ
variable xi: E_w[p_m(xi) p_n(xi)] = delta_mn, p_0 = 1. They are evaluated with the
three-term recurrence of orthonormal polynomials,

    xi p_n = b_{n+1} p_{n+1} + a_n p_n + b_n p_{n-1},   p_{-1} = 0, p_0 = 1,

with the recurrence coefficients of each classical family [1]_, [2]_:

=============  ==========================  ==================  ===========================
input          germ xi                     family              a_n, b_n
=============  ==========================  ==================  ===========================
normal         (x - mu) / sigma            Hermite (He_n)      0, sqrt(n)
uniform        2 (x - lower)/(upper-lower)-1  Legendre         0, n / sqrt(4 n^2 - 1)
gamma (k, th)  x / th                      Laguerre, a = k-1   2n + a + 1, sqrt(n (n + a))
beta (a, b)    2 (x - lower)/(upper-lower)-1  Jacobi (b-1, a-1)  see `_jacobi_coefficients`
other kinds    u = Phi^-1(F(x))            Hermite in u        0, sqrt(n)
=============  ==========================  ==================  ===========================

References
----------
.. [1] D. Xiu and G. E. Karniadakis, "The Wiener-Askey polynomial chaos for stochastic
   differential equations," *SIAM J. Sci. Comput.*, 24(2):619-644, 2002,
   doi:10.1137/S1064827501387826.
.. [2] W. Gautschi, *Orthogonal Polynomials: Computation and Approximation*, Oxford
   University Press, 2004, Table 1.1 (recurrence coefficients of the classical families).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import special


@dataclasses.dataclass(frozen=True)
class Family:
    """One orthonormal polynomial family and the map from a standard normal u to its germ.

    Attributes
    ----------
    name : str
        "hermite", "legendre", "laguerre" or "jacobi".
    alpha, beta : float
        Shape parameters (Laguerre: alpha; Jacobi: alpha, beta of the weight
        (1 - xi)^alpha (1 + xi)^beta).
    source : str
        Input kind the family was matched to (or "u" for Hermite in u).
    """

    name: str
    alpha: float = 0.0
    beta: float = 0.0
    source: str = "u"

    def coefficients(self, degree: int) -> tuple[np.ndarray, np.ndarray]:
        """Recurrence coefficients a_0..a_degree and b_0..b_{degree+1} (b_0 unused)."""
        n = np.arange(degree + 2, dtype=float)
        if self.name == "hermite":
            return np.zeros(degree + 1), np.sqrt(n)
        if self.name == "legendre":
            b = np.zeros(degree + 2)
            b[1:] = n[1:] / np.sqrt(4.0 * n[1:] ** 2 - 1.0)
            return np.zeros(degree + 1), b
        if self.name == "laguerre":
            a = 2.0 * n[: degree + 1] + self.alpha + 1.0
            return a, np.sqrt(n * (n + self.alpha))
        if self.name == "jacobi":
            return _jacobi_coefficients(self.alpha, self.beta, degree)
        raise ValueError(f"unknown polynomial family {self.name!r}")

    def evaluate(self, xi: np.ndarray, degree: int) -> np.ndarray:
        """p_0(xi) .. p_degree(xi), shape (len(xi), degree + 1)."""
        xi = np.asarray(xi, dtype=float)
        a, b = self.coefficients(degree)
        out = np.empty((xi.size, degree + 1))
        out[:, 0] = 1.0
        if degree >= 1:
            out[:, 1] = (xi - a[0]) / b[1]
        for k in range(1, degree):
            out[:, k + 1] = ((xi - a[k]) * out[:, k] - b[k] * out[:, k - 1]) / b[k + 1]
        return out

    def germ(self, x: np.ndarray, u: np.ndarray, params: dict | None) -> np.ndarray:
        """Germ xi from the physical value x (matched families) or from u (Hermite in u)."""
        if self.source == "u" or params is None:
            return np.asarray(u, dtype=float)
        if self.source == "normal":
            return (x - params["mu"]) / params["sigma"]
        if self.source == "uniform":
            return 2.0 * (x - params["lower"]) / (params["upper"] - params["lower"]) - 1.0
        if self.source == "gamma":
            return x / params["scale"]
        if self.source == "beta":
            return 2.0 * (x - params["lower"]) / (params["upper"] - params["lower"]) - 1.0
        raise ValueError(f"no germ map for {self.source!r}")


def _jacobi_coefficients(alpha: float, beta: float, degree: int):
    """Orthonormal Jacobi recurrence for the weight (1 - x)^alpha (1 + x)^beta on [-1, 1]."""
    a = np.empty(degree + 1)
    b = np.zeros(degree + 2)
    for n in range(degree + 1):
        s = 2.0 * n + alpha + beta
        a[n] = ((beta - alpha) / (alpha + beta + 2.0) if n == 0
                else (beta**2 - alpha**2) / (s * (s + 2.0)))
    for n in range(1, degree + 2):
        s = 2.0 * n + alpha + beta
        num = 4.0 * n * (n + alpha) * (n + beta) * (n + alpha + beta)
        den = s * s * (s + 1.0) * (s - 1.0)
        b[n] = math.sqrt(num / den) if den != 0 else math.sqrt(
            4.0 * (1 + alpha) * (1 + beta) / ((2 + alpha + beta) ** 2 * (3 + alpha + beta)))
    return a, b


HERMITE = Family("hermite")


def family_for(distribution) -> Family:
    """The family matched to a marginal `assess.distributions.Distribution` (Askey scheme);
    Hermite in u for the kinds without a classical family."""
    kind = distribution.kind
    p = distribution.params
    if kind == "normal":
        return Family("hermite", source="normal")
    if kind == "uniform":
        return Family("legendre", source="uniform")
    if kind == "gamma":
        return Family("laguerre", alpha=float(p["shape"]) - 1.0, source="gamma")
    if kind == "beta":
        return Family("jacobi", alpha=float(p["beta"]) - 1.0, beta=float(p["alpha"]) - 1.0,
                      source="beta")
    return HERMITE


def gauss_rule(family: Family, nodes: int) -> tuple[np.ndarray, np.ndarray]:
    """Gauss quadrature nodes and probability weights of a family's density (scipy), for
    tests and for exact moments."""
    if family.name == "hermite":
        x, w = special.roots_hermitenorm(nodes)
    elif family.name == "legendre":
        x, w = special.roots_legendre(nodes)
    elif family.name == "laguerre":
        x, w = special.roots_genlaguerre(nodes, family.alpha)
    elif family.name == "jacobi":
        x, w = special.roots_jacobi(nodes, family.alpha, family.beta)
    else:
        raise ValueError(family.name)
    return x, w / w.sum()


__all__ = ["HERMITE", "Family", "family_for", "gauss_rule"]
