"""Corrosion initiation time of each zone from the site's chloride and carbonation data.

The corrosion update (`assess.site.corrosion.update_corrosion`) needs a
prior of each zone's median initiation time t_i. This module chains the site's
own evidence into it, instead of the fib Bulletin 34 models with default
parameters:

1. Chloride profiles of every campaign (ledger kind ``chloride``, value in
   % by mass of binder, depth ``depth_mid`` of the grinding increment from the
   record's extra JSON, age at sampling from the site's year of construction)
   are fitted with `assess.updating.chloride.fit_chloride`, one model for all
   exposure classes with a block per class (`assess.updating.classes`): zones of
   one exposure class share the ageing exponent a.
   The apparent ageing of D depends on the binder and on the moisture regime
   of the exposure (DuraCrete 2000 tabulates its ageing factor by binder and
   environment, from memory), so zones of different classes get their own a.
2. Carbonation depths (ledger kind ``carbonation``) are fitted with
   `assess.updating.carbonation.fit_carbonation`, likewise one model with a block
   per exposure class (the rate prior depends on the class).
3. Per posterior draw, t_i = min(t_i,chloride, t_i,carbonation) at the zone's
   mean cover: depassivation by whichever front reaches the bar first (Tuutti
   1982). t_i,chloride is `ChlorideFit.initiation_time_draws` with the critical
   chloride content `assess.deterioration.defaults.CRITICAL_CHLORIDE` (fib 34
   Beta); t_i,carbonation = (c / k)^2. Where the chloride time is beyond any
   horizon (surface content near C_crit), carbonation governs by itself.
4. The zone's mean cover is the mean of the cover survey in the ledger, with
   its standard error s / sqrt(n) as the uncertainty of that mean; without a
   survey, the mean of the JCSS cover prior of the zone's members
   (`assess.site.knowledge.design_knowledge`) with its uncertainty.

A mechanism without data in a zone falls back to its fib 34 model with the
default parameters of `initiation_time_prior_draws`. Every fit passes the
convergence gate (`assess.updating.gate.require_convergence`), also when it is
read back from its cache file (`assess.updating.cache`), keyed by the SHA-256
hash of data, priors, sampler settings and code version.

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B (from memory).
.. [2] K. Tuutti, *Corrosion of Steel in Concrete*, CBI Report 4:82, Stockholm, 1982.
.. [3] DuraCrete, "Statistical quantification of the variables in the limit state
   functions," Brite EuRam BE95-1347, report R9, 2000 (from memory).
.. [4] JCSS, *Probabilistic Model Code*, Part 3.10 "Dimensions", 2001 (cover).
"""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np

from assess.deterioration import carbonation as carbonation_forward
from assess.deterioration import chloride as chloride_forward
from assess.deterioration.defaults import CRITICAL_CHLORIDE, DistributionSpec
from assess.errors import InputError
from assess.reliability.crude import resolve_seed
from assess.site.paths import has_ledger, ledger_path
from assess.site.settings import RunSettings
from assess.updating.cache import cached_posterior
from assess.updating.measurement_error import MEASUREMENT_ERRORS

CHLORIDE_UNIT = "% binder"
"""Unit of the chloride values the ledger holds (readers convert to it)."""

COVER_READING_SD_MM = MEASUREMENT_ERRORS["cover"].sd
"""Standard deviation of a cover-meter reading about the true cover [mm]: the one
value of `assess.updating.measurement_error.MEASUREMENT_ERRORS` (BS 1881-204, from
memory), also used by the materials update and `assess.site.worth_decision.CoverSurvey`.
Used to take the reading error out of the scatter of a survey."""


@dataclasses.dataclass(frozen=True)
class ZoneCover:
    """Mean cover of a zone, the uncertainty of that mean and the scatter of the cover.

    Attributes
    ----------
    zone : str
    mean_mm : float
        Estimated mean cover [mm].
    standard_error_mm : float
        Standard deviation of the estimate of the mean [mm].
    scatter_mm : float
        Standard deviation of the true cover over the zone [mm].
    n : int
        Number of cover readings (0 for the design value) [-].
    source : str
    """

    zone: str
    mean_mm: float
    standard_error_mm: float
    scatter_mm: float
    n: int
    source: str

    @property
    def log_scatter(self) -> float:
        """Standard deviation of ln(cover) over the zone, sqrt(ln(1 + CoV^2)) [-]."""
        return math.sqrt(math.log1p((self.scatter_mm / self.mean_mm) ** 2))

    def distribution(self) -> DistributionSpec:
        """Distribution of the zone's mean cover [mm].

        Lognormal with the estimate as mean and the standard error as sd: the
        same as a normal for the small CoV of a surveyed mean, and never <= 0.
        """
        if self.standard_error_mm > 0:
            return DistributionSpec(
                "lognormal",
                {"mean": self.mean_mm, "sd": self.standard_error_mm},
                "[mm]",
                self.source,
            )
        return DistributionSpec("deterministic", {"value": self.mean_mm}, "[mm]", self.source)


@dataclasses.dataclass(frozen=True)
class InitiationData:
    """Chloride profiles, carbonation depths and covers of a site, one value per entry.

    Attributes
    ----------
    chloride : dict
        ``depth_mm`` [mm], ``age_years`` [yr], ``chloride`` [% binder], ``zone``
        (arrays of equal length).
    carbonation : dict
        ``depth_mm`` [mm], ``age_years`` [yr], ``zone``.
    covers : dict
        zone -> `ZoneCover`.
    """

    chloride: dict
    carbonation: dict
    covers: dict


@dataclasses.dataclass(frozen=True)
class InitiationFits:
    """Posterior fits behind each zone's initiation time.

    Attributes
    ----------
    chloride : dict
        zone -> `ChlorideFit` of its exposure class (zones with profiles only).
    carbonation : dict
        zone -> `CarbonationFit` of its exposure class (zones with depths only).
    covers : dict
        zone -> `ZoneCover`.
    """

    chloride: dict
    carbonation: dict
    covers: dict


def _observations(site, kind, quantity, until_date, include_flagged):
    from inspection_io.ledger import Ledger
    from inspection_io.screening import usable_mask

    with Ledger(ledger_path(site.folder)) as ledger:
        frame = ledger.observations(kind=kind, until_date=until_date)
    frame = frame[(frame["quantity"] == quantity) & frame["zone"].isin(list(site.zones))]
    if len(frame):
        frame = frame[usable_mask(frame["flags"], include_flagged=set(include_flagged) or None)]
    return frame.reset_index(drop=True)


def _extra(row) -> dict:
    return json.loads(row.extra) if row.extra else {}


def initiation_data(site, until_date=None, include_flagged=()) -> InitiationData:
    """Read chloride profiles, carbonation depths and cover readings from the ledger.

    Flagged rows are left out unless included (`inspection_io.screening`). The
    cover of a zone is taken from all its cover readings (every face), and from
    the design covers where it has fewer than two.

    Raises
    ------
    InputError
        A chloride record without ``depth_mid``, in another unit than
        % binder, or with a value <= 0 (enter a value below the detection limit
        at the limit); the message names file, row and column.
    """
    from assess.site.dates import age_at

    empty = {"depth_mm": np.zeros(0), "age_years": np.zeros(0), "zone": np.zeros(0, str)}
    if not has_ledger(site.folder):
        return InitiationData(
            {**empty, "chloride": np.zeros(0)},
            dict(empty),
            {z: design_cover(site, z) for z in site.zones},
        )
    frame = _observations(site, "chloride", "chloride", until_date, include_flagged)
    depth = []
    for row in frame.itertuples():
        extra = _extra(row)
        if "depth_mid" not in extra:
            raise InputError(
                "chloride record has no increment mid-depth",
                file=row.file,
                row=row.source_row,
                column="depth_mid",
            )
        if row.unit != CHLORIDE_UNIT:
            raise InputError(
                f"chloride value in {row.unit!r}; expected {CHLORIDE_UNIT!r}",
                file=row.file,
                row=row.source_row,
                column="chloride",
            )
        if not (math.isfinite(row.value) and row.value > 0):
            raise InputError(
                f"chloride value {row.value!r} must be > 0 (for a reading below the "
                "detection limit give the limit and below_limit = yes)",
                file=row.file,
                row=row.source_row,
                column="chloride",
            )
        depth.append(float(extra["depth_mid"]))
    chloride = {
        "depth_mm": np.array(depth, dtype=float),
        "age_years": np.array([age_at(site, d) for d in frame["date"]], dtype=float),
        "chloride": frame["value"].to_numpy(dtype=float),
        "zone": frame["zone"].to_numpy(dtype=str),
    }
    # readings below the detection limit (the value is the limit): censored in the fit
    below = np.array([bool(_extra(row).get("below_limit")) for row in frame.itertuples()], bool)
    if below.any():
        chloride["censored"] = below
    frame = _observations(site, "carbonation", "carbonation_depth", until_date, include_flagged)
    carbonation = {
        "depth_mm": frame["value"].to_numpy(dtype=float),
        "age_years": np.array([age_at(site, d) for d in frame["date"]], dtype=float),
        "zone": frame["zone"].to_numpy(dtype=str),
    }
    frame = _observations(site, "cover", "cover", until_date, include_flagged)
    covers = {}
    for zone in site.zones:
        values = frame.loc[frame["zone"] == zone, "value"].to_numpy(dtype=float)
        if values.size >= 2:
            covers[zone] = surveyed_cover(zone, values)
        else:
            covers[zone] = design_cover(site, zone)
    return InitiationData(chloride, carbonation, covers)


def surveyed_cover(zone_id, readings, reading_sd_mm=COVER_READING_SD_MM) -> ZoneCover:
    """Mean, its standard error and the true scatter of a zone's cover from a survey.

    The standard error of the mean is s / sqrt(n) with s the sample sd of the
    readings (reading error included). The scatter of the true cover removes
    the reading error, sqrt(s^2 - e^2), but is kept at least e: a survey
    whose scatter does not exceed the reading error cannot show that the
    cover is uniform (judgement).

    Parameters
    ----------
    zone_id : str
    readings : array_like
        Cover readings [mm], at least 2.
    reading_sd_mm : float, default `COVER_READING_SD_MM`
        Standard deviation e of the reading error [mm].
    """
    values = np.asarray(readings, dtype=float)
    if values.size < 2 or not np.all(np.isfinite(values)) or np.any(values <= 0):
        raise InputError(
            f"zone {zone_id!r}: a cover survey needs at least 2 readings > 0 [mm].", column="cover"
        )
    sd = float(values.std(ddof=1))
    scatter = math.sqrt(max(sd * sd - reading_sd_mm**2, reading_sd_mm**2))
    return ZoneCover(
        zone=zone_id,
        mean_mm=float(values.mean()),
        standard_error_mm=sd / math.sqrt(values.size),
        scatter_mm=scatter,
        n=int(values.size),
        source=f"cover survey of zone {zone_id}: mean of {values.size} readings "
        f"(standard error s/sqrt(n)); scatter without a {reading_sd_mm:g} mm "
        "reading error",
    )


def design_cover(site, zone_id) -> ZoneCover:
    """Mean cover of a zone without a survey: the JCSS cover prior of its members.

    The zone's design knowledge is on ln c (JCSS PMC Part 3.10 deviations from the
    nominal covers, lognormal): mean exp(m + s^2/2) [mm], the prior uncertainty of
    the mean mean * s / sqrt(n') (delta method) and the scatter
    mean * sqrt(exp(s^2) - 1) [mm].
    """
    from assess.site.knowledge import design_knowledge

    # the cover prior is on ln c: mean and scatter of the lognormal with parameters (m, s)
    jcss = design_knowledge(site)[zone_id]["cover"].jcss
    mean_mm = math.exp(jcss["m"] + 0.5 * jcss["s"] ** 2)
    return ZoneCover(
        zone=zone_id,
        mean_mm=float(mean_mm),
        standard_error_mm=float(mean_mm * jcss["s"] / math.sqrt(jcss["n"])),
        scatter_mm=float(mean_mm * math.sqrt(math.expm1(jcss["s"] ** 2))),
        n=0,
        source=f"design cover of zone {zone_id} (nominal covers, JCSS PMC Part 3.10)",
    )


def exposure_groups(site, zones) -> dict:
    """Zones grouped by exposure class, in site order: exposure -> list of zone names."""
    groups: dict[str, list[str]] = {}
    for zone in site.zones:
        if zone in zones:
            groups.setdefault(site.zones[zone].exposure, []).append(zone)
    return groups


def chloride_priors(site, zones):
    """`ChloridePriors.from_site` for zones of one exposure class (mean of their temperatures)."""
    from assess.updating.chloride import ChloridePriors

    exposure = site.zones[zones[0]].exposure
    temperatures = [site.zones[z].mean_annual_temperature for z in zones]
    temperature = None if any(t is None for t in temperatures) else float(np.mean(temperatures))
    materials = site.materials
    # the site file may omit the binder: CEM I and w/c 0.5 are then assumed (common practice)
    return ChloridePriors.from_site(
        exposure,
        materials.cement_type or "CEM I",
        materials.water_cement_ratio or 0.5,
        mean_annual_temperature_c=temperature,
    )


def update_initiation(
    site,
    zones=None,
    *,
    settings: RunSettings | None = None,
    until_date=None,
    include_flagged=(),
    data=None,
    store=True,
) -> InitiationFits:
    """Chloride and carbonation posteriors of the zones: one model per kind, a block per class.

    Each exposure class keeps its own priors and class-level parameters (its own fit,
    `InitiationFits`), but the classes of a kind are blocks of one model, compiled and
    sampled once (`assess.updating.classes`).

    Parameters
    ----------
    site : inspection_io.site.Site
    zones : sequence of str, optional
        Zones to fit (default all); zones without data of a kind get no fit of it.
    settings : RunSettings, optional
        Seed and the ``"chloride"`` and ``"carbonation"`` sampler settings.
    until_date : date, optional
        Use only records up to this date.
    include_flagged : sequence of str
        Flags whose rows are used anyway.
    data : InitiationData, optional
        Default `initiation_data` of the site.
    store : bool
        Read and write the fits in ``results/posteriors`` under their hash
        (`assess.updating.cache`).

    Raises
    ------
    ConvergenceError
        When a fit fails the gate (also a stored one).
    """
    from assess.updating import carbonation as carbonation_update
    from assess.updating import chloride as chloride_update

    settings = settings or RunSettings()
    folder = site.folder if store else None
    data = data if data is not None else initiation_data(site, until_date, include_flagged)
    zones = list(site.zones) if zones is None else [z for z in site.zones if z in zones]
    groups = exposure_groups(site, zones)
    chloride_groups = {
        exposure: present
        for exposure, group in groups.items()
        if (present := [z for z in group if (data.chloride["zone"] == z).any()])
    }
    carbonation_groups = {
        exposure: present
        for exposure, group in groups.items()
        if (present := [z for z in group if (data.carbonation["zone"] == z).any()])
    }
    chloride_fits = _kind_fit(
        folder,
        "chloride",
        data.chloride,
        chloride_groups,
        {e: chloride_priors(site, present) for e, present in chloride_groups.items()},
        settings,
        chloride_update.fit_chloride,
        chloride_update.ChlorideFit,
        ("depth_mm", "age_years", "chloride"),
        chloride_update.PARAMETER_NAMES,
        "chloride-ingress parameters",
    )
    carbonation_fits = _kind_fit(
        folder,
        "carbonation",
        data.carbonation,
        carbonation_groups,
        {e: carbonation_update.CarbonationPriors.from_exposure(e) for e in carbonation_groups},
        settings,
        carbonation_update.fit_carbonation,
        carbonation_update.CarbonationFit,
        ("depth_mm", "age_years"),
        carbonation_update.PARAMETER_NAMES,
        "carbonation rates",
    )
    return InitiationFits(chloride_fits, carbonation_fits, {z: data.covers[z] for z in zones})


def _kind_fit(
    folder,
    kind,
    columns,
    groups,
    priors,
    settings,
    fitter,
    fit_class,
    names,
    parameter_names,
    what,
) -> dict:
    """One cached, gated fit of every exposure class of a kind; zone -> its class's fit.

    The classes are independent blocks of one model (`assess.updating.classes`), so the
    kind compiles and samples once; each class's fit is then taken out of the joint
    posterior (`split_posterior`) with its own priors and gate report.
    """
    from assess.updating.classes import split_posterior
    from assess.updating.gate import require_convergence

    if not groups:
        return {}
    present = [z for group in groups.values() for z in group]
    zone_class = [e for e, group in groups.items() for _ in group]
    joint = _group_fit(
        folder,
        kind,
        _subset(columns, present),
        present,
        priors,
        settings,
        fitter,
        fit_class,
        names,
        parameter_names,
        what,
        zone_class=zone_class,
    )
    fits = {}
    for position, (exposure, group) in enumerate(groups.items()):
        idata = split_posterior(joint.idata, position, group)
        gate = require_convergence(
            idata, [n for n in parameter_names if n in idata.posterior], what=what, fit=kind
        )
        fit = fit_class(
            idata=idata, gate=gate, zones=tuple(group), priors=priors[exposure], seed=joint.seed
        )
        fits.update({z: fit for z in group})
    return fits


def _group_fit(
    folder,
    kind,
    subset,
    present,
    priors,
    settings,
    fitter,
    fit_class,
    columns,
    parameter_names,
    what,
    zone_class=None,
):
    """One cached, gated fit of a group of zones (`assess.updating.cache.cached_posterior`)."""
    fit = settings.fit(kind)
    seed = settings.seed

    # optional per-reading arrays the fitter takes by keyword (chloride: censored)
    options = {k: subset[k] for k in ("censored",) if k in subset}
    if zone_class is not None:
        options["zone_class"] = zone_class

    def sample():
        return fitter(
            *(subset[c] for c in columns),
            subset["zone_index"],
            present,
            priors=priors,
            seed=seed,
            **options,
            **fit.sampler_options(),
        )

    def rebuild(idata, gate):
        return fit_class(
            idata=idata, gate=gate, zones=tuple(present), priors=priors, seed=int(seed)
        )

    payload = {"data": subset, "priors": priors, "zones": present, "seed": seed, "fit": fit}
    if zone_class is not None:
        payload["zone_class"] = zone_class
    return cached_posterior(
        folder,
        kind,
        payload,
        sample=sample,
        rebuild=rebuild,
        parameter_names=parameter_names,
        what=what,
        fit=kind,
    ).fit


def _subset(columns, zones):
    keep = np.isin(columns["zone"], zones)
    out = {k: np.asarray(v)[keep] for k, v in columns.items() if k != "zone"}
    position = {z: i for i, z in enumerate(zones)}
    out["zone_index"] = np.array([position[z] for z in columns["zone"][keep]], dtype=int)
    return out


def default_chloride_draws(site, zone_id, cover, rng) -> np.ndarray:
    """Chloride initiation times with the fib 34 default priors of the zone [yr].

    Error-function model ("average" D convention) with the priors of
    `ChloridePriors.from_site` for the zone's exposure, the site's binder and
    the zone's temperature, and C_crit from `CRITICAL_CHLORIDE`; one draw per
    entry of ``cover`` [mm]. +inf where chloride never reaches C_crit.
    """
    priors = chloride_priors(site, [zone_id])
    n = np.asarray(cover).size
    surface = _lognormal_draws(
        rng, priors.surface_chloride_median, priors.surface_chloride_log_sd, n
    )
    diffusion = _lognormal_draws(rng, priors.diffusion_ref_median, priors.diffusion_log_sd, n)
    ageing = priors.ageing_exponent.sample(n, rng)
    initial = _lognormal_draws(
        rng, priors.initial_chloride_median, priors.initial_chloride_log_sd, n
    )
    critical = CRITICAL_CHLORIDE.sample(n, rng)
    t = chloride_forward.initiation_time(
        cover,
        critical,
        surface,
        diffusion,
        priors.age_ref_years,
        ageing,
        np.minimum(initial, 0.5 * critical),
        priors.delta_x_mm,
        diffusion_convention="average",
    )
    return _never_as_inf(t)


def default_carbonation_draws(site, zone_id, cover, rng) -> np.ndarray:
    """Carbonation initiation times (c / k)^2 with k from `CARBONATION_RATE_PRIOR` [yr]."""
    from assess.updating.carbonation import CARBONATION_RATE_PRIOR

    rate_prior = CARBONATION_RATE_PRIOR[site.zones[zone_id].exposure]
    k = _lognormal_draws(rng, rate_prior["median"], rate_prior["log_sd"], np.asarray(cover).size)
    return carbonation_forward.initiation_time(cover, k)


def _lognormal_draws(rng, median, log_sd, n):
    return median * np.exp(log_sd * rng.standard_normal(n))


def _never_as_inf(t):
    """NaN initiation times (surface content at or below C_crit) mean 'never' [yr]."""
    t = np.asarray(t, dtype=float)
    return np.where(np.isnan(t), np.inf, t)


def initiation_time_draws(site, zone_id, fits: InitiationFits, *, n=4000, seed=0) -> dict:
    """Initiation times of a zone at its mean cover from the fitted chloride and carbonation models.

    Parameters
    ----------
    site : inspection_io.site.Site
    zone_id : str
    fits : InitiationFits
    n : int
        Number of draws where neither mechanism has a fit (fib 34 defaults) [-].
    seed : int or numpy.random.Generator
        Seed of the cover, C_crit and default-parameter draws.

    Returns
    -------
    dict
        ``initiation_time`` [yr] (earlier of the two per draw), ``chloride``
        and ``carbonation`` [yr] (+inf where never reached), ``sources``
        (str per mechanism) and ``cover_exponent`` [-], d ln t_i / d ln c of
        the mechanism that comes first: 2 / (1 - a) for chloride with the
        draw's ageing exponent a (Delta x = 0), 2 for carbonation.
    """
    rng, _ = resolve_seed(seed, "initiation_time_draws")
    cover = fits.covers[zone_id].distribution()
    chloride_fit = fits.chloride.get(zone_id)
    carbonation_fit = fits.carbonation.get(zone_id)
    if chloride_fit is not None:
        size = chloride_fit.zone_draws(zone_id)["ageing_exponent"].size
    elif carbonation_fit is not None:
        size = carbonation_fit.zone_draws(zone_id)["carbonation_rate"].size
    else:
        size = int(n)
    sources = {}
    if chloride_fit is not None:
        t_chloride = _never_as_inf(
            chloride_fit.initiation_time_draws(zone_id, cover, CRITICAL_CHLORIDE, rng)
        )
        ageing = chloride_fit.zone_draws(zone_id)["ageing_exponent"]
        sources["chloride"] = "chloride profiles of the site (fit_chloride, fib 34 C_crit)"
    else:
        ageing = np.full(size, chloride_priors(site, [zone_id]).ageing_exponent.to_scipy().mean())
        t_chloride = default_chloride_draws(site, zone_id, cover.sample(size, rng), rng)
        sources["chloride"] = "fib 34 chloride model with default parameters"
    if carbonation_fit is not None:
        k = carbonation_fit.zone_draws(zone_id)["carbonation_rate"]
        k = k if k.size == size else rng.choice(k, size)
        t_carbonation = carbonation_forward.initiation_time(cover.sample(size, rng), k)
        sources["carbonation"] = "carbonation depths of the site (fit_carbonation)"
    else:
        t_carbonation = default_carbonation_draws(site, zone_id, cover.sample(size, rng), rng)
        sources["carbonation"] = "square-root law with the default rate prior"
    carbonation_first = t_carbonation < t_chloride
    return {
        "initiation_time": np.minimum(t_chloride, t_carbonation),
        "chloride": t_chloride,
        "carbonation": t_carbonation,
        "sources": sources,
        "cover_exponent": np.where(carbonation_first, 2.0, 2.0 / (1.0 - ageing)),
    }


def spatial_log_sd(cover: ZoneCover, cover_exponent) -> float:
    """Scatter s of ln(local t_i) over a zone from the scatter of its cover [-].

    Local initiation times follow the local cover as t_i ~ c^e, e = 2 / (1 - a)
    for chloride (erfc model, Delta x = 0) and 2 for carbonation, so
    s = e sd(ln c), with e averaged over the posterior draws (weighting the
    two mechanisms by how often each comes first). This is the argument behind
    `assess.updating.corrosion.SPATIAL_LOG_SD`, with the zone's own cover
    scatter and mechanism; scatter of C_S, D or C_crit along the deck is not
    included (judgement: the cover dominates within one exposure zone).

    Parameters
    ----------
    cover : ZoneCover
    cover_exponent : array_like
        e per draw [-] (``initiation_time_draws(...)["cover_exponent"]``).
    """
    exponent = float(np.mean(np.asarray(cover_exponent, dtype=float)))
    return exponent * cover.log_scatter


def initiation_prior(site, zone_id, fits: InitiationFits, *, seed=0, n=4000):
    """`ZoneCorrosionPrior` of a zone with t_i from the site's chloride and carbonation fits.

    t_i: lognormal matched to the 16/50/84 % points of `initiation_time_draws`
    (`ZoneCorrosionPrior.from_initiation_draws`); i_corr: the exposure-class
    prior of `ZoneCorrosionPrior.from_exposure`.

    Returns
    -------
    prior : ZoneCorrosionPrior
    scatter : float
        Spatial scatter s of ln(local t_i) of the zone (`spatial_log_sd`) [-].
    """
    from assess.updating.corrosion import ZoneCorrosionPrior

    draws = initiation_time_draws(site, zone_id, fits, n=n, seed=seed)
    prior = ZoneCorrosionPrior.from_initiation_draws(
        site.zones[zone_id].exposure, draws["initiation_time"]
    )
    share = float(np.mean(draws["carbonation"] < draws["chloride"]))
    cover = fits.covers[zone_id]
    text = (
        f"t_i: earlier of chloride ({draws['sources']['chloride']}) and carbonation "
        f"({draws['sources']['carbonation']}) at mean cover {cover.mean_mm:.1f} mm; "
        f"carbonation first in {share:.0%} of draws"
    )
    prior = dataclasses.replace(
        prior, source=prior.source.replace("t_i: fitted to posterior draws", text)
    )
    return prior, spatial_log_sd(cover, draws["cover_exponent"])


__all__ = [
    "COVER_READING_SD_MM",
    "InitiationData",
    "InitiationFits",
    "ZoneCover",
    "chloride_priors",
    "default_carbonation_draws",
    "default_chloride_draws",
    "design_cover",
    "exposure_groups",
    "initiation_data",
    "initiation_prior",
    "initiation_time_draws",
    "spatial_log_sd",
    "surveyed_cover",
    "update_initiation",
]
