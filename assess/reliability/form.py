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
.. [5] H. F. Walker and P. Ni, "Anderson acceleration for fixed-point iterations,"
   *SIAM J. Numer. Anal.*, 49(4):1715-1735, 2011, doi:10.1137/10078356X.
.. [6] A. Der Kiureghian and T. Dakessian, "Multiple design points in first and
   second-order reliability," *Structural Safety*, 20(1):37-49, 1998,
   doi:10.1016/S0167-4730(97)00026-X.
.. [7] O. Ditlevsen, "Narrow reliability bounds for structural systems," *Journal of
   Structural Mechanics*, 7(4):453-472, 1979.
"""

from __future__ import annotations

import dataclasses
import math
from numbers import Real

import numpy as np

from assess.errors import InputError
from assess.reliability.crude import check_int
from assess.reliability.design_points import cluster_starts
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, pf_from_beta
from assess.reliability.systems import ditlevsen_bounds

_ARMIJO_A = 0.5      # sufficient-decrease constant a of the Armijo rule [3]
_ARMIJO_B = 0.5      # step reduction factor b of the Armijo rule [3]
_MAX_HALVINGS = 30
_HALVINGS_PER_CALL = 10  # trial steps of the line search evaluated per limit-state call
_ANDERSON_MEMORY = 3  # residuals kept by the Anderson acceleration [5]
_MERIT_GAMMA = 2.5  # gamma > 1 in c = gamma max(|u|/|grad G|, |u + d|^2/(2|G|)) [3]


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

    def values(self, u: np.ndarray) -> np.ndarray:
        """G at the rows of ``u``, one vectorised call."""
        return self._g(u)

    def value_and_gradient(self, u: np.ndarray) -> tuple[float, np.ndarray]:
        """G(u) and grad G(u) from dim + 1 points evaluated in one vectorised call."""
        steps = self.fd_step * np.maximum(1.0, np.abs(u))
        points = np.vstack([u, u + np.diag(steps)])
        values = self._g(points)
        with np.errstate(invalid="ignore", over="ignore"):
            return float(values[0]), (values[1:] - values[0]) / steps

    def _g(self, u: np.ndarray) -> np.ndarray:
        if self.mode is None:
            return self.problem.g(u)
        return self.problem.g_modes(u)[:, self.mode]


def _anderson_point(us: list, fs: list) -> np.ndarray | None:
    """Anderson-accelerated next iterate from the last iterates u_k and fixed-point
    residuals f_k = T(u_k) - u_k of the HL-RF map T (Walker & Ni 2011, type II)."""
    if len(us) < 2:
        return None
    d_u = np.column_stack([us[k + 1] - us[k] for k in range(len(us) - 1)])
    d_f = np.column_stack([fs[k + 1] - fs[k] for k in range(len(fs) - 1)])
    try:
        gamma, *_ = np.linalg.lstsq(d_f, fs[-1], rcond=None)
    except np.linalg.LinAlgError:
        return None
    point = us[-1] + fs[-1] - (d_u + d_f) @ gamma
    return point if np.all(np.isfinite(point)) else None


def _ihlrf(func: _ModeFunction, u0: np.ndarray, tol: float, tol_direction: float,
           max_iter: int, g_scale: float | None = None, known: tuple = ()) -> dict:
    """Improved HL-RF search for the design point of one smooth limit state [3], with
    Anderson acceleration of the HL-RF fixed-point map [5] tried before each line search."""
    u = u0.copy()
    g, grad = func.value_and_gradient(u)
    if g_scale is None:
        g_scale = abs(g) if g != 0.0 and math.isfinite(g) else 1.0
    history = []
    converged = stalled = False
    message = ""
    us, fs = [], []
    for iteration in range(max_iter + 1):
        grad_norm = float(np.linalg.norm(grad))
        if grad_norm == 0.0 or not math.isfinite(grad_norm) or not math.isfinite(g):
            message = (f"the gradient of the limit state is zero or not finite at u = "
                       f"{np.round(u, 4)}; the limit state does not depend on the variables "
                       "there, or is undefined")
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
        if known and abs(g) / g_scale <= 1e-3 and any(
                float(np.linalg.norm(u - point)) <= 0.05 * max(1.0, float(np.linalg.norm(u)))
                for point in known):
            message = "the search returned to a design point already found"
            break
        if _stalled(history, tol):
            stalled = True
            where = ("on the limit state" if abs(g) / g_scale <= 100.0 * tol
                     else "off the limit state")
            message = (f"FORM stalled at |u| = {float(np.linalg.norm(u)):.4f} {where} (|G|/G0 "
                       f"= {abs(g) / g_scale:.1e}, direction error {direction_error:.1e}): the "
                       "limit state is not smooth there (e.g. a min, max or abs in a capacity "
                       "formula), so the linearisation does not settle; see the check")
            break
        if iteration == max_iter:
            message = (f"FORM did not converge in {max_iter} iterations "
                       f"(|G|/G0 = {abs(g) / g_scale:.2e}, direction error "
                       f"{direction_error:.2e}); raise max_iter or check the limit state "
                       "for several design points or a non-smooth surface")
            break
        # HL-RF search direction, step length from the Armijo rule on the merit function
        # m(u) = 1/2 |u|^2 + c |G(u)| with c = gamma max(|u|/|grad G|, |u + d|^2/(2|G|)) [3].
        u_hlrf = ((grad @ u - g) / grad_norm**2) * grad
        d = u_hlrf - u
        us.append(u.copy())
        fs.append(d.copy())
        del us[:-_ANDERSON_MEMORY - 1], fs[:-_ANDERSON_MEMORY - 1]
        c = _MERIT_GAMMA * max(float(np.linalg.norm(u)) / grad_norm,
                               0.5 * float(u_hlrf @ u_hlrf) / abs(g) if g != 0.0 else 0.0)
        c = max(c, 1e-12)
        merit = 0.5 * float(u @ u) + c * abs(g)
        accelerated = _anderson_point(us, fs)
        if accelerated is not None:
            g_acc, grad_acc = func.value_and_gradient(accelerated)
            if (math.isfinite(g_acc)
                    and 0.5 * float(accelerated @ accelerated) + c * abs(g_acc) < merit):
                history[-1]["step"] = "accelerated"
                u, g, grad = accelerated, g_acc, grad_acc
                continue
            us, fs = us[-1:], fs[-1:]   # restart the acceleration after a failed try
        merit_grad = u + c * math.copysign(1.0, g) * grad
        decrease = -_ARMIJO_A * float(merit_grad @ d)
        u_new = u + d
        g_new, grad_new = func.value_and_gradient(u_new)
        step = 1.0
        slack = 1e-10 * merit   # rounding: a linear G meets the rule with equality
        if not (0.5 * float(u_new @ u_new) + c * abs(g_new) - merit <= -step * decrease + slack):
            # all halvings of the step at once, in batches of _HALVINGS_PER_CALL points
            step = _line_search(func, u, d, c, merit, decrease, slack)
            u_new = u + step * d
            g_new, grad_new = func.value_and_gradient(u_new)
        history[-1]["step"] = step
        u, g, grad = u_new, g_new, grad_new
    on_surface = math.isfinite(g) and abs(g) / g_scale <= 100.0 * tol
    return {"u": u, "g": g, "grad": grad, "converged": converged,
            "stalled": stalled and on_surface, "message": message, "history": history,
            "iterations": len(history) - 1, "g_scale": g_scale}


def _line_search(func: _ModeFunction, u: np.ndarray, d: np.ndarray, c: float, merit: float,
                 decrease: float, slack: float) -> float:
    """Largest step b^k (k = 1 .. _MAX_HALVINGS) meeting the Armijo rule; the trial points
    are evaluated _HALVINGS_PER_CALL at a time in one vectorised call."""
    powers = np.arange(1, _MAX_HALVINGS + 1)
    steps = _ARMIJO_B ** powers
    for first in range(0, powers.size, _HALVINGS_PER_CALL):
        batch = steps[first:first + _HALVINGS_PER_CALL]
        trials = u[None, :] + batch[:, None] * d[None, :]
        values = func.values(trials)
        merits = 0.5 * (trials * trials).sum(axis=1) + c * np.abs(values)
        ok = np.flatnonzero(merits - merit <= -batch * decrease + slack)
        if ok.size:
            return float(batch[ok[0]])
    return float(steps[-1])


def _stalled(history: list, tol: float, window: int = 5) -> bool:
    """True when the search makes no progress: either the last three line searches all
    took steps below 1e-3, or the last ``window`` iterations sat on the surface
    (|G|/G0 <= 100 tol) with beta fixed to 1e-4 and the direction error not falling
    by 10 % (a search crawling along a kink of the limit state)."""
    steps = [h.get("step") for h in history[-4:-1]]
    if len(steps) == 3 and all(isinstance(s, float) and s < 1e-3 for s in steps):
        return True
    if len(history) <= window:
        return False
    recent = history[-window - 1:]
    betas = np.array([h["beta"] for h in recent])
    scale = abs(history[0]["g"]) if math.isfinite(history[0]["g"]) else 1.0
    scale = scale or 1.0
    on_surface = all(abs(h["g"]) / scale <= 100.0 * tol for h in recent)
    no_progress = recent[-1]["direction_error"] >= 0.9 * recent[0]["direction_error"]
    return (on_surface and no_progress
            and float(np.ptp(betas)) <= 1e-4 * max(1.0, float(np.abs(betas).max())))


def _result_fields(problem: StandardNormalProblem, search: dict) -> dict:
    u = search["u"]
    grad_norm = float(np.linalg.norm(search["grad"]))
    ok = grad_norm > 0 and math.isfinite(grad_norm)
    alpha = -search["grad"] / grad_norm if ok else np.full(problem.dim, np.nan)
    beta = float(alpha @ u) if ok else math.nan
    if search.get("stalled") and ok:
        # the one-sided gradient at a kink is not normal to the surface: use the distance
        beta = math.copysign(float(np.linalg.norm(u)), beta)
    design_point_x = None
    if problem.to_physical is not None:
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            x = problem.to_physical(u[None, :])
        design_point_x = {name: float(np.ravel(value)[0]) for name, value in x.items()}
    return {"beta": beta, "pf": pf_from_beta(beta) if math.isfinite(beta) else math.nan,
            "design_point_u": u, "design_point_x": design_point_x, "alpha": alpha,
            "importance_factors": {name: float(a * a) for name, a in zip(problem.names, alpha)}}


_MAX_ITER_EXTRA = 40  # iterations of a search started from a scouting sample
_NEGLIGIBLE = 1e-2    # a design point with Phi(-beta) < 1 % of the nearest one's is not kept
CHECK_SEED = 20260611
"""Seed of the scout and of the check when none is given, so FORM stays deterministic."""


def _usable(search: dict) -> bool:
    u = search["u"]
    return ((search["converged"] or search["stalled"]) and np.all(np.isfinite(u))
            and math.isfinite(search["g"]) and float(np.linalg.norm(u)) > 0.0)


def search_from_starts(func: _ModeFunction, starts: list, found: list, tol: float,
                       tol_direction: float, max_iter: int, max_points: int,
                       g_scale: float | None = None) -> list[dict]:
    """Run a search from each start point; keep the new, usable, non-negligible points.

    ``found`` holds the searches kept so far (it is extended and returned). A point
    within 5 % of its length of one already found is the same point; one whose
    Phi(-beta) is below 1 % of the nearest point's is left out.
    """
    for start in starts:
        if len(found) >= max_points:
            break
        known = tuple(p["u"] for p in found if _usable(p))
        search = _ihlrf(func, np.asarray(start, dtype=float), tol, tol_direction,
                        min(max_iter, _MAX_ITER_EXTRA), g_scale=g_scale, known=known)
        if not _usable(search):
            continue
        norm = float(np.linalg.norm(search["u"]))
        if any(float(np.linalg.norm(search["u"] - p["u"])) <= 0.05 * max(1.0, norm)
               for p in found):
            continue
        found.append(search)
    usable = [p for p in found if _usable(p)]
    if usable:
        nearest = min(float(np.linalg.norm(p["u"])) for p in usable)
        found = [p for p in found
                 if not _usable(p) or pf_from_beta(float(np.linalg.norm(p["u"])))
                 >= _NEGLIGIBLE * pf_from_beta(nearest)]
    return found


def form(problem: StandardNormalProblem, *, u0=None, tol: float = 1e-6,
         tol_direction: float = 1e-4, max_iter: int = 100, fd_step: float = 1e-6,
         design_points: int = 1, check: bool = False, seed=None,
         check_samples: int = 500) -> ReliabilityResult:
    """First-order reliability analysis: design point(s), beta and importance factors.

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
        Maximum number of iterations of one search [-].
    fd_step : float, default 1e-6
        Forward-difference step, relative to max(1, |u_i|) [-]. The dim + 1
        points of each gradient are evaluated in one vectorised call.
    design_points : int, default 1
        Most design points sought per limit state [-]. Above 1, a subset-
        simulation scout of ``check_samples`` samples per level looks for the
        important regions and a search starts in each (see Notes);
        ``run_method`` and the ``auto`` method use 4.
    check : bool, default False
        Compare the FORM pf with an independent subset-simulation estimate of
        ``check_samples`` samples per level (`assess.reliability.check`); a
        disagreement beyond the estimate's error adds a warning that names the
        method to trust. ``run_method(problem, "form")`` turns this on.
    seed : int, numpy.random.Generator or None
        Seed of the scout and the check only (the searches are deterministic);
        None uses `CHECK_SEED`, so that the result does not change from run to run.
    check_samples : int, default 500
        Samples per level of the scout and of the check [-].

    Returns
    -------
    ReliabilityResult
        ``beta`` = alpha . u* (signed), ``pf`` = Phi(-beta), ``cov`` = NaN,
        design point in u and x, ``alpha`` = -grad G / |grad G| at u*,
        ``importance_factors`` alpha_i^2 by variable name, and in ``details`` the
        iteration history, every design point found (``design_points``) and,
        with several, Ditlevsen's bounds on their union (``first_order_bounds``).
        Non-convergence gives ``converged=False`` and a warning, not an exception.

    Notes
    -----
    The search direction is the HL-RF step [1]_, [2]_
    u_HLRF = [(grad G . u - G) / |grad G|^2] grad G; its length is chosen by the
    Armijo rule on the merit function m(u) = |u|^2 / 2 + c |G(u)| with
    c = 2.5 max(|u| / |grad G|, |u_HLRF|^2 / (2 |G|)) (improved HL-RF [3]_), which
    makes the iteration converge where plain HL-RF can cycle. The Armijo
    condition is m(u + s d) - m(u) <= a s (grad m . d) with a = 1/2 and s halved
    from 1 (ten halvings are evaluated at a time, in one vectorised call). Before each line search, the Anderson-accelerated point of the
    HL-RF fixed-point map (memory 3) [5]_ is tried and kept if it lowers the
    merit function; this cuts the iterations where the surface is curved enough
    to make HL-RF oscillate (e.g. 380 to about 60 evaluations for
    g = x1^3 + x2^3 - 18 with x1 ~ N(10, 5), x2 ~ N(9.9, 5)).

    A search whose last three line searches took steps below 1e-3, or whose last
    five iterations sit on the surface with beta fixed to 1e-4 and the direction
    error not falling, stops as "stalled" (beta is then the distance |u|): the limit state has a kink there
    (e.g. max(v, v_min) in a shear capacity); beta is then the distance to the
    kink, and the result is not marked converged.

    Several design points: a subset-simulation run on the limit state (the same
    run as the check, `assess.reliability.check.run_check`) scouts the failure
    domain; its deepest samples are grouped by
    direction from the origin (`assess.reliability.design_points.cluster_starts`)
    and a search starts from the sample of each group nearest to the origin.
    Points already found, and points with Phi(-beta) below 1 % of the nearest
    one's, are left out. Der Kiureghian & Dakessian [6]_ show why several design
    points matter; their deflation was tried first and left aside: its bulge
    moves the surface outward along the same ray and the next search stops on
    the bulge. The union of the points' tangent half-spaces is bounded by
    Ditlevsen's bounds [7]_.

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
    design_points = check_int(design_points, "design_points", "form", 1, 20)
    if u0 is None:
        start = np.zeros(problem.dim)
    else:
        start = np.asarray(u0, dtype=float).ravel()
        if start.shape != (problem.dim,) or not np.all(np.isfinite(start)):
            raise InputError(f"The 'u0' parameter of form must be {problem.dim} finite numbers "
                             f"(one per variable). Got {u0!r} instead.")
    settings = {"tol": tol, "tol_direction": tol_direction, "max_iter": max_iter,
                "fd_step": fd_step, "u0": start.tolist(), "design_points": design_points}
    calls_before = problem.n_calls
    counters = problem.counters()

    n_modes = problem.g_modes(start[None, :]).shape[1]
    scout_u = scout_g = None
    check_run = None
    if design_points > 1 or check:
        from assess.reliability.check import run_check
        check_run, (scout_u, scout_g) = run_check(problem, math.nan, seed=seed,
                                                  n_per_level=check_samples)
    result = form_with_starts(problem, start, scout_u, scout_g, n_modes=n_modes,
                              tol=tol, tol_direction=tol_direction, max_iter=max_iter,
                              fd_step=fd_step, design_points=design_points)
    result = dataclasses.replace(result, settings=settings,
                                 n_calls=problem.n_calls - calls_before,
                                 warnings=result.warnings + tuple(
                                     problem.nonfinite_warnings(counters)))
    if check:
        from assess.reliability.check import checked
        result = checked(problem, result, seed=seed, n_per_level=check_samples,
                         check=check_run)
    return result


def form_with_starts(problem: StandardNormalProblem, start: np.ndarray, scout_u, scout_g, *,
                     n_modes: int, tol: float = 1e-6, tol_direction: float = 1e-4,
                     max_iter: int = 100, fd_step: float = 1e-6,
                     design_points: int = 1) -> ReliabilityResult:
    """FORM searches from ``start`` and, when scouting samples (u, g) of the deepest
    subset-simulation level are given, from one point of each region they show
    (`cluster_starts`); the core of `form`, also used by the ``auto`` method."""
    calls_before = problem.n_calls
    mode_names = problem.mode_names or [f"#{j + 1}" for j in range(n_modes)]
    warnings: list[str] = []
    points: list[dict] = []
    per_mode: list[tuple[dict, dict]] = []
    starts_by_mode: dict[int, list] = {j: [] for j in range(n_modes)}
    if scout_u is not None and design_points > 1:
        starts = cluster_starts(scout_u, scout_g, max_points=design_points * n_modes)
        if starts and n_modes > 1:
            owners = np.argmin(problem.g_modes(np.array(starts)), axis=1)
        else:
            owners = np.zeros(len(starts), dtype=int)
        for point, owner in zip(starts, owners):
            starts_by_mode[int(owner)].append(point)
    for j in range(n_modes):
        column = None if n_modes == 1 else j
        func = _ModeFunction(problem, column, fd_step)
        first = _ihlrf(func, start, tol, tol_direction, max_iter)
        found = [first]
        if starts_by_mode[j]:
            found = search_from_starts(func, starts_by_mode[j], found, tol, tol_direction,
                                       max_iter, design_points, g_scale=first["g_scale"])
        per_mode.append((first, _result_fields(problem, first)))
        prefix = f"mode {mode_names[j]}: " if n_modes > 1 else ""
        if first["message"]:
            warnings.append(prefix + first["message"])
        for search in found:
            fields = _result_fields(problem, search)
            points.append({"mode": mode_names[j], "beta": fields["beta"], "pf": fields["pf"],
                           "converged": search["converged"], "stalled": search["stalled"],
                           "iterations": search["iterations"],
                           "design_point_u": search["u"], "alpha": fields["alpha"],
                           "design_point_x": fields["design_point_x"],
                           "_search": search, "_fields": fields})

    usable = [p for p in points if _usable(p["_search"]) and math.isfinite(p["beta"])]
    pool = usable or [p for p in points if math.isfinite(p["beta"])] or points
    governing = min(pool, key=lambda p: p["beta"] if math.isfinite(p["beta"]) else math.inf)
    search, fields = governing["_search"], governing["_fields"]
    details = {"iterations": search["iterations"], "history": search["history"],
               "design_points": [{k: v for k, v in p.items() if not k.startswith("_")}
                                 for p in points]}
    if n_modes > 1:
        modes = [{"mode": mode_names[j], "beta": f["beta"], "pf": f["pf"],
                  "converged": s["converged"], "iterations": s["iterations"],
                  "design_point_u": s["u"]} for j, (s, f) in enumerate(per_mode)]
        pfs = np.array([m["pf"] for m in modes])
        bounds = (float(np.nanmax(pfs)), float(min(1.0, np.nansum(pfs))))
        details.update({"governing_mode": governing["mode"], "modes": modes,
                        "series_bounds": bounds})
        warnings.append(
            f"series system of {n_modes} modes: FORM was run on each mode; the reported beta "
            f"and pf are those of the governing mode {governing['mode']} and are a lower "
            f"bound on the system pf (unimodal bounds {bounds[0]:.3g} <= pf <= {bounds[1]:.3g}); "
            "use auto, importance_sampling or subset_simulation for the system pf")
    if len(usable) > 1:
        low, high = ditlevsen_bounds([p["beta"] for p in usable],
                                     [p["alpha"] for p in usable])
        details["first_order_bounds"] = (low, high)
        extra = [p for p in usable if p is not governing]
        if len({p["mode"] for p in usable}) < len(usable) or n_modes == 1:
            warnings.append(
                f"{len(usable)} design points found (beta "
                + ", ".join(f"{p['beta']:.3f}" for p in sorted(usable, key=lambda q: q['beta']))
                + f"): the failure domain has several important regions; FORM's pf of the "
                f"nearest point ({fields['pf']:.3g}) leaves out {len(extra)} of them; the "
                f"first-order pf of all lies in [{low:.3g}, {high:.3g}] (Ditlevsen bounds); "
                "use auto or importance_sampling (mixture over the design points)")
    converged = all(s["converged"] for s, _ in per_mode)
    return ReliabilityResult(
        method="form", cov=math.nan, n_calls=problem.n_calls - calls_before, seed=None,
        settings={}, converged=converged, warnings=tuple(warnings), details=details,
        **fields)
