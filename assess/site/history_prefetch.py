"""Sample the history step's cut-off fits in the background while the main job goes on.

The history step (`assess.site.history`) re-assesses the site as it was known after each
campaign; every campaign but the last needs a materials fit of its own (the last one has
all the data: the materials step's fit). Those fits depend on nothing the other steps
compute, and the main job leaves a core idle for much of its run (the member reliability,
remaining-life and value-of-information steps run on one core; only MCMC chains use
both). So the main job starts them at once in one background process, its chains one
after another on one core, and the history step waits for that process before it reads
the fits back from the posterior store (`assess.updating.cache`, found by the hash of
their data and settings).

Nothing depends on the background process but the time: a fit it did not finish, or
that failed, is sampled (or fails, with its message) in the history step itself, exactly
as without it. It is not started when the run has one core for its chains
(``ASSESS_MCMC_CORES=1``, as in a portfolio task on a Dask worker).
"""

from __future__ import annotations

import datetime as dt
import os
import warnings
from pathlib import Path

from assess.site.settings import RunSettings

WAIT_SECONDS = 3600.0
"""Longest wait of the history step for the background fits [s]; after it the step
samples what is missing itself."""


class CutoffPrefetch:
    """The background process sampling the cut-off fits of one run."""

    def __init__(self, process, until_dates: list[dt.date]):
        self.process = process
        self.until_dates = until_dates

    def wait(self, timeout: float = WAIT_SECONDS) -> bool:
        """Wait for the background fits; True when the process ended by itself."""
        self.process.join(timeout)
        if self.process.is_alive():
            self.stop()
            return False
        return True

    def stop(self) -> None:
        """End the background process (a fit in progress is lost, nothing half-written:
        the posterior store writes whole files only)."""
        if self.process.is_alive():
            self.process.terminate()
            self.process.join(10)


def cutoff_dates(folder: Path) -> list[dt.date]:
    """Last observation date of every campaign but the last, oldest first (the cut-offs
    of `assess.site.history.campaign_cutoffs` that need a fit of their own)."""
    from assess.site.history import campaign_cutoffs
    from assess.site.paths import has_ledger, ledger_path
    from inspection_io.ledger import Ledger

    if not has_ledger(folder):
        return []
    with Ledger(ledger_path(folder)) as ledger:
        cutoffs = campaign_cutoffs(ledger)
    return [until for _, _, until in cutoffs[:-1]]


def start_cutoff_prefetch(site, settings: RunSettings) -> CutoffPrefetch | None:
    """Start sampling the history's cut-off fits in a background process (None when there
    is nothing to fit or the run has one core for its chains)."""
    from assess.updating.models import chain_processes
    from assess.updating.workers import dying_context

    if chain_processes(settings.fit("materials").chains) < 2:
        return None
    dates = cutoff_dates(site.folder)
    if not dates:
        return None
    process = dying_context().Process(
        target=fit_cutoffs,
        args=(str(site.folder), settings, dates),
        daemon=True,
        name="assess-history-fits",
    )
    process.start()
    return CutoffPrefetch(process, dates)


def fit_cutoffs(folder: str, settings: RunSettings, until_dates: list[dt.date]) -> None:
    """The materials fit of each cut-off, stored in the site's posterior store (runs in
    the background process; its chains one after another on one core)."""
    from assess.errors import AnalysisError, InputError
    from assess.site.materials import update_site
    from assess.updating.models import CORES_VARIABLE
    from inspection_io.site import load_site

    os.environ[CORES_VARIABLE] = "1"
    warnings.simplefilter("ignore")
    site = load_site(Path(folder))
    for until in until_dates:
        try:
            update_site(site, settings=settings, until_date=until)
        except (AnalysisError, InputError):
            continue  # the history step meets the same failure itself and reports it


__all__ = ["CutoffPrefetch", "WAIT_SECONDS", "cutoff_dates", "fit_cutoffs", "start_cutoff_prefetch"]
