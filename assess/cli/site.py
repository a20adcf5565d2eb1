"""``assess site ...``: create a site folder, import campaign files, list and summarise them.

Results go to stdout (``--json``: JSON only); messages go to stderr. Bad input exits
with code 2 and a one-paragraph message, never a traceback.
"""

from __future__ import annotations

import datetime as dt
import json
from importlib import resources
from pathlib import Path
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, err_console, guard, out_console
from assess.errors import InputError
from inspection_io.importing import ImportReport, import_file, import_site
from inspection_io.ledger import LEDGER_NAME, Ledger
from inspection_io.readers import KINDS
from inspection_io.site import load_site
from inspection_io.summary import KIND_QUANTITIES, summarise, summary_to_dict

site_app = typer.Typer(
    name="site",
    help="Site folders: create one, import campaign files into its ledger, list, summarise.",
    no_args_is_help=True,
)
app.add_typer(site_app, name="site")

FIRST_CAMPAIGN_FOLDER = "first-survey"
SUMMARY_ORDER = ("cores",) + tuple(KIND_QUANTITIES)

SiteFolder = Annotated[Path, typer.Argument(help="The site folder (holding site.toml).")]
JsonFlag = Annotated[bool, typer.Option("--json", help="Print only JSON on stdout.")]


def _template(name: str) -> str:
    return (resources.files("inspection_io") / "templates" / name).read_text(encoding="utf-8")


def _print_json(value) -> None:
    typer.echo(json.dumps(value, indent=2, ensure_ascii=False))


def _existing_ledger(folder: Path) -> Ledger | None:
    if not folder.is_dir():
        raise InputError("site folder not found", file=folder)
    path = folder / LEDGER_NAME
    return Ledger(path) if path.is_file() else None


@site_app.command("new")
@guard
def new(folder: Annotated[Path, typer.Argument(help="Folder for the new site; created if "
                                                    "missing.")]):
    """Create a site folder: site.toml and a first campaign folder, from templates."""
    site_file = folder / "site.toml"
    if site_file.exists():
        raise InputError("a site file already exists here; it is never overwritten",
                         file=site_file)
    if folder.exists() and not folder.is_dir():
        raise InputError("expected a folder, found a file", file=folder)
    campaign_dir = folder / "campaigns" / FIRST_CAMPAIGN_FOLDER
    campaign_file = campaign_dir / "campaign.toml"
    campaign_dir.mkdir(parents=True, exist_ok=True)
    site_file.write_text(_template("site.toml"), encoding="utf-8")
    if not campaign_file.exists():
        campaign_file.write_text(_template("campaign.toml"), encoding="utf-8")
    typer.echo(str(site_file))
    typer.echo(str(campaign_file))
    err_console.print("Created the site folder. Replace the placeholder values in site.toml "
                      "and campaign.toml, put the campaign's CSV/XLSX files beside "
                      f"campaign.toml, then run: assess site import {folder}",
                      highlight=False, soft_wrap=True)


@site_app.command("import")
@guard
def import_(
    folder: SiteFolder,
    file: Annotated[Optional[Path], typer.Argument(
        help="One campaign file (.csv or .xlsx). Omit it to import every campaign folder.")]
    = None,
    campaign: Annotated[Optional[str], typer.Option(
        "--campaign", help="Campaign name for FILE (default: from campaign.toml beside it).")]
    = None,
    kind: Annotated[Optional[str], typer.Option(
        "--kind", help=f"Kind of record in FILE: {', '.join(KINDS)} (default: from the "
                       "headers).")] = None,
    date: Annotated[Optional[str], typer.Option(
        "--date", help="Date YYYY-MM-DD of a new campaign that has no campaign.toml.")] = None,
    json_output: JsonFlag = False,
):
    """Import campaign files into the site's ledger; a file already imported is skipped."""
    if file is None:
        given = [name for name, value in (("--campaign", campaign), ("--kind", kind),
                                          ("--date", date)) if value is not None]
        if given:
            raise InputError(f"{', '.join(given)} apply to one file: give FILE, or drop them "
                             f"to import every campaign folder", column=given[0])
        reports = import_site(folder, on_report=None if json_output else _print_report)
    else:
        campaign_date = None
        if date is not None:
            try:
                campaign_date = dt.date.fromisoformat(date)
            except ValueError:
                raise InputError(f"expected a date YYYY-MM-DD, got '{date}'",
                                 column="--date") from None
        reports = [import_file(folder, file, campaign=campaign, kind=kind,
                               campaign_date=campaign_date)]
        if not json_output:
            _print_report(reports[0])
    if json_output:
        _print_json([r.to_dict() for r in reports])
    elif not reports:
        err_console.print("No campaign files found under campaigns/.", highlight=False)


def _print_report(report: ImportReport) -> None:
    typer.echo(report.message)
    for note in report.notes:
        err_console.print(f"  {report.path.name}: {note}", highlight=False, soft_wrap=True)


@site_app.command("campaigns")
@guard
def campaigns(folder: SiteFolder, json_output: JsonFlag = False):
    """List the imported campaigns and their files."""
    ledger = _existing_ledger(folder)
    records = []
    if ledger is not None:
        with ledger:
            for campaign in ledger.campaigns():
                files = [{"name": f.name, "kind": f.kind, "rows": f.row_count,
                          "sha256": f.sha256, "imported_at": f.imported_at}
                         for f in ledger.files(campaign.id)]
                records.append({"name": campaign.name, "date": campaign.date.isoformat(),
                                "description": campaign.description, "files": files})
    if json_output:
        _print_json(records)
        return
    if not records:
        err_console.print("No campaigns imported yet.", highlight=False)
        return
    table = Table(title="Campaigns and files")
    for column in ("campaign", "date", "file", "kind", "rows", "sha256"):
        table.add_column(column, justify="right" if column == "rows" else "left")
    for campaign in records:
        for i, f in enumerate(campaign["files"]):
            table.add_row(campaign["name"] if i == 0 else "", campaign["date"] if i == 0 else "",
                          f["name"], f["kind"], str(f["rows"]), f["sha256"][:12])
    out_console.print(table)


@site_app.command("summary")
@guard
def summary(
    folder: SiteFolder,
    include_flagged: Annotated[Optional[list[str]], typer.Option(
        "--include-flagged", help="Use observations carrying this screening flag too "
                                  "(repeat for several flags).")] = None,
    json_output: JsonFlag = False,
):
    """Per-zone summary of everything imported: cores, cover, carbonation, chloride, ..."""
    load_site(folder)
    ledger = _existing_ledger(folder)
    if ledger is None:
        raise InputError("nothing imported yet: run 'assess site import' first", file=folder)
    with ledger:
        observations = ledger.observations()
    options = {"include_flagged": set(include_flagged) if include_flagged else None}
    tables = {}
    for kind in SUMMARY_ORDER:
        selected = observations[observations["kind"] == kind]
        if len(selected):
            tables[kind] = summarise(kind, selected, **options)
    if json_output:
        _print_json({kind: summary_to_dict(frame) for kind, frame in tables.items()})
        return
    if not tables:
        err_console.print("No observations in the ledger yet.", highlight=False)
        return
    for kind, frame in tables.items():
        out_console.print(_cores_table(frame) if kind == "cores" else _quantity_table(kind, frame))


def _number(value, digits: int = 3) -> str:
    return "-" if value is None or value != value else f"{value:.{digits}g}"


def _cores_table(frame) -> Table:
    table = Table(title="Cores: in-situ strength by zone [MPa] (EN 1990 Annex D characteristic)")
    for column in ("zone", "n used/total", "mean", "std", "CoV", "char. V unknown",
                   "char. V known"):
        table.add_column(column, justify="left" if column == "zone" else "right")
    for row in frame.to_dict("records"):
        table.add_row(str(row["zone"]), f"{row['n']}/{row['n_total']}", _number(row["mean"]),
                      _number(row["std"]), _number(row["cov"], 2),
                      _number(row["characteristic_v_unknown"]),
                      _number(row["characteristic_v_known"]))
    return table


def _quantity_table(kind: str, frame) -> Table:
    table = Table(title=f"{kind.replace('_', ' ').capitalize()} by zone")
    for column in ("zone", "quantity", "unit", "n used/total", "mean", "std", "min", "max"):
        table.add_column(column, justify="left" if column in ("zone", "quantity", "unit")
                         else "right")
    for row in frame.to_dict("records"):
        table.add_row(str(row["zone"]), row["quantity"], row["unit"],
                      f"{row['n']}/{row['n_total']}", _number(row["mean"]), _number(row["std"]),
                      _number(row["min"]), _number(row["max"]))
    return table
