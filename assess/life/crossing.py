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


def crossing_times(times: Any, beta: Any, beta_target: float) -> np.ndarray:
    """`target_crossing_time` of each row of ``beta`` (shape (K, T)), vectorised [years].

    NaN for a row that never falls below the target; ``times[0]`` for a row that
    starts below it.
    """
    t = _as_1d(times, "times")
    b = np.asarray(beta, dtype=float)
    if b.ndim != 2 or b.shape[1] != t.size:
        raise InputError(f"beta must have shape (K, {t.size}), got {b.shape}.", column="beta")
    below = b < beta_target
    has = below.any(axis=1)
    i = np.argmax(below, axis=1)
    out = np.full(b.shape[0], np.nan)
    rows = np.arange(b.shape[0])
    first = has & (i == 0)
    out[first] = t[0]
    later = has & (i > 0)
    r, k = rows[later], i[later]
    b0, b1 = b[r, k - 1], b[r, k]
    with np.errstate(invalid="ignore", divide="ignore"):
        fraction = np.where(np.isfinite(b0), (b0 - beta_target) / (b0 - b1), 0.0)
    out[later] = t[k - 1] + fraction * (t[k] - t[k - 1])
    return out
