"""Bayesian updating of corrosion initiation time and corrosion rate per zone.

Per zone z the free parameters are the median initiation time t_i,z [yr] and
the corrosion current density after initiation i_corr,z [uA/cm2], both with
lognormal priors (i_corr by exposure class from
`assess.deterioration.defaults.CORROSION_RATE`; t_i from the chloride or
carbonation posterior, or from judgement). Two kinds of evidence update them:

Section loss at break-outs. Uniform corrosion by Faraday's law,

    P = 0.0116 i_corr max(t - t_i,breakout, 0)  [mm],   A/A0 = max(1 - 2 P / D0, 0)^2,

the same expressions as `assess.deterioration.corrosion` (`penetration_depth`,
`residual_area_ratio` with ``rule="uniform"``), with a normal measurement error
of the ratio (sd known or half-normal). Two ages identify both the rate (the
slope) and the initiation time (the intercept). t_i,breakout is the local
initiation time where the break-out was opened (see below).

Half-cell potentials. Initiation is not simultaneous over a zone: cover,
concrete and exposure vary from point to point. This is represented by a
lognormal scatter of the local initiation time about the zone median,
ln t_i,local = ln t_i,z + s eps, eps ~ N(0, 1), so that a reading location at
age t is active with probability

    p_active(t) = P(t_i,local < t) = Phi((ln t - ln t_i,z) / s),

with s fixed, one value for all zones or one per zone (e.g. derived from the
zone's cover scatter, `assess.site.initiation.spatial_log_sd`).

A reading E is then drawn from the mixture
p_active f(E | active) + (1 - p_active) f(E | passive), with the normal densities
of `assess.deterioration.halfcell` (illustrative defaults after Faber & Sorensen
2002, from memory), each state's sd widened by the reading error (ASTM C876
precision). Readings on a close grid are spatially correlated: each survey of a
zone enters with the weight n_eff / n of a tempered (power) likelihood, n_eff
the effective number of independent readings for an exponential correlation
of length L (`assess.updating.spatial`), so a finer grid over the same area
adds little evidence.

Section loss at a break-out uses the local initiation time of the place where
the break-out was opened. Break-outs are usually opened where corrosion is
expected first (low cover, spalls, the most negative potentials; common
practice), not at random, so the break-out is placed at quantile q of the
spatial scatter of initiation:

    t_i,breakout = t_i,z exp(s Phi^-1(q)),

q = `BREAKOUT_QUANTILE` = 0.1 by default; q = 0.5 for break-outs placed at
random (the zone median).

Rate prior: the median of `CORROSION_RATE[exposure]`, with the standard
deviation of ln i_corr widened to at least `RATE_LOG_SD_MIN` (see there).

References
----------
.. [1] M. Faraday (1834), law of electrolysis; 1 uA/cm2 = 11.6 um/yr of iron.
.. [2] M. H. Faber and J. D. Sorensen, "Indicators for inspection and maintenance
   planning of concrete structures," *Struct. Saf.*, vol. 24, pp. 377-396, 2002
   (from memory).
.. [3] C. Andrade and C. Alonso, "Corrosion rate monitoring in the laboratory and
   on-site," *Constr. Build. Mater.*, vol. 10, no. 5, pp. 315-328, 1996.
.. [4] DuraCrete, "Statistical quantification of the variables in the limit state
   functions," Brite EuRam project BE95-1347, report R9, 2000 (corrosion rates
   by exposure class; from memory).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.deterioration.corrosion import FARADAY_MM_PER_YEAR_PER_UA_CM2
from assess.deterioration.defaults import CORROSION_RATE, lookup
from assess.deterioration.halfcell import potential_log_likelihood, with_reading_error
from assess.errors import InputError
from assess.updating.chloride import (
    check_observation_vector,
    check_zone_index,
    check_zone_names,
    sampler_seed,
)
from assess.updating.gate import GateReport, require_convergence
from assess.updating.measurement_error import MEASUREMENT_ERRORS
from assess.updating.models import sample_posterior
from assess.updating.spatial import CORRELATION_LENGTH_M, DEFAULT_GRID_SPACING_M, reading_weights

HALF_CELL_READING_ERROR_MV = MEASUREMENT_ERRORS["halfcell"].sd
"""Standard deviation of one half-cell reading's error [mV] (ASTM C876 precision, from
memory; `assess.updating.measurement_error`)."""

SPATIAL_LOG_SD = 0.7
"""Default scatter s of ln(local initiation time) within a zone [-].

Judgement from the chloride model: t_i grows as cover^(2/(1-a)), so a cover
CoV of about 0.25 (JCSS PMC Part 3.10, from memory) with a = 0.3 alone gives
a ln t_i scatter of about 2 x 0.25 / 0.7 = 0.7."""

BREAKOUT_QUANTILE = 0.1
"""Default quantile q of the spatial scatter of initiation at which break-outs are
opened [-].

Break-outs are usually opened where corrosion is expected first: at low cover,
at spalls or at the most negative half-cell potentials (common practice). With
q = 0.1 a break-out sees the initiation time that only 10 % of the zone's
locations beat. Use 0.5 for break-outs placed at random."""

RATE_LOG_SD_MIN = 1.0
"""Smallest standard deviation of ln i_corr in the rate prior [-].

DuraCrete (2000, from memory) gives the corrosion rate of every exposure class
a coefficient of variation of about 1.3-1.5 (e.g. carbonation, sheltered from
rain: mean 2, sd 3 um/yr; chloride, cyclic wet-dry: mean 30, sd 40 um/yr), i.e.
a log-sd sqrt(ln(1 + CoV^2)) of 0.97-1.09, and the field rates of Andrade &
Alonso (1996) span the classes "negligible" (< 0.1) to "low" (0.1-0.5 uA/cm2)
in sheltered and indoor concrete. The medians of `CORROSION_RATE` are kept;
narrower spreads there would rule out a priori rates that the literature
reports for the same class (a damp "internal" zone corroding at 0.1-0.3)."""

RATIO_SD_SCALE = 0.05
"""Scale of the half-normal prior of the measurement sd of A/A0 [-] (judgement:
caliper readings of a cleaned bar at a break-out)."""

PARAMETER_NAMES = ("initiation_time", "corrosion_rate", "ratio_measurement_sd")


@dataclasses.dataclass(frozen=True)
class CorrosionModelSettings:
    """Modelling choices of the corrosion update (the sampler settings are separate).

    Attributes
    ----------
    breakout_quantile : float, default `BREAKOUT_QUANTILE` (0.1)
        Quantile q in (0, 1) of the spatial scatter of initiation at which
        break-outs were opened [-]: 0.1 where they were opened at low cover or
        visible damage (common practice), 0.5 where they were placed at random.
    spatial_log_sd : float, optional
        Scatter s of ln(local t_i) about the zone median [-], the same for every
        zone. None (default) lets the caller derive it per zone (e.g. from the
        cover survey, `assess.site.initiation.spatial_log_sd`), else
        `SPATIAL_LOG_SD`.
    half_cell_correlation_length_m : float, default `CORRELATION_LENGTH_M` (1 m)
        Correlation length L of the potential field [m]
        (`assess.updating.spatial`).
    half_cell_grid_spacing_m : float, default `DEFAULT_GRID_SPACING_M` (0.5 m)
        Grid spacing assumed for readings without coordinates [m].
    half_cell_params : mapping, optional
        f(E | state) parameters [mV vs CSE]: one mapping for all zones or one per
        zone (e.g. `assess.deterioration.halfcell.condition_likelihood`); None:
        `HALF_CELL_LIKELIHOOD` (illustrative).
    half_cell_calibrated : bool, default False
        True only when ``half_cell_params`` were calibrated on this site's
        survey; otherwise the report warns that they are defaults.
    """

    breakout_quantile: float = BREAKOUT_QUANTILE
    spatial_log_sd: float | None = None
    half_cell_correlation_length_m: float = CORRELATION_LENGTH_M
    half_cell_grid_spacing_m: float = DEFAULT_GRID_SPACING_M
    half_cell_params: object = None
    half_cell_calibrated: bool = False

    def __post_init__(self):
        check_breakout_quantile(self.breakout_quantile, "CorrosionModelSettings")
        if self.spatial_log_sd is not None:
            check_spatial_log_sd(self.spatial_log_sd, "CorrosionModelSettings")
        for name in ("half_cell_correlation_length_m", "half_cell_grid_spacing_m"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
                raise InputError(f"The {name!r} parameter of CorrosionModelSettings must be a "
                                 f"number > 0 [m]. Got {value!r}.", column=name)


def check_breakout_quantile(value, caller):
    """The break-out quantile q as a float in (0, 1), or `InputError`."""
    if not (isinstance(value, (int, float, np.integer, np.floating)) and 0.0 < value < 1.0):
        raise InputError(f"The 'breakout_quantile' parameter of {caller} must be a number in "
                         f"(0, 1): 0.1 for break-outs opened where corrosion is expected "
                         f"first, 0.5 for break-outs placed at random. Got {value!r} instead.",
                         column="breakout_quantile")
    return float(value)


def check_spatial_log_sd(value, caller):
    """The spatial scatter s as a float > 0, or `InputError`."""
    if not (isinstance(value, (int, float, np.integer, np.floating)) and np.isfinite(value)
            and value > 0):
        raise InputError(f"The 'spatial_log_sd' parameter of {caller} must be > 0. Got "
                         f"{value!r}.", column="spatial_log_sd")
    return float(value)


def zone_spatial_log_sd(spatial_log_sd, zones, caller):
    """Scatter s of each zone as an array in zone order [-].

    Parameters
    ----------
    spatial_log_sd : float or mapping str -> float
        One value for all zones, or one per zone.
    zones : sequence of str
    caller : str
    """
    if hasattr(spatial_log_sd, "keys"):
        missing = [z for z in zones if z not in spatial_log_sd]
        if missing:
            raise InputError(f"The 'spatial_log_sd' parameter of {caller} has no entry for "
                             f"zone(s) {missing}.", column="spatial_log_sd")
        return np.array([check_spatial_log_sd(spatial_log_sd[z], caller) for z in zones])
    return np.full(len(zones), check_spatial_log_sd(spatial_log_sd, caller))


def breakout_initiation_factor(breakout_quantile=BREAKOUT_QUANTILE,
                               spatial_log_sd=SPATIAL_LOG_SD):
    """Ratio of a break-out's local initiation time to the zone median [-].

    exp(s Phi^-1(q)): the q-quantile of the lognormal spatial scatter of the
    local initiation time about the zone median t_i,z. ``spatial_log_sd`` may
    be an array (one s per zone); the result then has its shape.
    """
    q = check_breakout_quantile(breakout_quantile, "breakout_initiation_factor")
    s = np.asarray(spatial_log_sd, dtype=float)
    if not (np.all(np.isfinite(s)) and np.all(s > 0)):
        raise InputError("The 'spatial_log_sd' parameter of breakout_initiation_factor must "
                         f"be > 0. Got {spatial_log_sd!r}.", column="spatial_log_sd")
    factor = np.exp(s * float(stats.norm.ppf(q)))
    return float(factor) if factor.ndim == 0 else factor


@dataclasses.dataclass(frozen=True)
class ZoneCorrosionPrior:
    """Lognormal priors of one zone's initiation time and corrosion rate.

    Parameters
    ----------
    rate_median : float
        Median of i_corr [uA/cm2].
    rate_log_sd : float
        Standard deviation of ln i_corr [-].
    initiation_median_years : float
        Median of the zone's initiation time t_i since construction [yr].
    initiation_log_sd : float
        Standard deviation of ln t_i [-].
    source : str
    """

    rate_median: float
    rate_log_sd: float
    initiation_median_years: float
    initiation_log_sd: float
    source: str = ""

    def __post_init__(self):
        for name in ("rate_median", "rate_log_sd", "initiation_median_years",
                     "initiation_log_sd"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float, np.integer, np.floating))
                    and np.isfinite(value) and value > 0):
                raise InputError(f"The {name!r} parameter of ZoneCorrosionPrior must be a "
                                 f"number > 0. Got {value!r} instead.", column=name)

    @classmethod
    def from_exposure(cls, exposure, initiation_median_years, initiation_log_sd):
        """Rate prior from `CORROSION_RATE[exposure]`, initiation prior as given.

        The rate median is that of the table; the log-sd is the table's, at least
        `RATE_LOG_SD_MIN`.

        Parameters
        ----------
        exposure : str
            ``"exposed deck"``, ``"sheltered soffit"`` or ``"internal"``.
        initiation_median_years : float
            Median t_i [yr].
        initiation_log_sd : float
            Standard deviation of ln t_i [-].
        """
        spec = lookup(CORROSION_RATE, exposure, "CORROSION_RATE")
        dist = spec.to_scipy()
        table_log_sd = float(dist.kwds["s"])
        return cls(rate_median=float(dist.kwds["scale"]),
                   rate_log_sd=max(table_log_sd, RATE_LOG_SD_MIN),
                   initiation_median_years=float(initiation_median_years),
                   initiation_log_sd=float(initiation_log_sd),
                   source=f"i_corr: median of CORROSION_RATE[{exposure!r}] ({spec.source}), "
                          f"log-sd at least {RATE_LOG_SD_MIN} (DuraCrete 2000 CoV, from "
                          "memory)")

    @classmethod
    def from_initiation_draws(cls, exposure, initiation_draws_years):
        """Rate prior from the exposure class, t_i prior fitted to draws of t_i.

        The lognormal is matched to the 16th, 50th and 84th percentiles of the
        draws (e.g. `ChlorideFit.initiation_time_draws`), which tolerates a
        minority of +inf draws (never initiating); if the 84th percentile is
        infinite, the lower half alone gives the log-sd.

        Parameters
        ----------
        exposure : str
        initiation_draws_years : array_like
            Initiation times [yr], > 0; +inf allowed for fewer than half.
        """
        t = np.asarray(initiation_draws_years, dtype=float).ravel()
        if t.size < 10 or np.isnan(t).any() or (t <= 0).any():
            raise InputError("from_initiation_draws needs at least 10 initiation times > 0 "
                             "without NaN.", column="initiation_draws_years")
        q16, q50, q84 = np.quantile(t, [0.15865, 0.5, 0.84135])
        if not np.isfinite(q50):
            raise InputError("More than half of the initiation-time draws are infinite "
                             "(corrosion never starts): a lognormal prior cannot represent "
                             "that; give the prior directly.", column="initiation_draws_years")
        log_sd = (0.5 * (math.log(q84) - math.log(q16)) if np.isfinite(q84)
                  else math.log(q50) - math.log(q16))
        base = cls.from_exposure(exposure, q50, max(log_sd, 1e-3))
        return dataclasses.replace(base, source=base.source + "; t_i: fitted to posterior draws")

    def probability_active(self, age_years, spatial_log_sd=SPATIAL_LOG_SD):
        """Prior probability that a location is active at an age [-].

        P = Phi((ln t - m) / sqrt(s_ti^2 + s^2)), the closed form of
        E[Phi((ln t - ln t_i) / s)] with ln t_i ~ N(m, s_ti).
        """
        t = np.asarray(age_years, dtype=float)
        spread = math.hypot(self.initiation_log_sd, spatial_log_sd)
        return stats.norm.cdf((np.log(t) - math.log(self.initiation_median_years)) / spread)


@dataclasses.dataclass(frozen=True)
class SectionLossData:
    """Residual-area ratios measured at break-outs.

    Attributes
    ----------
    age_years : array_like (n,)
        Age at measurement [yr], > 0.
    residual_area_ratio : array_like (n,)
        A_res / A0 [-], in [0, 1.2] (above 1 only by measurement error).
    bar_diameter_mm : array_like (n,)
        Original (nominal) bar diameter D0 [mm], > 0.
    zone_index : array_like of int (n,)
        Position in ``zones`` [-].
    """

    age_years: object
    residual_area_ratio: object
    bar_diameter_mm: object
    zone_index: object


@dataclasses.dataclass(frozen=True)
class HalfCellData:
    """Half-cell potential readings.

    Attributes
    ----------
    age_years : array_like (n,)
        Age at the survey [yr], > 0.
    potential_mv_cse : array_like (n,)
        Reading vs Cu/CuSO4 [mV].
    zone_index : array_like of int (n,)
        Position in ``zones`` [-].
    x_m, y_m : array_like (n,), optional
        Grid coordinates of the readings [m]; NaN (or None) where not given: the
        survey is then placed on a square grid (`assess.updating.spatial`).
    """

    age_years: object
    potential_mv_cse: object
    zone_index: object
    x_m: object = None
    y_m: object = None


@dataclasses.dataclass(frozen=True)
class PreparedHalfCell:
    """Checked half-cell readings with their weights and likelihood parameters.

    Attributes
    ----------
    potential_mv_cse, age_years : ndarray (n,)
        [mV], [yr]
    zone_index : ndarray of int (n,)
    weights : ndarray (n,)
        n_eff / n of the reading's survey (zone and age) [-].
    log_f_active, log_f_passive : ndarray (n,)
        ln f(E | state) with the reading error included [ln(1/mV)].
    surveys : list of dict
        One per survey: zone, age [yr], n, n_eff, coordinates given.
    params : dict
        zone -> likelihood parameters used [mV].
    """

    potential_mv_cse: np.ndarray
    age_years: np.ndarray
    zone_index: np.ndarray
    weights: np.ndarray
    log_f_active: np.ndarray
    log_f_passive: np.ndarray
    surveys: list
    params: dict


def _zone_params(params, names):
    """Likelihood parameters per zone: one mapping for all, or a mapping per zone."""
    if params is None or "active_mean_mv" in params:
        return {z: params for z in names}
    missing = [z for z in names if z not in params]
    if missing:
        raise InputError(f"The half-cell likelihood parameters have no entry for zone(s) "
                         f"{missing}.", column="half_cell_params")
    return {z: params[z] for z in names}


def prepare_half_cell(data, names, *, params=None,
                      correlation_length_m=CORRELATION_LENGTH_M,
                      grid_spacing_m=DEFAULT_GRID_SPACING_M,
                      reading_error_mv=HALF_CELL_READING_ERROR_MV):
    """Check half-cell data and compute each reading's weight and state densities.

    Parameters
    ----------
    data : HalfCellData
    names : sequence of str
        Zone names.
    params : mapping, optional
        One set of f(E | state) parameters or one per zone [mV]; default
        `HALF_CELL_LIKELIHOOD`.
    correlation_length_m, grid_spacing_m : float
        See `assess.updating.spatial.reading_weights` [m].
    reading_error_mv : float
        sd of one reading's error, added in quadrature to the state sds [mV].
    """
    caller = "corrosion_model (half_cell)"
    e = check_observation_vector(data.potential_mv_cse, "potential_mv_cse", caller)
    t = check_observation_vector(data.age_years, "age_years", caller, low=0.0, low_open=True,
                                 size=e.size)
    _, idx = check_zone_index(data.zone_index, names, e.size, caller)
    coords = []
    for name in ("x_m", "y_m"):
        value = getattr(data, name, None)
        value = np.full(e.size, np.nan) if value is None else np.asarray(value, dtype=float)
        if value.shape != e.shape:
            raise InputError(f"HalfCellData.{name} must have one value per reading "
                             f"({e.size}); got {value.size}.", column=name)
        coords.append(value)
    groups = np.array([f"{i}|{a:.6f}" for i, a in zip(idx, t)])
    weights, summary = reading_weights(groups, coords[0], coords[1],
                                       correlation_length_m=correlation_length_m,
                                       grid_spacing_m=grid_spacing_m)
    zone_params = {z: with_reading_error(p, reading_error_mv)
                   for z, p in _zone_params(params, names).items()}
    log_f_active, log_f_passive = np.empty(e.size), np.empty(e.size)
    for i, zone in enumerate(names):
        here = idx == i
        log_f_active[here] = potential_log_likelihood(e[here], "active", zone_params[zone])
        log_f_passive[here] = potential_log_likelihood(e[here], "passive", zone_params[zone])
    surveys = []
    for label, entry in summary.items():
        zone_i, age = label.split("|")
        surveys.append({"zone": names[int(zone_i)], "age_years": float(age), **entry})
    return PreparedHalfCell(e, t, idx, weights, log_f_active, log_f_passive, surveys,
                            zone_params)


def half_cell_log_likelihood(prepared, log_initiation_time, spatial_log_sd):
    """Tempered half-cell log-likelihood per draw and zone (numpy) [-].

    sum over a zone's readings of w_i ln[Phi(z_i) f(E_i|a) + Phi(-z_i) f(E_i|p)],
    z_i = (ln t_i,age - ln t_i,zone) / s_zone: the same expression as the PyMC model.

    Parameters
    ----------
    prepared : PreparedHalfCell
    log_initiation_time : array_like (D, Z)
        Draws of ln t_i per zone [ln yr].
    spatial_log_sd : array_like (Z,)
        s per zone [-].

    Returns
    -------
    ndarray (D, Z)
    """
    from scipy import special

    log_ti = np.atleast_2d(np.asarray(log_initiation_time, dtype=float))
    s = np.asarray(spatial_log_sd, dtype=float)
    idx = prepared.zone_index
    z = (np.log(prepared.age_years)[None, :] - log_ti[:, idx]) / s[idx]
    terms = np.logaddexp(special.log_ndtr(z) + prepared.log_f_active,
                         special.log_ndtr(-z) + prepared.log_f_passive) * prepared.weights
    out = np.zeros((log_ti.shape[0], log_ti.shape[1]))
    for i in range(log_ti.shape[1]):  # loop over zones, vectorised over draws
        out[:, i] = terms[:, idx == i].sum(axis=1)
    return out


def residual_area_ratio_tensor(bar_diameter_mm, corrosion_rate_ua_cm2, age_years,
                               initiation_time_years):
    """Pytensor A/A0 under uniform Faraday corrosion [-].

    max(1 - 2 P / D0, 0)^2 with P = 0.0116 i_corr max(t - t_i, 0): the same as
    ``residual_area_ratio(D0, penetration_depth(i_corr, time_since_initiation(t,
    t_i)), rule="uniform")`` of `assess.deterioration.corrosion` for finite t_i.
    """
    import pytensor.tensor as pt

    propagation = pt.maximum(age_years - initiation_time_years, 0.0)
    penetration = FARADAY_MM_PER_YEAR_PER_UA_CM2 * corrosion_rate_ua_cm2 * propagation
    return pt.maximum(1.0 - 2.0 * penetration / bar_diameter_mm, 0.0) ** 2


def _check_priors(priors, names, caller):
    if not hasattr(priors, "keys"):
        raise InputError(f"The 'priors' parameter of {caller} must map each zone name to a "
                         f"ZoneCorrosionPrior. Got {type(priors).__name__}.", column="priors")
    missing = [z for z in names if z not in priors]
    if missing:
        raise InputError(f"The 'priors' parameter of {caller} has no entry for zone(s) "
                         f"{missing}.", column="priors")
    for z in names:
        if not isinstance(priors[z], ZoneCorrosionPrior):
            raise InputError(f"priors[{z!r}] of {caller} must be a ZoneCorrosionPrior. Got "
                             f"{type(priors[z]).__name__}.", column=f"priors.{z}")
    return [priors[z] for z in names]


def corrosion_model(zones, *, priors, section_loss=None, half_cell=None,
                    spatial_log_sd=SPATIAL_LOG_SD, ratio_sd=None,
                    ratio_sd_scale=RATIO_SD_SCALE, half_cell_params=None,
                    breakout_quantile=BREAKOUT_QUANTILE,
                    half_cell_correlation_length_m=CORRELATION_LENGTH_M,
                    half_cell_grid_spacing_m=DEFAULT_GRID_SPACING_M,
                    half_cell_reading_error_mv=HALF_CELL_READING_ERROR_MV):
    """PyMC model of initiation time and corrosion rate per zone (not sampled).

    Parameters
    ----------
    zones : sequence of str
    priors : mapping str -> ZoneCorrosionPrior
        One prior per zone.
    section_loss : SectionLossData, optional
    half_cell : HalfCellData, optional
    spatial_log_sd : float or mapping str -> float, default `SPATIAL_LOG_SD`
        Scatter s of ln(local t_i) about the zone median [-], one for all zones
        or one per zone.
    ratio_sd : float, optional
        Known measurement sd of A/A0 [-]; None estimates it (half-normal).
    ratio_sd_scale : float, default `RATIO_SD_SCALE`
        Scale of that half-normal prior [-].
    half_cell_params : mapping, optional
        f(E | state) parameters, one set or one per zone, default
        `HALF_CELL_LIKELIHOOD` [mV].
    breakout_quantile : float, default `BREAKOUT_QUANTILE`
        Quantile q of the spatial scatter of initiation at which the break-outs
        were opened [-]; the section loss is computed from the local initiation
        time t_i,z exp(s Phi^-1(q)).
    half_cell_correlation_length_m, half_cell_grid_spacing_m : float
        Correlation length and assumed grid spacing of the potential field [m]
        (`assess.updating.spatial`): each survey's readings are weighted by
        n_eff / n.
    half_cell_reading_error_mv : float, default `HALF_CELL_READING_ERROR_MV`
        sd of one reading's error [mV], added to the state sds in quadrature.

    Returns
    -------
    pymc.Model
        Free ``log_initiation_time`` and ``log_corrosion_rate`` (dims zone),
        ``ratio_measurement_sd`` when estimated; derived ``initiation_time``
        [yr] and ``corrosion_rate`` [uA/cm2].
    """
    import pymc as pm

    caller = "corrosion_model"
    names = check_zone_names(zones, caller)
    zone_priors = _check_priors(priors, names, caller)
    scatter = zone_spatial_log_sd(spatial_log_sd, names, caller)
    breakout_factor = breakout_initiation_factor(
        check_breakout_quantile(breakout_quantile, caller), scatter)
    if section_loss is not None and not isinstance(section_loss, SectionLossData):
        raise InputError(f"The 'section_loss' parameter of {caller} must be a SectionLossData.",
                         column="section_loss")
    if half_cell is not None and not isinstance(half_cell, HalfCellData):
        raise InputError(f"The 'half_cell' parameter of {caller} must be a HalfCellData.",
                         column="half_cell")

    with pm.Model(coords={"zone": names}) as model:
        log_ti = pm.Normal("log_initiation_time",
                           mu=np.log([p.initiation_median_years for p in zone_priors]),
                           sigma=[p.initiation_log_sd for p in zone_priors], dims="zone")
        log_rate = pm.Normal("log_corrosion_rate",
                             mu=np.log([p.rate_median for p in zone_priors]),
                             sigma=[p.rate_log_sd for p in zone_priors], dims="zone")
        t_i = pm.Deterministic("initiation_time", pm.math.exp(log_ti), dims="zone")
        rate = pm.Deterministic("corrosion_rate", pm.math.exp(log_rate), dims="zone")
        if section_loss is not None:
            _add_section_loss(pm, section_loss, names, t_i * breakout_factor, rate, ratio_sd,
                              ratio_sd_scale)
        if half_cell is not None:
            prepared = prepare_half_cell(
                half_cell, names, params=half_cell_params,
                correlation_length_m=half_cell_correlation_length_m,
                grid_spacing_m=half_cell_grid_spacing_m,
                reading_error_mv=half_cell_reading_error_mv)
            _add_half_cell(pm, prepared, log_ti, scatter)
    return model


def _add_section_loss(pm, data, names, t_i_breakout, rate, ratio_sd, ratio_sd_scale):
    caller = "corrosion_model (section_loss)"
    ratio = check_observation_vector(data.residual_area_ratio, "residual_area_ratio", caller,
                                     low=0.0)
    if (ratio > 1.2).any():
        i = int(np.flatnonzero(ratio > 1.2)[0])
        raise InputError(f"A residual area ratio above 1.2 is not a plausible measurement of "
                         f"A_res / A0. Position {i} holds {ratio[i]!r}.",
                         column="residual_area_ratio")
    t = check_observation_vector(data.age_years, "age_years", caller, low=0.0, low_open=True,
                                 size=ratio.size)
    d0 = check_observation_vector(data.bar_diameter_mm, "bar_diameter_mm", caller, low=0.0,
                                  low_open=True, size=ratio.size)
    _, idx = check_zone_index(data.zone_index, names, ratio.size, caller)
    if ratio_sd is None:
        sd = pm.HalfNormal("ratio_measurement_sd", sigma=ratio_sd_scale)
    elif np.isfinite(ratio_sd) and ratio_sd > 0:
        sd = float(ratio_sd)
    else:
        raise InputError(f"The 'ratio_sd' parameter of corrosion_model must be > 0. Got "
                         f"{ratio_sd!r}.", column="ratio_sd")
    predicted = residual_area_ratio_tensor(d0, rate[idx], t, t_i_breakout[idx])
    pm.Normal("residual_area_ratio", mu=predicted, sigma=sd, observed=ratio)


def _add_half_cell(pm, prepared, log_ti, scatter):
    idx = prepared.zone_index
    z = (np.log(prepared.age_years) - log_ti[idx]) / scatter[idx]
    standard = pm.Normal.dist(0.0, 1.0)
    log_mix = pm.math.logaddexp(pm.logcdf(standard, z) + prepared.log_f_active,
                                pm.logcdf(standard, -z) + prepared.log_f_passive)
    # tempered (power) likelihood: each survey counts as its n_eff independent readings
    pm.Potential("half_cell", pm.math.sum(prepared.weights * log_mix))


@dataclasses.dataclass(frozen=True)
class CorrosionFit:
    """Posterior of initiation time and corrosion rate per zone.

    Attributes
    ----------
    idata : arviz.InferenceData
        Draws of ``initiation_time`` [yr] and ``corrosion_rate`` [uA/cm2] by zone.
    gate : GateReport
    zones : tuple of str
    priors : dict of ZoneCorrosionPrior
    spatial_log_sd : dict
        zone -> scatter s of ln(local t_i) used in the model [-].
    seed : int
    breakout_quantile : float
        Quantile q of the spatial scatter at which break-outs were opened [-].
    half_cell : PreparedHalfCell or None
        The half-cell readings as the model used them (weights, densities).
    half_cell_calibrated : bool
        True when the half-cell likelihood was calibrated on the site.
    """

    idata: object
    gate: GateReport
    zones: tuple
    priors: dict
    spatial_log_sd: dict
    seed: int
    breakout_quantile: float = BREAKOUT_QUANTILE
    half_cell: object = None
    half_cell_calibrated: bool = False

    def half_cell_effect(self, zone):
        """How much the half-cell evidence moved the zone's initiation time.

        The posterior without the half-cell readings is obtained from the
        posterior draws by importance reweighting, w_d ~ exp(-l_hc(d)) with
        l_hc the (tempered) half-cell log-likelihood of draw d of the zone
        (e.g. Gelman et al., *Bayesian Data Analysis*, 3rd ed., 2013, sect.
        10.4, from memory): cheap, no second fit. The effective sample size
        (sum w)^2 / sum w^2 of the weights says how far to trust it.

        Returns
        -------
        dict or None
            None when the zone has no half-cell reading; else median and 5 / 95 %
            points of t_i [yr] with and without the readings, the shift of the
            median [yr], the readings n and their effective number n_eff [-],
            and the reweighting's effective sample size [-].
        """
        prepared = self.half_cell
        if prepared is None or zone not in self.zones:
            return None
        i = self.zones.index(zone)
        if not np.any(prepared.zone_index == i):
            return None
        t_i = self.zone_draws(zone)["initiation_time"]
        log_ti = np.zeros((t_i.size, len(self.zones)))
        log_ti[:, i] = np.log(t_i)
        scatter = np.array([self.spatial_log_sd[z] for z in self.zones])
        log_like = half_cell_log_likelihood(prepared, log_ti, scatter)[:, i]
        log_w = -log_like
        w = np.exp(log_w - log_w.max())
        w /= w.sum()
        order = np.argsort(t_i)
        cumulative = np.cumsum(w[order])
        without = np.interp([0.05, 0.5, 0.95], cumulative, t_i[order])
        with_ = np.quantile(t_i, [0.05, 0.5, 0.95])
        surveys = [s for s in prepared.surveys if s["zone"] == zone]
        return {
            "zone": zone,
            "with_half_cell_years": {"p05": float(with_[0]), "median": float(with_[1]),
                                     "p95": float(with_[2])},
            "without_half_cell_years": {"p05": float(without[0]), "median": float(without[1]),
                                        "p95": float(without[2])},
            "median_shift_years": float(with_[1] - without[1]),
            "readings": int(sum(s["n"] for s in surveys)),
            "effective_readings": float(sum(s["n_eff"] for s in surveys)),
            "reweighting_ess": float(1.0 / np.sum(w**2)),
            "calibrated": bool(self.half_cell_calibrated),
        }

    def zone_draws(self, zone):
        """Flattened draws of ``initiation_time`` [yr] and ``corrosion_rate`` [uA/cm2]."""
        if zone not in self.zones:
            raise InputError(f"Zone {zone!r} is not in this corrosion fit. Valid zones: "
                             f"{list(self.zones)}.", column="zone")
        post = self.idata.posterior
        return {"initiation_time": post["initiation_time"].sel(zone=zone).values.ravel(),
                "corrosion_rate": post["corrosion_rate"].sel(zone=zone).values.ravel()}

    def probability_active(self, zone, age_years):
        """Posterior probability that a location of the zone is active [-].

        Mean over the draws of Phi((ln t - ln t_i) / s), for each age.
        """
        t_i = self.zone_draws(zone)["initiation_time"]
        t = np.asarray(age_years, dtype=float)
        z = (np.log(t)[..., None] - np.log(t_i)) / self.spatial_log_sd[zone]
        return stats.norm.cdf(z).mean(axis=-1)


def fit_corrosion(zones, *, priors, seed, section_loss=None, half_cell=None,
                  spatial_log_sd=SPATIAL_LOG_SD, ratio_sd=None, ratio_sd_scale=RATIO_SD_SCALE,
                  half_cell_params=None, draws=1000, tune=1000, chains=4, target_accept=0.95,
                  breakout_quantile=BREAKOUT_QUANTILE, sampler="pymc",
                  half_cell_correlation_length_m=CORRELATION_LENGTH_M,
                  half_cell_grid_spacing_m=DEFAULT_GRID_SPACING_M,
                  half_cell_reading_error_mv=HALF_CELL_READING_ERROR_MV,
                  half_cell_calibrated=False):
    """Sample the corrosion model and pass the convergence gate.

    Parameters
    ----------
    zones, priors, section_loss, half_cell, spatial_log_sd, ratio_sd, ratio_sd_scale,
    half_cell_params, breakout_quantile, half_cell_correlation_length_m,
    half_cell_grid_spacing_m, half_cell_reading_error_mv
        See `corrosion_model`.
    half_cell_calibrated : bool, default False
        Whether ``half_cell_params`` were calibrated on the site (kept in the fit).
    seed : int or numpy.random.Generator
        Pass an int for reproducible output across calls.
    draws, tune, chains : int
    target_accept : float, default 0.95

    Returns
    -------
    CorrosionFit

    Raises
    ------
    ConvergenceError
        When the run fails the gate; the message names the variable.
    """
    seed = sampler_seed(seed, "fit_corrosion")
    model = corrosion_model(zones, priors=priors, section_loss=section_loss,
                            half_cell=half_cell, spatial_log_sd=spatial_log_sd,
                            ratio_sd=ratio_sd, ratio_sd_scale=ratio_sd_scale,
                            half_cell_params=half_cell_params,
                            breakout_quantile=breakout_quantile,
                            half_cell_correlation_length_m=half_cell_correlation_length_m,
                            half_cell_grid_spacing_m=half_cell_grid_spacing_m,
                            half_cell_reading_error_mv=half_cell_reading_error_mv)
    idata = sample_posterior(model, draws=draws, tune=tune, chains=chains, seed=seed,
                             target_accept=target_accept, sampler=sampler)
    names = [n for n in PARAMETER_NAMES if n in idata.posterior]
    gate = require_convergence(idata, names, what="corrosion initiation and rate")
    zone_names = tuple(str(z) for z in zones)
    return CorrosionFit(idata=idata, gate=gate, zones=zone_names,
                        priors={z: priors[z] for z in zone_names},
                        spatial_log_sd=dict(zip(zone_names, zone_spatial_log_sd(
                            spatial_log_sd, zone_names, "fit_corrosion").tolist())),
                        seed=seed,
                        breakout_quantile=float(breakout_quantile),
                        half_cell=None if half_cell is None else prepare_half_cell(
                            half_cell, list(zone_names), params=half_cell_params,
                            correlation_length_m=half_cell_correlation_length_m,
                            grid_spacing_m=half_cell_grid_spacing_m,
                            reading_error_mv=half_cell_reading_error_mv),
                        half_cell_calibrated=bool(half_cell_calibrated))
