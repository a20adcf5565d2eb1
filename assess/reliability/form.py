"""First-order reliability method (FORM) by the improved HL-RF algorithm.

References
----------
.. [1] A. M. Hasofer and N. C. Lind, "Exact and invariant second-moment code format,"
   *J. Eng. Mech. Div.*, 100(1):111-121, 1974.
.. [2] R. Rackwitz and B. Fiessler, "Structural reliability under combined random load
   sequences," *Computers & Structures*, 9(5):489-494, 1978,
   doi:10.1016/0045-7949(78)90046-9.
.. [3] Y. Zhang and A. Der Kiureghian, "Two improved algorithms for reliability
   analysis," in *Reliability and Optimization of Structural Systems* (Proc. 6th IFIP
   WG 7.5 Conf.), Springer, 1995, pp. 297-304, doi:10.1007/978-0-387-34866-7_32.
.. [4] C. A. Cornell, "Bounds on the reliability of structural systems,"
   *J. Struct. Div.*, 93(1):171-200, 1967 (unimodal series-system bounds).
"""

from __future__ import annotations

import math
from numbers import Real

import numpy as np

from assess.errors import InputError
from assess.reliability.crude import check_int
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, pf_from_beta

_ARMIJO_A = 0.5      # sufficient-decrease constant a of the Armijo rule [3]
_ARMIJO_B = 0.5      # step reduction factor b of the Armijo rule [3]
_MAX_HALVINGS = 30


def _check_positive(value, name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, Real) or not float(value) > 0:
        raise InputError(f"The {name!r} parameter of form must be a positive number. "
                         f"Got {value!r} instead.")
    return float(value)


class _ModeFunction:
    """One column of a problem's limit state, with its forward-difference gradient."""

    def __init__(self, problem: StandardNormalProblem, mode: int | None, fd_step: float):
        self.problem = problem
        self.mode = mode
        self.fd_step = fd_step

    def value(self, u: np.ndarray) -> float:
        return float(self._g(u[None, :])[0])

    def value_and_gradient(self, u: np.ndarray) -> tuple[float, np.ndarray]:
        """G(u) and grad G(u) from dim + 1 points evaluated in one vectorised call."""
        steps = self.fd_step * np.maximum(1.0, np.abs(u))
        points = np.vstack([u, u + np.diag(steps)])
        values = self._g(points)
        return float(values[0]), (values[1:] - values[0]) / steps

    def _g(self, u: np.ndarray) -> np.ndarray:
        if self.mode is None:
            return self.problem.g(u)
        return self.problem.g_modes(u)[:, self.mode]


def _ihlrf(func: _ModeFunction, u0: np.ndarray, tol: float, tol_direction: float,
           max_iter: int) -> dict:
    """Improved HL-RF search for the design point of one smooth limit state [3]."""
    u = u0.copy()
    g, grad = func.value_and_gradient(u)
    g_scale = abs(g) if g != 0.0 else 1.0
    history = []
    converged = False
    message = ""
    for iteration in range(max_iter + 1):
        grad_norm = float(np.linalg.norm(grad))
        if grad_norm == 0.0 or not math.isfinite(grad_norm):
            message = (f"the gradient of the limit state is zero at u = {np.round(u, 4)}; "
                       "the limit state does not depend on the variables there")
            break
        alpha = -grad / grad_norm
        beta = float(alpha @ u)
        direction_error = (float(np.linalg.norm(u - beta * alpha))
                           / max(1.0, float(np.linalg.norm(u))))
        history.append({"iteration": iteration, "beta": beta, "g": g,
                        "direction_error": direction_error})
        if abs(g) / g_scale <= tol and direction_error <= tol_direction:
            converged = True
            break
        if iteration == max_iter:
            message = (f"FORM did not converge in {max_iter} iterations "
                       f"(|G|/G0 = {abs(g) / g_scale:.2e}, direction error "
                       f"{direction_error:.2e}); raise max_iter or check the limit state "
                       "for several design points or a non-smooth surface")
            break
        # HL-RF search direction, step length from the Armijo rule on the merit function
        # m(u) = 1/2 |u|^2 + c |G(u)| with c > |u| / |grad G| [3].
        u_hlrf = ((grad @ u - g) / grad_norm**2) * grad
        d = u_hlrf - u
        c = 2.0 * float(np.linalg.norm(u)) / grad_norm + 10.0
        merit = 0.5 * float(u @ u) + c * abs(g)
        merit_grad = u + c * math.copysign(1.0, g) * grad
        decrease = -_ARMIJO_A * float(merit_grad @ d)
        u_new = u + d
        g_new, grad_new = func.value_and_gradient(u_new)
        step = 1.0
        if 0.5 * float(u_new @ u_new) + c * abs(g_new) - merit > -step * decrease:
            for _ in range(_MAX_HALVINGS):
                step *= _ARMIJO_B
                u_try = u + step * d
                g_try = func.value(u_try)
                if 0.5 * float(u_try @ u_try) + c * abs(g_try) - merit <= -step * decrease:
                    break
            u_new = u + step * d
            g_new, grad_new = func.value_and_gradient(u_new)
        history[-1]["step"] = step
        u, g, grad = u_new, g_new, grad_new
    return {"u": u, "g": g, "grad": grad, "converged": converged, "message": message,
            "history": history, "iterations": len(history) - 1}


def _result_fields(problem: StandardNormalProblem, search: dict) -> dict:
    u = search["u"]
    grad_norm = float(np.linalg.norm(search["grad"]))
    alpha = -search["grad"] / grad_norm if grad_norm > 0 else np.full(problem.dim, np.nan)
    beta = float(alpha @ u) if grad_norm > 0 else math.nan
    design_point_x = None
    if problem.to_physical is not None:
        x = problem.to_physical(u[None, :])
        design_point_x = {name: float(np.ravel(value)[0]) for name, value in x.items()}
    return {"beta": beta, "pf": pf_from_beta(beta) if math.isfinite(beta) else math.nan,
            "design_point_u": u, "design_point_x": design_point_x, "alpha": alpha,
            "importance_factors": {name: float(a * a) for name, a in zip(problem.names, alpha)}}


def form(problem: StandardNormalProblem, *, u0=None, tol: float = 1e-6,
         tol_direction: float = 1e-4, max_iter: int = 100,
         fd_step: float = 1e-6) -> ReliabilityResult:
    """First-order reliability analysis: design point, beta and importance factors.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure.
    u0 : array_like of shape (dim,), optional
        Start point in u-space [-]; default the origin (the mean point).
    tol : float, default 1e-6
        Stop when |G(u)| / |G(u0)| <= tol [-] ...
    tol_direction : float, default 1e-4
        ... and |u - (alpha . u) alpha| / max(1, |u|) <= tol_direction, i.e. u is
        parallel to the limit-state normal [-].
    max_iter : int, default 100
        Maximum number of iterations [-].
    fd_step : float, default 1e-6
        Forward-difference step, relative to max(1, |u_i|) [-]. The dim + 1
        points of each gradient are evaluated in one vectorised call.

    Returns
    -------
    ReliabilityResult
        ``beta`` = alpha . u* (signed), ``pf`` = Phi(-beta), ``cov`` = NaN,
        design point in u and x, ``alpha`` = -grad G / |grad G| at u*,
        ``importance_factors`` alpha_i^2 by variable name, and in ``details`` the
        iteration history. Non-convergence gives ``converged=False`` and a
        warning, not an exception.

    Notes
    -----
    The search direction is the HL-RF step [1]_, [2]_
    u_HLRF = [(grad G . u - G) / |grad G|^2] grad G; its length is chosen by the
    Armijo rule on the merit function m(u) = |u|^2 / 2 + c |G(u)| with
    c = 2 |u| / |grad G| + 10 (improved HL-RF [3]_), which makes the iteration
    converge where plain HL-RF can cycle. The Armijo condition is
    m(u + s d) - m(u) <= a s (grad m . d) with a = 1/2 and s halved from 1;
    d is a descent direction of m for this c [3]_.

    Series systems (a problem with several modes): the minimum over modes is a
    non-smooth surface with several design points, so FORM is run on each mode
    separately. The governing mode (smallest beta) gives the reported design
    point, beta and pf; ``details["modes"]`` holds every mode's beta, pf and
    design point, and ``details["series_bounds"]`` the unimodal bounds
    max p_i <= pf <= min(1, sum p_i) [4]_. A warning says that the reported pf is
    the governing mode's, a lower bound for the system.
    """
    tol = _check_positive(tol, "tol")
    tol_direction = _check_positive(tol_direction, "tol_direction")
    fd_step = _check_positive(fd_step, "fd_step")
    max_iter = check_int(max_iter, "max_iter", "form", 1)
    if u0 is None:
        start = np.zeros(problem.dim)
    else:
        start = np.asarray(u0, dtype=float).ravel()
        if start.shape != (problem.dim,) or not np.all(np.isfinite(start)):
            raise InputError(f"The 'u0' parameter of form must be {problem.dim} finite numbers "
                             f"(one per variable). Got {u0!r} instead.")
    settings = {"tol": tol, "tol_direction": tol_direction, "max_iter": max_iter,
                "fd_step": fd_step, "u0": start.tolist()}
    calls_before = problem.n_calls

    n_modes = problem.g_modes(start[None, :]).shape[1]
    if n_modes == 1:
        search = _ihlrf(_ModeFunction(problem, None, fd_step), start, tol, tol_direction,
                        max_iter)
        fields = _result_fields(problem, search)
        warnings = (search["message"],) if search["message"] else ()
        return ReliabilityResult(
            method="form", cov=math.nan, n_calls=problem.n_calls - calls_before, seed=None,
            settings=settings, converged=search["converged"], warnings=warnings,
            details={"iterations": search["iterations"], "history": search["history"]},
            **fields)

    mode_names = problem.mode_names or [f"#{j + 1}" for j in range(n_modes)]
    searches, modes, warnings = [], [], []
    for j in range(n_modes):
        search = _ihlrf(_ModeFunction(problem, j, fd_step), start, tol, tol_direction, max_iter)
        fields = _result_fields(problem, search)
        searches.append((search, fields))
        modes.append({"mode": mode_names[j], "beta": fields["beta"], "pf": fields["pf"],
                      "converged": search["converged"], "iterations": search["iterations"],
                      "design_point_u": search["u"]})
        if search["message"]:
            warnings.append(f"mode {mode_names[j]}: {search['message']}")
    betas = np.array([m["beta"] for m in modes])
    governing = int(np.nanargmin(betas)) if np.any(np.isfinite(betas)) else 0
    search, fields = searches[governing]
    pfs = np.array([m["pf"] for m in modes])
    bounds = (float(np.nanmax(pfs)), float(min(1.0, np.nansum(pfs))))
    warnings.append(
        f"series system of {n_modes} modes: FORM was run on each mode; the reported beta "
        f"and pf are those of the governing mode {mode_names[governing]} and are a lower "
        f"bound on the system pf (unimodal bounds {bounds[0]:.3g} <= pf <= {bounds[1]:.3g}); "
        "use importance_sampling or subset_simulation for the system pf")
    return ReliabilityResult(
        method="form", cov=math.nan, n_calls=problem.n_calls - calls_before, seed=None,
        settings=settings, converged=all(m["converged"] for m in modes),
        warnings=tuple(warnings),
        details={"iterations": search["iterations"], "history": search["history"],
                 "governing_mode": mode_names[governing], "modes": modes,
                 "series_bounds": bounds},
        **fields)
