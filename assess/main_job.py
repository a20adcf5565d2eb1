"""The main job: from a site folder to the finished report in one call.

Steps: import new campaign files into the ledger; summarise the data; update
the zone knowledge (MCMC, gated); before/after reliability of every member;
remaining-life curves; value of information of candidate test programmes (when
the site folder has a ``decisions.toml``); re-assessment campaign by campaign;
the HTML report and the JSON of all numbers in ``results/reports/``.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
from typing import Callable

from assess.assessment.before_after import assess_members
from assess.assessment.history import reassess_history
from assess.assessment.site_update import UpdateSettings, update_site
from assess.report.assemble import RunResults, build_report
from assess.report.writer import write_report
from inspection_io.importing import import_site
from inspection_io.ledger import Ledger
from inspection_io.site import load_site
from inspection_io.summary import summarise

RECORD_KINDS = ("cores", "tensile", "cover", "carbonation", "chloride", "halfcell", "section_loss")


@dataclasses.dataclass(frozen=True)
class JobSettings:
    """Settings of the main job; ``quick`` gives smaller runs for a first look."""

    seed: int = 20261202
    quick: bool = False
    draws: int = 1000
    history: bool = True
    life: bool = True
    worth: bool = True
    horizon_years: int = 50

    @property
    def update(self) -> UpdateSettings:
        return UpdateSettings(draws=self.draws, tune=500 if self.quick else 1000, seed=self.seed)

    @property
    def reliability_options(self) -> dict:
        return {"n_per_level": 500 if self.quick else 1000}


def data_summaries(ledger: Ledger) -> tuple[dict, list]:
    """Per-zone summary table per record kind, and the flagged rows."""
    tables, flagged = {}, []
    for kind in RECORD_KINDS:
        observations = ledger.observations(kind=kind)
        if observations.empty:
            continue
        tables[kind] = summarise(kind, observations)
        marked = observations[observations["flags"] != ""]
        for row in marked.drop_duplicates(["file", "source_row"]).itertuples():
            flagged.append({"file": row.file, "row": int(row.source_row), "item": row.item_id,
                            "flags": row.flags, "campaign": row.campaign})
    return tables, flagged


def run_site(folder: Path, settings: JobSettings | None = None,
             step: Callable[[str], None] | None = None) -> tuple[RunResults, Path, Path]:
    """Run the whole job on a site folder; returns the results and the report paths."""
    settings = settings or JobSettings()
    say = step or (lambda _text: None)
    folder = Path(folder)
    site = load_site(folder)
    say("Importing new campaign files")
    import_site(folder)
    with Ledger(folder / "ledger.sqlite") as ledger:
        tables, flagged = data_summaries(ledger)
    say("Updating zone knowledge with the site's tests (MCMC)")
    update = update_site(site, settings=settings.update)
    say("Reliability of every member, before and after")
    assessment = assess_members(site, update, seed=settings.seed,
                                options=settings.reliability_options)
    with Ledger(folder / "ledger.sqlite") as ledger:
        for r in assessment.results:
            ledger.append_result("reliability", r.to_dict(), member=r.member, mode=r.mode,
                                 seed=r.after.seed,
                                 settings={"posterior_hash": update.data_hash,
                                           "job": dataclasses.asdict(settings)})
    warnings_list: list[str] = []
    life = _optional_life(site, update, settings, say, warnings_list)
    worth = _optional_worth(site, update, settings, say, warnings_list)
    history = None
    if settings.history:
        say("Re-assessing campaign by campaign")
        history = reassess_history(site, settings=settings.update, seed=settings.seed,
                                   options=settings.reliability_options)
    run = RunResults(site=site, update=update, assessment=assessment, data_summaries=tables,
                     flagged=flagged, life=life, worth=worth, history=history,
                     settings=dataclasses.asdict(settings), warnings=warnings_list)
    say("Writing the report")
    document, numbers = build_report(run)
    reports = folder / "results" / "reports"
    reports.mkdir(parents=True, exist_ok=True)
    html_path, json_path = write_report(reports, reports, document, numbers)
    return run, html_path, json_path


def _optional_life(site, update, settings, say, warnings_list):
    if not settings.life:
        return None
    from assess.life import site_life_summary

    say("Remaining-life curves")
    return site_life_summary(site, update, horizon_years=settings.horizon_years,
                             seed=settings.seed, quick=settings.quick)


def _optional_worth(site, update, settings, say, warnings_list):
    if not settings.worth or not (site.folder / "decisions.toml").exists():
        return None
    from assess.worth.site_summary import site_worth_summary

    say("Value of information of the candidate test programmes")
    return site_worth_summary(site, update, seed=settings.seed, quick=settings.quick)
