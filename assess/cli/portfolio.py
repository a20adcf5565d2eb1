"""``assess portfolio``: many sites, one ranking of where to act and test first.

``assess portfolio run`` runs the main job on every site of a portfolio that has
new data or changed settings (on a Dask cluster: a local one by default, or
``--scheduler ADDRESS``), skips the others, and writes the portfolio page.
``assess portfolio show`` prints the latest summary without running anything.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer
from rich.table import Table

from assess.cli.app import (
    app,
    emit_json,
    err_console,
    guard,
    out_console,
    print_caution,
)

portfolio_app = typer.Typer(help="A portfolio of sites: run them on Dask, rank where to act first.",
                            no_args_is_help=True)

PortfolioArg = Annotated[Path, typer.Argument(
    help="The portfolio folder (site folders inside, optional portfolio.toml) or its portfolio.toml.")]
JsonFlag = Annotated[bool, typer.Option("--json", help="Print only JSON on stdout.")]
MembersFlag = Annotated[bool, typer.Option("--members", help="Also list every member of every site.")]


class _RichProgress:
    """One bar for the portfolio (sites done / failed) and a line per running site with its step."""

    def __init__(self, progress):
        self.progress = progress
        self.bar = None
        self.lines: dict = {}
        self.done = 0
        self.failed = 0
        self.total = 0

    def _describe(self) -> str:
        return f"Portfolio: {self.done} done, {self.failed} failed, {self.total} to run"

    def begin(self, to_run, skipped, executor):
        self.total = len(to_run)
        err_console.print(f"{len(to_run)} site(s) to run on {executor}; "
                          f"{len(skipped)} unchanged (not run).", highlight=False)
        self.bar = self.progress.add_task(self._describe(), total=max(1, len(to_run)))

    def step(self, key, text):
        if key not in self.lines:
            self.lines[key] = self.progress.add_task(f"  {key}: {text}", total=None)
        else:
            self.progress.update(self.lines[key], description=f"  {key}: {text}")

    def finished(self, key, outcome):
        if outcome.get("status") == "done":
            self.done += 1
        else:
            self.failed += 1
        if key in self.lines:
            self.progress.remove_task(self.lines.pop(key))
        self.progress.update(self.bar, advance=1, description=self._describe())


def _site_table(rows: list[dict]) -> Table:
    from assess.portfolio.report import table_rows

    table = Table(title="Where to act and test first (most urgent first)")
    formatted = table_rows(rows)
    columns = ("rank", "site", "governing member", "beta now", "target",
               "remaining life", "recommended action", "further testing", "cost of keeping as is",
               "last campaign")
    for column in columns:
        table.add_column(column)
    for row in formatted:
        table.add_row(*(str(row[c]) for c in columns))
    return table


def _member_table(members: list[dict]) -> Table:
    from assess.reliability.result import format_beta

    table = Table(title="Members of every site (member system after updating)")
    for column in ("site", "member", "governing mode", "beta before", "beta now", "target",
                   "verdict", "remaining life"):
        table.add_column(column)
    for m in members:
        table.add_row(m["site"], m["member"] + (" *" if m["governs site"] else ""),
                      m["governing mode"], format_beta(m["beta before"], minus_infinity="-"),
                      format_beta(m["beta now"], minus_infinity="-"), f"{m['target']:.2f}",
                      m["verdict"], m["remaining life"])
    return table


def _print_summary(name, outcomes, html, json_path, ran, skipped, json_output, members_flag):
    from assess.portfolio.ranking import RULE
    from assess.portfolio.summary import failed_rows, member_rows, site_rows

    rows, members, failed = site_rows(outcomes), member_rows(outcomes), failed_rows(outcomes)
    if json_output:
        emit_json({"portfolio": name, "report": html, "numbers": json_path, "ran": ran,
                   "skipped": skipped, "rule": RULE, "sites": rows, "members": members,
                   "failed": failed})
        return failed
    out_console.print(_site_table(rows))
    if members_flag:
        out_console.print(_member_table(members))
    for f in failed:
        out_console.print(f"[bold red]Failed:[/] {f['site']} ({f['failure']}): {f['reason']}",
                          highlight=False, soft_wrap=True)
    out_console.print(f"Urgency rule: {RULE}", highlight=False, soft_wrap=True)
    if html is not None:
        out_console.print(f"Portfolio page: {html}")
        out_console.print(f"Numbers: {json_path}")
    print_caution()
    return failed


@portfolio_app.command("run")
@guard
def run_command(
        portfolio: PortfolioArg,
        scheduler: Annotated[str | None, typer.Option(
            "--scheduler", help="Address of an existing Dask scheduler (tcp://host:8786); "
                                "default: the portfolio file's, else a local cluster.")] = None,
        workers: Annotated[int | None, typer.Option(
            "--workers", min=1, help="Local cluster worker processes (default: one per core).")] = None,
        sequential: Annotated[bool, typer.Option(
            "--sequential", help="No Dask: run the sites one after another in this process.")] = False,
        force: Annotated[bool, typer.Option("--force", help="Run every site, changed or not.")] = False,
        seed: Annotated[int | None, typer.Option("--seed", help="Seed of every site's job.")] = None,
        draws: Annotated[int | None, typer.Option("--draws", min=1,
                                                     help="MCMC draws per chain.")] = None,
        quick: Annotated[bool | None, typer.Option(
            "--quick/--full", help="Smaller runs for a first look (default: the portfolio file's).")] = None,
        history: Annotated[bool | None, typer.Option(
            "--history/--no-history", help="Re-assess each site campaign by campaign.")] = None,
        members: MembersFlag = False,
        json_output: JsonFlag = False):
    """Run every site with new data or changed settings, skip the rest, rank them all.

    Each site keeps its own ledger and report. A site is run again when its
    site.toml, decisions.toml, campaign files or the run settings changed
    (content hash). The ranking (most urgent first) and a page with an overview
    plot are written to <portfolio>/results/reports/. Exit code 1 when a site
    failed (the others are still run and ranked).
    """
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        Progress,
        SpinnerColumn,
        TextColumn,
        TimeElapsedColumn,
    )

    from assess.portfolio import load_portfolio, run_portfolio

    chosen = load_portfolio(portfolio)
    overrides = {"seed": seed, "draws": draws, "quick": quick, "history": history}
    with Progress(SpinnerColumn(), TextColumn("{task.description}"), BarColumn(),
                  MofNCompleteColumn(), TimeElapsedColumn(), console=err_console,
                  transient=False) as bar:
        result = run_portfolio(chosen, overrides=overrides, scheduler=scheduler, workers=workers,
                               force=force, sequential=sequential, progress=_RichProgress(bar))
    failed = _print_summary(chosen.name, result.outcomes, result.report_html, result.report_json,
                            result.ran, result.skipped, json_output, members)
    if failed:
        raise typer.Exit(code=1)


@portfolio_app.command("show")
@guard
def show_command(portfolio: PortfolioArg, members: MembersFlag = False,
                 json_output: JsonFlag = False):
    """Print the latest ranking of a portfolio from its record, without running anything."""
    from assess.errors import InputError
    from assess.portfolio import load_portfolio
    from assess.portfolio.record import Record

    chosen = load_portfolio(portfolio)
    record = Record(chosen.folder)
    latest = record.latest_sites()
    outcomes = {s.key: latest[s.key] for s in chosen.sites if s.key in latest}
    if not outcomes:
        raise InputError("no site of this portfolio has been run yet: run "
                         "'assess portfolio run' first", file=record.path)
    page = next((e for e in reversed(record.entries()) if e.get("kind") == "portfolio"), None)
    html = chosen.folder / page["report_html"] if page else None
    numbers = chosen.folder / page["report_json"] if page else None
    never = [s.key for s in chosen.sites if s.key not in latest]
    if never and not json_output:
        err_console.print(f"Never run: {', '.join(never)}", highlight=False)
    _print_summary(chosen.name, outcomes, html, numbers, [], list(outcomes), json_output, members)


app.add_typer(portfolio_app, name="portfolio")
