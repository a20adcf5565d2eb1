"""Priors for actions on car-park decks: self-weight, superimposed dead, imposed load."""

from __future__ import annotations

import math
import warnings

from assess.errors import InputError
from assess.priors.distribution import EULER_GAMMA, Prior
from assess.priors.geometry import dimension_deviation

#: Unit weight of normal-weight reinforced concrete [kN/m3]: EN 1991-1-1 Annex A,
#: 24 kN/m3 plain + 1 kN/m3 for normal reinforcement (from memory).
UNIT_WEIGHT_RC = 25.0

#: CoV of the weight density of normal-weight concrete [-] (JCSS PMC Part 2.1
#: self-weight; value 0.04 from memory).
UNIT_WEIGHT_COV = 0.04

#: Imposed-load categories for traffic areas (EN 1991-1-1:2002 Table 6.8, from
#: memory): ranges of the characteristic distributed load q_k [kN/m2] and axle/point
#: load Q_k [kN]; the National Annex fixes the value within the range.
IMPOSED_LOAD_CATEGORIES = {
    "F": {"q_k_range": (1.5, 2.5), "Q_k_range": (10.0, 20.0),
          "description": "traffic and parking areas, vehicles <= 30 kN gross weight",
          "source": "EN 1991-1-1:2002 Table 6.8 (from memory)"},
    "G": {"q_k_range": (5.0, 5.0), "Q_k_range": (40.0, 90.0),
          "description": "traffic and parking areas, vehicles 30-160 kN gross weight",
          "source": "EN 1991-1-1:2002 Table 6.8 (from memory)"},
}

#: Probabilistic imposed-load models, in terms of the characteristic value q_k.
#: Each: Gumbel maximum over ``period_years`` with mean ``mean_ratio * q_k`` and the
#: given CoV. Override by passing mean_ratio / cov / model_period_years.
IMPOSED_LOAD_MODELS = {
    "eurocode_calibration": {
        "mean_ratio": 0.6, "cov": 0.35, "period_years": 50.0,
        "source": ("50-year maximum imposed load used in Eurocode calibration studies: Gumbel, "
                   "mean 0.6 q_k, CoV 0.35 (Gulvanessian, Calgaro & Holicky 2002, Designers' "
                   "Guide to EN 1990; Holicky 2009) (from memory)"),
    },
}


def self_weight_prior(thickness_mm: float, unit_weight_kn_m3: float = UNIT_WEIGHT_RC, *,
                      unit_weight_cov: float = UNIT_WEIGHT_COV) -> Prior:
    """Normal prior for the self-weight of a slab or deck [kN/m2].

    The area load is g = gamma h with independent normal weight density gamma
    (mean ``unit_weight_kn_m3``, CoV ``unit_weight_cov``; JCSS PMC 2.1, values from
    memory) and thickness h (JCSS PMC 3.10 deviations, see `dimension_deviation`).
    The mean is gamma (h_nom + mu_Y); the variance of the product of independent
    normals is mu_g^2 s_h^2 + mu_h^2 s_g^2 + s_g^2 s_h^2.

    Parameters
    ----------
    thickness_mm : float
        Nominal slab thickness [mm].
    unit_weight_kn_m3 : float
        Mean weight density [kN/m3]; 25 for reinforced concrete (EN 1991-1-1 Annex A,
        from memory), 24 for plain concrete.
    """
    if not thickness_mm > 0 or not unit_weight_kn_m3 > 0:
        raise InputError("slab thickness [mm] and unit weight [kN/m3] must be positive, got "
                         f"{thickness_mm!r} and {unit_weight_kn_m3!r}")
    mean_dev, std_dev = dimension_deviation(thickness_mm)
    mean_h = (thickness_mm + mean_dev) / 1000.0
    std_h = std_dev / 1000.0
    std_gamma = unit_weight_cov * unit_weight_kn_m3
    variance = (unit_weight_kn_m3 * std_h) ** 2 + (mean_h * std_gamma) ** 2 + (std_gamma * std_h) ** 2
    return Prior("normal", unit_weight_kn_m3 * mean_h, math.sqrt(variance), unit="kN/m2",
                 source=("JCSS PMC Part 2.1 (self-weight = weight density x volume, both normal) "
                         "with Part 3.10 thickness deviations"),
                 note=f"unit weight {unit_weight_kn_m3:g} kN/m3, CoV {unit_weight_cov:g}")


def superimposed_dead_prior(nominal_kn_m2: float, *, thickness_measured: bool = True,
                            cov: float | None = None) -> Prior:
    """Normal prior for superimposed dead load (screed, waterproofing, asphalt) [kN/m2].

    CoV 0.10 when the layer thickness was measured on site, 0.20 when it is only
    known from drawings: values common in calibration studies (from memory; no
    single authoritative source). Pass ``cov`` to override.
    """
    if not nominal_kn_m2 >= 0:
        raise InputError(f"superimposed dead load must be >= 0 kN/m2, got {nominal_kn_m2!r}")
    chosen = cov if cov is not None else (0.10 if thickness_measured else 0.20)
    return Prior("normal", nominal_kn_m2, chosen * nominal_kn_m2, unit="kN/m2",
                 source="normal, CoV 0.10 (measured) / 0.20 (thickness unknown), calibration "
                        "practice (from memory)",
                 note=f"CoV {chosen:g}")


def gumbel_period_shift(mean: float, std: float, from_years: float, to_years: float) -> float:
    """Mean of the Gumbel maximum over ``to_years`` from that over ``from_years`` [unit].

    Max of n i.i.d. Gumbel periods keeps sigma and shifts the mean:
    mu_n = mu_1 + (sqrt(6)/pi) sigma ln n, with n = to_years/from_years
    (textbook extreme-value result, from memory).
    """
    if not (from_years > 0 and to_years > 0):
        raise InputError(f"reference periods must be positive [years], got {from_years!r}, "
                         f"{to_years!r}")
    return mean + math.sqrt(6.0) / math.pi * std * math.log(to_years / from_years)


def imposed_load_prior(q_k: float, category: str = "F", reference_period_years: float = 50.0, *,
                       model: str = "eurocode_calibration", mean_ratio: float | None = None,
                       cov: float | None = None, model_period_years: float | None = None,
                       max_probability_negative: float = 1e-3) -> Prior:
    """Gumbel prior for the maximum imposed (car-park) load over the reference period [kN/m2].

    Parameters
    ----------
    q_k : float
        Characteristic distributed imposed load [kN/m2] (EN 1991-1-1 Table 6.8:
        category F 1.5-2.5, G 5.0; from memory).
    category : str
        ``"F"`` or ``"G"``; a value of q_k outside the category's range warns.
    reference_period_years : float
        Period over which the maximum is taken [years].
    model : str
        Key of `IMPOSED_LOAD_MODELS`; default ``"eurocode_calibration"``: 50-year
        maximum Gumbel with mean 0.6 q_k and CoV 0.35 (Eurocode calibration
        studies, from memory).
    mean_ratio, cov, model_period_years : float, optional
        Override the model: mean / q_k [-], CoV [-] and the period [years] the
        model refers to (e.g. an annual model with ``model_period_years=1``).
    max_probability_negative : float
        Largest accepted probability of a negative load after the period
        conversion [-].

    Returns
    -------
    Prior
        Gumbel (maximum) model with std = cov * mean of the model period and the
        mean shifted by mu_T = mu_0 + (sqrt(6)/pi) sigma ln(T/T_0) (sigma unchanged).

    Raises
    ------
    InputError
        If the shift to a shorter period puts more than ``max_probability_negative``
        of the probability below zero: a 50-year model with CoV 0.35 describes the
        upper tail only and cannot be scaled down to a few years (its implied
        annual mean is negative). The message gives the shortest valid period; for
        annual analyses supply an annual model (``model_period_years=1``).

    Notes
    -----
    The JCSS PMC car-park model (vehicle weights ~N(15 kN, CoV 0.15-0.30) per
    2.4 x 5.0 m bay, occupancy renewal process) needs influence coefficients of
    the member and is the preferred physical model for a detailed assessment; this
    function gives the code-calibration model derived from q_k.
    """
    cat = str(category).strip().upper()
    if cat not in IMPOSED_LOAD_CATEGORIES:
        raise InputError(f"imposed-load category must be one of {sorted(IMPOSED_LOAD_CATEGORIES)}, "
                         f"got {category!r}")
    if model not in IMPOSED_LOAD_MODELS:
        raise InputError(f"imposed-load model must be one of {sorted(IMPOSED_LOAD_MODELS)}, "
                         f"got {model!r}")
    if not q_k > 0:
        raise InputError(f"characteristic imposed load q_k must be positive [kN/m2], got {q_k!r}")
    if not reference_period_years > 0:
        raise InputError(f"reference period must be positive [years], got {reference_period_years!r}")
    low, high = IMPOSED_LOAD_CATEGORIES[cat]["q_k_range"]
    if not low - 1e-9 <= q_k <= high + 1e-9:
        warnings.warn(f"q_k = {q_k:g} kN/m2 is outside the range {low:g}-{high:g} kN/m2 of "
                      f"category {cat} ({IMPOSED_LOAD_CATEGORIES[cat]['source']})", stacklevel=2)
    spec = IMPOSED_LOAD_MODELS[model]
    ratio = spec["mean_ratio"] if mean_ratio is None else mean_ratio
    v = spec["cov"] if cov is None else cov
    period = spec["period_years"] if model_period_years is None else model_period_years
    if not (ratio > 0 and v > 0 and period > 0):
        raise InputError("mean_ratio, cov and model_period_years must be positive, got "
                         f"{ratio!r}, {v!r}, {period!r}")
    mean_0 = ratio * q_k
    std = v * mean_0
    mean_t = gumbel_period_shift(mean_0, std, period, reference_period_years)
    scale = math.sqrt(6.0) * std / math.pi
    location_t = mean_t - EULER_GAMMA * scale
    log_p_negative = -math.exp(location_t / scale)
    if log_p_negative > math.log(max_probability_negative):
        location_0 = mean_0 - EULER_GAMMA * scale
        shortest = period * math.exp((scale * math.log(-math.log(max_probability_negative))
                                      - location_0) / scale)
        raise InputError(
            f"the imposed-load model (Gumbel, mean {ratio:g} q_k, CoV {v:g} over {period:g} yr) "
            f"shifted to {reference_period_years:g} yr gives mean {mean_t:.3g} kN/m2 and a "
            f"probability of {math.exp(log_p_negative):.2g} of a negative load; it is valid for "
            f"reference periods >= {shortest:.3g} yr. For shorter periods give a model for that "
            "period (mean_ratio, cov, model_period_years).")
    source = spec["source"] if (mean_ratio, cov, model_period_years) == (None, None, None) else (
        f"user model: Gumbel, mean {ratio:g} q_k, CoV {v:g} over {period:g} yr")
    return Prior("gumbel", mean_t, std, unit="kN/m2",
                 source=source + "; period shift mu_T = mu_0 + (sqrt 6/pi) sigma ln(T/T_0)",
                 note=f"category {cat}, q_k {q_k:g} kN/m2, reference period "
                      f"{reference_period_years:g} yr")


#: JCSS PMC Part 2 "Loads in car parks" (CIB W81 Report 116, 1989): light-vehicle
#: weight and use parameters. Vehicle weight normal, mean 15 kN, CoV 0.15-0.30 by
#: use (0.25 taken here); parking bay 2.4 x 5.0 m; vehicles per bay per busy day
#: and busy days per year by type of car park.
CAR_PARK_VEHICLES = {
    "vehicle_weight_mean_kn": 15.0,
    "vehicle_weight_cov": 0.25,
    "bay_area_m2": 2.4 * 5.0,
    "use": {
        "commercial": {"busy_days": 312.0, "vehicles_per_bay_day": 3.2},
        "rail or airport": {"busy_days": 30.0, "vehicles_per_bay_day": 1.3},
        "offices or factories": {"busy_days": 260.0, "vehicles_per_bay_day": 1.0},
        "residential": {"busy_days": 360.0, "vehicles_per_bay_day": 2.1},
    },
    "source": ("JCSS PMC Part 2 'Loads in car parks' after CIB W81 Report 116 (1989): vehicle "
               "weight N(15 kN, CoV 0.15-0.30), bay 2.4 x 5.0 m, use parameters by car-park type"),
}


def car_park_vehicle_load_prior(loaded_area_m2: float, reference_period_years: float = 1.0, *,
                                use: str = "commercial", vehicle_weight_mean_kn: float | None = None,
                                vehicle_weight_cov: float | None = None) -> Prior:
    """Gumbel model of the maximum vehicle area load on a car-park member [kN/m2].

    The member's loaded (influence) area A holds N = max(1, A / a_bay) parked
    vehicles at full occupancy (JCSS PMC car-park model). The equivalent uniform
    load of one full-occupancy state is the sum of N independent normal vehicle
    weights over A: mean mu_L / a_bay, standard deviation sigma_L sqrt(N) / A. The
    states renew with every change of vehicle, n = (vehicles per bay and busy day)
    x (busy days per year) x T independent states in T years, and the maximum of n
    normal values is Gumbel with the classical normal-extremes constants
    (Gumbel 1958, *Statistics of Extremes*; from memory):
    a_n = sqrt(2 ln n) - (ln ln n + ln 4 pi) / (2 sqrt(2 ln n)), b_n = 1/sqrt(2 ln n),
    location = mean + a_n sigma, scale = b_n sigma.

    Parameters
    ----------
    loaded_area_m2 : float
        Influence area of the load effect [m2] (e.g. span x strip of one span width
        for a one-way slab, span x tributary width for a beam, the tributary area
        of a column for punching).
    reference_period_years : float
        Period of the maximum [years]; 1 for an annual target.
    use : str
        Key of ``CAR_PARK_VEHICLES["use"]``.

    Returns
    -------
    Prior
        Gumbel (maximum) with its mean and standard deviation [kN/m2].

    Notes
    -----
    Full occupancy on busy days is assumed (on the safe side for lightly used car
    parks). Heavy vehicles (category G) are outside this model. This is the
    vehicle load smeared over the loaded area; the member models use the point
    loads at bay centres instead (`vehicle_weight_maximum_prior` with
    `assess.limit_states.point_loads`), which matter for short strips and punching.
    """
    if not loaded_area_m2 > 0:
        raise InputError(f"loaded area must be positive [m2], got {loaded_area_m2!r}")
    if not reference_period_years > 0:
        raise InputError(f"reference period must be positive [years], got {reference_period_years!r}")
    mean_l = vehicle_weight_mean_kn or CAR_PARK_VEHICLES["vehicle_weight_mean_kn"]
    cov_l = vehicle_weight_cov or CAR_PARK_VEHICLES["vehicle_weight_cov"]
    bay = CAR_PARK_VEHICLES["bay_area_m2"]
    n_vehicles = max(1.0, loaded_area_m2 / bay)
    area = max(loaded_area_m2, bay)
    state_mean = mean_l / bay
    state_std = cov_l * mean_l * math.sqrt(n_vehicles) / area
    n_states = car_park_state_count(reference_period_years, use)
    a_n, b_n = normal_extremes_constants(n_states)
    scale = b_n * state_std
    location = state_mean + a_n * state_std
    mean = location + EULER_GAMMA * scale
    std = math.pi * scale / math.sqrt(6.0)
    return Prior("gumbel", mean, std, unit="kN/m2",
                 source=CAR_PARK_VEHICLES["source"] + "; maximum of normal states by Gumbel's "
                        "normal-extremes constants (from memory)",
                 note=f"{use} car park, loaded area {loaded_area_m2:.3g} m2 "
                      f"({n_vehicles:.3g} vehicles), {n_states:.3g} states in "
                      f"{reference_period_years:g} yr")


def car_park_state_count(reference_period_years: float, use: str = "commercial") -> float:
    """Independent occupancy states in the period: vehicles per bay and busy day x busy
    days per year x T [-] (JCSS PMC car-park model, `CAR_PARK_VEHICLES`)."""
    if not reference_period_years > 0:
        raise InputError(f"reference period must be positive [years], got {reference_period_years!r}")
    uses = CAR_PARK_VEHICLES["use"]
    if use not in uses:
        raise InputError(f"car-park use must be one of {sorted(uses)}, got {use!r}")
    n_states = uses[use]["vehicles_per_bay_day"] * uses[use]["busy_days"] * reference_period_years
    if n_states < 10:
        raise InputError(f"only {n_states:.3g} independent load states in the reference period; "
                         "the extreme-value approximation needs at least 10")
    return n_states


def normal_extremes_constants(n: float) -> tuple[float, float]:
    """(a_n, b_n): the maximum of n standard normal values is about Gumbel(a_n, b_n) [-].

    a_n = sqrt(2 ln n) - (ln ln n + ln 4 pi) / (2 sqrt(2 ln n)), b_n = 1/sqrt(2 ln n)
    (Gumbel 1958, *Statistics of Extremes*; from memory).
    """
    if not n > 1:
        raise InputError(f"the normal-extremes constants need n > 1, got {n!r}")
    root = math.sqrt(2.0 * math.log(n))
    return root - (math.log(math.log(n)) + math.log(4.0 * math.pi)) / (2.0 * root), 1.0 / root


def vehicle_weight_maximum_prior(spread: float, reference_period_years: float = 1.0, *,
                                 use: str = "commercial",
                                 vehicle_weight_mean_kn: float | None = None,
                                 vehicle_weight_cov: float | None = None) -> Prior:
    """Gumbel model of the maximum effective vehicle weight on a member [kN].

    With point loads at bay centres (`assess.limit_states.point_loads`) the effect
    of one occupancy state is S = s1 W with W normal, mean mu_L and standard
    deviation k sigma_L, k = sqrt(s2)/s1 the member's ``spread`` (1 for one
    vehicle, 1/sqrt(N) for N vehicles of equal influence). The maximum of W over
    the n states of the reference period (`car_park_state_count`) is Gumbel with
    Gumbel's normal-extremes constants (`normal_extremes_constants`), as in
    `car_park_vehicle_load_prior`; the effect of a mode is then s1 x this value.

    Parameters
    ----------
    spread : float
        k = sqrt(s2)/s1 of the member's load effect [-] (0 < k <= 1).
    reference_period_years : float
        Period of the maximum [years].
    use : str
        Key of ``CAR_PARK_VEHICLES["use"]``.
    """
    if not 0 < spread <= 1.0 + 1e-9:
        raise InputError(f"the spread sqrt(s2)/s1 must lie in (0, 1], got {spread!r}")
    mean_l = vehicle_weight_mean_kn or CAR_PARK_VEHICLES["vehicle_weight_mean_kn"]
    cov_l = vehicle_weight_cov or CAR_PARK_VEHICLES["vehicle_weight_cov"]
    n_states = car_park_state_count(reference_period_years, use)
    a_n, b_n = normal_extremes_constants(n_states)
    state_std = spread * cov_l * mean_l
    location = mean_l + a_n * state_std
    scale = b_n * state_std
    return Prior("gumbel", location + EULER_GAMMA * scale, math.pi * scale / math.sqrt(6.0),
                 unit="kN",
                 source=CAR_PARK_VEHICLES["source"] + "; point loads at bay centres with influence "
                        "coefficients (JCSS PMC Part 2 car parks); maximum of normal states by "
                        "Gumbel's normal-extremes constants (from memory)",
                 note=f"{use} car park, spread {spread:.3g} ({1 / spread**2:.3g} equivalent "
                      f"vehicles), {n_states:.3g} states in {reference_period_years:g} yr")
