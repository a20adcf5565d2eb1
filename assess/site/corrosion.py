"""Per-zone distributions of corrosion initiation time t_i and corrosion rate i_corr.

The remaining-life projection (`assess.site.projection`) needs, for each zone,
the joint distribution of the zone's corrosion initiation time t_i [yr of age]
and corrosion current density after initiation i_corr [uA/cm2]. Three sources:

- **Posterior** (zones with break-out or half-cell data): MCMC draws of
  (t_i, i_corr) from `assess.updating.corrosion.fit_corrosion`, run on the
  site's section-loss and half-cell records by `update_corrosion`. Following
  decision 4 of the design notes the draws enter the reliability model through
  smooth marginals and a Gaussian copula, not as a histogram: each marginal is
  a lognormal fitted by maximum likelihood (mean and standard deviation of the
  log draws) and the copula correlation is the correlation of the log draws
  (for lognormal marginals the normal scores are the standardised logs).
- **Prior of the update**: t_i from the site's own chloride profiles and
  carbonation depths (`assess.site.initiation`: chloride and carbonation
  posteriors per exposure class, the earlier of the two fronts at the zone's
  mean measured cover), matched to a lognormal by its 16/50/84 % quantiles
  (`ZoneCorrosionPrior.from_initiation_draws`); i_corr from the exposure class
  (`ZoneCorrosionPrior.from_exposure`). The two are independent a priori.
- **Prior** (zones without break-out or half-cell data): the prior of the
  update where chloride or carbonation fits are given to
  `zone_corrosion_inputs`, else (or without a ledger) t_i from the fib
  Bulletin 34 initiation models with default parameters
  (chloride ingress with the priors of
  `assess.updating.chloride.ChloridePriors.from_site`, carbonation with
  `assess.updating.carbonation.CARBONATION_RATE_PRIOR`; the earlier of the
  two), sampled by Monte Carlo and matched to a lognormal in the same way.

Break-outs are taken where corrosion is expected first: the section-loss
likelihood uses the local initiation time at quantile q of the spatial scatter
(`assess.updating.corrosion.CorrosionModelSettings.breakout_quantile`, 0.1 by
default; 0.5 for break-outs placed at random).

Ages are counted from 1 July of the year of construction (the site file gives
the year only; common practice), in Julian years.

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B (from memory).
.. [2] P.-L. Liu and A. Der Kiureghian, "Multivariate distribution models with
   prescribed marginals and covariances," *Probabilistic Engineering Mechanics*
   1(2), 105-112, 1986 (Gaussian copula).
"""

from __future__ import annotations

import dataclasses
import json
import math
import warnings
from typing import Any

import numpy as np

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.reliability.crude import resolve_seed
from assess.site.dates import age_at, construction_date
from assess.site.paths import has_ledger, ledger_path
from assess.site.settings import RunSettings
from assess.updating.cache import cached_posterior
from assess.updating.corrosion import BREAKOUT_QUANTILE, SPATIAL_LOG_SD
from assess.updating.family_check import FAMILY_CHECK_FACTOR

INITIATION_NAME = "initiation_time"
RATE_NAME = "corrosion_rate"


@dataclasses.dataclass(frozen=True)
class CorrosionInputs:
    """Joint distribution of one zone's t_i and i_corr: lognormal marginals, Gaussian copula.

    Attributes
    ----------
    zone : str
    initiation_log_mean, initiation_log_sd : float
        Mean [ln yr] and standard deviation [-] of ln t_i.
    rate_log_mean, rate_log_sd : float
        Mean [ln(uA/cm2)] and standard deviation [-] of ln i_corr.
    log_correlation : float
        Correlation of (ln t_i, ln i_corr), the Gaussian-copula parameter [-].
    origin : str
        ``"posterior"`` or ``"prior"``.
    source : str
        Where the numbers come from.
    n_draws : int
        Number of MCMC draws fitted (0 for a prior) [-].
    half_cell_effect : dict or None
        How much the half-cell readings moved t_i
        (`assess.updating.corrosion.CorrosionFit.half_cell_effect`).
    spatial_log_sd : float
        Scatter s of ln(local t_i) about the zone median t_i [-].
    state_quantile : float
        Quantile q of that scatter at which the critical section (and the
        break-outs) are placed [-]; `local_factor` = exp(s Phi^-1(q)).
    """

    zone: str
    initiation_log_mean: float
    initiation_log_sd: float
    rate_log_mean: float
    rate_log_sd: float
    log_correlation: float
    origin: str
    source: str
    n_draws: int = 0
    half_cell_effect: dict | None = None
    spatial_log_sd: float = SPATIAL_LOG_SD
    state_quantile: float = BREAKOUT_QUANTILE

    def __post_init__(self):
        for name in ("initiation_log_sd", "rate_log_sd"):
            value = getattr(self, name)
            if not (math.isfinite(value) and value > 0):
                raise InputError(
                    f"The {name!r} of CorrosionInputs for zone {self.zone!r} must "
                    f"be > 0. Got {value!r}.",
                    column=name,
                )
        for name in ("initiation_log_mean", "rate_log_mean"):
            if not math.isfinite(getattr(self, name)):
                raise InputError(
                    f"The {name!r} of CorrosionInputs for zone {self.zone!r} must be finite.",
                    column=name,
                )
        if not -1.0 < self.log_correlation < 1.0:
            raise InputError(
                f"The copula correlation of zone {self.zone!r} must lie in (-1, 1). "
                f"Got {self.log_correlation!r}.",
                column="log_correlation",
            )

    @classmethod
    def from_draws(cls, zone, initiation_draws, rate_draws, source="posterior draws"):
        """Fit lognormal marginals and the Gaussian copula to paired draws.

        Parameters
        ----------
        zone : str
        initiation_draws : array_like
            t_i [yr], finite and > 0.
        rate_draws : array_like
            i_corr [uA/cm2], > 0, paired with ``initiation_draws``.
        source : str
        """
        t_i = np.asarray(initiation_draws, dtype=float).ravel()
        rate = np.asarray(rate_draws, dtype=float).ravel()
        if t_i.shape != rate.shape or t_i.size < 50:
            raise InputError(
                f"zone {zone!r}: need at least 50 paired draws of t_i and i_corr, "
                f"got {t_i.size} and {rate.size}.",
                column="draws",
            )
        if not (
            np.all(np.isfinite(t_i))
            and np.all(t_i > 0)
            and np.all(np.isfinite(rate))
            and np.all(rate > 0)
        ):
            raise InputError(
                f"zone {zone!r}: draws of t_i and i_corr must be finite and > 0.", column="draws"
            )
        log_t, log_r = np.log(t_i), np.log(rate)
        rho = float(np.corrcoef(log_t, log_r)[0, 1])
        return cls(
            zone=str(zone),
            initiation_log_mean=float(log_t.mean()),
            initiation_log_sd=float(log_t.std(ddof=1)),
            rate_log_mean=float(log_r.mean()),
            rate_log_sd=float(log_r.std(ddof=1)),
            log_correlation=float(np.clip(rho, -0.999, 0.999)),
            origin="posterior",
            source=source,
            n_draws=int(t_i.size),
        )

    @classmethod
    def from_prior(cls, zone, prior):
        """From an `assess.updating.corrosion.ZoneCorrosionPrior` (independent t_i, i_corr)."""
        return cls(
            zone=str(zone),
            initiation_log_mean=math.log(prior.initiation_median_years),
            initiation_log_sd=float(prior.initiation_log_sd),
            rate_log_mean=math.log(prior.rate_median),
            rate_log_sd=float(prior.rate_log_sd),
            log_correlation=0.0,
            origin="prior",
            source=prior.source,
        )

    @property
    def local_factor(self) -> float:
        """t_i,q / t_i = exp(s Phi^-1(q)): local initiation time of the critical section [-].

        The same quantile as the break-outs (`breakout_initiation_factor`), so that
        the present state and the projection use one initiation time.
        """
        from assess.updating.corrosion import breakout_initiation_factor

        return float(breakout_initiation_factor(self.state_quantile, self.spatial_log_sd))

    @property
    def initiation_median(self) -> float:
        """Median of t_i [yr]."""
        return math.exp(self.initiation_log_mean)

    @property
    def rate_median(self) -> float:
        """Median of i_corr [uA/cm2]."""
        return math.exp(self.rate_log_mean)

    def add_to_model(self, model, initiation_name=INITIATION_NAME, rate_name=RATE_NAME) -> None:
        """Add t_i (lognormal root) and i_corr (lognormal given t_i) to a `ProbabilisticModel`.

        The Gaussian copula is written in Rosenblatt form:
        ln i_corr | t_i ~ N(m_r + rho s_r (ln t_i - m_t) / s_t, s_r^2 (1 - rho^2)),
        which gives exactly the lognormal marginals and the copula correlation rho.
        """
        model.add(
            initiation_name,
            make_distribution(
                "lognormal",
                mu_ln=self.initiation_log_mean,
                sigma_ln=self.initiation_log_sd,
                name=initiation_name,
            ),
        )
        rho = self.log_correlation
        conditional_sd = self.rate_log_sd * math.sqrt(1.0 - rho * rho)

        def rate_params(values):
            score = (
                np.log(values[initiation_name]) - self.initiation_log_mean
            ) / self.initiation_log_sd
            return {
                "mu_ln": self.rate_log_mean + rho * self.rate_log_sd * score,
                "sigma_ln": np.full_like(score, conditional_sd),
            }

        model.add_conditional(rate_name, "lognormal", [initiation_name], rate_params)

    def sample(self, n: int, seed=None) -> dict:
        """Draw n pairs {"initiation_time" [yr], "corrosion_rate" [uA/cm2]}."""
        rng, _ = resolve_seed(seed, "CorrosionInputs.sample")
        z1, z2 = rng.standard_normal((2, int(n)))
        rho = self.log_correlation
        z2 = rho * z1 + math.sqrt(1.0 - rho * rho) * z2
        return {
            INITIATION_NAME: np.exp(self.initiation_log_mean + self.initiation_log_sd * z1),
            RATE_NAME: np.exp(self.rate_log_mean + self.rate_log_sd * z2),
        }

    def to_dict(self) -> dict:
        out = dataclasses.asdict(self)
        out["initiation_median_years"] = self.initiation_median
        out["rate_median_ua_cm2"] = self.rate_median
        out["local_factor"] = self.local_factor
        return out


def initiation_time_prior_draws(site, zone_id, n=20_000, seed=0) -> np.ndarray:
    """Prior initiation times of a zone from the fib 34 models with default parameters [yr].

    Chloride ingress (error function, "average" D convention) with the priors of
    `ChloridePriors.from_site` for the zone's exposure, the site's cement and
    w/c, and the zone's mean annual temperature; carbonation t_i = (c / k)^2 with
    k from `CARBONATION_RATE_PRIOR`; the earlier of the two per draw. Cover: the
    Student-t predictive of ln c of the zone's design cover (`design_knowledge`),
    at least 5 mm; C_crit: fib 34 Beta.

    Returns
    -------
    ndarray (n,)
        Initiation times since construction [yr]; +inf where neither process
        reaches the bar.
    """
    from assess.site.initiation import default_carbonation_draws, default_chloride_draws
    from assess.site.knowledge import design_knowledge

    rng, _ = resolve_seed(seed, "initiation_time_prior_draws")
    log_cover = design_knowledge(site)[zone_id]["cover"].predictive().rvs(size=n, random_state=rng)
    cover = np.exp(log_cover)  # the cover population is on ln c [ln mm]
    cover = np.maximum(cover, 5.0)
    t_chloride = default_chloride_draws(site, zone_id, cover, rng)
    return np.minimum(t_chloride, default_carbonation_draws(site, zone_id, cover, rng))


def prior_corrosion(site, zone_id, *, n=20_000, seed=0):
    """`ZoneCorrosionPrior` of a zone: fib 34 initiation-model t_i and exposure-class i_corr."""
    from assess.updating.corrosion import ZoneCorrosionPrior

    draws = initiation_time_prior_draws(site, zone_id, n=n, seed=seed)
    prior = ZoneCorrosionPrior.from_initiation_draws(site.zones[zone_id].exposure, draws)
    return dataclasses.replace(
        prior,
        source=prior.source.replace(
            "fitted to posterior draws",
            "fib 34 chloride/carbonation initiation with default parameters (prior)",
        ),
    )


@dataclasses.dataclass(frozen=True)
class CorrosionEvidence:
    """Section-loss and half-cell records of a site, ready for `fit_corrosion`.

    Attributes
    ----------
    zones : tuple of str
        Zones with at least one record, in site order.
    section_loss : SectionLossData or None
    half_cell : HalfCellData or None
    counts : dict
        zone -> {"section_loss": n, "half_cell": n}.
    """

    zones: tuple
    section_loss: Any
    half_cell: Any
    counts: dict


def corrosion_evidence(site, until_date=None, include_flagged=()) -> CorrosionEvidence:
    """Read the site's break-out ratios and half-cell potentials from its ledger.

    Flagged rows are left out unless included (`inspection_io.screening`).
    Break-out rows need the original bar diameter in their record
    (``bar_diameter`` [mm]); half-cell readings are potentials vs CSE [mV].
    """
    from assess.updating.corrosion import HalfCellData, SectionLossData
    from inspection_io.ledger import Ledger
    from inspection_io.screening import usable_mask

    zones = list(site.zones)
    counts = {z: {"section_loss": 0, "half_cell": 0} for z in zones}
    if not has_ledger(site.folder):
        return CorrosionEvidence((), None, None, counts)
    with Ledger(ledger_path(site.folder)) as ledger:
        loss = ledger.observations(kind="section_loss", until_date=until_date)
        cells = ledger.observations(kind="halfcell", until_date=until_date)
    frames = {}
    for key, frame, quantity in (
        ("section_loss", loss, "residual_area_ratio"),
        ("half_cell", cells, "potential"),
    ):
        frame = frame[(frame["quantity"] == quantity) & frame["zone"].isin(zones)]
        if len(frame):
            frame = frame[usable_mask(frame["flags"], include_flagged=set(include_flagged) or None)]
        frames[key] = frame.reset_index(drop=True)
        for zone, n in frame.groupby("zone").size().items():
            counts[zone][key] = int(n)
    used = tuple(z for z in zones if counts[z]["section_loss"] or counts[z]["half_cell"])
    index = {z: i for i, z in enumerate(used)}
    section_loss = half_cell = None
    frame = frames["section_loss"]
    if len(frame):
        diameters = []
        for row in frame.itertuples():
            extra = json.loads(row.extra) if row.extra else {}
            if "bar_diameter" not in extra:
                raise InputError(
                    "section-loss record has no original bar diameter",
                    file=row.file,
                    row=row.source_row,
                    column="bar_diameter",
                )
            diameters.append(float(extra["bar_diameter"]))
        section_loss = SectionLossData(
            age_years=np.array([age_at(site, d) for d in frame["date"]]),
            residual_area_ratio=frame["value"].to_numpy(dtype=float),
            bar_diameter_mm=np.array(diameters),
            zone_index=frame["zone"].map(index).to_numpy(dtype=int),
        )
    frame = frames["half_cell"]
    if len(frame):
        extras = [json.loads(text) if text else {} for text in frame["extra"]]
        half_cell = HalfCellData(
            age_years=np.array([age_at(site, d) for d in frame["date"]]),
            potential_mv_cse=frame["value"].to_numpy(dtype=float),
            zone_index=frame["zone"].map(index).to_numpy(dtype=int),
            x_m=np.array([float(e.get("x_m", np.nan)) for e in extras]),
            y_m=np.array([float(e.get("y_m", np.nan)) for e in extras]),
        )
    return CorrosionEvidence(used, section_loss, half_cell, counts)


def update_corrosion(
    site,
    *,
    settings: RunSettings | None = None,
    until_date=None,
    evidence=None,
    prior_samples=20_000,
    store=True,
    model=None,
    initiation=None,
):
    """Posterior of (t_i, i_corr) per zone from the site's break-outs and half-cell surveys.

    Runs `assess.updating.corrosion.fit_corrosion` (PyMC, convergence-gated)
    on the zones that have records. The t_i prior of each zone comes from the
    site's chloride profiles and carbonation depths (`assess.site.initiation`,
    fitted and cached the same way); i_corr from the exposure class. With
    ``store`` the fit goes through `assess.updating.cache` (content hash, stored
    InferenceData, the same gate for a stored fit).

    Parameters
    ----------
    site : inspection_io.site.Site
    settings : RunSettings, optional
        Seed and the ``"corrosion"`` (and chloride, carbonation) sampler settings.
    until_date : date, optional
        Use only records up to this date.
    evidence : CorrosionEvidence, optional
        Default `corrosion_evidence` of the site.
    prior_samples : int
        Monte Carlo draws of t_i for a zone without chloride or carbonation fit [-].
    store : bool
        Read and write the fits in ``results/posteriors``.
    model : CorrosionModelSettings, optional
        Break-out quantile q and spatial scatter s; default q = 0.1 (break-outs
        opened where corrosion is expected first) and s per zone from its cover
        scatter and initiation mechanism (`assess.site.initiation.spatial_log_sd`).
    initiation : InitiationFits, optional
        Chloride and carbonation fits; default `update_initiation` of the
        zones with records.

    Returns
    -------
    CorrosionFit or None
        None when no zone has section-loss or half-cell records.

    Raises
    ------
    ConvergenceError
        When an MCMC run (chloride, carbonation or corrosion) fails the gate.
    """
    from assess.site.initiation import initiation_prior, update_initiation
    from assess.updating.corrosion import (
        HALF_CELL_READING_ERROR_MV,
        PARAMETER_NAMES,
        CorrosionFit,
        CorrosionModelSettings,
        fit_corrosion,
        prepare_half_cell,
    )

    settings = settings or RunSettings()
    seed = settings.seed
    model = CorrosionModelSettings() if model is None else model
    if not isinstance(model, CorrosionModelSettings):
        raise InputError(
            "The 'model' parameter of update_corrosion must be a "
            f"CorrosionModelSettings. Got {type(model).__name__}.",
            column="model",
        )
    evidence = evidence if evidence is not None else corrosion_evidence(site, until_date)
    if not evidence.zones:
        return None
    if initiation is None:
        initiation = update_initiation(
            site, evidence.zones, settings=settings, until_date=until_date, store=store
        )
    priors, scatter = {}, {}
    for i, zone in enumerate(evidence.zones):
        priors[zone], scatter[zone] = initiation_prior(
            site, zone, initiation, seed=np.random.default_rng([int(seed), i]), n=prior_samples
        )
    if model.spatial_log_sd is not None:
        scatter = {z: model.spatial_log_sd for z in evidence.zones}
    sources = None
    if model.half_cell_params is None:
        # per zone: the site file's calibration, else the published ranges of its condition
        from assess.site.half_cell_likelihood import zone_half_cell_likelihood

        likelihood = zone_half_cell_likelihood(site, evidence.zones)
        read = [z for z in evidence.zones if evidence.counts.get(z, {}).get("half_cell")]
        model = dataclasses.replace(
            model,
            half_cell_params={z: dict(p) for z, p in likelihood.params.items()},
            half_cell_calibrated=likelihood.all_calibrated(read),
        )
        sources = likelihood.sources
    fit = settings.fit("corrosion")

    def listed(data):
        if data is None:
            return None
        return {
            f.name: np.asarray(getattr(data, f.name), dtype=float) for f in dataclasses.fields(data)
        }

    payload = {
        "zones": list(evidence.zones),
        "section_loss": listed(evidence.section_loss),
        "half_cell": listed(evidence.half_cell),
        "priors": priors,
        "seed": seed,
        "fit": fit,
        "breakout_quantile": model.breakout_quantile,
        "spatial_log_sd": scatter,
        "half_cell_model": {
            "correlation_length_m": model.half_cell_correlation_length_m,
            "grid_spacing_m": model.half_cell_grid_spacing_m,
            "reading_error_mv": HALF_CELL_READING_ERROR_MV,
            "params": model.half_cell_params,
        },
    }
    half_cell_options = {
        "half_cell_params": model.half_cell_params,
        "half_cell_correlation_length_m": model.half_cell_correlation_length_m,
        "half_cell_grid_spacing_m": model.half_cell_grid_spacing_m,
        "half_cell_reading_error_mv": HALF_CELL_READING_ERROR_MV,
    }

    def sample():
        return fit_corrosion(
            list(evidence.zones),
            priors=priors,
            seed=seed,
            section_loss=evidence.section_loss,
            half_cell=evidence.half_cell,
            spatial_log_sd=scatter,
            breakout_quantile=model.breakout_quantile,
            half_cell_calibrated=model.half_cell_calibrated,
            **half_cell_options,
            **fit.sampler_options(),
        )

    def rebuild(idata, gate):
        return CorrosionFit(
            idata=idata,
            gate=gate,
            zones=tuple(evidence.zones),
            priors=priors,
            spatial_log_sd=scatter,
            seed=int(seed),
            breakout_quantile=model.breakout_quantile,
            half_cell=None
            if evidence.half_cell is None
            else prepare_half_cell(
                evidence.half_cell,
                list(evidence.zones),
                params=model.half_cell_params,
                correlation_length_m=model.half_cell_correlation_length_m,
                grid_spacing_m=model.half_cell_grid_spacing_m,
                reading_error_mv=HALF_CELL_READING_ERROR_MV,
            ),
            half_cell_calibrated=model.half_cell_calibrated,
        )

    cached = cached_posterior(
        site.folder if store else None,
        "corrosion",
        payload,
        sample=sample,
        rebuild=rebuild,
        parameter_names=PARAMETER_NAMES,
        what="corrosion initiation and rate",
        fit="corrosion",
    )
    warn_half_cell(cached.fit, sources)
    return cached.fit


def warn_half_cell(fit, sources=None) -> None:
    """Warn while the half-cell likelihood is not site-calibrated; say what it moved.

    One warning per fit with half-cell readings (the run step shows it in the
    report): the zones, their readings n and effective number n_eff, the shift of
    the median initiation time due to the readings
    (`assess.updating.corrosion.CorrosionFit.half_cell_effect`) and, with ``sources``
    (zone -> text, `assess.site.half_cell_likelihood`), where each zone's likelihood
    came from. The sentence on default parameters appears only while some zone with
    readings is not site-calibrated (``fit.half_cell_calibrated`` False).
    """
    if fit is None or fit.half_cell is None:
        return
    moved = []
    for zone in fit.zones:
        effect = fit.half_cell_effect(zone)
        if effect is None:
            continue
        trust = "" if effect["reweighting_ess"] >= 100 else " (rough: few draws carry it)"
        source = f" [{sources[zone]}]" if sources and zone in sources else ""
        moved.append(
            f"{zone}{source}: {effect['readings']} readings worth "
            f"{effect['effective_readings']:.1f} independent ones moved the median from "
            f"{effect['without_half_cell_years']['median']:.1f} to "
            f"{effect['with_half_cell_years']['median']:.1f} yr{trust}"
        )
    if not moved:
        return
    if fit.half_cell_calibrated:
        head = "Half-cell evidence (site-calibrated likelihood) on the initiation time: "
    else:
        head = (
            "Half-cell potentials entered the corrosion update with likelihood parameters "
            "that are defaults rather than site-calibrated (the RILEM TC 154-EMC ranges of "
            "the zone's condition, or assess.deterioration.defaults.HALF_CELL_LIKELIHOOD); "
            "treat their effect with care, or give the zone a [zones.<id>.half_cell_"
            "calibration] table in the site file. Initiation time: "
        )
    warnings.warn(head + "; ".join(moved) + ".", UserWarning, stacklevel=2)


def _lognormal_checks(inputs, draws) -> list:
    """Run-time check of the lognormal marginals against the draws (early t_i, high rate)."""
    from assess.updating.family_check import check_lognormal_tail

    failed = []
    for label, name, mean, sd, side in (
        (
            "initiation time",
            "initiation_time",
            inputs.initiation_log_mean,
            inputs.initiation_log_sd,
            "lower",
        ),
        ("corrosion rate", "corrosion_rate", inputs.rate_log_mean, inputs.rate_log_sd, "upper"),
    ):
        check = check_lognormal_tail(mean, sd, draws[name], side=side)
        if not check.passed:
            ratios = ", ".join(f"{r:.2f}" for r in check.ratios)
            levels = ", ".join(f"{p:g}" for p in check.levels)
            failed.append(f"{label} ({side} tail: fit / draws = {ratios} at p = {levels})")
    return failed


def zone_corrosion_inputs(
    site, fit=None, *, seed=20261202, prior_samples=20_000, initiation=None
) -> dict:
    """`CorrosionInputs` of every zone: posterior where ``fit`` covers the zone, else prior.

    Parameters
    ----------
    site : inspection_io.site.Site
    fit : CorrosionFit, optional
        From `update_corrosion` (or any object with ``zones`` and
        ``zone_draws(zone) -> {"initiation_time", "corrosion_rate"}``).
    seed : int
        Seed of the prior Monte Carlo of t_i.
    initiation : InitiationFits, optional
        Chloride and carbonation fits (`assess.site.initiation.update_initiation`);
        a zone outside ``fit`` that has one of them gets its t_i prior from
        them, else from the fib 34 defaults (`prior_corrosion`).
    """
    from assess.site.initiation import initiation_prior

    out = {}
    for zone_id in site.zones:
        if fit is not None and zone_id in tuple(fit.zones):
            draws = fit.zone_draws(zone_id)
            out[zone_id] = dataclasses.replace(
                CorrosionInputs.from_draws(
                    zone_id,
                    draws["initiation_time"],
                    draws["corrosion_rate"],
                    source=f"posterior of zone {zone_id} from break-outs and half-cell surveys "
                    "(MCMC; lognormal marginals, Gaussian copula)",
                ),
                spatial_log_sd=float(
                    getattr(fit, "spatial_log_sd", {}).get(zone_id, SPATIAL_LOG_SD)
                ),
                state_quantile=float(getattr(fit, "breakout_quantile", BREAKOUT_QUANTILE)),
            )
            failed = _lognormal_checks(out[zone_id], draws)
            if failed:
                warnings.warn(
                    f"Zone {zone_id}: the lognormal fitted to the posterior draws of "
                    + "; ".join(failed)
                    + " differs from the draws by more than a factor "
                    f"{FAMILY_CHECK_FACTOR:g} in the tail that drives early corrosion; the "
                    "projected section loss of this zone may be off.",
                    UserWarning,
                    stacklevel=2,
                )
            effect = getattr(fit, "half_cell_effect", None)
            if callable(effect):
                out[zone_id] = dataclasses.replace(out[zone_id], half_cell_effect=effect(zone_id))
        elif initiation is not None and (
            zone_id in initiation.chloride or zone_id in initiation.carbonation
        ):
            prior, scatter = initiation_prior(site, zone_id, initiation, seed=seed, n=prior_samples)
            out[zone_id] = dataclasses.replace(
                CorrosionInputs.from_prior(zone_id, prior), spatial_log_sd=float(scatter)
            )
        else:
            out[zone_id] = CorrosionInputs.from_prior(
                zone_id, prior_corrosion(site, zone_id, n=prior_samples, seed=seed)
            )
    return out


__all__ = [
    "CorrosionEvidence",
    "CorrosionInputs",
    "age_at",
    "construction_date",
    "corrosion_evidence",
    "initiation_time_prior_draws",
    "prior_corrosion",
    "update_corrosion",
    "zone_corrosion_inputs",
]
