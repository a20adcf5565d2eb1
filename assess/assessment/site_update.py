"""Update the zone knowledge with the site's test data (PyMC), gate it, store it.

All four populations (`knowledge.QUANTITIES`) are sub-models of one PyMC
model, so they compile and sample once. The posterior of each zone and
quantity is then described by a fitted `NormalGamma` (decision 4 of the design
notes) that the member reliability models take in place of the design prior.

The run is identified by a SHA-256 hash of everything that made it (data,
priors, settings, code version). Its InferenceData is written to
``results/posteriors/posterior-<hash12>.nc`` in the site folder and a ledger
row of kind ``"posterior"`` records it; a later run with the same hash reuses
the stored posterior instead of sampling again.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
import json
from pathlib import Path

import numpy as np
import pandas as pd

import assess
from assess.assessment.knowledge import QUANTITIES, design_knowledge
from assess.updating.gate import GateReport, check_convergence
from assess.updating.normal_gamma import NormalGamma
from assess.updating.storage import posterior_path, read_posterior, write_posterior
from assess.errors import ConvergenceError
from inspection_io.ledger import Ledger
from inspection_io.screening import usable_mask



@dataclasses.dataclass(frozen=True)
class UpdateSettings:
    """MCMC settings of a site update (NUTS, Hoffman & Gelman 2014)."""

    draws: int = 1000
    tune: int = 1000
    chains: int = 4
    seed: int = 20261202
    target_accept: float = 0.95
    sampler: str = "pymc"
    concrete_tau_scale: float = 0.10
    include_flagged: tuple = ()


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
    """

    before: dict
    after: dict
    data: dict
    gate: GateReport | None
    posterior_path: Path | None
    data_hash: str
    reused: bool
    idata: object
    until_date: dt.date | None

    def counts(self) -> dict:
        """Number of observations used per quantity and zone."""
        return {q: df.groupby("zone").size().to_dict() for q, df in self.data.items()}


def collect_data(ledger: Ledger, until_date: dt.date | None = None,
                 include_flagged=()) -> dict[str, pd.DataFrame]:
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


def _hash(site, data: dict, before: dict, settings: UpdateSettings) -> str:
    payload = {
        "code_version": assess.__version__,
        "zones": list(site.zones),
        "settings": dataclasses.asdict(settings),
        "priors": {z: {q: dataclasses.asdict(ng) for q, ng in qs.items()} for z, qs in before.items()},
        "data": {q: [[str(r.zone), float(r.value)] for r in df.itertuples()] for q, df in data.items()},
    }
    text = json.dumps(payload, sort_keys=True, default=str)
    return hashlib.sha256(text.encode()).hexdigest()


def _build_joint_model(site, data, before, settings):
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
                hierarchical_normal_model(values, groups, zones, before[first][name],
                                          pooling=spec.pooling, name=name,
                                          tau_scale=settings.concrete_tau_scale)
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


def update_site(site, *, settings: UpdateSettings | None = None, until_date: dt.date | None = None,
                progressbar: bool = False, record: bool = True) -> SiteUpdate:
    """Update every zone's knowledge with the ledger's data up to ``until_date``.

    Raises
    ------
    ConvergenceError
        When the MCMC run fails the convergence gate (nothing is recorded then).
    """
    from assess.updating.models import free_parameter_names, group_draws, sample_posterior

    settings = settings or UpdateSettings()
    before = design_knowledge(site)
    ledger_path = site.folder / "ledger.sqlite"
    if not ledger_path.exists():
        return SiteUpdate(before, before, {q: pd.DataFrame(columns=["zone", "value"]) for q in QUANTITIES},
                          None, None, "", False, None, until_date)
    with Ledger(ledger_path) as ledger:
        data = collect_data(ledger, until_date, settings.include_flagged)
    data_hash = _hash(site, data, before, settings)
    if all(df.empty for df in data.values()):
        return SiteUpdate(before, before, data, None, None, data_hash, False, None, until_date)

    path = posterior_path(site.folder, "posterior", data_hash)
    joint = _build_joint_model(site, data, before, settings)
    names = free_parameter_names(joint)
    reused = path.exists()
    if reused:
        idata = read_posterior(path)
    else:
        idata = sample_posterior(joint, draws=settings.draws, tune=settings.tune,
                                 chains=settings.chains, seed=settings.seed,
                                 target_accept=settings.target_accept, sampler=settings.sampler,
                                 progressbar=progressbar)
    gate = check_convergence(idata, names)
    if not gate.passed:
        listing = "\n  - ".join(gate.problems)
        raise ConvergenceError(
            "updating the site with its test data failed the convergence gate, so no "
            f"reliability is reported from it:\n  - {listing}\nTry more draws (--draws), a "
            "higher target acceptance, or check the data flagged in 'assess site summary'.")
    after = {z: dict(qs) for z, qs in before.items()}
    for name in QUANTITIES:
        if data[name].empty:
            continue
        for zone in site.zones:
            mu, sigma = group_draws(idata, zone, name=name)
            after[zone][name] = NormalGamma.fit_draws(
                mu, sigma, source=f"posterior of {name} in zone {zone} from site tests "
                                  f"(MCMC, {data_hash[:12]})")
    if not reused:
        write_posterior(idata, path)
    if record:
        with Ledger(ledger_path) as ledger:
            ledger.append_result(
                "posterior",
                {"hash": data_hash, "path": str(path.relative_to(site.folder)), "reused": reused,
                 "until_date": until_date.isoformat() if until_date else None,
                 "counts": {q: df.groupby("zone").size().to_dict() for q, df in data.items()},
                 "gate": gate.to_dict(),
                 "after": {z: {q: dataclasses.asdict(ng) for q, ng in qs.items()}
                           for z, qs in after.items()}},
                seed=settings.seed, settings=dataclasses.asdict(settings))
    return SiteUpdate(before, after, data, gate, path, data_hash, reused, idata, until_date)
