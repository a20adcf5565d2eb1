"""``assess run``: the main job, from a site folder to the finished report."""

from __future__ import annotations

from typing import Annotated

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import (DrawsOption, JsonFlag, QuickFlag, SeedOption, SiteFolder,
                                _fmt_beta, load_checked_site)


@app.command("run")
@guard
def run_command(folder: SiteFolder, seed: SeedOption = 20261202, draws: DrawsOption = 1000,
                quick: QuickFlag = False,
                history: Annotated[bool, typer.Option("--history/--no-history",
                                                      help="Re-assess campaign by campaign.")] = True,
                json_output: JsonFlag = False):
    """Assess a site from its folder to a finished report in one step.

    Imports new campaign files, updates the zones with the tests (MCMC, gated),
    computes beta before and after for every member [-], the remaining-life
    curves, the value of further testing (if decisions.toml exists) and the
    history over campaigns, then writes an HTML report and a JSON of all numbers
    to results/reports/ (new files every run; nothing is overwritten).
    """
    from rich.progress import Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

    from assess.main_job import JobSettings, run_site

    load_checked_site(folder)
    settings = JobSettings(seed=seed, quick=quick, draws=draws, history=history)
    with Progress(SpinnerColumn(), TextColumn("{task.description}"), TimeElapsedColumn(),
                  console=err_console, transient=False) as progress:
        current = {"task": None}

        def step(text: str) -> None:
            if current["task"] is not None:
                progress.update(current["task"], completed=1, total=1)
            current["task"] = progress.add_task(text, total=None)

        run, html_path, json_path = run_site(folder, settings, step=step)
        if current["task"] is not None:
            progress.update(current["task"], completed=1, total=1)
    if json_output:
        emit_json({"report": str(html_path), "numbers": str(json_path),
                               "results": [r.to_dict() for r in run.assessment.results]})
        return
    target = run.assessment.target
    table = Table(title=f"Member systems: beta after updating against the target {target.beta:.1f}")
    for col in ("member", "mode", "beta before", "beta after", "verdict"):
        table.add_column(col)
    for r in run.assessment.results:
        if r.mode == "system" or not any(o.member == r.member and o.mode == "system"
                                         for o in run.assessment.results):
            table.add_row(r.member, r.mode, _fmt_beta(r.before.beta), _fmt_beta(r.after.beta),
                          r.verdict)
    out_console.print(table)
    out_console.print(f"Report: {html_path}")
    out_console.print(f"Numbers: {json_path}")
    print_caution()
