"""``assess run``: the main job, from a site folder to the finished report."""

from __future__ import annotations

from typing import Annotated

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import _fmt_beta, fmt_interval
from assess.cli.options import (
    DrawsOption,
    JsonFlag,
    QuickFlag,
    SamplerOption,
    SamplesOption,
    SamplingOption,
    SeedOption,
    SiteFolder,
    TargetAcceptOption,
    TuneOption,
    VerdictCallsOption,
    load_checked_site,
    make_settings,
)
from assess.site.settings import DEFAULT_SEED


@app.command("run")
@guard
def run_command(folder: SiteFolder, seed: SeedOption = DEFAULT_SEED, draws: DrawsOption = None,
                tune: TuneOption = None, target_accept: TargetAcceptOption = None,
                sampler: SamplerOption = None, sampling: SamplingOption = None,
                quick: QuickFlag = False, samples: SamplesOption = None,
                verdict_calls: VerdictCallsOption = None,
                history: Annotated[bool, typer.Option("--history/--no-history",
                                                      help="Re-assess campaign by campaign.")] = True,
                json_output: JsonFlag = False):
    """Assess a site from its folder to a finished report in one step.

    Imports new campaign files, updates the zones with the tests (MCMC, gated),
    computes beta before and after for every member [-], the remaining-life
    curves, the value of further testing (if decisions.toml exists) and the
    history over campaigns, then writes an HTML report and a JSON of all numbers
    to results/reports/ (new files every run; nothing is overwritten). A step that
    fails is reported as not available, with what to do, and the others still
    run; the exit code is then 1 (2 when the failure came from bad input).
    """
    from rich.progress import Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

    from assess.pipeline import exit_code
    from assess.report.job import run_and_report

    site = load_checked_site(folder)
    settings = make_settings(site, seed=seed, quick=quick, draws=draws, tune=tune,
                             target_accept=target_accept, sampler=sampler, sampling=sampling,
                             reliability_samples=samples, history=history,
                             verdict_calls=verdict_calls)
    with Progress(SpinnerColumn(), TextColumn("{task.description}"), TimeElapsedColumn(),
                  console=err_console, transient=False) as progress:
        current = {"task": None}

        def step(text: str) -> None:
            if current["task"] is not None:
                progress.update(current["task"], completed=1, total=1)
            current["task"] = progress.add_task(text.replace("[", r"\["), total=None)

        run, html_path, json_path = run_and_report(folder, settings, say=step)
        if current["task"] is not None:
            progress.update(current["task"], completed=1, total=1)
    code = exit_code(run)
    members = run.result("members")
    if json_output:
        emit_json({"report": str(html_path), "numbers": str(json_path),
                   "steps": {name: r.to_dict() for name, r in run.records.items()},
                   "results": [r.to_dict() for r in members.results] if members else []})
    else:
        if members is not None:
            _print_members(members)
        for record in run.failed:
            err_console.print(f"Not available: {record.title}. {record.reason}",
                              highlight=False, markup=False, soft_wrap=True)
            if record.fix:
                err_console.print(f"What to do: {record.fix}", highlight=False, markup=False,
                                  soft_wrap=True)
        out_console.print(f"Report: {html_path}", highlight=False, markup=False)
        out_console.print(f"Numbers: {json_path}", highlight=False, markup=False)
        print_caution()
    if code:
        raise typer.Exit(code=code)


def _print_members(assessment) -> None:
    target = assessment.target
    table = Table(title=f"Member systems: beta after updating against the target {target.beta:.1f}")
    for col in ("member", "mode", "beta before", "beta after", "interval", "verdict"):
        table.add_column(col)
    results = assessment.results
    for r in results:
        if r.mode == "system" or not any(o.member == r.member and o.mode == "system"
                                         for o in results):
            table.add_row(r.member, r.mode, _fmt_beta(r.before.beta), _fmt_beta(r.after.beta),
                          fmt_interval(r.interval_after), r.verdict)
    out_console.print(table)
