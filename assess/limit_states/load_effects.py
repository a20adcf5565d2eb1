"""Load effects from area loads: simply supported one-way members and flat-slab columns.

Vectorised over samples. Loads in [kN/m2], spans in [m]; moments [kNm], forces [kN].
Model uncertainty of the load effect: JCSS PMC Part 3.9 (see `load_effect_model_uncertainty`).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from assess.errors import InputError
from assess.limit_states._checks import as_array
from assess.priors.distribution import Prior
from assess.priors.model_uncertainty import model_uncertainty_prior

#: Share of the full bay area w span_x span_y carried by a column, by position
#: (tributary areas of a regular grid without cantilevers; common practice).
#: Continuity raises the first interior reaction (about 10-15 %, common practice);
#: pass ``continuity_factor`` to `column_reaction` for that.
TRIBUTARY_SHARE = {"interior": 1.0, "edge": 0.5, "corner": 0.25}

#: Which JCSS load-effect model-uncertainty entry applies to which member/effect.
#: One-way slab strips and beams are frame-type (statically determinate here);
#: flat-slab column reactions are plate forces.
LOAD_EFFECT_MODEL_UNCERTAINTY_KEY = {
    ("beam", "moment"): "load_frame_moment",
    ("beam", "shear"): "load_frame_shear",
    ("one_way_slab", "moment"): "load_frame_moment",
    ("one_way_slab", "shear"): "load_frame_shear",
    ("flat_slab", "moment"): "load_plate_moment",
    ("flat_slab", "reaction"): "load_plate_force",
}


def self_weight_area_load(thickness_mm, unit_weight_kn_m3=25.0) -> np.ndarray:
    """Self-weight g = gamma h of a slab [kN/m2] (thickness [mm], gamma [kN/m3])."""
    h = as_array(thickness_mm, "slab thickness", unit="mm")
    gamma = as_array(unit_weight_kn_m3, "unit weight", unit="kN/m3")
    return gamma * h / 1000.0


def line_load(area_load_kn_m2, tributary_width_m) -> np.ndarray:
    """Line load w = q b on a beam or slab strip [kN/m] (q [kN/m2], b [m])."""
    q = np.asarray(area_load_kn_m2, dtype=float)
    b = as_array(tributary_width_m, "tributary width", unit="m")
    return q * b


def simply_supported_moment(line_load_kn_m, span_m) -> np.ndarray:
    """Midspan moment M = w L^2/8 of a simply supported member [kNm]."""
    w = np.asarray(line_load_kn_m, dtype=float)
    span = as_array(span_m, "span", unit="m")
    return w * span ** 2 / 8.0


def simply_supported_shear(line_load_kn_m, span_m, *, distance_from_support_m=0.0) -> np.ndarray:
    """Shear V = w (L/2 - a) at distance a from the support of a simply supported member [kN].

    The default a = 0 gives the support reaction w L/2 (safe side). EN 1992-1-1
    6.2.1(8) allows the check at a = d from the face of the support when the load
    is predominantly distributed; the capacity must then be the one at that section.
    """
    w = np.asarray(line_load_kn_m, dtype=float)
    span = as_array(span_m, "span", unit="m")
    a = as_array(distance_from_support_m, "distance from support", unit="m", allow_zero=True)
    if np.any(a > span / 2.0):
        raise InputError("distance from the support must not exceed half the span")
    return w * (span / 2.0 - a)


def column_reaction(area_load_kn_m2, span_x_m, span_y_m, *, position: str = "interior",
                    continuity_factor=1.0) -> np.ndarray:
    """Column reaction of a flat slab from its tributary area [kN].

    V = c s w L_x L_y with share s = 1 (interior), 1/2 (edge), 1/4 (corner) of the
    bay area (`TRIBUTARY_SHARE`, common practice) and continuity factor c
    (default 1).

    Parameters
    ----------
    area_load_kn_m2 : array-like
        Total area load w [kN/m2].
    span_x_m, span_y_m : array-like
        Column spacings in the two directions [m].
    position : {"interior", "edge", "corner"}
    continuity_factor : array-like
        Ratio of the elastic to the tributary reaction [-].
    """
    if position not in TRIBUTARY_SHARE:
        raise InputError(f"column position must be one of {sorted(TRIBUTARY_SHARE)}, "
                         f"got {position!r}")
    w = np.asarray(area_load_kn_m2, dtype=float)
    lx = as_array(span_x_m, "span_x", unit="m")
    ly = as_array(span_y_m, "span_y", unit="m")
    c = as_array(continuity_factor, "continuity factor", unit="-")
    return c * TRIBUTARY_SHARE[position] * w * lx * ly


@dataclasses.dataclass(frozen=True)
class OneWayLoadEffects:
    """Load effects of a simply supported one-way member (arrays over samples).

    Attributes
    ----------
    moment_knm : ndarray
        Midspan moment including theta_E [kNm].
    shear_kn : ndarray
        Shear at the checked section including theta_E [kN].
    """

    moment_knm: np.ndarray
    shear_kn: np.ndarray


def one_way_load_effects(span_m, tributary_width_m, permanent_kn_m2, imposed_kn_m2, *,
                         theta_moment=1.0, theta_shear=1.0,
                         distance_from_support_m=0.0) -> OneWayLoadEffects:
    """Moment and shear of a simply supported beam or one-way slab strip.

    Parameters
    ----------
    span_m : array-like
        Effective span L [m].
    tributary_width_m : array-like
        Loaded width carried by the member (slab strip: 1.0) [m].
    permanent_kn_m2 : array-like
        Self-weight plus superimposed dead load [kN/m2].
    imposed_kn_m2 : array-like
        Imposed load [kN/m2].
    theta_moment, theta_shear : array-like
        Load-effect model uncertainties (JCSS PMC 3.9 frames: LN 1.0/0.10) [-].
    distance_from_support_m : array-like
        Section where the shear is taken (0 = support) [m].
    """
    w = line_load(np.asarray(permanent_kn_m2, dtype=float) + np.asarray(imposed_kn_m2, dtype=float),
                  tributary_width_m)
    return OneWayLoadEffects(
        moment_knm=np.asarray(theta_moment, dtype=float) * simply_supported_moment(w, span_m),
        shear_kn=np.asarray(theta_shear, dtype=float) * simply_supported_shear(
            w, span_m, distance_from_support_m=distance_from_support_m))


def load_effect_model_uncertainty(member: str, effect: str) -> Prior:
    """JCSS PMC 3.9 model uncertainty theta_E for a member kind and load effect [-].

    Parameters
    ----------
    member : {"beam", "one_way_slab", "flat_slab"}
    effect : {"moment", "shear"} for one-way members, {"moment", "reaction"} for flat slabs.
    """
    key = (member, effect)
    if key not in LOAD_EFFECT_MODEL_UNCERTAINTY_KEY:
        raise InputError(f"no load-effect model uncertainty for member {member!r}, effect "
                         f"{effect!r}; known: {sorted(LOAD_EFFECT_MODEL_UNCERTAINTY_KEY)}")
    return model_uncertainty_prior(LOAD_EFFECT_MODEL_UNCERTAINTY_KEY[key])
