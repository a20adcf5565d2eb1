"""Which uncertainty drives the risk: FORM importance factors and Sobol indices side by side.

Two views of the same question, and they answer different things:

- importance factors alpha_i^2 (FORM) are the shares of the reliability index owed to
  each variable at the design point - what matters *for failure*;
- Sobol indices (first order S_i, total S_Ti) are the shares of the variance of the
  safety margin owed to each variable over its whole range - what makes the margin
  *uncertain*; they come from the coefficients of a polynomial-chaos expansion [1]_.

A variable with a large total index but a small importance factor spreads the margin
without pushing it towards failure; testing it (value of information) then changes the
reliability index little.

References
----------
.. [1] B. Sudret, "Global sensitivity analysis using polynomial chaos expansions,"
   *Reliability Engineering & System Safety*, 93(7):964-979, 2008,
   doi:10.1016/j.ress.2007.04.002.
.. [2] A. Der Kiureghian, "First- and second-order reliability methods," ch. 14 of
   *Engineering Design Reliability Handbook*, CRC Press, 2005 (importance factors).
.. [3] R. E. Melchers, "Importance sampling in structural systems," *Structural
   Safety*, 6(1):3-10, 1989 (the mean of the failure samples as a stand-in for the
   design point; from memory).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from assess.reliability.crude import check_int
from assess.surrogate.chaos import chaos_for_problem

#: Relative leave-one-out error of the expansion above which its Sobol indices are not
#: shown: the expansion then misses more than 10 % of the margin's variance [-].
SOBOL_MAX_LOO = 0.10
#: Samples per level of the subset simulation that stands in for FORM [-].
FALLBACK_SAMPLES = 1000


def base_name(name: str) -> str:
    """The physical variable a model variable belongs to: ``"fc.location"`` -> ``"fc"``."""
    return name.split(".")[0]


def merge_shares(shares: dict, group: Callable[[str], str] = base_name) -> dict:
    """Sum of shares (e.g. alpha_i^2) per group of variables [-]."""
    merged: dict[str, float] = {}
    for name, value in shares.items():
        key = group(name)
        merged[key] = merged.get(key, 0.0) + float(value)
    return merged


def importance_from_failures(u: np.ndarray, g: np.ndarray, names) -> dict | None:
    """Importance factors from failure samples: the direction of the mean of the samples
    with g <= 0 in standard normal space stands in for the FORM direction [3]_.

    alpha = u_bar / |u_bar|, u_bar = mean of u over g <= 0; importance factors alpha_i^2
    [-] by name (they sum to 1). None when no sample failed. For a linear limit state the
    conditional mean of u given failure lies on the FORM direction exactly (the normal
    distribution is symmetric about that line), so only the sampling error differs.
    """
    u = np.atleast_2d(np.asarray(u, dtype=float))
    failed = np.asarray(g, dtype=float).ravel() <= 0.0
    if not failed.any():
        return None
    centre = u[failed].mean(axis=0)
    norm = float(np.linalg.norm(centre))
    if not (norm > 0 and math.isfinite(norm)):
        return None
    alpha = centre / norm
    return {name: float(a * a) for name, a in zip(names, alpha)}


def group_sobol(chaos, group: Callable[[str], str] = base_name) -> dict:
    """First-order and total Sobol indices of groups of inputs from the coefficients [1]_.

    A group's first-order index sums the squared coefficients of the terms whose inputs
    all lie in the group (its closed index); its total index those of the terms that touch
    the group. Several u columns of one physical variable (e.g. its population's
    precision, location and its own scatter) form one group. Returns ``{"first": {...},
    "total": {...}}`` [-]; zeros when the variance is zero.
    """
    names = list(chaos.names)
    keys = list(dict.fromkeys(group(n) for n in names))
    active = chaos.indices > 0
    squares = chaos.coefficients ** 2
    variance = chaos.variance
    nonconstant = active.any(axis=1)
    first, total = {}, {}
    for key in keys:
        columns = np.array([group(n) == key for n in names])
        inside = nonconstant & ~active[:, ~columns].any(axis=1)
        touches = active[:, columns].any(axis=1)
        first[key] = float(squares[inside].sum() / variance) if variance > 0 else 0.0
        total[key] = float(squares[touches].sum() / variance) if variance > 0 else 0.0
    return {"first": first, "total": total}


def risk_drivers(problem, *, form_result=None, seed=None, n_samples: int = 300,
                 max_degree: int = 3, group: Callable[[str], str] = base_name,
                 sobol: bool = True) -> dict:
    """Which uncertainty drives the risk of one limit state: importance factors and
    Sobol indices, merged per physical variable (``group``).

    Parameters
    ----------
    problem : StandardNormalProblem
        One limit state (or a system: its minimum).
    form_result : ReliabilityResult, optional
        FORM on the same problem (e.g. read from the reliability cache); its importance
        factors are used when it converged with a finite beta. Otherwise subset
        simulation (`FALLBACK_SAMPLES` per level) runs, and the direction of the mean of
        its last level's failure samples gives them [3]_.
    seed : int, optional
        Seeds the fallback and the expansion's design.
    n_samples : int, default 300
        True evaluations for the polynomial-chaos expansion of g [-].
    max_degree : int, default 3
    sobol : bool, default True
        Fit the expansion (False: importance factors only).

    Returns
    -------
    dict
        ``importance`` (alpha^2 per group [-] or None), ``importance_source`` ("FORM
        design point", "failure samples of subset simulation" or ""), ``sobol_first``,
        ``sobol_total`` (per group [-], or None when not fitted or when the expansion's
        leave-one-out error exceeds `SOBOL_MAX_LOO`), ``sobol_loo_error`` [-],
        ``sobol_note`` and ``n_calls`` (true evaluations spent here [-]).
    """
    calls_before = problem.n_calls
    importance, source = None, ""
    if (form_result is not None and form_result.importance_factors
            and bool(form_result.converged) and math.isfinite(form_result.beta)):
        importance, source = form_result.importance_factors, "FORM design point"
    else:
        from assess.reliability.subset import DEFAULT_P0, _subset

        _, (last_u, last_g) = _subset(problem, n_per_level=FALLBACK_SAMPLES, p0=DEFAULT_P0,
                                      seed=seed, sampler="acs", max_levels=40,
                                      target_cov=None, max_calls=None)
        importance = importance_from_failures(last_u, last_g, problem.names)
        source = "failure samples of subset simulation" if importance else ""
    out = {"importance": merge_shares(importance, group) if importance else None,
           "importance_source": source, "sobol_first": None, "sobol_total": None,
           "sobol_loo_error": None, "sobol_note": ""}
    if sobol:
        n_samples = check_int(n_samples, "n_samples", "risk_drivers", 10, 10**6)
        chaos, _ = chaos_for_problem(problem, n_samples, seed=seed,
                                     model=getattr(problem, "model", None),
                                     max_degree=max_degree)
        out["sobol_loo_error"] = float(chaos.loo_error)
        if math.isfinite(chaos.loo_error) and chaos.loo_error <= SOBOL_MAX_LOO:
            shares = group_sobol(chaos, group)
            out["sobol_first"], out["sobol_total"] = shares["first"], shares["total"]
        else:
            out["sobol_note"] = (
                f"Sobol indices not shown: the polynomial expansion of the safety margin "
                f"misses {chaos.loo_error:.0%} of its variance (leave-one-out, at most "
                f"{SOBOL_MAX_LOO:.0%} accepted)")
    out["n_calls"] = int(problem.n_calls - calls_before)
    return out


def sobol_indices(problem, *, n_samples: int = 300, seed=None, max_degree: int = 4,
                  model=None) -> dict:
    """First-order and total Sobol indices of a problem's safety margin (system minimum)
    from a sparse polynomial-chaos expansion on ``n_samples`` true evaluations.

    ``model`` (default: the problem's ``model`` attribute, set by problem files) is the
    `ProbabilisticModel` whose marginals choose the polynomial families; without it,
    Hermite polynomials in u.

    Returns
    -------
    dict
        ``first`` and ``total`` by variable name [-], ``loo_error`` (relative
        leave-one-out error of the expansion [-]; above about 0.05 the indices are
        rough), ``degree`` and ``n_calls``.
    """
    n_samples = check_int(n_samples, "n_samples", "sobol_indices", 10, 10**6)
    calls_before = problem.n_calls
    chaos, _ = chaos_for_problem(problem, n_samples, seed=seed,
                                 model=model if model is not None
                                 else getattr(problem, "model", None),
                                 max_degree=max_degree)
    indices = chaos.sobol()
    return {**indices, "loo_error": chaos.loo_error, "degree": chaos.degree,
            "n_calls": problem.n_calls - calls_before}


def drivers(importance_factors: dict | None, sobol: dict | None) -> list[dict]:
    """Rows of the table "which uncertainty drives the risk", largest share first.

    Each row: ``variable``, ``importance_factor`` (alpha^2), ``sobol_first``,
    ``sobol_total`` [-] (None where not computed).
    """
    names = list(importance_factors or {})
    for source in (sobol or {}).get("total", {}), (sobol or {}).get("first", {}):
        names += [n for n in source if n not in names]
    rows = []
    for name in names:
        rows.append({"variable": name,
                     "importance_factor": (importance_factors or {}).get(name),
                     "sobol_first": (sobol or {}).get("first", {}).get(name),
                     "sobol_total": (sobol or {}).get("total", {}).get(name)})

    def key(row):
        values = [v for v in (row["importance_factor"], row["sobol_total"])
                  if v is not None and math.isfinite(v)]
        return -max(values) if values else 0.0

    return sorted(rows, key=key)


__all__ = ["base_name", "drivers", "group_sobol", "importance_from_failures", "merge_shares",
           "risk_drivers", "sobol_indices"]
