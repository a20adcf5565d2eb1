"""Bayesian updating of carbonation rates from phenolphthalein depths.

Model per zone z (square-root-of-time law, Tuutti 1982; fib Bulletin 34 with
W(t) = 1 for sheltered concrete):

    ln k_z ~ N(ln k_median, s_k)                 (lognormal prior on the rate)
    x_obs  = max(0, k_z sqrt(t) + e),  e ~ N(0, sigma)

The scatter sigma [mm] lumps the reading error of the phenolphthalein front
and the spatial scatter of the front within the zone; it is either given
(known) or estimated with a half-normal prior, shared by the zones of a call.

Zero depths: a reading of 0 mm means the latent reading k sqrt(t) + e was at
or below 0, so it enters through P(k sqrt(t) + e <= 0) = Phi(-k sqrt(t) / sigma)
(left-censoring at 0, `pymc.Censored`), not through the normal density at 0.

References
----------
.. [1] K. Tuutti, *Corrosion of Steel in Concrete*, CBI Report 4:82, Swedish Cement
   and Concrete Research Institute, Stockholm, 1982.
.. [2] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B, carbonation model (from memory).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from assess.errors import InputError
from assess.updating.chloride import check_observation_vector, check_zone_index, sampler_seed
from assess.updating.classes import ClassBlocks
from assess.updating.gate import GateReport, require_convergence
from assess.updating.measurement_error import MEASUREMENT_ERRORS
from assess.updating.models import sample_posterior

CARBONATION_RATE_PRIOR = {
    "sheltered soffit": {"median": 4.0, "log_sd": 0.6},
    "internal": {"median": 5.0, "log_sd": 0.6},
    "exposed deck": {"median": 2.0, "log_sd": 0.8},
}
"""Lognormal prior of the carbonation rate k by exposure class [mm/sqrt(yr)]:
median and standard deviation of ln k.

Common practice (from memory): 3-6 mm/sqrt(yr) for sheltered C25-C35 Portland
cement concrete, more in dry indoor air, less where rain keeps the concrete wet.
A log-sd of 0.6 is a factor of about 1.8 at one sd."""

PARAMETER_NAMES = ("carbonation_rate", "measurement_sd")


@dataclasses.dataclass(frozen=True)
class CarbonationPriors:
    """Prior of the carbonation rate and of the scatter of the readings.

    Parameters
    ----------
    rate_median : float
        Median of the lognormal prior of k [mm/sqrt(yr)].
    rate_log_sd : float
        Standard deviation of ln k [-].
    measurement_sd_mm : float, optional
        Known scatter sigma of a reading about k sqrt(t) [mm]; None estimates it.
    measurement_sd_scale_mm : float, default 3
        Scale of the half-normal prior of sigma when estimated [mm].
    source : str
    reading_error_mm : float, default ``MEASUREMENT_ERRORS["carbonation"].sd`` (1 mm)
        Standard deviation of the reading error of one depth [mm]
        (`assess.updating.measurement_error`). sigma is the whole scatter of a
        reading about k sqrt(t); the model reports the scatter of the front
        without the reading error, ``front_scatter`` = sqrt(max(sigma^2 -
        error^2, 0)) (see `assess.updating.chloride.ChloridePriors` for why it is
        not a floor on sigma).
    """

    rate_median: float
    rate_log_sd: float
    measurement_sd_mm: float | None = None
    measurement_sd_scale_mm: float = 3.0
    source: str = ""
    reading_error_mm: float = MEASUREMENT_ERRORS["carbonation"].sd

    def __post_init__(self):
        for name in ("rate_median", "rate_log_sd", "measurement_sd_scale_mm"):
            _positive(getattr(self, name), name)
        if self.measurement_sd_mm is not None:
            _positive(self.measurement_sd_mm, "measurement_sd_mm")
        if not (np.isfinite(self.reading_error_mm) and self.reading_error_mm >= 0):
            raise InputError("The 'reading_error_mm' parameter of CarbonationPriors must be a "
                             f"number >= 0. Got {self.reading_error_mm!r} instead.",
                             column="reading_error_mm")

    @classmethod
    def from_exposure(cls, exposure="sheltered soffit", *, measurement_sd_mm=None):
        """Default prior for an exposure class of the site file (`CARBONATION_RATE_PRIOR`)."""
        if exposure not in CARBONATION_RATE_PRIOR:
            raise InputError(f"{exposure!r} is not an entry of CARBONATION_RATE_PRIOR. Valid "
                             f"names: {sorted(CARBONATION_RATE_PRIOR)}.", column="exposure")
        entry = CARBONATION_RATE_PRIOR[exposure]
        return cls(rate_median=entry["median"], rate_log_sd=entry["log_sd"],
                   measurement_sd_mm=measurement_sd_mm,
                   source=f"CARBONATION_RATE_PRIOR[{exposure!r}] (common practice, from memory)")


def _positive(value, name):
    if not (isinstance(value, (int, float, np.integer, np.floating)) and np.isfinite(value)
            and value > 0):
        raise InputError(f"The {name!r} parameter of CarbonationPriors must be a number > 0. "
                         f"Got {value!r} instead.", column=name)


def carbonation_model(depth_mm, age_years, zone_index, zones, *, priors, zone_class=None):
    """PyMC model of carbonation depths of several zones (not sampled).

    Parameters
    ----------
    depth_mm : array_like (n,)
        Measured carbonation depth [mm], >= 0 (0 allowed: left-censored).
    age_years : array_like (n,)
        Age of the concrete at the reading [yr], > 0.
    zone_index : array_like of int (n,)
        Position in ``zones`` of each reading [-].
    zones : sequence of str
    priors : CarbonationPriors or dict of str to CarbonationPriors
        One prior for all zones; or one per exposure class, with ``zone_class``.
    zone_class : sequence of str, optional
        Exposure class of each zone (with a dict of priors): the classes are
        independent blocks of one model, each with its own scatter (dims
        ``exposure``), see `assess.updating.classes`.

    Returns
    -------
    pymc.Model
        Free ``log_carbonation_rate`` (dims zone) and, unless known,
        ``measurement_sd`` [mm]; derived ``carbonation_rate`` [mm/sqrt(yr)].
    """
    import pymc as pm

    caller = "carbonation_model"
    x = check_observation_vector(depth_mm, "depth_mm", caller, low=0.0)
    if x.size == 0:
        raise InputError(f"{caller} needs at least one carbonation depth.", column="depth_mm")
    t = check_observation_vector(age_years, "age_years", caller, low=0.0, low_open=True,
                                 size=x.size)
    names, idx = check_zone_index(zone_index, zones, x.size, caller)
    blocks = ClassBlocks.build(priors, zone_class, names, idx, CarbonationPriors, caller)
    known = {p.measurement_sd_mm is not None for p in blocks.priors}
    if len(known) > 1:
        raise InputError(f"{caller}: 'measurement_sd_mm' must be given for every class or for "
                         "none.", column="measurement_sd_mm")
    vec = blocks.vec
    with pm.Model(coords={"zone": names, **blocks.coords}) as model:
        log_k = pm.Normal("log_carbonation_rate",
                          mu=blocks.at_zone(np.log(vec(lambda k, p: p.rate_median))),
                          sigma=blocks.at_zone(vec(lambda k, p: p.rate_log_sd)), dims="zone")
        k = pm.Deterministic("carbonation_rate", pm.math.exp(log_k), dims="zone")
        if known.pop():
            sigma = vec(lambda k, p: p.measurement_sd_mm)
        else:
            sigma = pm.HalfNormal("measurement_sd",
                                  sigma=vec(lambda k, p: p.measurement_sd_scale_mm),
                                  **blocks.dims)
        error = vec(lambda k, p: p.reading_error_mm)
        pm.Deterministic("front_scatter", pm.math.sqrt(pm.math.maximum(
            pm.math.sqr(sigma) - error**2, 0.0)), **blocks.dims)
        pm.Censored("carbonation_depth",
                    pm.Normal.dist(mu=k[idx] * np.sqrt(t), sigma=blocks.at_obs(sigma)),
                    lower=0.0, upper=None, observed=x)
    return model


@dataclasses.dataclass(frozen=True)
class CarbonationFit:
    """Posterior of the carbonation rates and its convergence report.

    Attributes
    ----------
    idata : arviz.InferenceData
        Draws of ``carbonation_rate`` [mm/sqrt(yr)] by zone (and
        ``measurement_sd`` [mm] when estimated).
    gate : GateReport
    zones : tuple of str
    priors : CarbonationPriors
    seed : int
    """

    idata: object
    gate: GateReport
    zones: tuple
    priors: CarbonationPriors
    seed: int

    def zone_draws(self, zone):
        """Flattened draws of k for one zone [mm/sqrt(yr)], key ``carbonation_rate``,
        and of the reading scatter [mm], key ``measurement_sd``."""
        if zone not in self.zones:
            raise InputError(f"Zone {zone!r} is not in this carbonation fit. Valid zones: "
                             f"{list(self.zones)}.", column="zone")
        post = self.idata.posterior
        k = post["carbonation_rate"].sel(zone=zone).values.ravel()
        if "measurement_sd" in post:
            sd = post["measurement_sd"].values.ravel()
        else:
            sd = np.full(k.size, float(self.priors.measurement_sd_mm))
        return {"carbonation_rate": k, "measurement_sd": sd}


def fit_carbonation(depth_mm, age_years, zone_index, zones, *, priors, seed, draws=1000,
                    tune=1000, chains=4, target_accept=0.95,
                    sampler="pymc", zone_class=None):
    """Sample the carbonation model and pass the convergence gate.

    Parameters
    ----------
    depth_mm, age_years, zone_index, zones, priors, zone_class
        See `carbonation_model`. With classes (a dict of priors), the fit holds the joint
        posterior; `assess.updating.classes.split_posterior` gives each class's.
    seed : int or numpy.random.Generator
        Pass an int for reproducible output across calls.
    draws, tune, chains : int
    target_accept : float, default 0.95

    Returns
    -------
    CarbonationFit

    Raises
    ------
    ConvergenceError
        When the run fails the gate; the message names the variable.
    """
    seed = sampler_seed(seed, "fit_carbonation")
    model = carbonation_model(depth_mm, age_years, zone_index, zones, priors=priors,
                              zone_class=zone_class)
    idata = sample_posterior(model, draws=draws, tune=tune, chains=chains, seed=seed,
                             target_accept=target_accept, sampler=sampler)
    names = [n for n in PARAMETER_NAMES if n in idata.posterior]
    gate = require_convergence(idata, names, what="carbonation rates")
    return CarbonationFit(idata=idata, gate=gate, zones=tuple(str(z) for z in zones),
                          priors=priors, seed=seed)
