"""``assess site ...``: create a site folder, import, withdraw, list, summarise and check.

Results go to stdout (``--json``: JSON only); messages go to stderr. Bad input exits
with code 2 and a one-paragraph message, never a traceback. ``check`` exits 1 when it
finds damage. Commands that write the ledger (``import``, ``withdraw``) hold the site
lock (`inspection_io.locking.site_lock`), so a second process waits for them.
"""

from __future__ import annotations

import datetime as dt
import json
import os
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, err_console, guard, out_console
from assess.errors import InputError

if TYPE_CHECKING:
    from inspection_io.importing import ImportReport
    from inspection_io.ledger import FileRecord, Ledger

# The readers and the ledger load pandas; they are imported inside the commands, so that
# ``assess --help`` starts quickly. The record kinds for the help text are listed here
# (tests/test_cli_startup.py checks them against `inspection_io.readers.KINDS`).
RECORD_KINDS = ("cores", "tensile", "cover", "carbonation", "chloride", "halfcell",
                "section_loss")

site_app = typer.Typer(
    name="site",
    help="Site folders: create one, import campaign files into its ledger, withdraw a file, "
         "list, summarise, check the ledger.",
    no_args_is_help=True,
)
app.add_typer(site_app, name="site")

FIRST_CAMPAIGN_FOLDER = "first-survey"

SiteFolder = Annotated[Path, typer.Argument(help="The site folder (holding site.toml).")]
JsonFlag = Annotated[bool, typer.Option("--json", help="Print only JSON on stdout.")]
#: How long a command waits for another process working on the same site [s].
LOCK_WAIT_SECONDS = 30.0


def _template(name: str) -> str:
    return (resources.files("inspection_io") / "templates" / name).read_text(encoding="utf-8")


def _print_json(value) -> None:
    typer.echo(json.dumps(value, indent=2, ensure_ascii=False))


def _existing_ledger(folder: Path) -> Ledger | None:
    from inspection_io.ledger import LEDGER_NAME, Ledger

    if not folder.is_dir():
        raise InputError("site folder not found", file=folder)
    path = folder / LEDGER_NAME
    return Ledger(path) if os.path.lexists(path) else None


def _date_option(text: str | None, option: str) -> dt.date | None:
    if text is None:
        return None
    try:
        return dt.date.fromisoformat(text)
    except ValueError:
        raise InputError(f"expected a date YYYY-MM-DD, got '{text}'", column=option) from None


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
        "--kind", help=f"Kind of record in FILE: {', '.join(RECORD_KINDS)} (default: from the "
                       "headers).")] = None,
    date: Annotated[Optional[str], typer.Option(
        "--date", help="Date YYYY-MM-DD of a new campaign that has no campaign.toml.")] = None,
    json_output: JsonFlag = False,
):
    """Import campaign files into the site's ledger; a file already imported is skipped.

    A corrected file is refused while the old one is in force: withdraw the old one
    first (assess site withdraw), then import the corrected one.
    """
    from inspection_io.importing import import_file, import_site
    from inspection_io.locking import site_lock

    if file is None:
        given = [name for name, value in (("--campaign", campaign), ("--kind", kind),
                                          ("--date", date)) if value is not None]
        if given:
            raise InputError(f"{', '.join(given)} apply to one file: give FILE, or drop them "
                             f"to import every campaign folder", column=given[0])
        with site_lock(folder, wait_seconds=LOCK_WAIT_SECONDS):
            reports = import_site(folder, on_report=None if json_output else _print_report)
    else:
        campaign_date = _date_option(date, "--date")
        with site_lock(folder, wait_seconds=LOCK_WAIT_SECONDS):
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
                          "sha256": f.sha256, "imported_at": f.imported_at,
                          "in_force": f.in_force, "withdrawn_at": f.withdrawn_at,
                          "withdrawal_reason": f.withdrawal_reason}
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
    withdrawn = any(not f["in_force"] for c in records for f in c["files"])
    columns = ("campaign", "date", "file", "kind", "rows", "sha256") + (
        ("status",) if withdrawn else ())
    for column in columns:
        table.add_column(column, justify="right" if column == "rows" else "left")
    for campaign in records:
        for i, f in enumerate(campaign["files"]):
            status = ("" if f["in_force"] else "withdrawn",) if withdrawn else ()
            table.add_row(campaign["name"] if i == 0 else "", campaign["date"] if i == 0 else "",
                          f["name"], f["kind"], str(f["rows"]), f["sha256"][:12], *status)
    out_console.print(table)


@site_app.command("summary")
@guard
def summary(
    folder: SiteFolder,
    include_flagged: Annotated[Optional[list[str]], typer.Option(
        "--include-flagged", help="Use observations carrying this screening flag too "
                                  "(repeat for several flags).")] = None,
    as_of: Annotated[Optional[str], typer.Option(
        "--as-of", help="Summarise what the ledger held at the end of this day YYYY-MM-DD "
                        "(files imported by then and not yet withdrawn).")] = None,
    json_output: JsonFlag = False,
):
    """Per-zone summary of the files in force: cores, cover, carbonation, chloride, ..."""
    from inspection_io.site import load_site
    from inspection_io.summary import KIND_QUANTITIES, summarise, summary_to_dict

    as_of_date = _date_option(as_of, "--as-of")
    load_site(folder)
    ledger = _existing_ledger(folder)
    if ledger is None:
        raise InputError("nothing imported yet: run 'assess site import' first", file=folder)
    with ledger:
        observations = ledger.observations(as_of=as_of_date)
    options = {"include_flagged": set(include_flagged) if include_flagged else None}
    tables = {}
    for kind in ("cores",) + tuple(KIND_QUANTITIES):
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


@site_app.command("withdraw")
@guard
def withdraw(
    folder: SiteFolder,
    file: Annotated[str, typer.Argument(
        help="The imported file: its name (cores.csv), its path in the campaign folder, or "
             "the start of its SHA-256 (8 or more hex digits).")],
    reason: Annotated[str, typer.Option(
        "--reason", help="Why the file is withdrawn (kept in the ledger with the date).")],
    campaign: Annotated[Optional[str], typer.Option(
        "--campaign", help="Campaign of the file, when several campaigns have a file of "
                           "that name (default: from campaign.toml beside FILE).")] = None,
    json_output: JsonFlag = False,
):
    """Take an imported file out of force, for good, with a reason and today's date.

    Nothing is deleted: the file's rows stay in the ledger, summaries and updates leave
    them out from now on, and 'assess site summary --as-of' an earlier day still shows
    them. Import the corrected file afterwards.
    """
    from inspection_io.locking import site_lock

    ledger = _existing_ledger(folder)
    if ledger is None:
        raise InputError("nothing imported yet: there is no file to withdraw", file=folder)
    if not reason.strip():
        raise InputError("give the reason for the withdrawal", column="--reason")
    with site_lock(folder, wait_seconds=LOCK_WAIT_SECONDS), ledger:
        record = _file_to_withdraw(ledger, file, campaign)
        withdrawal = ledger.withdraw_file(record.id, reason)
        everything = ledger.observations(include_withdrawn=True)
        observations = int((everything["file_id"] == record.id).sum())
    summary = {"file": record.name, "campaign": record.campaign, "sha256": record.sha256,
               "imported_at": record.imported_at, "withdrawn_at": withdrawal.withdrawn_at,
               "reason": withdrawal.reason, "observations_out_of_force": observations}
    if json_output:
        _print_json(summary)
        return
    typer.echo(f'withdrew {record.name} of campaign "{record.campaign}" (imported '
               f"{record.imported_at[:10]}, {observations} observations now out of force): "
               f"{withdrawal.reason}")
    err_console.print("Import the corrected file now: assess site import "
                      f"{folder}", highlight=False, soft_wrap=True)


def _file_to_withdraw(ledger: Ledger, file: str, campaign: str | None) -> FileRecord:
    path = Path(file)
    if campaign is None and (path.parent / "campaign.toml").is_file() and path.suffix:
        from inspection_io.site import load_campaign

        campaign = load_campaign(path.parent / "campaign.toml").name
    found = ledger.find_files(path.name, campaign)
    in_force = [f for f in found if f.in_force]
    where = f' in campaign "{campaign}"' if campaign else ""
    if not in_force:
        if found:
            last = found[-1]
            raise InputError(f"{last.name}{where} was already withdrawn on "
                             f"{last.withdrawn_at[:10]} ({last.withdrawal_reason})", file=file)
        names = sorted({f"{f.name} ({f.campaign})" for f in ledger.files(in_force_only=True)})
        raise InputError(f"no imported file {path.name}{where}; files in force: "
                         f"{', '.join(names) or 'none'}", file=file)
    if len(in_force) > 1:
        campaigns = ", ".join(f'"{f.campaign}"' for f in in_force)
        raise InputError(f"{path.name} is in force in several campaigns ({campaigns}): say "
                         f"which with --campaign", file=file, column="--campaign")
    return in_force[0]


@site_app.command("check")
@guard
def check(
    folder: SiteFolder,
    anchor: Annotated[Optional[str], typer.Option(
        "--anchor", help="A chain hash kept from earlier (a report's numbers file prints "
                         "it): it must still be in the ledger's chain.")] = None,
    json_output: JsonFlag = False,
):
    """Check the site's ledger for damage; exit 0 when sound, 1 with what is wrong.

    Runs SQLite's integrity check, verifies the hash chain over every import, withdrawal
    and result, the append-only triggers and the ledger's own rules. Changes nothing.
    """
    from inspection_io.ledger_check import check_ledger

    if not folder.is_dir():
        raise InputError("site folder not found", file=folder)
    report = check_ledger(folder, anchor=anchor)
    if json_output:
        _print_json(report.to_dict())
    else:
        counts = ", ".join(f"{n} {table}" for table, n in report.counts.items())
        typer.echo(f"ledger {report.path}: schema version {report.schema_version}"
                   + (f"; {counts}" if counts else ""))
        if report.chain_head:
            typer.echo(f"chain: {report.chain_length} entries, head {report.chain_head}")
        for note in report.notes:
            typer.echo(f"note: {note}")
        if report.ok:
            typer.echo("no damage found")
        else:
            typer.echo(f"DAMAGED: {len(report.problems)} problem(s)")
            for problem in report.problems:
                typer.echo(f"  - {problem}")
            err_console.print("The ledger is damaged: restore it from a copy of the site "
                              "folder before working on.", highlight=False, soft_wrap=True)
    if not report.ok:
        raise typer.Exit(code=1)
