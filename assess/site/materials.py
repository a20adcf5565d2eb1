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
import json
import warnings
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from assess.priors.normal_gamma import NormalGamma
from assess.site.cover_layers import (
    COVER_TAU_SCALE,
    add_cover_model,
    cover_after_local,
    cover_layout,
)
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
from assess.updating.family_check import TAIL_SIDES, check_family, family_warning
from assess.updating.gate import GateReport
from assess.updating.measurement_error import quantity_measurement_sd
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
    excluded : list of dict
        Tests left out by the engineer (site file ``[exclude]``) with the reason.
    family_checks : dict
        "zone/quantity/side" -> the run-time check of the fitted family against the
        raw draws (`assess.updating.family_check`).
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
    family_checks: dict = dataclasses.field(default_factory=dict)
    excluded: list = dataclasses.field(default_factory=list)

    @property
    def flagged(self) -> list[dict]:
        """Flagged observations that the update used (outliers are flagged and kept)."""
        return flagged_kept(self.data)

    def notes(self) -> list[str]:
        """Plain-words notes: flagged tests kept, tests excluded by the engineer."""
        out = [
            f"{r['quantity']} test {r['item']} (zone {r['zone']}, {r['value']:g}) is flagged "
            f"'{r['flags']}' and used; to leave it out, name it with a reason in the site "
            "file [exclude] table"
            for r in self.flagged
        ]
        out += [
            f"{r['quantity']} test {r['item']} (zone {r['zone']}, {r['value']:g}) excluded: "
            f"{r['reason']}"
            for r in self.excluded
        ]
        return out

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
                    "flagged_kept": self.flagged,
                    "excluded": self.excluded,
                    "gate": self.gate.to_dict(),
                    "after": {
                        z: {q: dataclasses.asdict(ng) for q, ng in qs.items()}
                        for z, qs in self.after.items()
                    },
                    # populations per bar layer: "member|face" ("*" = any member of the zone)
                    "after_local": {
                        z: {
                            f"{member or '*'}|{face}": {
                                q: dataclasses.asdict(ng) for q, ng in qs.items()
                            }
                            for (member, face), qs in layers.items()
                        }
                        for z, layers in self.after_local.items()
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
        frame = frame.assign(face=[_face(extra) for extra in frame["extra"]])
        columns = ["zone", "value", "campaign", "date", "item_id", "member", "face", "flags"]
        data[name] = frame[columns].reset_index(drop=True)
    return data


def apply_exclusions(data: dict, exclude) -> tuple[dict, list[dict]]:
    """Leave out the tests the engineer excluded (site file ``[exclude]``: id -> reason).

    Returns the data without them and one record per excluded observation (quantity,
    zone, item, value, flags, reason) for the ledger row. An id that matches no test
    warns (a typing error would otherwise go unnoticed).
    """
    exclude = dict(exclude or {})
    if not exclude:
        return data, []
    kept, excluded, seen = {}, [], set()
    for name, frame in data.items():
        hit = frame["item_id"].astype(str).isin(exclude)
        for row in frame[hit].itertuples():
            seen.add(str(row.item_id))
            excluded.append(
                {
                    "quantity": name,
                    "zone": str(row.zone),
                    "item": str(row.item_id),
                    "value": float(row.value),
                    "flags": str(row.flags or ""),
                    "reason": exclude[str(row.item_id)],
                }
            )
        kept[name] = frame[~hit].reset_index(drop=True)
    unknown = sorted(set(exclude) - seen)
    if unknown:
        warnings.warn(
            f"site file [exclude] names {', '.join(unknown)}, which match no test used by the "
            "materials update (cores, tensile tests, cover, section loss); check the ids",
            UserWarning,
            stacklevel=2,
        )
    return kept, excluded


def flagged_kept(data: dict) -> list[dict]:
    """Observations used although flagged (e.g. Grubbs outliers: flagged and kept)."""
    rows = []
    for name, frame in data.items():
        if "flags" not in frame or frame.empty:
            continue
        for row in frame[frame["flags"].fillna("") != ""].itertuples():
            rows.append(
                {
                    "quantity": name,
                    "zone": str(row.zone),
                    "item": str(row.item_id),
                    "value": float(row.value),
                    "flags": str(row.flags),
                }
            )
    return rows


def _face(extra) -> str | None:
    """The face a reading was taken on (``extra`` JSON of the observation), or None."""
    if not isinstance(extra, str) or not extra:
        return None
    face = json.loads(extra).get("face")
    return face if isinstance(face, str) and face else None


def _payload(
    site, data: dict, before: dict, settings: RunSettings, include_flagged=(), layout=None
) -> dict:
    return {
        "cover_layout": layout.payload() if layout is not None else None,
        "cover_tau_scale": COVER_TAU_SCALE,
        "zones": list(site.zones),
        "include_flagged": sorted(include_flagged),
        "exclude": sorted(dict(getattr(site, "exclude", {}) or {}).items()),
        "settings": {
            "fit": dataclasses.asdict(settings.fit("materials")),
            "seed": settings.seed,
            "concrete_tau_scale": CONCRETE_TAU_SCALE,
            "measurement_sd": {q: quantity_measurement_sd(q) for q in QUANTITIES},
        },
        "priors": {
            z: {q: dataclasses.asdict(ng) for q, ng in qs.items()} for z, qs in before.items()
        },
        "data": {
            q: [[str(r.zone), float(r.value)] for r in df.itertuples()] for q, df in data.items()
        },
    }


def _hash(
    site, data: dict, before: dict, settings: RunSettings, include_flagged=(), layout=None
) -> str:
    return content_hash(
        "materials", _payload(site, data, before, settings, include_flagged, layout)
    )


def _build_joint_model(site, data, before, layout=None):
    import pymc as pm

    from assess.updating.models import hierarchical_normal_model

    zones = list(site.zones)
    index = {z: i for i, z in enumerate(zones)}
    # Zones share the design prior, so any zone's prior serves the site-level one.
    first = zones[0]
    with pm.Model(coords={"group": zones}) as joint:
        for name, spec in QUANTITIES.items():
            frame = data[name]
            if name == "cover":
                if not frame.empty:
                    add_cover_model(
                        pm,
                        layout or cover_layout(site, frame),
                        name=name,
                        measurement_sd=quantity_measurement_sd(
                            name, True, frame["value"].to_numpy()
                        ),
                    )
                continue
            if frame.empty:
                continue
            values = np.log(frame["value"].to_numpy()) if spec.log else frame["value"].to_numpy()
            error = quantity_measurement_sd(name, spec.log, frame["value"].to_numpy())
            groups = frame["zone"].map(index).to_numpy()
            if spec.pooling == "none":
                # each zone its own prior (cover priors differ by zone)
                _zone_priors_model(pm, name, values, groups, zones, before, error)
            else:
                hierarchical_normal_model(
                    values,
                    groups,
                    zones,
                    before[first][name],
                    pooling=spec.pooling,
                    name=name,
                    tau_scale=CONCRETE_TAU_SCALE,
                    measurement_sd=error,
                )
    return joint


def _zone_priors_model(pm, name, values, groups, zones, before, measurement_sd=0.0):
    """Unpooled normal-gamma model with a zone-specific prior (shared structure).

    A reading is the true local value plus an error of sd ``measurement_sd``
    (`assess.updating.measurement_error`), so ``sigma`` excludes it."""
    from assess.updating.models import with_error

    centers = np.array([before[z][name].center for z in zones])
    z_std = np.array([before[z][name].z_std for z in zones])
    shape = np.array([before[z][name].shape for z in zones])
    rate = np.array([before[z][name].rate for z in zones])
    with pm.Model(name=name):
        precision = pm.Gamma("precision", alpha=shape, beta=rate, dims="group")
        sigma = pm.Deterministic("sigma", 1.0 / pm.math.sqrt(precision), dims="group")
        zloc = pm.Normal("zloc", mu=0.0, sigma=z_std, dims="group")
        mu = pm.Deterministic("mu", centers + zloc * sigma, dims="group")
        pm.Normal(
            "y", mu=mu[groups], sigma=with_error(pm, sigma[groups], measurement_sd), observed=values
        )


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
        empty = pd.DataFrame(columns=["zone", "value", "member", "face"])
        local = cover_layout(site, empty).before_local
        return SiteUpdate(
            before,
            before,
            {q: empty for q in QUANTITIES},
            None,
            None,
            "",
            False,
            None,
            until_date,
            settings.seed,
            before_local=local,
            after_local=local,
        )
    with Ledger(ledger_path(site.folder)) as ledger:
        data = collect_data(ledger, until_date, include_flagged)
    data, excluded = apply_exclusions(data, getattr(site, "exclude", None))
    layout = cover_layout(site, data["cover"])
    before_local = layout.before_local
    if not data["cover"].empty:
        # the zone-level cover is that of the zone's main face (most readings)
        for zone in site.zones:
            before[zone]["cover"] = before_local[zone][(None, layout.main_face(zone))]["cover"]
    priors = update_priors(before)
    payload = _payload(site, data, priors, settings, include_flagged, layout)
    data_hash = content_hash("materials", payload)
    if all(df.empty for df in data.values()):
        return SiteUpdate(
            before,
            before,
            data,
            None,
            None,
            data_hash,
            False,
            None,
            until_date,
            settings.seed,
            before_local=before_local,
            after_local=before_local,
            excluded=excluded,
        )

    joint = _build_joint_model(site, data, priors, layout)
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
    family_checks: list = []
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
            family_checks += [
                (zone, name, check_family(after[zone][name], mu, sigma, side=side))
                for side in TAIL_SIDES.get(name, ("lower",))
            ]
    after_local = before_local
    if not data["cover"].empty:
        after_local = cover_after_local(
            idata,
            layout,
            seed=settings.seed,
            source=f"posterior from site tests (MCMC, {data_hash[:12]})",
        )
        for zone in site.zones:  # the zone-level cover is that of its main face
            after[zone]["cover"] = after_local[zone][(None, layout.main_face(zone))]["cover"]
    text = family_warning([c for c in family_checks if not c[2].passed])
    if text:
        warnings.warn(text, UserWarning, stacklevel=2)
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
        before_local=before_local,
        after_local=after_local,
        excluded=excluded,
        family_checks={f"{z}/{q}/{c.side}": c.to_dict() for z, q, c in family_checks},
    )
