"""The main job on one site folder: every step, in order, each isolated from the others.

Steps (`assess.site.run.STEP_TITLES`): import new campaign files into the
ledger; update the zone materials (MCMC, gated); before/after reliability of
every member; corrosion initiation and rate; remaining-life curves; value of
information (when the site folder has a ``decisions.toml``); re-assessment
campaign by campaign. A step that fails is recorded with its reason and what to
do, and the steps that do not need it still run; the report layer
(`assess.report.job`) then writes the report with a "not available" section in
its place. A site with no campaign data yet runs on its design information
alone.

`RunSettings` (the one home of the seed, quick-mode and sampler defaults) is
defined in `assess.site.settings` and re-exported here.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

from assess.errors import AnalysisError, InputError
from assess.site.history_prefetch import start_cutoff_prefetch
from assess.site.paths import has_ledger, ledger_path
from assess.site.run import STEP_TITLES, SiteRun, run_step
from assess.site.settings import RunSettings, build_settings
from inspection_io.importing import import_site
from inspection_io.ledger import Ledger
from inspection_io.site import load_site
from inspection_io.summary import summarise

RECORD_KINDS = ("cores", "tensile", "cover", "carbonation", "chloride", "halfcell", "section_loss")


def data_summaries(folder: Path) -> tuple[dict, list]:
    """Per-zone summary table per record kind, and the flagged rows."""
    tables: dict = {}
    flagged: list = []
    if not has_ledger(folder):
        return tables, flagged
    with Ledger(ledger_path(folder)) as ledger:
        for kind in RECORD_KINDS:
            observations = ledger.observations(kind=kind)
            if observations.empty:
                continue
            tables[kind] = summarise(kind, observations)
            marked = observations[observations["flags"] != ""]
            for row in marked.drop_duplicates(["file", "source_row"]).itertuples():
                flagged.append(
                    {
                        "file": row.file,
                        "row": int(row.source_row),
                        "item": row.item_id,
                        "flags": row.flags,
                        "campaign": row.campaign,
                    }
                )
    return tables, flagged


def main_job_steps(settings: RunSettings) -> list[str]:
    """The steps the main job runs with these settings, in order."""
    wanted = {"life": settings.life, "worth": settings.worth, "history": settings.history}
    return [name for name in STEP_TITLES if wanted.get(name, True)]


def run_site(
    folder: Path, settings: RunSettings | None = None, *, say: Callable[[str], None] | None = None
) -> SiteRun:
    """Run the main job on a site folder; every step's outcome is in the returned run.

    Raises
    ------
    InputError
        The site file or a new campaign file is wrong (nothing is imported then).
    """
    folder = Path(folder)
    site = load_site(folder)
    settings = settings or settings_for_site(site)
    say = say or (lambda _text: None)
    say("Importing new campaign files")
    import_site(folder)
    run = SiteRun(site, settings, say=say)
    run.data_summaries, run.flagged = data_summaries(folder)
    steps = main_job_steps(settings)
    if "history" in steps:
        run.cutoff_prefetch = start_cutoff_prefetch(site, settings)
    try:
        for name in steps:
            try:
                run_step(run, name)
            except (AnalysisError, InputError):
                continue  # recorded in run.records; the report shows it as not available
    finally:
        if run.cutoff_prefetch is not None:
            run.cutoff_prefetch.stop()
    return run


def settings_for_site(site, **options) -> RunSettings:
    """`RunSettings` with the site file's ``[sampling]`` tables and the given options."""
    return build_settings(
        site_sampling=getattr(site, "sampling", None),
        site_verdict_calls=getattr(site, "verdict_calls", None),
        **options,
    )


def exit_code(run: SiteRun) -> int:
    """0 when every step that ran is done; 2 when a failure came from bad input; else 1."""
    failed = run.failed
    if not failed:
        return 0
    return 2 if any(r.input_problem for r in failed) else 1


__all__ = [
    "RECORD_KINDS",
    "RunSettings",
    "data_summaries",
    "exit_code",
    "main_job_steps",
    "run_site",
    "settings_for_site",
]
