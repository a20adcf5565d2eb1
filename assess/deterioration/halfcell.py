"""Half-cell potentials as evidence of the corrosion state of the reinforcement.

Potentials here are in [mV] against a copper/copper-sulfate electrode (CSE);
readings taken with another electrode are converted by the readers before they
arrive here. A reading is an indicator, not a measurement of section loss: the
numeric ASTM C876 bands are a coarse screen, and the Bayesian update turns a
reading into a probability of active corrosion given a prior from the
initiation model.

References
----------
.. [1] ASTM C876, *Standard Test Method for Corrosion Potentials of Uncoated
   Reinforcing Steel in Concrete*, ASTM International (interpretation bands of
   the older editions' appendix, from memory).
.. [2] M. H. Faber and J. D. Sorensen, "Indicators for inspection and maintenance
   planning of concrete structures," *Struct. Saf.*, vol. 24, pp. 377-396, 2002
   (from memory).
.. [3] B. Elsener, with contributions from C. Andrade, J. Gulikers, R. Polder and
   M. Raupach, "Half-cell potential measurements - Potential mapping on reinforced
   concrete structures," RILEM TC 154-EMC recommendations, *Materials and Structures*,
   vol. 36, pp. 461-471, August-September 2003 (title page read; the table of typical
   potential ranges could not be read in the stored copy: its values here are from
   memory).
"""

from __future__ import annotations

from types import MappingProxyType

import numpy as np
from scipy import special, stats

from assess.deterioration.defaults import HALF_CELL_LIKELIHOOD, check_range
from assess.errors import InputError

ASTM_C876_LOW_RISK_ABOVE_MV = -200.0
"""Potentials more positive than this [mV vs CSE]: >90 % probability of no corrosion
(ASTM C876, from memory)."""

ASTM_C876_HIGH_RISK_BELOW_MV = -350.0
"""Potentials more negative than this [mV vs CSE]: >90 % probability of corrosion
(ASTM C876, from memory)."""

ASTM_C876_CLASSES = ("low", "uncertain", "high")
"""Labels returned by `astm_c876_class`, in order of increasing corrosion risk."""

STATES = ("active", "passive")

_RILEM = ("RILEM TC 154-EMC recommendations (Elsener et al., Mater. Struct. 36, 2003), table "
          "of typical potential ranges vs CSE (from memory); each range read as the central "
          "90 % of a normal (sd = width / 3.29; our reading)")

HALF_CELL_CONDITIONS = MappingProxyType({
    "wet, chloride-contaminated": MappingProxyType({
        "active_mean_mv": -500.0, "active_sd_mv": 60.0,
        "passive_mean_mv": -50.0, "passive_sd_mv": 90.0,
        "source": f"{_RILEM}: active -600 to -400 mV (wet, chloride-contaminated), passive "
                  "-200 to +100 mV (humid, chloride-free)"}),
    "humid, carbonated": MappingProxyType({
        "active_mean_mv": -150.0, "active_sd_mv": 150.0,
        "passive_mean_mv": -50.0, "passive_sd_mv": 90.0,
        "source": f"{_RILEM}: active -400 to +100 mV (humid, carbonated), passive -200 to "
                  "+100 mV (humid, chloride-free); the ranges overlap, so readings tell little"}),
    "dry": MappingProxyType({
        "active_mean_mv": 100.0, "active_sd_mv": 60.0,
        "passive_mean_mv": 100.0, "passive_sd_mv": 60.0,
        "source": f"{_RILEM}: 0 to +200 mV for dry concrete, carbonated or not; potentials "
                  "cannot tell the states apart, so readings carry no evidence"}),
})
"""Likelihood parameters f(E | state) per concrete condition, potentials vs CSE [mV].

Readings taken against another electrode are converted to CSE by the readers
(SCE -75 mV, Ag/AgCl -119 mV relative to CSE, `inspection_io.units`; common
practice), so one table per condition serves every electrode. These are
published ranges, not a calibration on the survey: the report warns while they
or `HALF_CELL_LIKELIHOOD` are in use."""

EXPOSURE_CONDITION = MappingProxyType({
    "exposed deck": "wet, chloride-contaminated",
    "sheltered soffit": "humid, carbonated",
    "internal": "dry",
})
"""Condition of `HALF_CELL_CONDITIONS` that matches each exposure setting of the site file
(judgement): de-iced decks wet with chloride-laden water, sheltered soffits humid and
carbonating, internal zones dry. A site file may replace them per zone with its own
calibration (`assess.site.half_cell_likelihood`)."""


def condition_likelihood(condition):
    """Likelihood parameters (the four ``*_mv`` keys) of a concrete condition [mV vs CSE]."""
    if condition not in HALF_CELL_CONDITIONS:
        raise InputError(f"{condition!r} is not a half-cell condition. Valid conditions: "
                         f"{sorted(HALF_CELL_CONDITIONS)}.", column="half_cell_condition")
    return {k: v for k, v in HALF_CELL_CONDITIONS[condition].items() if k.endswith("_mv")}


def with_reading_error(params, reading_error_mv):
    """Parameters with the reading error added in quadrature to both state sds [mV].

    The state sds describe the spread of the true potentials in each state; a
    reading adds its own error (ASTM C876 precision, see
    `assess.updating.measurement_error`)."""
    p = dict(HALF_CELL_LIKELIHOOD) if params is None else dict(params)
    error = float(reading_error_mv)
    if not (np.isfinite(error) and error >= 0):
        raise InputError(f"The half-cell reading error must be >= 0 [mV]. Got {reading_error_mv!r}.",
                         column="reading_error_mv")
    for state in STATES:
        p[f"{state}_sd_mv"] = float(np.hypot(p[f"{state}_sd_mv"], error))
    return p


def astm_c876_class(potential_mv_cse):
    """ASTM C876 band of each half-cell potential.

    ``"low"`` for E > -200 mV, ``"uncertain"`` for -350 <= E <= -200 mV,
    ``"high"`` for E < -350 mV (vs CSE).

    Parameters
    ----------
    potential_mv_cse : array_like
        Half-cell potential vs CSE [mV].

    Returns
    -------
    ndarray of str
        One of `ASTM_C876_CLASSES` per reading, same shape as the input.

    References
    ----------
    ASTM C876 (from memory). The standard asks that readings be interpreted
    together with chloride, carbonation, delamination and rate data.
    """
    e = check_range(potential_mv_cse, "potential_mv_cse", "astm_c876_class")
    return np.select([e > ASTM_C876_LOW_RISK_ABOVE_MV, e < ASTM_C876_HIGH_RISK_BELOW_MV],
                     ["low", "high"], default="uncertain")


def _state_params(state, params):
    if state not in STATES:
        raise InputError(f"The 'state' parameter must be one of {STATES}. Got {state!r} "
                         "instead.")
    p = dict(HALF_CELL_LIKELIHOOD) if params is None else dict(params)
    missing = {f"{s}_{k}_mv" for s in STATES for k in ("mean", "sd")} - set(p)
    if missing:
        raise InputError(f"Half-cell likelihood parameters are missing {sorted(missing)}; "
                         "see assess.deterioration.defaults.HALF_CELL_LIKELIHOOD.")
    sd = float(check_range(p[f"{state}_sd_mv"], f"{state}_sd_mv", "half-cell likelihood",
                           low=0.0, low_open=True))
    return float(p[f"{state}_mean_mv"]), sd


def potential_log_likelihood(potential_mv_cse, state, params=None):
    """Log density of a reading given the corrosion state, ln f(E | state) [ln(1/mV)].

    Parameters
    ----------
    potential_mv_cse : array_like
        Half-cell potential vs CSE [mV].
    state : {"active", "passive"}
        Corrosion state of the steel at the reading.
    params : mapping, optional
        ``active_mean_mv``, ``active_sd_mv``, ``passive_mean_mv``, ``passive_sd_mv``
        of normal likelihoods [mV]. Default `HALF_CELL_LIKELIHOOD` (illustrative
        only, after Faber & Sorensen 2002, from memory).
    """
    mean, sd = _state_params(state, params)
    return stats.norm.logpdf(np.asarray(potential_mv_cse, dtype=float), loc=mean, scale=sd)


def potential_likelihood(potential_mv_cse, state, params=None):
    """Density of a reading given the corrosion state, f(E | state) [1/mV].

    See `potential_log_likelihood` for the parameters.
    """
    return np.exp(potential_log_likelihood(potential_mv_cse, state, params))


def posterior_active_probability(potential_mv_cse, prior_active, params=None,
                                 reading_axis=None):
    """Probability of active corrosion after half-cell readings, by Bayes' rule [-].

    P(a | E) = f(E|a) P(a) / [f(E|a) P(a) + f(E|p) (1 - P(a))],

    evaluated as expit(ln f(E|a) - ln f(E|p) + logit P(a)) so that it stays
    exact for readings far in the tails.

    Parameters
    ----------
    potential_mv_cse : array_like
        Half-cell potential(s) vs CSE [mV].
    prior_active : array_like
        Prior probability of active corrosion P(a) [-], e.g. the probability of
        corrosion initiation from the chloride model at the survey age.
    params : mapping, optional
        Likelihood parameters, see `potential_log_likelihood`.
    reading_axis : int, optional
        If given, the readings along this axis belong to one zone with one
        corrosion state and are taken as conditionally independent given that
        state (their log-likelihood ratios add). Spatially correlated readings
        overstate the evidence under this assumption.

    Returns
    -------
    ndarray
        Posterior P(active | readings) [-].

    References
    ----------
    Faber and Sorensen (2002), Struct. Saf. 24 (from memory).
    """
    prior = check_range(prior_active, "prior_active", "posterior_active_probability", 0.0, 1.0)
    log_ratio = (potential_log_likelihood(potential_mv_cse, "active", params)
                 - potential_log_likelihood(potential_mv_cse, "passive", params))
    if reading_axis is not None:
        log_ratio = np.sum(log_ratio, axis=reading_axis)
    with np.errstate(divide="ignore"):
        return special.expit(log_ratio + special.logit(prior))


def detection_probabilities(threshold_mv_cse, params=None):
    """Probability of a reading below a threshold in each state [-].

    Returns ``(probability_of_detection, probability_of_false_alarm)`` =
    (P(E < e_th | active), P(E < e_th | passive)), for use with
    `posterior_from_indication` (Faber & Sorensen 2002, from memory).

    Parameters
    ----------
    threshold_mv_cse : array_like
        Threshold potential e_th vs CSE [mV], e.g. -350.
    params : mapping, optional
        Likelihood parameters, see `potential_log_likelihood`.
    """
    e_th = np.asarray(threshold_mv_cse, dtype=float)
    mean_a, sd_a = _state_params("active", params)
    mean_p, sd_p = _state_params("passive", params)
    return (stats.norm.cdf(e_th, loc=mean_a, scale=sd_a),
            stats.norm.cdf(e_th, loc=mean_p, scale=sd_p))


def posterior_from_indication(indicated, prior_active, probability_of_detection,
                              probability_of_false_alarm):
    """Probability of active corrosion after a yes/no indication (E below a threshold) [-].

    P(a | I) = PoD P(a) / [PoD P(a) + PFA (1 - P(a))] if indicated, and
    P(a | no I) = (1 - PoD) P(a) / [(1 - PoD) P(a) + (1 - PFA) (1 - P(a))] otherwise.

    Parameters
    ----------
    indicated : array_like of bool
        Whether the reading fell below the threshold.
    prior_active : array_like
        Prior P(active) [-].
    probability_of_detection, probability_of_false_alarm : array_like
        PoD and PFA [-], e.g. from `detection_probabilities`.
    """
    caller = "posterior_from_indication"
    prior = check_range(prior_active, "prior_active", caller, 0.0, 1.0)
    pod = check_range(probability_of_detection, "probability_of_detection", caller, 0.0, 1.0)
    pfa = check_range(probability_of_false_alarm, "probability_of_false_alarm", caller,
                      0.0, 1.0)
    hit = np.asarray(indicated, dtype=bool)
    like_a = np.where(hit, pod, 1.0 - pod)
    like_p = np.where(hit, pfa, 1.0 - pfa)
    with np.errstate(divide="ignore", invalid="ignore"):
        return like_a * prior / (like_a * prior + like_p * (1.0 - prior))
