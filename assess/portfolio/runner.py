"""Run a portfolio: every site with new data or changed settings, on Dask; skip the rest.

For each site the client computes the content hash (`assess.portfolio.hashing`)
and compares it with the site's latest line in the portfolio record
(`assess.portfolio.record`). Unchanged sites are not run; their last outcome is
used. The others become one Dask task each (`assess.portfolio.tasks.site_task`)
given the site folder and the settings; each task runs the main job in its
site folder and returns plain numbers. The client appends one record line per
finished site, as it finishes, then writes the portfolio page. A failed site
is recorded with its reason; the others finish.

When nothing ran and the sites' hashes are those of the last portfolio page,
no file is written at all.
"""

from __future__ import annotations

import dataclasses
import time
from collections.abc import Callable
from pathlib import Path

from assess.errors import InputError
from assess.portfolio.hashing import site_hash
from assess.portfolio.portfolio_file import Portfolio
from assess.portfolio.record import Record, can_skip
from assess.portfolio.site_job import SETTING_KEYS
from assess.portfolio.tasks import STEP_TOPIC, site_task


class Progress:
    """Callbacks of a portfolio run (all optional to override; the default does nothing)."""

    def begin(self, to_run: list[str], skipped: list[str], executor: str) -> None:
        """Sites about to run and sites skipped, and where they run."""

    def step(self, key: str, text: str) -> None:
        """A site started a step of the main job."""

    def finished(self, key: str, outcome: dict) -> None:
        """A site finished (``outcome["status"]`` is "done" or "failed")."""


@dataclasses.dataclass
class PortfolioRun:
    """Outcome of `run_portfolio`.

    Attributes
    ----------
    portfolio : Portfolio
    outcomes : dict
        Site key -> latest outcome (``status``, ``summary`` or ``error_kind`` and
        ``message``, ``hash``, ``seconds``, ``worker``, ``skipped``), in
        portfolio order.
    ran, skipped, failed : list of str
        Site keys run now, not run (unchanged), failed (now or before).
    report_html, report_json : Path or None
        The portfolio page and its numbers (None if no page was ever written).
    executor : str
        Where the sites ran.
    seconds : float
        Wall time of the run [s].
    """

    portfolio: Portfolio
    outcomes: dict
    ran: list
    skipped: list
    failed: list
    report_html: Path | None
    report_json: Path | None
    executor: str
    seconds: float


def run_settings(portfolio: Portfolio, overrides: dict | None = None) -> dict:
    """The portfolio's ``[run]`` settings with the given overrides (None values ignored)."""
    settings = dict(portfolio.settings)
    for key, value in (overrides or {}).items():
        if key not in SETTING_KEYS:
            raise InputError(f"unknown run setting; known: {', '.join(SETTING_KEYS)}",
                             column=key)
        if value is not None:
            settings[key] = value
    return settings


def run_portfolio(portfolio: Portfolio, *, overrides: dict | None = None,
                  scheduler: str | None = None, workers: int | None = None, force: bool = False,
                  sequential: bool = False, job: Callable | None = None,
                  progress: Progress | None = None, client=None) -> PortfolioRun:
    """Run the sites of ``portfolio`` that changed since their last run, and summarise.

    Parameters
    ----------
    portfolio : Portfolio
        From `assess.portfolio.portfolio_file.load_portfolio`.
    overrides : dict, optional
        Main-job settings that replace the portfolio's ``[run]`` values.
    scheduler : str, optional
        Dask scheduler address (default: the portfolio's ``[cluster] scheduler``,
        else a local cluster).
    workers : int, optional
        Local cluster size (default: the portfolio's, else one per core).
    force : bool
        Run every site, changed or not.
    sequential : bool
        Run the sites one after another in this process (no Dask).
    job : callable, optional
        ``job(folder, settings, step=...) -> dict``, default the main job
        (`assess.portfolio.site_job.run_one_site`); tests pass a light one.
    progress : Progress, optional
    client : distributed.Client, optional
        An open client to use instead of making one.
    """
    started = time.perf_counter()
    progress = progress or Progress()
    settings = run_settings(portfolio, overrides)
    record = Record(portfolio.folder)
    latest = record.latest_sites()
    hashes = {s.key: site_hash(s.folder, settings) for s in portfolio.sites}
    to_run = [s for s in portfolio.sites if force or not can_skip(latest.get(s.key), hashes[s.key])]
    skipped = [s.key for s in portfolio.sites if s not in to_run]
    outcomes: dict[str, dict] = {s.key: {**latest[s.key], "skipped": True} for s in
                                 portfolio.sites if s.key in skipped}

    def finish(entry, outcome: dict) -> None:
        line = {"kind": "site", "site_key": entry.key, "folder": str(entry.folder),
                "hash": hashes[entry.key], "settings": settings, **outcome}
        outcomes[entry.key] = {**record.append(line), "skipped": False}
        progress.finished(entry.key, outcome)

    executor = "nothing to run"
    if to_run:
        if sequential:
            executor = "this process, one site after another"
            progress.begin([s.key for s in to_run], skipped, executor)
            for entry in to_run:
                finish(entry, site_task(entry.key, str(entry.folder), settings, job,
                                        step=lambda text, k=entry.key: progress.step(k, text)))
        else:
            executor = _run_on_dask(to_run, skipped, settings, job, progress, finish,
                                    scheduler or portfolio.scheduler, workers or portfolio.workers,
                                    client)
    else:
        progress.begin([], skipped, executor)
    ordered = {s.key: outcomes[s.key] for s in portfolio.sites}
    failed = [k for k, o in ordered.items() if o.get("status") != "done"]
    html, json_path = _summary_page(portfolio, record, ordered, hashes, to_run, skipped, executor,
                                    time.perf_counter() - started)
    return PortfolioRun(portfolio, ordered, [s.key for s in to_run], skipped, failed, html,
                        json_path, executor, time.perf_counter() - started)


def _run_on_dask(to_run, skipped, settings, job, progress, finish, scheduler, workers,
                 client) -> str:
    from contextlib import nullcontext

    from distributed import as_completed

    from assess.portfolio.cluster import open_client

    context = nullcontext((client, "the given Dask client")) if client is not None \
        else open_client(scheduler, workers)
    with context as (dask_client, executor):
        progress.begin([s.key for s in to_run], skipped, executor)

        def on_event(event) -> None:
            _time, message = event
            if isinstance(message, dict) and "site" in message:
                progress.step(message["site"], message.get("step", ""))

        dask_client.subscribe_topic(STEP_TOPIC, on_event)
        try:
            futures = {dask_client.submit(site_task, s.key, str(s.folder), settings, job,
                                          pure=False, key=f"assess-site-{s.key}-{time.time_ns()}"): s
                       for s in to_run}
            for future in as_completed(futures):
                entry = futures[future]
                try:
                    outcome = future.result()
                except Exception as exc:  # noqa: BLE001 - a lost worker, a task that could not run
                    outcome = {"status": "failed", "error_kind": "lost",
                               "message": f"{type(exc).__name__}: {exc}", "warnings": [],
                               "seconds": None, "steps": [], "worker": None}
                finish(entry, outcome)
        finally:
            dask_client.unsubscribe_topic(STEP_TOPIC)
    return executor


def _summary_page(portfolio, record, outcomes, hashes, to_run, skipped, executor, seconds):
    """Write the portfolio page unless nothing ran and the last page shows the same hashes."""
    last_page = next((e for e in reversed(record.entries()) if e.get("kind") == "portfolio"), None)
    folder = Path(portfolio.folder)
    if not to_run and last_page is not None and last_page.get("hashes") == hashes:
        return (folder / last_page["report_html"], folder / last_page["report_json"])
    from assess.portfolio.report import write_portfolio_report
    from assess.portfolio.summary import (
        failed_rows,
        member_rows,
        site_rows,
        warning_rows,
    )

    run_info = {"ran": [s.key for s in to_run], "skipped": skipped, "executor": executor,
                "seconds": seconds,
                "site_seconds": {k: o.get("seconds") for k, o in outcomes.items()
                                 if not o.get("skipped")},
                "site_steps": {k: o.get("steps") for k, o in outcomes.items()
                               if not o.get("skipped")}}
    html, json_path = write_portfolio_report(
        folder, name=portfolio.name, rows=site_rows(outcomes), members=member_rows(outcomes),
        failed=failed_rows(outcomes), run_info=run_info,
        site_folders={s.key: s.folder for s in portfolio.sites}, warnings=warning_rows(outcomes))
    record.append({"kind": "portfolio", "hashes": hashes, "ran": run_info["ran"],
                   "skipped": skipped, "failed": [k for k, o in outcomes.items()
                                                  if o.get("status") != "done"],
                   "executor": executor, "seconds": seconds,
                   "report_html": str(html.relative_to(folder)),
                   "report_json": str(json_path.relative_to(folder))})
    return html, json_path
