"""How many of a grid's correlated readings are worth independent ones.

Readings on a close grid (half-cell potentials) are strongly correlated with
their neighbours: a reading 0.25 m from the last says little that the last did
not. The update therefore gives each reading of a survey the weight
w = n_eff / n in a tempered (power) likelihood, posterior ~ prior x L^w
(Holmes & Walker, *Biometrika* 104, 2017, from memory; the same weighting as a
composite likelihood), where

    n_eff = n^2 / sum_i sum_j rho(d_ij),    rho(d) = exp(-d / L),

is the number of independent readings whose mean has the variance of the mean
of the n correlated ones (e.g. Cressie, *Statistics for Spatial Data*, rev.
ed., 1993, sect. 1.3, from memory), with d_ij the distance between readings i
and j and L the correlation length. For a dense grid over an area A,
sum_j rho(d_ij) -> (n / A) 2 pi L^2, so n_eff -> A / (2 pi L^2): refining the
grid over the same area adds almost nothing, which is the point.

Without coordinates the readings are placed on a square grid at
`DEFAULT_GRID_SPACING_M`.
"""

from __future__ import annotations

import math

import numpy as np

from assess.errors import InputError

CORRELATION_LENGTH_M = 1.0
"""Correlation length L of half-cell potentials along a deck or soffit [m].

Judgement: potential fields are reported correlated over about 0.5-2 m on decks
and slabs (potential mapping studies used for updating, e.g. Kessler, Fischer,
Straub & Gehlen, *Cem. Concr. Compos.* 47, 2014; from memory). Set it per site
(`CorrosionModelSettings.half_cell_correlation_length_m`) from a variogram of the
survey where one is available."""

DEFAULT_GRID_SPACING_M = 0.5
"""Spacing assumed when readings carry no coordinates [m]: the coarse end of the
0.15-0.5 m grids recommended for potential mapping (RILEM TC 154-EMC, Elsener et
al., *Mater. Struct.* 36, 2003, from memory)."""

_CHUNK = 2048


def effective_number(x_m, y_m, correlation_length_m=CORRELATION_LENGTH_M) -> float:
    """n_eff = n^2 / sum_ij exp(-d_ij / L) of readings at (x, y) [-].

    Parameters
    ----------
    x_m, y_m : array_like (n,)
        Coordinates of the readings [m].
    correlation_length_m : float
        L [m], > 0.

    Returns
    -------
    float
        Between 1 (all at one point) and n (far apart) [-].
    """
    x = np.asarray(x_m, dtype=float).ravel()
    y = np.asarray(y_m, dtype=float).ravel()
    length = _positive(correlation_length_m, "correlation_length_m")
    if x.shape != y.shape or x.size == 0 or not (np.isfinite(x).all() and np.isfinite(y).all()):
        raise InputError("effective_number needs as many finite x as y coordinates [m], at "
                         "least one.", column="x_m")
    total = 0.0
    for start in range(0, x.size, _CHUNK):  # rows in blocks: memory O(n x 2048)
        dx = x[start:start + _CHUNK, None] - x[None, :]
        dy = y[start:start + _CHUNK, None] - y[None, :]
        total += float(np.exp(-np.hypot(dx, dy) / length).sum())
    return x.size**2 / total


def grid_coordinates(n: int, spacing_m=DEFAULT_GRID_SPACING_M) -> tuple[np.ndarray, np.ndarray]:
    """First n points, row by row, of a square grid of ceil(sqrt(n)) columns [m]."""
    if int(n) < 1:
        raise InputError(f"grid_coordinates needs n >= 1, got {n!r}.", column="n")
    spacing = _positive(spacing_m, "spacing_m")
    side = math.ceil(math.sqrt(int(n)))
    k = np.arange(int(n))
    return (k % side) * spacing, (k // side) * spacing


def reading_weights(groups, x_m=None, y_m=None, *,
                    correlation_length_m=CORRELATION_LENGTH_M,
                    grid_spacing_m=DEFAULT_GRID_SPACING_M) -> tuple[np.ndarray, dict]:
    """Weight n_eff / n of every reading in its group (one survey of one zone) [-].

    Parameters
    ----------
    groups : array_like (n,)
        Group label of each reading (e.g. zone and survey age); readings of one
        group are one field.
    x_m, y_m : array_like (n,), optional
        Coordinates [m]; NaN or None: that group's readings are placed on a
        square grid at ``grid_spacing_m``.
    correlation_length_m, grid_spacing_m : float
        [m]

    Returns
    -------
    weights : ndarray (n,)
        In (0, 1] [-].
    summary : dict
        group -> {"n": readings, "n_eff": effective number, "coordinates": bool}.
    """
    labels = np.asarray(groups)
    n = labels.size
    x = np.full(n, np.nan) if x_m is None else np.asarray(x_m, dtype=float).ravel()
    y = np.full(n, np.nan) if y_m is None else np.asarray(y_m, dtype=float).ravel()
    if x.size != n or y.size != n:
        raise InputError("reading_weights needs one x and one y per reading (or none).",
                         column="x_m")
    weights = np.ones(n)
    summary = {}
    for label in dict.fromkeys(labels.tolist()):
        members = np.flatnonzero(labels == label)
        gx, gy = x[members], y[members]
        located = bool(np.isfinite(gx).all() and np.isfinite(gy).all())
        if not located:
            gx, gy = grid_coordinates(members.size, grid_spacing_m)
        n_eff = effective_number(gx, gy, correlation_length_m)
        weights[members] = n_eff / members.size
        summary[label] = {"n": int(members.size), "n_eff": float(n_eff),
                          "coordinates": located}
    return weights, summary


def _positive(value, name) -> float:
    if not (isinstance(value, (int, float, np.integer, np.floating)) and math.isfinite(value)
            and value > 0):
        raise InputError(f"The {name!r} parameter must be a number > 0 [m]. Got {value!r}.",
                         column=name)
    return float(value)
