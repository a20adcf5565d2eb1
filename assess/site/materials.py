"""Update the zone knowledge with the site's test data (PyMC), gate it, store it.

All four populations (`knowledge.QUANTITIES`) are sub-models of one PyMC
model, so they compile and sample once. The posterior of each zone and
quantity is then described by a fitted `NormalGamma` (decision 4 of the design
notes) that the member reliability models take in place of the design prior.

The run is identified by a SHA-256 hash of everything that made it (data,
priors, settings, code version) and stored through `assess.updating.cache`
(``results/posteriors/materials-<hash12>.nc``); a later run with the same hash
reuses the stored posterior instead of sampling again. `SiteUpdate.ledger_rows`
gives the ledger row of kind ``"posterior"`` that the run step records.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from assess.priors.normal_gamma import NormalGamma
from assess.site.knowledge import (
    DESIGN_STATE_WITHOUT_DATA,
    QUANTITIES,
    design_knowledge,
    update_priors,
)
from assess.site.paths import has_ledger, ledger_path
from assess.site.record import LedgerRow
from assess.site.settings import RunSettings
from assess.updating.cache import cached_posterior, content_hash
from assess.updating.gate import GateReport
from inspection_io.ledger import Ledger
from inspection_io.screening import usable_mask

#: Half-normal scale of the between-zone spread of ln f_c [-] (judgement: zones of one
#: structure and one concrete supply differ by a few per cent in mean strength).
CONCRETE_TAU_SCALE = 0.10


@dataclasses.dataclass
class SiteUpdate:
    """Outcome of updating a site.

    Attributes
    ----------
    before, after : dict
        zone -> quantity -> `NormalGamma` (design priors; posteriors).
    data : dict
        quantity -> DataFrame of the observations used (zone, value, campaign, date).
    gate : GateReport or None
        Convergence diagnostics (None when no data at all).
    posterior_path : Path or None
        netCDF file of the InferenceData.
    data_hash : str
        SHA-256 of data, priors, settings and code version.
    reused : bool
        True when a stored posterior with the same hash was loaded.
    idata : arviz.InferenceData or None
    until_date : date or None
        Only data dated on or before this day were used.
    seed : int
        Sampler seed [-].
    before_local, after_local : dict
        zone -> `assess.site.locations.LocalKnowledge`: populations of one face or
        one member's face where the data give them (empty: pooled per zone).
    """

    before: dict
    after: dict
    data: dict
    gate: GateReport | None
    posterior_path: Path | None
    data_hash: str
    reused: bool
    idata: Any
    until_date: dt.date | None
    seed: int = 0
    before_local: dict = dataclasses.field(default_factory=dict)
    after_local: dict = dataclasses.field(default_factory=dict)

    @property
    def has_data(self) -> bool:
        """True when any test result entered the update."""
        return any(not df.empty for df in self.data.values())

    def counts(self) -> dict:
        """Number of observations used per quantity and zone."""
        return {q: df.groupby("zone").size().to_dict() for q, df in self.data.items()}

    def ledger_rows(self) -> list[LedgerRow]:
        """The ``"posterior"`` row of a run with data (none for a design-only site)."""
        if self.gate is None:
            return []
        # results/posteriors/<file>: the path relative to the site folder
        path = (
            str(Path(*self.posterior_path.parts[-3:])) if self.posterior_path is not None else None
        )
        return [
            LedgerRow(
                "posterior",
                {
                    "hash": self.data_hash,
                    "path": path,
                    "reused": self.reused,
                    "until_date": self.until_date.isoformat() if self.until_date else None,
                    "counts": self.counts(),
                    "gate": self.gate.to_dict(),
                    "after": {
                        z: {q: dataclasses.asdict(ng) for q, ng in qs.items()}
                        for z, qs in self.after.items()
                    },
                },
                seed=self.seed,
            )
        ]


def collect_data(
    ledger: Ledger, until_date: dt.date | None = None, include_flagged=()
) -> dict[str, pd.DataFrame]:
    """Observations for each quantity (flagged rows left out unless included).

    For quantities marked ``latest_campaign_only`` (section loss) only each
    zone's most recent campaign is kept: it describes the present state.
    """
    data = {}
    for name, spec in QUANTITIES.items():
        frame = ledger.observations(kind=spec.record_kind, until_date=until_date)
        frame = frame[frame["quantity"] == spec.observed_quantity]
        if len(frame):
            frame = frame[usable_mask(frame["flags"], include_flagged=set(include_flagged) or None)]
        if spec.latest_campaign_only and len(frame):
            latest = frame.groupby("zone")["date"].transform("max")
            frame = frame[frame["date"] == latest]
        data[name] = frame[["zone", "value", "campaign", "date", "item_id"]].reset_index(drop=True)
    return data


def _payload(site, data: dict, before: dict, settings: RunSettings, include_flagged=()) -> dict:
    return {
        "zones": list(site.zones),
        "include_flagged": sorted(include_flagged),
        "settings": {
            "fit": dataclasses.asdict(settings.fit("materials")),
            "seed": settings.seed,
            "concrete_tau_scale": CONCRETE_TAU_SCALE,
        },
        "priors": {
            z: {q: dataclasses.asdict(ng) for q, ng in qs.items()} for z, qs in before.items()
        },
        "data": {
            q: [[str(r.zone), float(r.value)] for r in df.itertuples()] for q, df in data.items()
        },
    }


def _hash(site, data: dict, before: dict, settings: RunSettings, include_flagged=()) -> str:
    return content_hash("materials", _payload(site, data, before, settings, include_flagged))


def _build_joint_model(site, data, before):
    import pymc as pm

    from assess.updating.models import hierarchical_normal_model

    zones = list(site.zones)
    index = {z: i for i, z in enumerate(zones)}
    # Zones share the design prior, so any zone's prior serves the site-level one.
    first = zones[0]
    with pm.Model(coords={"group": zones}) as joint:
        for name, spec in QUANTITIES.items():
            frame = data[name]
            if frame.empty:
                continue
            values = np.log(frame["value"].to_numpy()) if spec.log else frame["value"].to_numpy()
            groups = frame["zone"].map(index).to_numpy()
            if spec.pooling == "none":
                # each zone its own prior (cover priors differ by zone)
                _zone_priors_model(pm, name, values, groups, zones, before)
            else:
                hierarchical_normal_model(
                    values,
                    groups,
                    zones,
                    before[first][name],
                    pooling=spec.pooling,
                    name=name,
                    tau_scale=CONCRETE_TAU_SCALE,
                )
    return joint


def _zone_priors_model(pm, name, values, groups, zones, before):
    """Unpooled normal-gamma model with a zone-specific prior (shared structure)."""
    centers = np.array([before[z][name].center for z in zones])
    z_std = np.array([before[z][name].z_std for z in zones])
    shape = np.array([before[z][name].shape for z in zones])
    rate = np.array([before[z][name].rate for z in zones])
    with pm.Model(name=name):
        precision = pm.Gamma("precision", alpha=shape, beta=rate, dims="group")
        sigma = pm.Deterministic("sigma", 1.0 / pm.math.sqrt(precision), dims="group")
        zloc = pm.Normal("zloc", mu=0.0, sigma=z_std, dims="group")
        mu = pm.Deterministic("mu", centers + zloc * sigma, dims="group")
        pm.Normal("y", mu=mu[groups], sigma=sigma[groups], observed=values)


@dataclasses.dataclass(frozen=True)
class _Fit:
    idata: Any
    gate: GateReport


def update_site(
    site,
    *,
    settings: RunSettings | None = None,
    until_date: dt.date | None = None,
    include_flagged=(),
    progressbar: bool = False,
) -> SiteUpdate:
    """Update every zone's knowledge with the ledger's data up to ``until_date``.

    Parameters
    ----------
    site : inspection_io.site.Site
    settings : RunSettings, optional
        Seed and the ``"materials"`` sampler settings.
    until_date : date, optional
        Use only data dated on or before this day.
    include_flagged : sequence of str
        Screening flags whose rows are used anyway.

    Raises
    ------
    ConvergenceError
        When the MCMC run fails the convergence gate (nothing is stored then).
    """
    from assess.updating.gate import require_convergence
    from assess.updating.models import free_parameter_names, group_draws, sample_posterior

    settings = settings or RunSettings()
    fit = settings.fit("materials")
    before = design_knowledge(site)
    if not has_ledger(site.folder):
        return SiteUpdate(
            before,
            before,
            {q: pd.DataFrame(columns=["zone", "value"]) for q in QUANTITIES},
            None,
            None,
            "",
            False,
            None,
            until_date,
            settings.seed,
        )
    with Ledger(ledger_path(site.folder)) as ledger:
        data = collect_data(ledger, until_date, include_flagged)
    priors = update_priors(before)
    payload = _payload(site, data, priors, settings, include_flagged)
    data_hash = content_hash("materials", payload)
    if all(df.empty for df in data.values()):
        return SiteUpdate(
            before, before, data, None, None, data_hash, False, None, until_date, settings.seed
        )

    joint = _build_joint_model(site, data, priors)
    names = free_parameter_names(joint)
    what = "zone materials (cores, tensile tests, cover, section loss)"

    def sample() -> _Fit:
        idata = sample_posterior(
            joint, seed=settings.seed, progressbar=progressbar, **fit.sampler_options()
        )
        return _Fit(idata, require_convergence(idata, names, what=what, fit="materials"))

    cached = cached_posterior(
        site.folder,
        "materials",
        payload,
        sample=sample,
        rebuild=_Fit,
        parameter_names=names,
        what=what,
        fit="materials",
    )
    idata, gate = cached.fit.idata, cached.fit.gate
    after = {z: dict(qs) for z, qs in before.items()}
    for name in QUANTITIES:
        if data[name].empty:
            continue
        for zone in site.zones:
            if name in DESIGN_STATE_WITHOUT_DATA and not (data[name]["zone"] == zone).any():
                continue  # no break-out here: the design state (corrosion_state adds the loss)
            mu, sigma = group_draws(idata, zone, name=name)
            after[zone][name] = NormalGamma.fit_draws(
                mu,
                sigma,
                source=f"posterior of {name} in zone {zone} from site tests "
                f"(MCMC, {data_hash[:12]})",
            )
    return SiteUpdate(
        before,
        after,
        data,
        gate,
        cached.path,
        data_hash,
        cached.reused,
        idata,
        until_date,
        settings.seed,
    )
