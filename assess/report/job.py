"""The main job with its report: run every step on a site, then write the report.

The library's `assess.pipeline.run_site` computes and records; this module adds
the report (HTML + JSON of all numbers, written as a pair, never overwriting).
The report is written whatever steps failed: each failed step has a "not
available" section saying why and what to do.
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

from assess.pipeline import run_site
from assess.report import figure_cache
from assess.report.assemble import build_report
from assess.report.writer import recover_unfinished_reports, write_report
from assess.site import result_cache
from assess.site.paths import reports_folder
from assess.site.settings import RunSettings
from assess.updating.cache import clean_stale_temporaries
from inspection_io.locking import site_lock

LOCK_WAIT_SECONDS = 60.0
"""How long a second run on the same site waits for the first before it gives up [s]."""


def write_site_report(run) -> tuple[Path, Path]:
    """Write the report of a `SiteRun`; returns the HTML and JSON paths."""
    document, numbers = build_report(run)
    folder = reports_folder(run.site.folder)
    html_path, json_path = write_report(folder, folder, document, numbers)
    return Path(html_path), Path(json_path)


def run_and_report(folder: Path, settings: RunSettings | None = None, *,
                   say: Callable[[str], None] | None = None):
    """`run_site` and `write_site_report` under the site lock: (run, html_path, json_path).

    A second run on the same site waits up to `LOCK_WAIT_SECONDS` and is then
    refused (`inspection_io.locking.SiteBusyError`); files left half-written by a
    run that was killed are removed first.
    """
    with site_lock(folder, wait_seconds=LOCK_WAIT_SECONDS):
        recover_unfinished_reports([reports_folder(folder)], older_than=0)
        clean_stale_temporaries(folder)
        result_cache.clean_stale_temporaries(folder)
        figure_cache.clean_stale_temporaries(folder)
        run = run_site(folder, settings, say=say)
        if say:
            say("Writing the report")
        html_path, json_path = write_site_report(run)
    return run, html_path, json_path


__all__ = ["run_and_report", "write_site_report"]
