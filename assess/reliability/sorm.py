"""Second-order reliability method (SORM): curvatures of the limit state at the design
point and the asymptotic probabilities of Breitung, Hohenbichler-Rackwitz and Tvedt.

References
----------
.. [1] K. Breitung, "Asymptotic approximations for multinormal integrals," *Journal of
   Engineering Mechanics*, 110(3):357-366, 1984,
   doi:10.1061/(ASCE)0733-9399(1984)110:3(357).
.. [2] M. Hohenbichler, S. Gollwitzer, W. Kruse and R. Rackwitz, "New light on first-
   and second-order reliability methods," *Structural Safety*, 4(4):267-284, 1987,
   doi:10.1016/0167-4730(87)90002-6.
.. [3] L. Tvedt, "Distribution of quadratic forms in normal space - application to
   structural reliability," *Journal of Engineering Mechanics*, 116(6):1183-1197, 1990,
   doi:10.1061/(ASCE)0733-9399(1990)116:6(1183).
.. [4] A. Der Kiureghian, "First- and second-order reliability methods," ch. 14 of
   *Engineering Design Reliability Handbook*, CRC Press, 2005 (the three-term form of
   Tvedt's approximation, from memory).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy.special import ndtr

from assess.reliability.design_points import ColumnProblem
from assess.reliability.form import form
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf

HESSIAN_STEP = 1e-3
"""Central-difference step of the curvatures, relative to max(1, |u*|) [-]."""

TVEDT_MARGIN = 0.25
"""Tvedt's three-term form is used when every 1 + (beta + 1) kappa_i >= 0.25; nearer 0
its third term grows without bound (measured against the exact probability of a
parabolic surface: within 1.5 % above this margin, tests/test_sorm.py) [-]."""

STRONG_CURVATURE = 0.5
"""Below min(1 + beta kappa_i) = 0.5 the asymptotic forms lose accuracy (the limit
state bends strongly towards the origin); the result then warns [-]."""


def tangent_basis(alpha: np.ndarray) -> np.ndarray:
    """Orthonormal basis (dim, dim - 1) of the plane normal to ``alpha`` [-]."""
    dim = alpha.size
    q, _ = np.linalg.qr(np.column_stack([alpha, np.eye(dim)]))
    return q[:, 1:dim]


def curvatures(g_column, u_star: np.ndarray, alpha: np.ndarray, grad_norm: float,
               step: float = HESSIAN_STEP) -> np.ndarray:
    """Principal curvatures of the limit-state surface at the design point [1/u-units].

    Parameters
    ----------
    g_column : callable
        ``g_column(u)`` -> G of one mode, u of shape (n, dim).
    u_star : ndarray of shape (dim,)
        Design point [-].
    alpha : ndarray of shape (dim,)
        Unit normal -grad G / |grad G| at u* [-].
    grad_norm : float
        |grad G| at u* [units of G].

    Returns
    -------
    ndarray of shape (dim - 1,)
        kappa_i, eigenvalues of P^T H P / |grad G| with H the Hessian of G and P
        a basis of the tangent plane. kappa > 0: the surface bends away from the
        origin (smaller pf than FORM). The 2 (dim - 1)^2 + 1 central-difference
        points are evaluated in one call.
    """
    basis = tangent_basis(alpha)
    m = basis.shape[1]
    if m == 0:
        return np.zeros(0)
    h = step * max(1.0, float(np.linalg.norm(u_star)))
    points = [u_star]
    for i in range(m):
        points += [u_star + h * basis[:, i], u_star - h * basis[:, i]]
    pairs = [(i, j) for i in range(m) for j in range(i + 1, m)]
    for i, j in pairs:
        for si, sj in ((1, 1), (1, -1), (-1, 1), (-1, -1)):
            points.append(u_star + h * (si * basis[:, i] + sj * basis[:, j]))
    values = np.asarray(g_column(np.array(points)), dtype=float)
    g0 = values[0]
    hessian = np.empty((m, m))
    for i in range(m):
        hessian[i, i] = (values[1 + 2 * i] - 2.0 * g0 + values[2 + 2 * i]) / (h * h)
    offset = 1 + 2 * m
    for k, (i, j) in enumerate(pairs):
        pp, pm, mp, mm = values[offset + 4 * k: offset + 4 * k + 4]
        hessian[i, j] = hessian[j, i] = (pp - pm - mp + mm) / (4.0 * h * h)
    return np.sort(np.linalg.eigvalsh(hessian) / grad_norm)


def sorm_probabilities(beta: float, kappas) -> dict:
    """Breitung, Hohenbichler-Rackwitz and Tvedt probabilities for curvatures ``kappas``.

    Returns
    -------
    dict
        ``breitung`` = Phi(-beta) prod (1 + beta kappa_i)^-1/2 [1]_,
        ``hohenbichler_rackwitz`` = Phi(-beta) prod (1 + psi kappa_i)^-1/2 with
        psi = phi(beta) / Phi(-beta) [2]_, ``tvedt`` = A1 + A2 + A3 (three-term
        form [3]_, [4]_: A1 = Breitung, A2 = [beta Phi(-beta) - phi(beta)]
        [prod(1 + beta k)^-1/2 - prod(1 + (beta + 1) k)^-1/2], A3 = (beta + 1)
        [beta Phi(-beta) - phi(beta)] [prod(1 + beta k)^-1/2 - Re prod(1 + (beta + i)
        k)^-1/2]), each NaN where a factor is not positive (the point is then not
        a local minimum of the distance: a saddle) and Tvedt's also when a factor
        1 + (beta + 1) kappa_i is below `TVEDT_MARGIN`; ``pf``: Tvedt's where
        defined, else Breitung's; ``valid`` and ``strong_curvature``.
    """
    kappas = np.asarray(kappas, dtype=float)
    pf_form = float(ndtr(-beta))
    phi = math.exp(-0.5 * beta * beta) / math.sqrt(2.0 * math.pi)
    psi = phi / pf_form if pf_form > 0 else beta

    def product(factor: np.ndarray) -> float:
        return float(np.prod(factor ** -0.5)) if np.all(factor > 0) else math.nan

    breitung = pf_form * product(1.0 + beta * kappas)
    hr = pf_form * product(1.0 + psi * kappas)
    tvedt = math.nan
    if np.all(1.0 + beta * kappas > 0) and np.all(1.0 + (beta + 1.0) * kappas >= TVEDT_MARGIN):
        p_beta = product(1.0 + beta * kappas)
        p_beta1 = product(1.0 + (beta + 1.0) * kappas)
        p_complex = complex(np.prod(1.0 / np.sqrt(1.0 + (beta + 1j) * kappas.astype(complex))))
        common = beta * pf_form - phi
        tvedt = (pf_form * p_beta + common * (p_beta - p_beta1)
                 + (beta + 1.0) * common * (p_beta - p_complex.real))
    reported = tvedt if math.isfinite(tvedt) else breitung
    strong = bool(kappas.size and float(np.min(1.0 + beta * kappas)) < STRONG_CURVATURE)
    return {"breitung": breitung, "hohenbichler_rackwitz": hr, "tvedt": tvedt,
            "pf": reported, "valid": math.isfinite(reported), "strong_curvature": strong}


def sorm(problem: StandardNormalProblem, *, seed=None, check: bool = False,
         check_samples: int = 500, design_points: int = 1, tol: float = 1e-6,
         tol_direction: float = 1e-4, max_iter: int = 100, fd_step: float = 1e-6,
         u0=None) -> ReliabilityResult:
    """Second-order reliability analysis at the FORM design point(s).

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure.
    seed, check, check_samples, design_points, tol, tol_direction, max_iter, fd_step, u0
        As for `assess.reliability.form.form`.

    Returns
    -------
    ReliabilityResult
        ``pf`` from Tvedt's form (Breitung's where Tvedt's is not defined) at the
        governing design point,
        ``beta`` = -Phi^-1(pf), the FORM design point and importance factors, and
        in ``details``: ``form_beta``, ``curvatures`` and the three SORM
        probabilities of every design point (``points``), and ``form`` (the FORM
        details). With several design points, the reported pf is the sum of the
        points' SORM probabilities (the first-order union
        bound applied to the second-order terms) and a warning says so.

    Notes
    -----
    Cost: FORM plus 2 (dim - 1)^2 + 1 limit-state evaluations per design point
    for the curvatures (central differences in the tangent plane). A curvature
    kappa_i <= -1/beta means the design point is a saddle of the distance: SORM
    does not apply there; pf then falls back to FORM's with a warning.
    """
    base = form(problem, u0=u0, tol=tol, tol_direction=tol_direction, max_iter=max_iter,
                fd_step=fd_step, design_points=design_points, check=False, seed=seed,
                check_samples=check_samples)
    calls_before = problem.n_calls
    counters = problem.counters()
    warnings = list(base.warnings)
    points = []
    n_modes = problem.g_modes(np.zeros((1, problem.dim))).shape[1]
    mode_index = {name: k for k, name in enumerate(problem.mode_names or [])}
    for point in base.details["design_points"]:
        beta = point["beta"]
        u_star = np.asarray(point["design_point_u"], dtype=float)
        alpha = np.asarray(point["alpha"], dtype=float)
        if not (math.isfinite(beta) and np.all(np.isfinite(alpha))):
            continue
        column = None if n_modes == 1 else mode_index.get(point["mode"])
        g_column = ColumnProblem(problem, column).g
        grad = _gradient(g_column, u_star, fd_step)
        kappas = curvatures(g_column, u_star, alpha, float(np.linalg.norm(grad)))
        probabilities = sorm_probabilities(beta, kappas)
        points.append({"mode": point["mode"], "form_beta": beta, "curvatures": kappas,
                       **probabilities})
    if not points:
        warnings.append("SORM needs a finite FORM design point; none was found")
        return dataclasses.replace(base, method="sorm", warnings=tuple(warnings),
                                   n_calls=base.n_calls + problem.n_calls - calls_before)
    governing = min(points, key=lambda p: p["form_beta"])
    converged = base.converged
    valid = [p for p in points if p["valid"]]
    if not governing["valid"]:
        warnings.append(
            f"a curvature of {governing['curvatures'].min():.3g} <= -1/beta at the design "
            f"point (beta {governing['form_beta']:.3f}): the point is a saddle of the "
            "distance, SORM does not apply; pf is FORM's - use auto or subset_simulation")
        pf = float(ndtr(-governing["form_beta"]))
        converged = False
    elif len(points) > 1:
        pf = float(min(1.0, sum(p["pf"] for p in valid)))
        warnings.append(f"{len(points)} design points: pf is the sum of their SORM "
                        "probabilities (an upper bound of the union to first order)")
    else:
        pf = governing["pf"]
    if governing["strong_curvature"]:
        warnings.append(
            f"strong curvature towards the origin at the design point (min 1 + beta kappa = "
            f"{float(np.min(1.0 + governing['form_beta'] * governing['curvatures'])):.2f}): "
            "the asymptotic SORM forms lose accuracy; use auto or subset_simulation")
    warnings += problem.nonfinite_warnings(counters)
    details = {"form_beta": governing["form_beta"], "form_pf": base.pf,
               "curvatures": governing["curvatures"],
               "pf_breitung": governing["breitung"],
               "pf_hohenbichler_rackwitz": governing["hohenbichler_rackwitz"],
               "pf_tvedt": governing["tvedt"], "points": points, "form": base.details}
    result = dataclasses.replace(
        base, method="sorm", pf=pf, beta=beta_from_pf(pf), converged=converged,
        warnings=tuple(dict.fromkeys(warnings)), details=details,
        n_calls=base.n_calls + problem.n_calls - calls_before,
        settings={**base.settings, "hessian_step": HESSIAN_STEP})
    if check:
        from assess.reliability.check import checked
        result = checked(problem, result, seed=seed, n_per_level=check_samples)
    return result


def _gradient(g_column, u: np.ndarray, fd_step: float) -> np.ndarray:
    steps = fd_step * np.maximum(1.0, np.abs(u))
    values = np.asarray(g_column(np.vstack([u, u + np.diag(steps)])), dtype=float)
    return (values[1:] - values[0]) / steps


__all__ = ["curvatures", "sorm", "sorm_probabilities", "tangent_basis"]
