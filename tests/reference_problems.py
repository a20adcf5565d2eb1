"""Reference reliability problems with known answers, shared by tests and benchmarks.

Each factory returns a `ReferenceCase`: a fresh `StandardNormalProblem` (its call
counter at zero), the reference pf and beta, whether they are exact (closed form)
or published, and the source.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.reliability.problem import StandardNormalProblem


@dataclasses.dataclass(frozen=True)
class ReferenceCase:
    """A limit state with a reference answer.

    Attributes
    ----------
    name : str
    problem : StandardNormalProblem
    pf : float
        Reference probability of failure [-].
    beta : float
        Reference reliability index -Phi^-1(pf) [-] (for FORM on a linear
        surface: the exact Hasofer-Lind index).
    exact : bool
        True for a closed-form value, False for a published (simulation) value.
    significant_digits : int or None
        Digits to which a published pf is quoted (for the rounding tolerance).
    source : str
    """

    name: str
    problem: StandardNormalProblem
    pf: float
    beta: float
    exact: bool
    significant_digits: int | None
    source: str


def linear_normal(mean_r: float = 300.0, std_r: float = 30.0, mean_s: float = 150.0,
                  std_s: float = 30.0) -> ReferenceCase:
    """g = R - S with R, S independent normal [kNm]: beta = (mu_R - mu_S)/sqrt(s_R^2 + s_S^2).

    Source: Cornell (1969) safety index, exact for a linear limit state in normal
    variables (closed form).
    """
    def g_u(u):
        return (mean_r + std_r * u[:, 0]) - (mean_s + std_s * u[:, 1])

    def to_physical(u):
        return {"R": mean_r + std_r * u[:, 0], "S": mean_s + std_s * u[:, 1]}

    beta = (mean_r - mean_s) / math.hypot(std_r, std_s)
    problem = StandardNormalProblem(g_u, 2, ["R", "S"], to_physical)
    return ReferenceCase("linear normal R-S", problem,
                         float(stats.norm.sf(beta)), beta, True, None,
                         "closed form, Cornell (1969) safety index")


def _lognormal_parameters(mean: float, cov: float) -> tuple[float, float]:
    zeta = math.sqrt(math.log1p(cov * cov))
    return math.log(mean) - 0.5 * zeta * zeta, zeta


def lognormal_r_s(mean_r: float = 40.0, cov_r: float = 0.15, mean_s: float = 20.0,
                  cov_s: float = 0.25) -> ReferenceCase:
    """g = R - S with R, S independent lognormal [MPa], written in u-space.

    R = exp(lambda_R + zeta_R u1), S = exp(lambda_S + zeta_S u2); the surface R = S
    is the plane lambda_R + zeta_R u1 = lambda_S + zeta_S u2, so
    beta = (lambda_R - lambda_S) / sqrt(zeta_R^2 + zeta_S^2) exactly, although g is
    nonlinear in u. zeta = sqrt(ln(1 + V^2)), lambda = ln(mean) - zeta^2/2
    (lognormal moments, closed form).
    """
    lam_r, zeta_r = _lognormal_parameters(mean_r, cov_r)
    lam_s, zeta_s = _lognormal_parameters(mean_s, cov_s)

    def to_physical(u):
        return {"R": np.exp(lam_r + zeta_r * u[:, 0]), "S": np.exp(lam_s + zeta_s * u[:, 1])}

    def g_u(u):
        x = to_physical(u)
        return x["R"] - x["S"]

    beta = (lam_r - lam_s) / math.hypot(zeta_r, zeta_s)
    return ReferenceCase("lognormal R-S", StandardNormalProblem(g_u, 2, ["R", "S"], to_physical),
                         float(stats.norm.sf(beta)), beta, True, None,
                         "closed form, lognormal R and S")


def linear_standard_normal(dim: int, beta: float, name: str | None = None) -> ReferenceCase:
    """g = beta |a| - a.u with unequal weights a_i = 1 + i/dim [-]: exact reliability index beta.

    a.u is normal with standard deviation |a|, so pf = Phi(-beta) (closed form).
    """
    weights = 1.0 + np.arange(dim) / dim
    norm = float(np.linalg.norm(weights))

    def g_u(u):
        return beta * norm - u @ weights

    label = name or f"linear {dim}-D beta={beta:.3g}"
    return ReferenceCase(label, StandardNormalProblem(g_u, dim), float(stats.norm.sf(beta)),
                         beta, True, None, "closed form, linear in standard normals")


def linear_100d() -> ReferenceCase:
    """Linear limit state in 100 standard normal variables, beta = 4.2 exactly."""
    return linear_standard_normal(100, 4.2, "linear 100-D beta=4.2")


def linear_pf_1e6(dim: int) -> ReferenceCase:
    """Linear limit state with pf = 1e-6 exactly (beta = 4.7534) in ``dim`` variables."""
    return linear_standard_normal(dim, float(stats.norm.isf(1e-6)), f"linear {dim}-D pf=1e-6")


def four_branch_series(k: float = 6.0) -> ReferenceCase:
    """Four-branch series system in two standard normal variables.

    g1 = 3 + 0.1 (u1 - u2)^2 - (u1 + u2)/sqrt(2)
    g2 = 3 + 0.1 (u1 - u2)^2 + (u1 + u2)/sqrt(2)
    g3 = (u1 - u2) + k/sqrt(2)
    g4 = (u2 - u1) + k/sqrt(2);  g = min(g1..g4)

    Reference pf = 4.46e-3 for k = 6 (from memory): Waarts (2000), PhD thesis,
    TU Delft; reused by Schueremans & Van Gemert (2005), Struct. Saf. 27(3):246-261,
    doi:10.1016/j.strusafe.2004.11.001. Checked by a 10^7-point crude Monte Carlo
    run in tests/test_sampling_methods.py.
    """
    root2 = math.sqrt(2.0)

    def g_u(u):
        s = (u[:, 0] + u[:, 1]) / root2
        d = u[:, 0] - u[:, 1]
        return np.column_stack([3.0 + 0.1 * d * d - s, 3.0 + 0.1 * d * d + s,
                                d + k / root2, -d + k / root2])

    pf = 4.46e-3
    return ReferenceCase("four-branch series", StandardNormalProblem(
        g_u, 2, mode_names=["branch 1", "branch 2", "branch 3", "branch 4"]),
        pf, float(stats.norm.isf(pf)), False, 3,
        "Waarts (2000); Schueremans & Van Gemert (2005) (from memory)")


def parabolic(b: float = 5.0, kappa: float = 0.5, e: float = 0.1) -> ReferenceCase:
    """Parabolic limit state g = b - u2 - kappa (u1 - e)^2 with two design points.

    Reference pf = 3.0e-3 for b = 5, kappa = 0.5, e = 0.1 (from memory):
    Der Kiureghian & Dakessian (1998), "Multiple design points in first and
    second-order reliability", Struct. Saf. 20(1):37-49,
    doi:10.1016/S0167-4730(97)00026-X. Checked by a 10^7-point crude Monte Carlo
    run in tests/test_sampling_methods.py.
    """
    def g_u(u):
        return b - u[:, 1] - kappa * (u[:, 0] - e) ** 2

    pf = 3.0e-3
    return ReferenceCase("parabolic (two design points)", StandardNormalProblem(g_u, 2),
                         pf, float(stats.norm.isf(pf)), False, 2,
                         "Der Kiureghian & Dakessian (1998) (from memory)")


def four_branch_single(k: float = 6.0) -> ReferenceCase:
    """The four-branch series system written as ONE limit state g = min(g1..g4).

    FORM from the mean point sees one branch only; the failure domain has four
    equally important regions (beta = 3 each). Same reference pf as
    `four_branch_series` (Waarts 2000, from memory; checked by crude Monte Carlo in
    tests/test_sampling_methods.py).
    """
    system = four_branch_series(k)

    def g_u(u):
        return system.problem._g_u(u).min(axis=1)

    return ReferenceCase("four-branch as one limit state", StandardNormalProblem(g_u, 2),
                         system.pf, system.beta, False, 3, system.source)


def curved_quadratic() -> ReferenceCase:
    """g = 2.5 - (u1 + u2)/sqrt(2) + 0.1 (u1 - u2)^2: a strongly curved surface.

    One design point at beta = 2.5 with curvature kappa = 0.4 (so FORM is 48 % high).
    Reference pf = 4.21e-3 (from memory): the curved case of the importance-sampling
    benchmark of Engelund & Rackwitz (1993), Struct. Saf. 12(4):255-276,
    doi:10.1016/0167-4730(93)90056-7. Checked by 2 x 10^6-point crude Monte Carlo in
    tests/test_sorm.py.
    """
    root2 = math.sqrt(2.0)

    def g_u(u):
        return 2.5 - (u[:, 0] + u[:, 1]) / root2 + 0.1 * (u[:, 0] - u[:, 1]) ** 2

    pf = 4.21e-3
    return ReferenceCase("curved quadratic", StandardNormalProblem(g_u, 2), pf,
                         float(stats.norm.isf(pf)), False, 3,
                         "Engelund & Rackwitz (1993) (from memory)")


def quartic() -> ReferenceCase:
    """g = 3 - u2 + (4 u1)^4: curvature zero at the design point (0, 3), yet the surface
    closes in fast, so FORM and SORM are about 7 times too high.

    pf = integral of phi(u1) Phi(-(3 + 256 u1^4)) du1, evaluated by scipy quad (exact
    up to quadrature error, about 1.81e-4).
    """
    from scipy import integrate

    def g_u(u):
        return 3.0 - u[:, 1] + (4.0 * u[:, 0]) ** 4

    pf, _ = integrate.quad(lambda v: stats.norm.pdf(v) * stats.norm.sf(3.0 + 256.0 * v**4),
                           -np.inf, np.inf, epsabs=0.0, epsrel=1e-10)
    return ReferenceCase("quartic", StandardNormalProblem(g_u, 2), float(pf),
                         float(stats.norm.isf(pf)), True, None,
                         "one-dimensional integral by scipy quad")


def paraboloid(beta: float, kappas) -> ReferenceCase:
    """g = beta - u_n + 1/2 sum kappa_i v_i^2 (u_n the last coordinate, v the others).

    Principal curvatures kappa_i at the design point (0, .., beta) exactly.
    pf = E_v[Phi(-(beta + 1/2 sum kappa_i v_i^2))] by Gauss-Hermite quadrature
    (numpy hermegauss, 160 nodes per curvature; exact to quadrature error, checked
    against scipy quad for one curvature in tests/test_sorm.py).
    """
    kappas = np.asarray(kappas, dtype=float)
    dim = kappas.size + 1

    def g_u(u):
        return beta - u[:, -1] + 0.5 * (u[:, :-1] ** 2 @ kappas)

    return ReferenceCase(f"paraboloid beta={beta} kappa={kappas.tolist()}",
                         StandardNormalProblem(g_u, dim), paraboloid_pf(beta, kappas),
                         float(stats.norm.isf(paraboloid_pf(beta, kappas))), True, None,
                         "Gauss-Hermite quadrature over the tangent plane")


def paraboloid_pf(beta: float, kappas, nodes: int = 160) -> float:
    """Exact probability of {u_n >= beta + 1/2 sum kappa_i v_i^2} by Gauss-Hermite
    quadrature over v (one or two curvatures) [-]."""
    kappas = np.asarray(kappas, dtype=float)
    x, w = np.polynomial.hermite_e.hermegauss(nodes)
    w = w / math.sqrt(2.0 * math.pi)
    if kappas.size == 1:
        return float(w @ stats.norm.sf(beta + 0.5 * kappas[0] * x * x))
    if kappas.size == 2:
        grid = beta + 0.5 * (kappas[0] * x[:, None] ** 2 + kappas[1] * x[None, :] ** 2)
        return float(w @ stats.norm.sf(grid) @ w)
    raise ValueError("one or two curvatures")


def form_trap() -> ReferenceCase:
    """g = R - S / (S - 40), R lognormal (mean 100, sd 10), S Gumbel (mean 40, sd 8).

    Failure is the thin band 40 < S <= 40 + 40 / (R - 1) (S / (S - 40) is negative
    below 40 and falls towards 1 above): FORM from the mean point runs off to a
    far, unimportant point (beta 78.5 in issue 14). pf = integral over r > 1 of
    f_R(r) [F_S(40 + 40 / (r - 1)) - F_S(40)] dr by scipy quad (beta about 2.05),
    with the marginals of `assess.distributions`.
    """
    from scipy import integrate

    from assess.distributions import make_distribution
    from assess.model import ProbabilisticModel

    r_dist = make_distribution("lognormal", mean=100.0, std=10.0)
    s_dist = make_distribution("gumbel", mean=40.0, std=8.0)
    model = ProbabilisticModel()
    model.add("R", r_dist)
    model.add("S", s_dist)
    problem = model.problem(lambda x: x["R"] - x["S"] / (x["S"] - 40.0))
    f_s40 = float(s_dist.cdf(40.0))

    def integrand(r):
        return float(r_dist.pdf(r)) * (float(s_dist.cdf(40.0 + 40.0 / (r - 1.0))) - f_s40)

    pf, _ = integrate.quad(integrand, 1.0 + 1e-9, 400.0, points=[60.0, 100.0, 140.0],
                           epsabs=0.0, epsrel=1e-9, limit=200)
    return ReferenceCase("R - S/(S - 40)", problem, float(pf), float(stats.norm.isf(pf)),
                         True, None, "one-dimensional integral by scipy quad")
