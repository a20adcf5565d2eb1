"""Influence lines of simply supported and continuous beams of equal spans, vectorised.

A run of ``n_spans`` equal spans L [m] on pinned supports (constant EI, no
settlement) is solved by Clapeyron's three-moment equation (equal spans):

    M_{k-1} + 4 M_k + M_{k+1} = -(1/L^2) [P a (L^2 - a^2) (load in span k, a from its left end)
                                        + P b (L^2 - b^2) (load in span k+1, b from its right end)]

for every interior support k, with M_0 = M_n = 0 (textbook structural analysis,
e.g. Timoshenko & Young, *Theory of Structures*; from memory). A uniform load w on
every span gives the load term w L^3/4 per span instead. The moment in span k at
a section x is the simply supported moment plus the straight line between the
support moments; the shear adds (M_k - M_{k-1})/L.

Load positions are global: x in [0, n L] from the first (outer) support [m];
a section is ``(k, x)``: span k (0-based) at x [m] from its left support. Unit
loads: moments [kNm/kN] = [m], shears [kN/kN] = [-]; uniform coefficients per
w = 1 kN/m: moments [kNm per kN/m], shears [kN per kN/m].

Checked against the uniform-load coefficients of equal-span continuous beams
(Hicks, *Civil Engineering Formulas*, McGraw-Hill, Table 2.1 "Uniformly loaded
continuous beams over equal spans"): tests/test_member_mechanics.py.
"""

from __future__ import annotations

import numpy as np

from assess.errors import InputError


def _check(n_spans: int, span: float) -> None:
    if int(n_spans) != n_spans or n_spans < 1:
        raise InputError(f"number of spans must be a whole number >= 1, got {n_spans!r}")
    if not span > 0:
        raise InputError(f"span must be positive [m], got {span!r}")


def _span_of(x, n_spans: int, span: float):
    """Span index (0-based) and local position of global positions x [m]."""
    x = np.asarray(x, dtype=float)
    if np.any((x < 0) | (x > n_spans * span)):
        raise InputError(f"positions must lie on the run [0, {n_spans * span:g}] m")
    k = np.minimum(np.floor(x / span).astype(int), n_spans - 1)
    return k, x - k * span


def _section(n_spans: int, span: float, section) -> tuple[int, float]:
    """(span index, local position [m]) of a section given as ``(k, x)``, k 0-based."""
    try:
        k, x = section
    except (TypeError, ValueError):
        raise InputError(f"a section is (span index, position in the span [m]), got {section!r}") \
            from None
    if int(k) != k or not 0 <= k < n_spans or not 0.0 <= float(x) <= span:
        raise InputError(f"section {section!r} is not on a run of {n_spans} spans of {span:g} m")
    return int(k), float(x)


def _solve(n_spans: int, rhs: np.ndarray) -> np.ndarray:
    """Support moments M_0..M_n (columns) from the load terms of interior supports (rows)."""
    m = np.zeros((rhs.shape[1], n_spans + 1))
    if n_spans > 1:
        size = n_spans - 1
        matrix = 4.0 * np.eye(size) + np.eye(size, k=1) + np.eye(size, k=-1)
        m[:, 1:-1] = np.linalg.solve(matrix, rhs).T
    return m


def support_moments(n_spans: int, span: float, positions) -> np.ndarray:
    """Support moments under a unit point load at each position [kNm/kN], shape (P, n+1).

    Hogging moments are negative; the outer supports carry none.
    """
    _check(n_spans, span)
    k, a = _span_of(positions, n_spans, span)
    length = float(span)
    rhs = np.zeros((max(n_spans - 1, 1), k.size))
    cols = np.arange(k.size)
    b = length - a
    # support k (right end of span k, 1-based support index k+1 - 1 in the interior rows)
    right_row = k  # interior support at the right end of span k has row index k (0-based) - 0
    left_row = k - 1  # interior support at the left end of span k
    term_right = a * (length**2 - a**2) / length**2
    term_left = b * (length**2 - b**2) / length**2
    ok = right_row < n_spans - 1
    rhs[right_row[ok], cols[ok]] -= term_right[ok]
    ok = left_row >= 0
    rhs[left_row[ok], cols[ok]] -= term_left[ok]
    return _solve(n_spans, rhs[: n_spans - 1] if n_spans > 1 else rhs)


def uniform_support_moments(n_spans: int, span: float) -> np.ndarray:
    """Support moments under w = 1 kN/m on every span [kNm per kN/m], shape (n+1,)."""
    _check(n_spans, span)
    rhs = np.full((max(n_spans - 1, 1), 1), -2.0 * span**2 / 4.0)
    return _solve(n_spans, rhs)[0]


def moment_influence(n_spans: int, span: float, section: tuple, positions) -> np.ndarray:
    """Moment at ``section`` = (span index, x [m]) under a unit load at each position [kNm/kN].

    Sagging positive; the moment over support k is ``(k, 0)`` or ``(k - 1, L)``.
    """
    _check(n_spans, span)
    ks, xs = _section(n_spans, span, section)
    k, a = _span_of(positions, n_spans, span)
    length = float(span)
    same = k == ks
    simple = np.where(same, np.where(a <= xs, a * (length - xs), xs * (length - a)) / length, 0.0)
    m = support_moments(n_spans, span, positions)
    return simple + m[:, ks] * (1.0 - xs / length) + m[:, ks + 1] * (xs / length)


def shear_influence(n_spans: int, span: float, section: tuple, positions, *,
                    near: str = "left") -> np.ndarray:
    """Shear at ``section`` under a unit load at each position [kN/kN].

    Signed so that loads in the section's span near which the section lies give
    a positive value: ``near="left"``: V (upward on the part left of the section,
    i.e. the left support's side); ``near="right"``: -V.
    """
    if near not in ("left", "right"):
        raise InputError(f"near must be 'left' or 'right', got {near!r}")
    _check(n_spans, span)
    ks, xs = _section(n_spans, span, section)
    k, a = _span_of(positions, n_spans, span)
    length = float(span)
    same = k == ks
    simple = np.where(same, np.where(a > xs, 1.0 - a / length, -a / length), 0.0)
    m = support_moments(n_spans, span, positions)
    v = simple + (m[:, ks + 1] - m[:, ks]) / length
    return v if near == "left" else -v


def uniform_moment(n_spans: int, span: float, section: tuple) -> float:
    """Moment at ``section`` under w = 1 kN/m on every span [kNm per kN/m] (sagging +)."""
    _check(n_spans, span)
    ks, xs = _section(n_spans, span, section)
    m = uniform_support_moments(n_spans, span)
    length = float(span)
    return float(xs * (length - xs) / 2.0 + m[ks] * (1 - xs / length) + m[ks + 1] * xs / length)


def uniform_shear(n_spans: int, span: float, section: tuple, *, near: str = "left") -> float:
    """Shear at ``section`` under w = 1 kN/m on every span [kN per kN/m], signed as
    `shear_influence`."""
    if near not in ("left", "right"):
        raise InputError(f"near must be 'left' or 'right', got {near!r}")
    _check(n_spans, span)
    ks, xs = _section(n_spans, span, section)
    m = uniform_support_moments(n_spans, span)
    v = span / 2.0 - xs + (m[ks + 1] - m[ks]) / span
    return float(v if near == "left" else -v)


__all__ = [
    "moment_influence",
    "shear_influence",
    "support_moments",
    "uniform_moment",
    "uniform_shear",
    "uniform_support_moments",
]
