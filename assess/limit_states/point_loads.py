"""Car-park vehicle load effects from point loads at bay centres, by influence coefficients.

Model (JCSS PMC Part 2, "Loads in car parks"; its symbols i = influence
coefficient, L = weight of a car, S = load effect, N = number of parking places):
the vehicles stand at the centres of the parking bays, and the load effect of one
occupancy state is

    S = sum_i c_i m_i L_i

with c_i the influence coefficient of the effect at bay centre i, L_i independent
vehicle weights (mean mu_L, standard deviation sigma_L) and m_i the share of the
vehicle carried by the member (the summation form is from memory of the JCSS
text, whose symbol list was read). Only bays with c_i > 0 are occupied (the
adverse pattern: a bay whose vehicle would relieve the section is taken as empty,
as pattern loading in EN 1992-1-1 5.1.3; common practice). Hence

    E[S] = mu_L * s1,      sd[S] = sigma_L * sqrt(s2),
    s1 = sum_i m_i c_i,    s2 = sum_i m_i min(m_i, 1) c_i^2   (c_i > 0 only).

The lateral share m: a one-way slab strip of width b carries b / w of the
vehicles in the row of bays over it, w the bay dimension across the span (the
load of a vehicle spreads over at least one bay width: the effective width of a
one-way slab under a concentrated load, b_eff = load width + 2.4 x (1 - x/L),
BS 8110-1:1997 3.5.2.2, from memory, exceeds 2.4 m near midspan of usual
spans); a beam carries t / w of them, t its tributary width. One vehicle shared
by a strip (m < 1) adds m^2 sigma^2 to the variance; m > 1 vehicles side by side
add m sigma^2 (independent weights): hence m min(m, 1).

Bays are 2.4 m x 5.0 m (`assess.priors.actions.CAR_PARK_VEHICLES`); the layout is
not known, so both orientations and a grid of offsets of the bay pattern are
tried and the most adverse is kept (largest mu_L s1 + a sigma_L sqrt(s2), a the
extreme-value factor of the reference period): a deterministic search over the
geometry, not over samples.

Punching: the reaction of a column of a flat slab with spans L_x, L_y under a
unit load at (x, y) from the column is taken as (1 - |x|/L_x)(1 - |y|/L_y)
(the product of the reaction influence lines of the two simply supported
directions; its integral over the tributary area equals the tributary area of
`assess.limit_states.load_effects.TRIBUTARY_SHARE`, common practice). Edge and
corner columns keep the half / quarter on the slab side.

Units: positions [m]; coefficients of moments [kNm/kN] = [m], of shears and
reactions [kN/kN] = [-].
"""

from __future__ import annotations

import dataclasses
from typing import Callable

import numpy as np

from assess.errors import InputError

#: Parking bay, across x along the vehicle [m] (JCSS PMC car-park model, 2.4 x 5.0 m).
BAY_SIZE_M = (2.4, 5.0)

#: Offsets of the bay pattern tried in each direction (fractions of the pitch) [-].
N_OFFSETS = 12


@dataclasses.dataclass(frozen=True)
class VehicleEffect:
    """Influence sums of the most adverse bay layout for one load effect.

    Attributes
    ----------
    s1 : float
        sum m_i c_i over occupied bays: effect per kN of vehicle weight [effect/kN].
    s2 : float
        sum m_i min(m_i, 1) c_i^2: variance of the effect per kN^2 of vehicle
        weight variance [(effect/kN)^2].
    n_bays : int
        Occupied bay centres (positive coefficient) [-].
    layout : str
        The chosen layout in words.
    """

    s1: float
    s2: float
    n_bays: int
    layout: str

    @property
    def spread(self) -> float:
        """k = sqrt(s2) / s1: CoV of the state effect per CoV of one vehicle weight [-]."""
        return float(np.sqrt(self.s2) / self.s1) if self.s1 > 0 else 0.0

    def mean(self, vehicle_mean_kn: float) -> float:
        """E[S] of one occupancy state [effect unit]."""
        return vehicle_mean_kn * self.s1

    def std(self, vehicle_std_kn: float) -> float:
        """sd[S] of one occupancy state [effect unit]."""
        return vehicle_std_kn * float(np.sqrt(self.s2))


def effect_sums(coefficients, lateral_share) -> tuple[float, float]:
    """(s1, s2) of the adverse pattern: only bays with a positive coefficient are occupied.

    Parameters
    ----------
    coefficients : array-like
        Influence coefficients c_i at the bay centres [effect/kN].
    lateral_share : float or array-like
        Share m_i of each vehicle carried by the member [-].
    """
    c = np.asarray(coefficients, dtype=float)
    m = np.broadcast_to(np.asarray(lateral_share, dtype=float), c.shape)
    if np.any(m < 0):
        raise InputError("lateral shares must be >= 0")
    on = c > 0
    s1 = float(np.sum(m[on] * c[on]))
    s2 = float(np.sum(m[on] * np.minimum(m[on], 1.0) * c[on] ** 2))
    return s1, s2


def _score(s1: float, s2: float, cov: float, extreme: float) -> float:
    return s1 + extreme * cov * np.sqrt(s2)


def line_effect(influence: Callable[[np.ndarray], np.ndarray], length_m: float,
                loaded_width_m: float, *, vehicle_cov: float = 0.25,
                extreme_factor: float = 3.0) -> VehicleEffect:
    """Most adverse bay layout along a one-way member (slab strip or beam).

    Parameters
    ----------
    influence : callable
        Positions [m] along the member (or run of spans) -> influence coefficients.
    length_m : float
        Length over which bays lie [m] (span, or the whole run of a continuous member).
    loaded_width_m : float
        Width of deck the member carries [m]: strip width (slabs) or tributary width (beams).
    vehicle_cov : float
        CoV of the vehicle weight [-] (for the choice of layout only).
    extreme_factor : float
        Standardised extreme of the occupancy states in the reference period [-]
        (for the choice of layout only).
    """
    if not (length_m > 0 and loaded_width_m > 0):
        raise InputError(f"length and loaded width must be positive [m], got {length_m!r}, "
                         f"{loaded_width_m!r}")
    best = None
    for pitch, across in (BAY_SIZE_M, BAY_SIZE_M[::-1]):
        share = loaded_width_m / across
        for j in range(N_OFFSETS):
            offset = pitch * j / N_OFFSETS
            positions = np.arange(offset, length_m + 1e-9, pitch)
            if positions.size == 0:
                continue
            s1, s2 = effect_sums(influence(positions), share)
            score = _score(s1, s2, vehicle_cov, extreme_factor)
            if best is None or score > best[0]:
                best = (score, s1, s2, int(np.sum(influence(positions) > 0)),
                        f"bays {pitch:g} m along the member, {across:g} m across "
                        f"(share {share:.3g} of each vehicle), first bay centre at "
                        f"{offset:.3g} m")
    _, s1, s2, n, layout = best
    return VehicleEffect(s1, s2, n, layout)


def column_reaction_influence(x, y, span_x_m: float, span_y_m: float,
                              position: str = "interior") -> np.ndarray:
    """Reaction of a flat-slab column under a unit load at (x, y) from it [kN/kN].

    (1 - |x|/L_x)(1 - |y|/L_y) inside the tributary panels, 0 outside; edge
    columns carry loads with x >= 0 only, corner columns x, y >= 0 (the slab lies
    on the positive side).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    c = np.clip(1.0 - np.abs(x) / span_x_m, 0.0, None) * np.clip(1.0 - np.abs(y) / span_y_m,
                                                                   0.0, None)
    if position in ("edge", "corner"):
        c = np.where(x >= 0, c, 0.0)
    if position == "corner":
        c = np.where(y >= 0, c, 0.0)
    if position not in ("interior", "edge", "corner"):
        raise InputError(f"column position must be interior, edge or corner, got {position!r}")
    return c


def column_effect(span_x_m: float, span_y_m: float, position: str = "interior", *,
                  vehicle_cov: float = 0.25, extreme_factor: float = 3.0) -> VehicleEffect:
    """Most adverse bay layout for the reaction of a flat-slab column (punching)."""
    if not (span_x_m > 0 and span_y_m > 0):
        raise InputError(f"spans must be positive [m], got {span_x_m!r}, {span_y_m!r}")
    best = None
    for px, py in (BAY_SIZE_M, BAY_SIZE_M[::-1]):
        gx = np.arange(-np.ceil(span_x_m / px) - 1, np.ceil(span_x_m / px) + 2) * px
        gy = np.arange(-np.ceil(span_y_m / py) - 1, np.ceil(span_y_m / py) + 2) * py
        for i in range(N_OFFSETS):
            for j in range(N_OFFSETS):
                xx, yy = np.meshgrid(gx + px * i / N_OFFSETS, gy + py * j / N_OFFSETS)
                c = column_reaction_influence(xx, yy, span_x_m, span_y_m, position)
                s1, s2 = effect_sums(c, 1.0)
                score = _score(s1, s2, vehicle_cov, extreme_factor)
                if best is None or score > best[0]:
                    best = (score, s1, s2, int(np.sum(c > 0)),
                            f"bays {px:g} m in x, {py:g} m in y, offset "
                            f"({px * i / N_OFFSETS:.3g}, {py * j / N_OFFSETS:.3g}) m")
    _, s1, s2, n, layout = best
    return VehicleEffect(s1, s2, n, layout)


__all__ = [
    "BAY_SIZE_M",
    "VehicleEffect",
    "column_effect",
    "column_reaction_influence",
    "effect_sums",
    "line_effect",
]
