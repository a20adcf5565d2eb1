"""Bayesian updating of chloride-ingress parameters from measured chloride profiles.

Each zone has its own surface chloride content C_S,z and apparent diffusion
coefficient D_z; the ageing exponent a, the initial (background) content C0
and the measurement scatter are shared by the zones of one call, which should
hold the zones of one concrete (one binder). The forward model is the fib
Bulletin 34 error-function solution of `assess.deterioration.chloride`
in its ``"average"`` convention:

    C(x, t) = C0 + (C_S - C0) erfc((x - dx) / (2 sqrt(D_app(t) t))),
    D_app(t) = D_ref (t_ref / t)^a,

with a multiplicative (lognormal) measurement error,
ln C_obs ~ N(ln C(x, t), sigma_meas).

Why the ageing exponent is shared: a is a property of the binder (fib 34
tabulates it by cement type), and only profiles taken at different ages
identify it; a zone is rarely sampled at more than one age, whereas the site
as a whole is, campaign after campaign. Sharing a lets every zone's history
inform it.

Parameterisation: the sampler works with ln D at the geometric-mean age of
the data t_c, not at t_ref. The prior ln D_ref ~ N(m, s) independent of a is
exactly ln D(t_c) | a ~ N(m + a ln(t_ref/t_c), s); since the data pin D(t_c)
directly, the posterior of (ln D(t_c), a) is nearly uncorrelated, whereas
(ln D_ref, a) would be almost perfectly correlated (t_ref = 28 d is far from
the inspection ages) and slow to sample. D_ref is reported as a derived value.

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B (error-function model, ageing law, D_RCM,0 table; from memory).
.. [2] J. M. Frederiksen, L. Mejlbro and L.-O. Nilsson, "Fick's 2nd law - complete
   solutions for chloride ingress into concrete," Lund University, Report
   TVBM-3146, 2008 (average versus instantaneous D).
"""

from __future__ import annotations

import dataclasses
import math
from numbers import Integral

import numpy as np

from assess.deterioration import chloride as chloride_forward
from assess.deterioration.defaults import (
    AGEING_EXPONENT,
    CRITICAL_CHLORIDE,
    M2_PER_S_TO_MM2_PER_YEAR,
    RAPID_MIGRATION_COEFFICIENT_CEM_I,
    REFERENCE_AGE_YEARS,
    REFERENCE_TEMPERATURE_K,
    TEMPERATURE_COEFFICIENT,
    DistributionSpec,
)
from assess.errors import InputError
from assess.updating.classes import ClassBlocks
from assess.updating.gate import GateReport, require_convergence
from assess.updating.measurement_error import MEASUREMENT_ERRORS
from assess.updating.models import sample_posterior

SURFACE_CHLORIDE_PRIOR = {
    "exposed deck": {"median": 2.0, "log_sd": 0.6},
    "sheltered soffit": {"median": 0.5, "log_sd": 0.8},
    "internal": {"median": 0.2, "log_sd": 0.8},
}
"""Lognormal prior of the surface chloride content C_S by exposure class
[% by mass of binder]: median and standard deviation of ln C_S.

Illustrative judgement (from memory): surface contents of 1-5 % by mass of
binder are typical of decks wetted by de-icing salt brine; soffits and
internal concrete receive chloride only by airborne spray or leaks. The wide
log-sd (a factor of about 2 at one sd) lets the profiles decide."""

CEMENT_ALIASES = {"CEM I": "CEM I", "fly ash": "fly ash", "CEM III": "GGBS", "GGBS": "GGBS"}
"""Cement-type names of the site file mapped to the keys of
`assess.deterioration.defaults.AGEING_EXPONENT`."""

CEM_III_RAPID_MIGRATION_M2_PER_S = 2.4e-12
"""D_RCM,0 of a CEM III/B concrete [m2/s]: middle of the 1.4-3.4e-12 m2/s quoted in
fib Bulletin 34 Annex B (from memory)."""

DIFFUSION_LOG_SD = 1.0
"""Standard deviation of ln D_ref in the default prior [-]: a factor e at one sd,
much wider than the CoV 0.2 of D_RCM,0 in fib 34, because the apparent
coefficient of an in-service deck also carries curing, cracking and the
transfer from the laboratory test (judgement)."""

PARAMETER_NAMES = ("surface_chloride", "diffusion_ref", "ageing_exponent",
                   "initial_chloride", "measurement_sd")


@dataclasses.dataclass(frozen=True)
class ChloridePriors:
    """Prior distributions of the chloride-ingress parameters.

    Parameters
    ----------
    surface_chloride_median : float
        Median of the lognormal prior of C_S [% by mass of binder].
    surface_chloride_log_sd : float
        Standard deviation of ln C_S [-].
    diffusion_ref_median : float
        Median of the lognormal prior of D_ref at ``age_ref_years``
        (``"average"`` convention) [mm2/yr].
    diffusion_log_sd : float
        Standard deviation of ln D_ref [-].
    ageing_exponent : DistributionSpec
        Beta prior of a on [0, 1] [-] (e.g. ``AGEING_EXPONENT["CEM I"]``).
    age_ref_years : float, default 0.0767
        Reference age of D_ref [yr] (fib 34 t0 = 28 d).
    initial_chloride_median : float, default 0.05
        Median of the lognormal prior of C0 [% by mass of binder].
    initial_chloride_log_sd : float, default 0.5
        Standard deviation of ln C0 [-]; 0 fixes C0 at the median.
    measurement_sd_scale : float, default 0.2
        Scale of the half-normal prior of the log measurement error [-]
        (0.2 is about 20 % scatter of a laboratory chloride value). sigma is the
        whole scatter of a value about the model: analysis error and spatial or
        model scatter.
    reading_error_log : float, default ``MEASUREMENT_ERRORS["chloride"].sd`` (0.10)
        Standard deviation of the analysis error of one value on ln C [-]
        (`assess.updating.measurement_error`). The model reports the scatter
        without it, ``chloride_scatter`` = sqrt(max(sigma^2 - error^2, 0)). It is
        not a floor on sigma: where the data scatter no more than the analysis
        error (the demo's profiles), a floor leaves the scatter's posterior at 0
        and the sampler fails its gate (tail ESS), and nothing downstream uses
        the scatter.
    delta_x_mm : float, default 0
        Convection-zone depth dx, fixed [mm]; increments shallower than dx are
        read as C_S.
    source : str
        Where the numbers come from.
    """

    surface_chloride_median: float
    surface_chloride_log_sd: float
    diffusion_ref_median: float
    diffusion_log_sd: float
    ageing_exponent: DistributionSpec
    age_ref_years: float = REFERENCE_AGE_YEARS
    initial_chloride_median: float = 0.05
    initial_chloride_log_sd: float = 0.5
    measurement_sd_scale: float = 0.2
    delta_x_mm: float = 0.0
    source: str = ""
    reading_error_log: float = MEASUREMENT_ERRORS["chloride"].sd

    def __post_init__(self):
        caller = "ChloridePriors"
        for name in ("surface_chloride_median", "surface_chloride_log_sd",
                     "diffusion_ref_median", "diffusion_log_sd", "age_ref_years",
                     "initial_chloride_median", "measurement_sd_scale"):
            _positive(getattr(self, name), name, caller)
        if not (np.isfinite(self.initial_chloride_log_sd) and self.initial_chloride_log_sd >= 0):
            raise InputError(f"The 'initial_chloride_log_sd' parameter of {caller} must be a "
                             f"number >= 0. Got {self.initial_chloride_log_sd!r} instead.",
                             column="initial_chloride_log_sd")
        if not (np.isfinite(self.reading_error_log) and self.reading_error_log >= 0):
            raise InputError(f"The 'reading_error_log' parameter of {caller} must be a number "
                             f">= 0. Got {self.reading_error_log!r} instead.",
                             column="reading_error_log")
        if not (np.isfinite(self.delta_x_mm) and self.delta_x_mm >= 0):
            raise InputError(f"The 'delta_x_mm' parameter of {caller} must be a number >= 0. "
                             f"Got {self.delta_x_mm!r} instead.", column="delta_x_mm")
        spec = self.ageing_exponent
        if not (isinstance(spec, DistributionSpec) and spec.kind == "beta"
                and spec.params["lower"] == 0.0 and spec.params["upper"] == 1.0):
            raise InputError(f"The 'ageing_exponent' parameter of {caller} must be a Beta "
                             "DistributionSpec on [0, 1], e.g. AGEING_EXPONENT['CEM I'].",
                             column="ageing_exponent")

    @classmethod
    def from_site(cls, exposure="exposed deck", cement_type="CEM I", water_cement_ratio=0.5,
                  *, mean_annual_temperature_c=None, diffusion_ref_median=None):
        """Default priors from the site file's exposure class and concrete.

        Parameters
        ----------
        exposure : str
            Key of `SURFACE_CHLORIDE_PRIOR`.
        cement_type : {"CEM I", "fly ash", "CEM III"}
            Binder; chooses the ageing-exponent prior (fib 34).
        water_cement_ratio : float
            w/c [-]; for CEM I the fib 34 D_RCM,0 is interpolated in
            `RAPID_MIGRATION_COEFFICIENT_CEM_I` (0.40-0.60).
        mean_annual_temperature_c : float, optional
            Annual mean temperature [degC]; multiplies D_RCM,0 by
            k_e = exp(b_e (1/293 - 1/T)) with b_e = 4800 K (fib 34, from memory).
        diffusion_ref_median : float, optional
            Median of D_ref at 28 d [mm2/yr]; required for fly-ash concrete,
            for which no table is held.
        """
        caller = "ChloridePriors.from_site"
        surface = _lookup(SURFACE_CHLORIDE_PRIOR, exposure, "SURFACE_CHLORIDE_PRIOR", "exposure")
        cement_key = _lookup(CEMENT_ALIASES, cement_type, "CEMENT_ALIASES", "cement_type")
        ageing = AGEING_EXPONENT[cement_key]
        if diffusion_ref_median is None:
            diffusion_ref_median = _fib34_rapid_migration(cement_key, water_cement_ratio,
                                                          caller) * M2_PER_S_TO_MM2_PER_YEAR
        d_source = "fib 34 D_RCM,0 table (from memory)"
        if mean_annual_temperature_c is not None:
            t_real = float(mean_annual_temperature_c) + 273.15
            b_e = TEMPERATURE_COEFFICIENT.params["mean"]
            diffusion_ref_median = diffusion_ref_median * math.exp(
                b_e * (1.0 / REFERENCE_TEMPERATURE_K - 1.0 / t_real))
            d_source += f" times k_e at {mean_annual_temperature_c} degC"
        return cls(surface_chloride_median=surface["median"],
                   surface_chloride_log_sd=surface["log_sd"],
                   diffusion_ref_median=float(diffusion_ref_median),
                   diffusion_log_sd=DIFFUSION_LOG_SD, ageing_exponent=ageing,
                   source=(f"C_S: SURFACE_CHLORIDE_PRIOR[{exposure!r}] (illustrative); "
                           f"D_ref: {d_source}, log-sd {DIFFUSION_LOG_SD}; "
                           f"a: {ageing.source}"))


def _lookup(table, name, table_name, column):
    if name not in table:
        raise InputError(f"{name!r} is not an entry of {table_name}. Valid names: "
                         f"{sorted(table)}. See assess.updating.chloride.{table_name}.",
                         column=column)
    return table[name]


def _fib34_rapid_migration(cement_key, water_cement_ratio, caller):
    if cement_key == "GGBS":
        return CEM_III_RAPID_MIGRATION_M2_PER_S
    if cement_key != "CEM I":
        raise InputError(f"{caller} holds no D_RCM,0 table for {cement_key!r} concrete; "
                         "give 'diffusion_ref_median' [mm2/yr] from a migration test or "
                         "the project specification.", column="diffusion_ref_median")
    table = RAPID_MIGRATION_COEFFICIENT_CEM_I
    ratios = np.array(sorted(table))
    wc = float(water_cement_ratio)
    if not ratios[0] <= wc <= ratios[-1]:
        raise InputError(f"The 'water_cement_ratio' parameter of {caller} must lie in "
                         f"[{ratios[0]}, {ratios[-1]}] (the fib 34 D_RCM,0 table). Got "
                         f"{wc!r} instead; give 'diffusion_ref_median' directly.",
                         column="water_cement_ratio")
    return float(np.interp(wc, ratios, [table[r] for r in ratios]))


def _positive(value, name, caller):
    if not (isinstance(value, (int, float, np.integer, np.floating)) and np.isfinite(value)
            and value > 0):
        raise InputError(f"The {name!r} parameter of {caller} must be a number > 0. "
                         f"Got {value!r} instead.", column=name)


def check_observation_vector(values, name, caller, *, low=-math.inf, low_open=False,
                             size=None):
    """1-D float array of observations, checked for NaN, range and length.

    Raises `InputError` naming the column and the first offending position.
    """
    arr = np.asarray(values, dtype=float)
    if arr.ndim != 1:
        raise InputError(f"The {name!r} parameter of {caller} must be a 1-D array. Got "
                         f"shape {arr.shape}.", column=name)
    if size is not None and arr.size != size:
        raise InputError(f"The {name!r} parameter of {caller} must have {size} values, one "
                         f"per observation. Got {arr.size}.", column=name)
    ok = np.isfinite(arr) & ((arr > low) if low_open else (arr >= low))
    if not ok.all():
        i = int(np.flatnonzero(~ok)[0])
        bound = f"> {low}" if low_open else f">= {low}"
        raise InputError(f"The {name!r} parameter of {caller} must be finite and {bound}. "
                         f"Position {i} holds {arr[i]!r}.", column=name)
    return arr


def check_zone_names(zones, caller):
    """Zone names as a list of distinct str; at least one."""
    names = [str(z) for z in zones]
    if not names or len(set(names)) != len(names):
        raise InputError(f"The 'zones' parameter of {caller} must list distinct zone names. "
                         f"Got {names!r}.", column="zones")
    return names


def check_zone_index(zone_index, zones, size, caller):
    """Checked zone names (list of str) and integer zone index of each observation."""
    names = check_zone_names(zones, caller)
    raw = np.asarray(zone_index)
    if raw.ndim != 1 or raw.size != size:
        raise InputError(f"The 'zone_index' parameter of {caller} must be a 1-D array with "
                         f"{size} values. Got shape {raw.shape}.", column="zone_index")
    if raw.size and not all(isinstance(v, Integral) for v in raw.tolist()):
        raise InputError(f"The 'zone_index' parameter of {caller} must hold integers "
                         "(positions in 'zones').", column="zone_index")
    idx = raw.astype(int)
    bad = (idx < 0) | (idx >= len(names))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError(f"The 'zone_index' parameter of {caller} must lie in "
                         f"[0, {len(names) - 1}]. Position {i} holds {idx[i]}.",
                         column="zone_index")
    return names, idx


def sampler_seed(seed, caller):
    """Integer seed for PyMC from an int or a numpy Generator."""
    if isinstance(seed, np.random.Generator):
        return int(seed.integers(0, 2**31 - 1))
    if isinstance(seed, bool) or not isinstance(seed, Integral) or seed < 0:
        raise InputError(f"The 'seed' parameter of {caller} must be a non-negative int or a "
                         f"numpy Generator. Got {seed!r} instead.", column="seed")
    return int(seed)


def chloride_content_tensor(depth_mm, age_years, surface_chloride, d_ref_mm2_per_year,
                            age_ref_years, ageing_exponent, initial_chloride=0.0,
                            delta_x_mm=0.0):
    """Pytensor form of `assess.deterioration.chloride.chloride_content` ("average").

    C(x, t) = C0 + (C_S - C0) erfc((x - dx) / (2 sqrt(D_ref t_ref^a t^(1-a)))),
    C_S where x <= dx. Arguments as in the numpy function (temperature factor
    folded into ``d_ref_mm2_per_year``); tensors or arrays, broadcast.

    Returns
    -------
    pytensor TensorVariable
        Chloride content [% by mass of binder].
    """
    import pytensor.tensor as pt

    x = pt.as_tensor_variable(depth_mm)
    t = pt.as_tensor_variable(age_years)
    c_s = pt.as_tensor_variable(surface_chloride)
    c_0 = pt.as_tensor_variable(initial_chloride)
    a = pt.as_tensor_variable(ageing_exponent)
    exposure = d_ref_mm2_per_year * age_ref_years**a * t ** (1.0 - a)
    depth_beyond = x - delta_x_mm
    inside = c_0 + (c_s - c_0) * pt.erfc(pt.maximum(depth_beyond, 0.0)
                                         / (2.0 * pt.sqrt(exposure)))
    return pt.switch(pt.le(depth_beyond, 0.0), c_s, inside)


def _beta_shapes(spec):
    dist = spec.to_scipy()
    return float(dist.args[0]), float(dist.args[1])


def chloride_model(depth_mm, age_years, chloride, zone_index, zones, *, priors, censored=None,
                   zone_class=None):
    """PyMC model of chloride profiles of several zones (not sampled).

    Parameters
    ----------
    depth_mm : array_like (n,)
        Mid-depth of each grinding increment [mm], >= 0.
    age_years : array_like (n,)
        Age of the concrete at sampling (since construction) [yr], > 0.
    chloride : array_like (n,)
        Measured chloride content [% by mass of binder], > 0 (the error is
        multiplicative); for a censored entry the detection limit.
    censored : array_like of bool (n,), optional
        True where the lab reported "below the detection limit": that entry
        contributes the probability P(ln C_obs <= ln limit) =
        Phi((ln limit - ln C(x, t)) / sigma_meas) (a left-censored, Tobit
        likelihood; Tobin 1958) instead of a density at the limit.
    zone_index : array_like of int (n,)
        Position in ``zones`` of each observation [-].
    zones : sequence of str
        Zone names, one concrete (binder) per call.
    priors : ChloridePriors or dict of str to ChloridePriors
        One prior for all zones; or one prior per exposure class (class name ->
        priors), with ``zone_class`` naming each zone's class.
    zone_class : sequence of str, optional
        Exposure class of each zone (with a dict of priors). The classes are
        independent blocks of one model: each has its own ageing exponent,
        initial content and scatter (dims ``exposure``), exactly as if each class
        were a model of its own (the joint posterior is the product of the
        classes' posteriors), but the site compiles and samples one model per
        deterioration kind instead of one per class.

    Returns
    -------
    pymc.Model
        Free variables ``log_surface_chloride`` and ``log_diffusion_data_age``
        (dims zone), ``ageing_exponent``, ``log_initial_chloride`` (unless
        fixed), ``measurement_sd``; derived ``surface_chloride`` [% binder],
        ``diffusion_ref`` [mm2/yr at t_ref] (dims zone), ``initial_chloride``.
        With classes, the class-level variables have dims ``exposure``.
    """
    import pymc as pm

    caller = "chloride_model"
    x = check_observation_vector(depth_mm, "depth_mm", caller, low=0.0)
    if x.size == 0:
        raise InputError(f"{caller} needs at least one chloride observation.",
                         column="chloride")
    t = check_observation_vector(age_years, "age_years", caller, low=0.0, low_open=True,
                                 size=x.size)
    c = check_observation_vector(chloride, "chloride", caller, low=0.0, low_open=True,
                                 size=x.size)
    names, idx = check_zone_index(zone_index, zones, x.size, caller)
    blocks = ClassBlocks.build(priors, zone_class, names, idx, ChloridePriors, caller)
    if censored is not None:
        censored = np.asarray(censored, dtype=bool)
        if censored.shape != c.shape:
            raise InputError(f"{caller}: 'censored' must have one entry per observation "
                             f"({c.size}), got shape {censored.shape}.", column="censored")

    vec, at_zone, at_obs = blocks.vec, blocks.at_zone, blocks.at_obs
    # geometric-mean age of each class's data (see the module notes)
    age_data = vec(lambda k, p: float(np.exp(np.mean(np.log(t[blocks.obs_class == k])))))
    log_shift = np.log(vec(lambda k, p: p.age_ref_years)) - np.log(age_data)
    shapes = [_beta_shapes(p.ageing_exponent) for p in blocks.priors]
    fixed_c0 = {p.initial_chloride_log_sd == 0 for p in blocks.priors}
    if len(fixed_c0) > 1:
        raise InputError(f"{caller}: 'initial_chloride_log_sd' must be 0 for every class or "
                         "for none.", column="initial_chloride_log_sd")
    cdims = blocks.dims
    with pm.Model(coords={"zone": names, **blocks.coords}) as model:
        a = pm.Beta("ageing_exponent", alpha=vec(lambda k, p: shapes[k][0]),
                    beta=vec(lambda k, p: shapes[k][1]), **cdims)
        log_cs = pm.Normal(
            "log_surface_chloride",
            mu=at_zone(np.log(vec(lambda k, p: p.surface_chloride_median))),
            sigma=at_zone(vec(lambda k, p: p.surface_chloride_log_sd)), dims="zone")
        log_d_data = pm.Normal(
            "log_diffusion_data_age",
            mu=at_zone(np.log(vec(lambda k, p: p.diffusion_ref_median)) + a * log_shift),
            sigma=at_zone(vec(lambda k, p: p.diffusion_log_sd)), dims="zone")
        if not fixed_c0.pop():
            log_c0 = pm.Normal("log_initial_chloride",
                               mu=np.log(vec(lambda k, p: p.initial_chloride_median)),
                               sigma=vec(lambda k, p: p.initial_chloride_log_sd), **cdims)
        else:
            log_c0 = np.log(vec(lambda k, p: p.initial_chloride_median))
        sigma = pm.HalfNormal("measurement_sd",
                              sigma=vec(lambda k, p: p.measurement_sd_scale), **cdims)
        c_s = pm.Deterministic("surface_chloride", pm.math.exp(log_cs), dims="zone")
        pm.Deterministic("diffusion_ref", pm.math.exp(log_d_data - at_zone(a * log_shift)),
                         dims="zone")
        c_0 = pm.Deterministic("initial_chloride", pm.math.exp(log_c0), **cdims)
        predicted = chloride_content_tensor(x, t, c_s[idx], pm.math.exp(log_d_data)[idx],
                                            at_obs(age_data), at_obs(a), at_obs(c_0),
                                            at_obs(vec(lambda k, p: p.delta_x_mm)))
        error = vec(lambda k, p: p.reading_error_log)
        pm.Deterministic("chloride_scatter", pm.math.sqrt(pm.math.maximum(
            sigma**2 - error**2, 0.0)), **cdims)
        mu = pm.math.log(predicted)
        sigma_obs = at_obs(sigma)
        if censored is not None and np.any(censored):
            lower = np.where(censored, np.log(c), -np.inf)
            pm.Censored("log_chloride", pm.Normal.dist(mu=mu, sigma=sigma_obs), lower=lower,
                        upper=None, observed=np.log(c))
        else:
            pm.Normal("log_chloride", mu=mu, sigma=sigma_obs, observed=np.log(c))
    return model


@dataclasses.dataclass(frozen=True)
class ChlorideFit:
    """Posterior of the chloride-ingress parameters and its convergence report.

    Attributes
    ----------
    idata : arviz.InferenceData
        Posterior draws (``surface_chloride`` [% binder] and ``diffusion_ref``
        [mm2/yr] by zone, ``ageing_exponent`` [-], ``initial_chloride``
        [% binder], ``measurement_sd`` [-]).
    gate : GateReport
        Diagnostics that passed the convergence gate.
    zones : tuple of str
    priors : ChloridePriors
    seed : int
        Seed given to the sampler.
    """

    idata: object
    gate: GateReport
    zones: tuple
    priors: ChloridePriors
    seed: int

    def zone_draws(self, zone):
        """Flattened posterior draws of one zone's parameters.

        Returns
        -------
        dict
            ``surface_chloride`` [% binder], ``diffusion_ref_mm2_per_year``
            (at ``age_ref_years``), ``age_ref_years`` (scalar) [yr],
            ``ageing_exponent`` [-], ``initial_chloride`` [% binder],
            ``delta_x_mm`` (scalar) [mm], ``measurement_sd`` [-]; arrays of
            length chains x draws.
        """
        if zone not in self.zones:
            raise InputError(f"Zone {zone!r} is not in this chloride fit. Valid zones: "
                             f"{list(self.zones)}.", column="zone")
        post = self.idata.posterior
        return {
            "surface_chloride": post["surface_chloride"].sel(zone=zone).values.ravel(),
            "diffusion_ref_mm2_per_year": post["diffusion_ref"].sel(zone=zone).values.ravel(),
            "age_ref_years": self.priors.age_ref_years,
            "ageing_exponent": post["ageing_exponent"].values.ravel(),
            "initial_chloride": post["initial_chloride"].values.ravel(),
            "delta_x_mm": self.priors.delta_x_mm,
            "measurement_sd": post["measurement_sd"].values.ravel(),
        }

    def initiation_time_draws(self, zone, cover_mm, critical_chloride=CRITICAL_CHLORIDE,
                              seed=0):
        """Corrosion initiation times of one zone from its posterior draws [yr].

        One initiation time per posterior draw, by the closed-form inverse
        `assess.deterioration.chloride.initiation_time` ("average" convention).

        Parameters
        ----------
        zone : str
        cover_mm : float or DistributionSpec
            Cover to the bars [mm]; a distribution is sampled once per draw.
        critical_chloride : float or DistributionSpec, default fib 34 Beta
            C_crit [% by mass of binder].
        seed : int or numpy.random.Generator
            Used only for sampling cover and C_crit.

        Returns
        -------
        ndarray
            Initiation time since construction [yr]; +inf where never reached.
        """
        draws = self.zone_draws(zone)
        n = draws["ageing_exponent"].size
        rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(
            sampler_seed(seed, "initiation_time_draws"))

        def sample(value):
            if isinstance(value, DistributionSpec):
                return value.sample(n, rng)
            return np.full(n, float(value))

        return chloride_forward.initiation_time(
            sample(cover_mm), sample(critical_chloride), draws["surface_chloride"],
            draws["diffusion_ref_mm2_per_year"], draws["age_ref_years"],
            draws["ageing_exponent"], draws["initial_chloride"], draws["delta_x_mm"],
            diffusion_convention="average")


def fit_chloride(depth_mm, age_years, chloride, zone_index, zones, *, priors, seed,
                 draws=1000, tune=1000, chains=4, target_accept=0.95, sampler="pymc",
                 censored=None, zone_class=None):
    """Sample the chloride model and pass the convergence gate.

    Parameters
    ----------
    depth_mm, age_years, chloride, zone_index, zones, priors, censored, zone_class
        See `chloride_model`. With classes (a dict of priors), the fit holds the joint
        posterior; `assess.updating.classes.split_posterior` gives each class's.
    seed : int or numpy.random.Generator
        Pass an int for reproducible output across calls.
    draws, tune, chains : int
        Kept draws and tuning steps per chain, number of chains [-].
    target_accept : float, default 0.95
        NUTS step-size target [-].

    Returns
    -------
    ChlorideFit

    Raises
    ------
    ConvergenceError
        When R-hat, ESS or divergences fail the gate; the message names the
        variable.
    """
    seed = sampler_seed(seed, "fit_chloride")
    model = chloride_model(depth_mm, age_years, chloride, zone_index, zones, priors=priors,
                           censored=censored, zone_class=zone_class)
    idata = sample_posterior(model, draws=draws, tune=tune, chains=chains, seed=seed,
                             target_accept=target_accept, sampler=sampler)
    names = [n for n in PARAMETER_NAMES if n in idata.posterior]
    gate = require_convergence(idata, names, what="chloride-ingress parameters")
    return ChlorideFit(idata=idata, gate=gate, zones=tuple(str(z) for z in zones),
                       priors=priors, seed=seed)
