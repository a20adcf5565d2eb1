"""Reliability of every member, mode and member system, before and after updating.

"Before" uses the design-stage priors of `knowledge.design_knowledge`; "after"
uses the posteriors of `site_update.update_site`. Both use the same loads,
model uncertainties and seeds (common random numbers), so the change in beta
is due to the site's evidence. The target is chosen from the site file's
settings (`assess.targets.target_beta`) for the same reference period as the
loads, per mode (`assess.targets.mode_target`: ductile flexure and hogging at
the site target, brittle shear without stirrups and punching stricter); the
member system takes the strictest target of its modes. A target set in the site
file for the member or its zone applies to every mode as given.
"""

from __future__ import annotations

import dataclasses
import zlib
from typing import Any, Callable

import numpy as np
from scipy.special import ndtr

from assess.reliability.dispatch import run_method
from assess.reliability.interval import (
    CONFIDENCE,
    change_text,
    interval_verdict,
    result_interval,
    sample_until_decided,
)
from assess.site.locations import knowledge_at
from assess.site.member_models import build_member_model
from assess.site.paths import has_ledger
from assess.site.record import LedgerRow
from assess.site.result_cache import cached_result, member_payload
from assess.site.settings import DEFAULT_METHOD, DEFAULT_SEED
from assess.targets import Target, mode_target, system_target, target_beta


@dataclasses.dataclass
class MemberResult:
    """Before/after reliability of one member and mode (``mode="system"`` for the series system)."""

    member: str
    zone: str
    kind: str
    mode: str
    before: Any
    after: Any
    form_after: Any | None
    target: float
    verdict: str
    target_basis: str = ""
    """Why this target: ductile / brittle mode (brittle stricter), the system's strictest
    mode, or a site-file override."""
    interval_level: float = CONFIDENCE
    """Confidence level of the interval behind the verdict [-]: 95 %, or the Bonferroni level
    over the repeated looks the budget allows (`assess.reliability.interval.looks_level`)."""

    @property
    def interval_before(self) -> tuple[float, float]:
        """95 % interval of beta before, from the sampling error of its estimate [-]."""
        return result_interval(self.before)

    @property
    def interval_after(self) -> tuple[float, float]:
        """Interval of beta after at `interval_level`, from the sampling error of its
        estimate (the one the verdict reads) [-]."""
        return result_interval(self.after, self.interval_level)

    @property
    def change(self) -> str:
        """Signed change of beta, or "no significant change" when within its noise
        (`assess.reliability.interval.change_text`)."""
        return change_text(self.before, self.after)

    def drivers(self, count: int = 3) -> list[tuple[str, float]]:
        """Largest FORM importance factors alpha^2 (after updating), physical names merged."""
        if self.form_after is None or not self.form_after.importance_factors:
            return []
        merged: dict[str, float] = {}
        for name, value in self.form_after.importance_factors.items():
            base = name.split(".")[0]
            merged[base] = merged.get(base, 0.0) + float(value)
        return sorted(merged.items(), key=lambda kv: -kv[1])[:count]

    def to_dict(self) -> dict:
        return {
            "member": self.member,
            "zone": self.zone,
            "kind": self.kind,
            "mode": self.mode,
            "beta_before": self.before.beta,
            "pf_before": self.before.pf,
            "cov_before": self.before.cov,
            "beta_after": self.after.beta,
            "pf_after": self.after.pf,
            "cov_after": self.after.cov,
            "n_calls": self.before.n_calls + self.after.n_calls,
            "method": self.after.method,
            "seed": self.after.seed,
            "interval_before": list(self.interval_before),
            "interval_after": list(self.interval_after),
            "interval_level_before": CONFIDENCE,
            "interval_level": self.interval_level,
            "n_runs_after": len((self.after.details or {}).get("runs", [])) or 1,
            "change": self.change,
            "target": self.target,
            "target_basis": self.target_basis,
            "verdict": self.verdict,
            "drivers": [{"variable": n, "alpha2": a} for n, a in self.drivers()],
            "form_converged": None if self.form_after is None else bool(self.form_after.converged),
            "warnings": list(self.before.warnings) + list(self.after.warnings),
        }


@dataclasses.dataclass
class Assessment:
    """The before/after table of a site and what it rests on."""

    results: list
    target: Any
    reference_period_years: float
    notes: list
    method: str
    seed: int
    options: dict = dataclasses.field(default_factory=dict)
    posterior_hash: str = ""
    max_calls: int | None = None
    drivers: list = dataclasses.field(default_factory=list)
    """`assess.site.drivers.MemberDrivers` of each member's governing mode (set by the
    members step of a run)."""

    @property
    def undecided(self) -> list:
        """Results whose verdict stayed "undecided"."""
        return [r for r in self.results if r.verdict == "undecided"]

    def ledger_rows(self) -> list[LedgerRow]:
        """One ``"reliability"`` row per member and mode."""
        settings = {
            "method": self.method,
            "options": self.options,
            "posterior_hash": self.posterior_hash,
            "max_calls_per_verdict": self.max_calls,
        }
        return [
            LedgerRow(
                "reliability",
                r.to_dict(),
                member=r.member,
                mode=r.mode,
                seed=r.after.seed,
                settings=settings,
            )
            for r in self.results
        ]

    def to_dict(self) -> dict:
        return {
            "target": {
                "beta": self.target.beta,
                "reference_period_years": self.target.reference_period_years,
                "source": self.target.source,
                "note": self.target.note,
            },
            "reference_period_years": self.reference_period_years,
            "method": self.method,
            "seed": self.seed,
            "interval_level": CONFIDENCE,
            "max_calls_per_verdict": self.max_calls,
            "undecided": [f"{r.member} {r.mode}" for r in self.undecided],
            "results": [r.to_dict() for r in self.results],
            "notes": list(self.notes),
        }


def member_target(site, member, target: Target) -> Target:
    """The target of one member: its own ``target_beta``, else its zone's, else the site's.

    A direct target in the site file carries a required reason, which becomes the source.
    """
    zone = site.zones[member.zone]
    for owner, value, reason in (
        (
            f"member {member.member_id}",
            getattr(member, "target_beta", None),
            getattr(member, "target_beta_reason", None),
        ),
        (
            f"zone {member.zone}",
            getattr(zone, "target_beta", None),
            getattr(zone, "target_beta_reason", None),
        ),
    ):
        if value is not None:
            return Target(
                float(value),
                target.reference_period_years,
                f"set in the site file for {owner}: {reason}",
                note=f"replaces {target.beta:.2f} ({target.source})",
            )
    return target


def _mode_goal(target: Target, modes: list, overridden: bool) -> Target:
    """Target of one mode (or of the system of ``modes``): `assess.targets.mode_target`
    (brittle modes stricter), the system the strictest of its modes; a target set in the
    site file wins as given."""
    if overridden:
        return target
    if len(modes) == 1:
        return mode_target(modes[0], target)
    return system_target(modes, target)


def _verdict(result, target: Target, level: float = CONFIDENCE) -> str:
    """`assess.reliability.interval.interval_verdict` against ``target``: "meets target",
    "below target", "undecided" (the interval straddles it) or "no result" (NaN)."""
    if np.isnan(result.beta):
        return "no result"
    low, high = result_interval(result, level)
    return interval_verdict(result.beta, low, high, target.beta)


STATES = ("before", "after")


def state_model(site, update, member_id: str, state: str = "after"):
    """The model of one member that the members step uses for ``state`` ("before": design
    information, "after": the site's evidence), with the knowledge at its tension face."""
    member = site.members[member_id]
    knowledge = getattr(update, state)
    local = getattr(update, f"{state}_local", None) or {}
    face = getattr(member, "tension_face", "bottom")
    use = getattr(getattr(site, "priors", None), "imposed_use", None) or "commercial"
    return build_member_model(
        site,
        member,
        knowledge_at(knowledge[member.zone], local.get(member.zone), member_id, face),
        reference_period_years=float(site.target.reference_period),
        car_park_use=use,
        local=local.get(member.zone),
    )


def form_part(result):
    """The FORM search inside an ``auto`` result (its governing design point, beta and
    importance factors) as a FORM `ReliabilityResult`, or None for another method or when
    FORM found no usable design point. Saves a second FORM search for the drivers [-]."""
    if getattr(result, "method", None) != "auto" or not result.importance_factors:
        return None
    search = next((t for t in result.details.get("tried", []) if t["method"] == "form"), None)
    beta = float(result.details.get("form_beta", np.nan))
    if search is None or not np.isfinite(beta):
        return None
    return dataclasses.replace(
        result,
        method="form",
        pf=float(ndtr(-beta)),
        beta=beta,
        cov=float("nan"),
        n_calls=int(search["n_calls"]),
        converged=bool(search["converged"]),
        warnings=(),
        details={"from": "auto", "design_points": result.details.get("design_points", [])},
    )


def _analysis_seed(seed: int, member: str, mode: str) -> int:
    return (int(seed) + zlib.crc32(f"{member}/{mode}".encode())) % (2**32)


def assess_members(
    site,
    update,
    *,
    method: str = DEFAULT_METHOD,
    seed: int = DEFAULT_SEED,
    options: dict | None = None,
    importance: bool = True,
    members=None,
    progress: Callable[[str], None] | None = None,
    known_before: dict | None = None,
    max_calls: int | None = None,
    cache: bool = True,
) -> Assessment:
    """Beta before and after updating for every member, mode and member system.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
        From `assess.site.materials.update_site` (its ``before`` and ``after``).
    method : str
        Reliability method for the betas (default ``"auto"``, `assess.site.settings.DEFAULT_METHOD`).
    seed : int
        Base seed; each member and mode gets its own, the same before and after.
    importance : bool
        Also run FORM on the updated model for importance factors.
    members : iterable of str, optional
        Only these members.
    progress : callable, optional
        Called with a short text after each member.
    known_before : dict, optional
        (member, mode) -> `ReliabilityResult` of the "before" state already computed
        with the same method, options and seed (e.g. by the members step of the same
        run); reused instead of sampled again. Without test data "after" is "before"
        and is not sampled twice either.
    max_calls : int, optional
        Budget of limit-state calls per verdict [-]: while the 95 % interval of beta after
        straddles the target, the after estimate is repeated with new seed streams and
        pooled (`assess.reliability.interval.sample_until_decided`) until decided or the
        next repetition would exceed the budget. None: one run (the verdict may stay
        "undecided"). Members still undecided are named in the notes.
    cache : bool, default True
        Read and store every result in the site's reliability cache
        (`assess.site.result_cache`: a hash of the member's model, knowledge, modes,
        method, options, seed and code), so a run with nothing new samples nothing.
        Only for an imported site (one with a ledger).
    """
    options = dict(options or {})
    period = float(site.target.reference_period)
    target = target_beta(site.target.consequence_class, period, site.target.cost_of_safety)
    chosen = list(members) if members is not None else list(site.members)
    use = getattr(getattr(site, "priors", None), "imposed_use", None) or "commercial"
    cache_folder = site.folder if cache and has_ledger(site.folder) else None
    results: list[MemberResult] = []
    notes: list[str] = []
    for member_id in chosen:
        member = site.members[member_id]
        own_target = member_target(site, member, target)
        if own_target is not target:
            notes.append(f"Member {member_id}: target {own_target.beta:.2f}, {own_target.source}.")
        models = {state: state_model(site, update, member_id, state) for state in STATES}
        keys = {
            state: member_payload(
                site,
                member,
                knowledge[member.zone],
                local=(getattr(update, f"{state}_local", None) or {}).get(member.zone),
                reference_period_years=period,
                car_park_use=use,
            )
            for state, knowledge in (("before", update.before), ("after", update.after))
        }

        def run(state, group, method, run_seed, options):
            payload = {
                **keys[state],
                "modes": group,
                "method": method,
                "seed": run_seed,
                "options": options,
            }
            return cached_result(
                cache_folder,
                payload,
                lambda: run_method(models[state].problem(group), method, seed=run_seed, **options),
            )

        notes.extend(n for n in models["after"].notes if n not in notes)
        modes = list(models["after"].modes)
        groups = [[m] for m in modes] + ([modes] if len(modes) > 1 else [])
        for group in groups:
            label = group[0] if len(group) == 1 else "system"
            goal = _mode_goal(own_target, group, own_target is not target)
            run_seed = _analysis_seed(seed, member_id, label)
            before = (known_before or {}).get((member_id, label))
            if before is None:
                before = run("before", group, method, run_seed, options)
            if update.after is update.before:  # no test data: the same model
                after = before
            else:
                after = run("after", group, method, run_seed, options)
            level = CONFIDENCE
            if max_calls is not None and not np.isnan(after.beta):

                def rerun(k, _group=group, _member=member_id, _label=label, _run=run):
                    return _run(
                        "after",
                        _group,
                        method,
                        _analysis_seed(seed, _member, f"{_label}#{k}"),
                        options,
                    )

                after, _, level = sample_until_decided(after, rerun, goal.beta, max_calls)
                if update.after is update.before:
                    before = after
            outcome = {"before": before, "after": after}
            form_after = None
            if importance and label != "system":
                # auto ran FORM already: its governing design point gives the drivers
                form_after = form_part(after) or run("after", group, "form", None, {})
            results.append(
                MemberResult(
                    member=member_id,
                    zone=member.zone,
                    kind=member.kind,
                    mode=label,
                    before=outcome["before"],
                    after=outcome["after"],
                    form_after=form_after,
                    target=goal.beta,
                    verdict=_verdict(outcome["after"], goal, level),
                    interval_level=level,
                    target_basis=goal.note or goal.source,
                )
            )
        if progress:
            progress(member_id)
    undecided = [f"{r.member} {r.mode}" for r in results if r.verdict == "undecided"]
    if undecided:
        budget = (
            f"within the budget of {max_calls} limit-state calls per verdict"
            if max_calls is not None
            else "with one run per estimate"
        )
        notes.append(
            f"Undecided {budget} (the interval of beta after straddles the target): "
            f"{', '.join(undecided)}."
        )
    return Assessment(
        results,
        target,
        period,
        notes,
        method,
        seed,
        options,
        getattr(update, "data_hash", ""),
        max_calls=max_calls,
    )
