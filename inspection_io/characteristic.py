"""Characteristic (5 % fractile) values from test results: EN 1990 Annex D, D7.2.

The statistical method of EN 1990:2002 Annex D (D7.2) gives the characteristic
value of a material property from n test results as

- normal:     X_k = m_X (1 - k_n V_X)
- lognormal:  X_k = exp(m_Y - k_n s_Y), Y = ln X

with

- "V known" (coefficient of variation known beforehand):
  k_n = u_0.95 sqrt(1 + 1/n), and s_Y = sqrt(ln(1 + V^2)) for the lognormal;
- "V unknown" (estimated from the sample):
  k_n = t_{n-1, 0.95} sqrt(1 + 1/n), V_X = s_X / m_X, s_Y = sample std of ln X.

These are the predictive 5 % fractiles under vague priors and reproduce
EN 1990 Table D1 (within 0.01 for "V unknown"; the table's "V known" row is
rounded slightly lower, by up to 0.016 at n = 1).

References
----------
.. [1] EN 1990:2002, "Eurocode - Basis of structural design", Annex D,
   D7.2 and Table D1, CEN, 2002.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import stats

from inspection_io.errors import InputError

__all__ = ["V_KNOWN", "V_UNKNOWN", "FRACTILE", "kn_factor", "characteristic_value"]

V_KNOWN = "V known"
V_UNKNOWN = "V unknown"
#: Fractile of the characteristic value [-].
FRACTILE = 0.05
#: Smallest n for which EN 1990 Table D1 gives a "V unknown" factor.
MIN_N_V_UNKNOWN = 3


def kn_factor(n: float, v_known: bool) -> float:
    """EN 1990 Annex D factor k_n for the 5 % characteristic value [-].

    Parameters
    ----------
    n : int or float
        Number of test results; ``math.inf`` gives the limit u_0.95 = 1.645.
    v_known : bool
        True for "V known", False for "V unknown" (needs n >= 3, as Table D1).
    """
    if v_known:
        if n < 1:
            raise InputError(f"k_n needs at least 1 test result, got n = {n}")
        return float(stats.norm.isf(FRACTILE) * math.sqrt(1.0 + 1.0 / n))
    if n < MIN_N_V_UNKNOWN:
        raise InputError(f"'V unknown' needs at least {MIN_N_V_UNKNOWN} test results "
                         f"(EN 1990 Table D1), got n = {n}")
    if math.isinf(n):
        return float(stats.norm.isf(FRACTILE))
    return float(stats.t.isf(FRACTILE, n - 1) * math.sqrt(1.0 + 1.0 / n))


def characteristic_value(values, method: str = V_UNKNOWN, distribution: str = "lognormal",
                         v: float | None = None) -> dict:
    """Characteristic (5 %) value of a sample by EN 1990 Annex D, D7.2.

    Parameters
    ----------
    values : array_like
        Test results, e.g. in-situ strengths [MPa]; positive for the lognormal.
    method : {"V unknown", "V known"}
        Whether the coefficient of variation is estimated or known beforehand.
    distribution : {"lognormal", "normal"}
        Assumed distribution of the property.
    v : float, optional
        Known coefficient of variation [-]; required for "V known".

    Returns
    -------
    dict
        ``n``, ``mean``, ``std``, ``cov`` of the sample (std with n - 1),
        ``mean_log`` and ``std_log`` (lognormal: std used in the formula),
        ``k_n``, ``method``, ``distribution``, ``v`` (the V used) and
        ``characteristic`` (same unit as `values`).

    Examples
    --------
    >>> round(characteristic_value([30.0, 35.0, 40.0])["characteristic"], 1)
    21.4
    """
    if method not in (V_KNOWN, V_UNKNOWN):
        raise InputError(f"unknown method {method!r}; choose '{V_UNKNOWN}' or '{V_KNOWN}'",
                         column="method")
    if distribution not in ("lognormal", "normal"):
        raise InputError(f"unknown distribution {distribution!r}; choose 'lognormal' or "
                         "'normal'", column="distribution")
    x = np.asarray(values, float).ravel()
    if x.size == 0 or not np.all(np.isfinite(x)):
        raise InputError("values must be a non-empty set of finite numbers", column="values")
    known = method == V_KNOWN
    if known and (v is None or not v > 0):
        raise InputError(f"'V known' needs a positive coefficient of variation v, got {v!r}",
                         column="v")
    n = x.size
    k_n = kn_factor(n, known)
    mean = float(x.mean())
    std = float(x.std(ddof=1)) if n > 1 else math.nan
    result = {"n": n, "mean": mean, "std": std, "cov": std / mean if n > 1 else math.nan,
              "k_n": k_n, "method": method, "distribution": distribution,
              "mean_log": math.nan, "std_log": math.nan}
    if distribution == "lognormal":
        if np.any(x <= 0):
            raise InputError("the lognormal characteristic value needs positive values",
                             column="values")
        y = np.log(x)
        mean_log = float(y.mean())
        std_log = math.sqrt(math.log(1.0 + v * v)) if known else float(y.std(ddof=1))
        result.update(mean_log=mean_log, std_log=std_log,
                      v=v if known else result["cov"],
                      characteristic=math.exp(mean_log - k_n * std_log))
    else:
        cov = v if known else result["cov"]
        result.update(v=cov, characteristic=mean * (1.0 - k_n * cov))
    return result
