"""Start points for a search of several design points, scouted by subset simulation.

A limit state whose failure domain has several important regions (a series system
written as one expression, a curved surface with two symmetric branches) has several
local design points; a FORM search from the mean point finds one of them. Subset
simulation needs no design point: the samples of its deepest level lie in, or next
to, every important region. Grouping those samples by direction and starting one
FORM search in each group finds the design points of the regions (the "scout" idea
of using subset-simulation samples to locate design points; the grouping rule below
is our own).

References
----------
.. [1] A. Der Kiureghian and T. Dakessian, "Multiple design points in first and
   second-order reliability," *Structural Safety*, 20(1):37-49, 1998,
   doi:10.1016/S0167-4730(97)00026-X (why several design points matter).
.. [2] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001 (the scout).
"""

from __future__ import annotations

import numpy as np

COS_SAME_REGION = 0.9
"""Samples whose directions from the origin differ by less than about 26 degrees
(cosine >= 0.9) are taken as one region [-]."""

MIN_SHARE = 0.02
"""A group needs at least 2 % of the scouting samples to get a search of its own [-]."""


class ColumnProblem:
    """One mode (column) of a problem, seen as a problem of its own by the samplers.

    Evaluations are counted on the underlying problem.
    """

    def __init__(self, problem, column: int | None):
        self.problem = problem
        self.column = column
        self.dim = problem.dim

    def g(self, u: np.ndarray) -> np.ndarray:
        if self.column is None:
            return self.problem.g(u)
        return self.problem.g_modes(u)[:, self.column]


def cluster_starts(u: np.ndarray, g: np.ndarray, *, max_points: int,
                   cos_same: float = COS_SAME_REGION,
                   min_share: float = MIN_SHARE) -> list[np.ndarray]:
    """Start points of design-point searches from the samples of the deepest level.

    Parameters
    ----------
    u : ndarray of shape (n, dim)
        Samples in standard normal space [-].
    g : ndarray of shape (n,)
        Their limit-state values [units of g].
    max_points : int
        Most start points returned [-].

    Returns
    -------
    list of ndarray
        One point per group, nearest to the origin first. The samples used are
        the failed ones (g <= 0), or the lowest tenth of g when none failed;
        they are taken in order of distance from the origin, and each opens a
        group with every remaining sample within the angle of
        ``cos_same``; a group needs ``min_share`` of the samples. Its start point
        is its sample nearest to the origin.
    """
    u = np.asarray(u, dtype=float)
    g = np.asarray(g, dtype=float)
    if u.ndim != 2 or u.shape[0] == 0:
        return []
    chosen = g <= 0.0
    if chosen.sum() < 2:
        chosen = g <= np.quantile(g, 0.1)
    points = u[chosen]
    radius = np.linalg.norm(points, axis=1)
    keep = radius > 0
    points, radius = points[keep], radius[keep]
    if points.shape[0] == 0:
        return []
    order = np.argsort(radius)
    points, radius = points[order], radius[order]
    directions = points / radius[:, None]
    remaining = np.ones(points.shape[0], dtype=bool)
    starts = []
    total = points.shape[0]
    while remaining.any() and len(starts) < max_points:
        first = int(np.flatnonzero(remaining)[0])
        members = remaining & (directions @ directions[first] >= cos_same)
        remaining &= ~members
        if members.sum() >= max(1, min_share * total):
            starts.append(points[first].copy())
    return starts


__all__ = ["COS_SAME_REGION", "MIN_SHARE", "ColumnProblem", "cluster_starts"]
