"""When a reliability-index curve beta(t) first falls below its target."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from assess.errors import InputError


def _as_1d(values: Any, name: str) -> np.ndarray:
    try:
        arr = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numbers; {exc}.", column=name) from None
    arr = arr.reshape(1) if arr.ndim == 0 else arr
    if arr.ndim != 1:
        raise InputError(f"{name} must be one-dimensional, got shape {arr.shape}.", column=name)
    return arr


def target_crossing_time(times: Any, beta: Any, beta_target: float) -> float:
    """First time at which beta(t) falls below the target, by linear interpolation.

    Parameters
    ----------
    times : array_like
        Increasing times [years].
    beta : array_like
        Reliability index at those times [-].
    beta_target : float
        Target reliability index [-].

    Returns
    -------
    float
        Time of the first down-crossing [years]; ``times[0]`` if beta starts
        below the target; NaN if it never falls below within `times`.
    """
    t = _as_1d(times, "times")
    b = _as_1d(beta, "beta")
    below = np.flatnonzero(b < beta_target)
    if below.size == 0:
        return math.nan
    i = int(below[0])
    if i == 0:
        return float(t[0])
    b0, b1 = b[i - 1], b[i]
    if not np.isfinite(b0):
        return float(t[i - 1])
    return float(t[i - 1] + (b0 - beta_target) / (b0 - b1) * (t[i] - t[i - 1]))
