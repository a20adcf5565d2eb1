"""Reliability campaign by campaign: re-assess the site as it was known after each campaign.

For every inspection campaign (in date order) the site is updated with the
data of that campaign and all earlier ones only, and the before/after table is
recomputed. The "before" column is the same design-stage belief every time;
the "after" column moves as evidence accumulates. Each re-assessment is
appended to the ledger (kind ``"history"``) with the code version, seed and
settings.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from typing import Any

from assess.site.before_after import assess_members
from assess.site.corrosion_state import present_state
from assess.site.materials import update_site
from assess.site.paths import has_ledger, ledger_path
from assess.site.record import LedgerRow
from assess.site.settings import DEFAULT_METHOD, RunSettings
from inspection_io.ledger import Ledger


@dataclasses.dataclass
class CampaignAssessment:
    """The site as known after one campaign."""

    campaign: str
    date: dt.date
    data_until: dt.date
    counts: dict
    assessment: Any
    knowledge: Any = None

    def rows(self) -> list[dict]:
        """One row per member and mode: campaign, date, betas, verdict."""
        return [
            {
                "campaign": self.campaign,
                "date": self.date.isoformat(),
                "data_until": self.data_until.isoformat(),
                **r.to_dict(),
            }
            for r in self.assessment.results
        ]


def campaign_cutoffs(ledger: Ledger) -> list[tuple[str, dt.date, dt.date]]:
    """(campaign name, campaign date, last observation date up to and with it), in date order.

    A campaign's survey can span several days; the cut-off is the latest
    observation of that campaign or any earlier one, so no later campaign's data
    are used.
    """
    campaigns = sorted(ledger.campaigns(), key=lambda c: (c.date, c.id))
    observations = ledger.observations()
    cutoffs = []
    for index, campaign in enumerate(campaigns):
        names = {c.name for c in campaigns[: index + 1]}
        dates = observations.loc[observations["campaign"].isin(names), "date"]
        last = max(dates) if len(dates) else campaign.date
        cutoffs.append((campaign.name, campaign.date, max(last, campaign.date)))
    return cutoffs


def reassess_history(
    site,
    *,
    settings: RunSettings | None = None,
    method: str = DEFAULT_METHOD,
    progress=None,
    current=None,
) -> list[CampaignAssessment]:
    """Re-assess the site as of each campaign, with only the data known then.

    Each cut-off gets its own materials update (cached like every fit) and
    before/after table; `history_ledger_rows` gives the rows to record.

    ``current`` is the `Assessment` of the same run (members step), if any. When it
    was made with the same method, options and seed, its "before" column (the same
    design-stage belief at every cut-off) is reused, and a cut-off whose data equal
    the current ones (same posterior hash) reuses the whole table: nothing is
    sampled twice.
    """
    settings = settings or RunSettings()
    if not has_ledger(site.folder):
        return []
    with Ledger(ledger_path(site.folder)) as ledger:
        cutoffs = campaign_cutoffs(ledger)
    same_runs = (
        current is not None
        and current.method == method
        and current.seed == settings.seed
        and current.options == settings.reliability_options
    )
    known_before = {(r.member, r.mode): r.before for r in current.results} if same_runs else None
    history = []
    for name, date, until in cutoffs:
        update = update_site(site, settings=settings, until_date=until)
        if same_runs and update.data_hash == current.posterior_hash:
            assessment = current
        else:
            # today's section loss per face with the data known then (break-outs, pits);
            # corrosion rates and initiation times from the priors (no fit per cut-off)
            update, _ = present_state(
                site, update, None, pitting=settings.pitting, seed=settings.seed, until_date=until
            )
            assessment = assess_members(
                site,
                update,
                method=method,
                seed=settings.seed,
                options=settings.reliability_options,
                importance=False,
                known_before=known_before,
            )
        history.append(
            CampaignAssessment(name, date, until, update.counts(), assessment, update.after)
        )
        if progress:
            progress(name)
    return history


def history_ledger_rows(history: list[CampaignAssessment]) -> list[LedgerRow]:
    """One ``"history"`` row per campaign, member and mode."""
    rows: list[LedgerRow] = []
    for entry in history:
        a = entry.assessment
        settings = {
            "method": a.method,
            "options": a.options,
            "posterior_hash": a.posterior_hash,
            "data_until": entry.data_until.isoformat(),
        }
        rows.extend(
            LedgerRow(
                "history",
                row,
                member=row["member"],
                mode=row["mode"],
                seed=row["seed"],
                settings=settings,
            )
            for row in entry.rows()
        )
    return rows


def governing_rows(history: list[CampaignAssessment]) -> dict[str, list[float]]:
    """beta after updating of each member's system (or single mode) per campaign."""
    series: dict[str, list[float]] = {}
    for entry in history:
        by_member: dict[str, float] = {}
        for r in entry.assessment.results:
            if r.mode == "system" or r.member not in by_member:
                by_member[r.member] = r.after.beta
        for member, beta in by_member.items():
            series.setdefault(member, []).append(beta)
    return series
