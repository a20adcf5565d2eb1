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
"""

from __future__ import annotations

import math

from assess.reliability.crude import check_int
from assess.surrogate.chaos import chaos_for_problem


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


__all__ = ["drivers", "sobol_indices"]
