"""Import campaign files into the site's ledger, all or nothing.

`import_file` hashes a file (SHA-256). A file whose hash is already in the ledger
is skipped with a message; otherwise it is read and checked completely first
(`inspection_io.readers.read_campaign_file` with the site's zones, members and
binder data), and only then are the campaign (if new), the file, its raw rows and
its observations written in ONE transaction. A file with one bad row imports
nothing: the `InputError` names the file, row and column. A failure or a kill
during the write leaves the ledger exactly as it was (see `inspection_io.ledger`).

`import_site` imports every ``.csv`` / ``.xlsx`` file of every campaign folder
under ``campaigns/``, each folder described by its ``campaign.toml``.

What is refused (nothing is written)
------------------------------------
- A campaign folder, campaign file, ``campaign.toml`` or ``site.toml`` that is a link
  leading outside the site folder (`inspection_io.paths.inside_site`); such a file is
  never read, so no message can show a line of it. A file named explicitly on the
  command line from elsewhere (not from inside the site folder) is read as given.
- A campaign dated before the year of construction (``site.year_built``) or after the
  assessment date or today, whichever comes first; a row dated outside that range, or
  more than `ROW_DATE_TOLERANCE_DAYS` after its campaign's date. The message names the
  file, row, column and the allowed range.
- A file that would double data in force (`inspection_io.ledger.Ledger.write_import`):
  a different file of the same name in the same campaign, or a specimen id already in
  force. The message names the way to correct a file: withdraw the old one
  (``assess site withdraw``), then import the corrected one.

What is skipped (with a message)
--------------------------------
The same bytes again; the same content saved with other line endings or without its
last newline; and the bytes of a withdrawn file (a withdrawal is final for those bytes).
"""

from __future__ import annotations

import datetime as dt
import hashlib
import math
import numbers
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pandas as pd

from inspection_io.errors import InputError
from inspection_io.ledger import (
    LEDGER_NAME,
    CampaignRecord,
    FileRecord,
    Ledger,
    NewFile,
)
from inspection_io.paths import inside_site
from inspection_io.readers import SPECS, read_campaign_file
from inspection_io.site import CampaignInfo, Site, load_campaign, load_site
from inspection_io.tables import parse_header

CAMPAIGN_FILE_SUFFIXES = (".csv", ".xlsx")
#: A row may be dated this many days after its campaign's date [days]. Project choice: the
#: sampling of one campaign rarely spans more than a season; a later row belongs to a later
#: campaign (or carries a typing error).
ROW_DATE_TOLERANCE_DAYS = 90
OBSERVATION_FIELDS = ("source_row", "item_id", "zone", "member", "date", "quantity", "value",
                      "unit", "flags", "extra")


@dataclass(frozen=True)
class ImportReport:
    """What happened to one campaign file."""

    path: Path
    """The file."""
    campaign: str
    """Campaign it belongs to (for a skipped file: the campaign it was imported into)."""
    kind: str
    """Kind of record (``"cores"``, ``"cover"``, ...)."""
    sha256: str
    """SHA-256 of the file's bytes (hex)."""
    rows: int
    """Data rows in the file."""
    observations: int
    """Observations written now (0 when skipped)."""
    imported: bool
    """True if written now; False if the same file was already in the ledger."""
    message: str
    """One line for the engineer."""
    notes: tuple[str, ...] = field(default=())
    """Remarks from the reader (unit conversions, sheets ignored ...)."""

    def to_dict(self) -> dict:
        return {"file": str(self.path), "campaign": self.campaign, "kind": self.kind,
                "sha256": self.sha256, "rows": self.rows, "observations": self.observations,
                "imported": self.imported, "message": self.message, "notes": list(self.notes)}


def sha256_of(data: bytes) -> str:
    """SHA-256 of a file's bytes, as 64 hex digits."""
    return hashlib.sha256(data).hexdigest()


def import_file(site_dir: str | Path, path: str | Path, *, campaign: str | None = None,
                kind: str | None = None, campaign_date: dt.date | None = None,
                description: str | None = None, site: Site | None = None) -> ImportReport:
    """Import one campaign file into the site's ledger in one transaction.

    Parameters
    ----------
    site_dir : str or Path
        The site folder (holding ``site.toml``; the ledger is ``ledger.sqlite`` in it).
    path : str or Path
        The ``.csv`` or ``.xlsx`` campaign file.
    campaign : str, optional
        Campaign name. Defaults to the name in ``campaign.toml`` beside the file.
    kind : str, optional
        Kind of record; detected from the headers when omitted.
    campaign_date : datetime.date, optional
        Date of a new campaign that has no ``campaign.toml`` beside the file.
    description : str, optional
        Description of such a new campaign.
    site : Site, optional
        The loaded site file (read from `site_dir` when omitted).

    Returns
    -------
    ImportReport
        ``imported=False`` with "already imported on <date> as <name>" when the same bytes
        are in the ledger already (nothing is read or written), "same content as" when the
        content is in force under other bytes (other line endings), "withdrawn on" when
        the bytes are those of a withdrawn file.

    Raises
    ------
    InputError
        Any problem with the file, a row, a column, a date, the campaign or the site file;
        a link leading outside the site folder; a file of the same name or a specimen id
        already in force (the message says how to withdraw and correct). The ledger is
        unchanged.
    """
    site_dir = Path(site_dir)
    path = Path(path)
    from_site = _lexically_inside(site_dir, path)
    if from_site:
        inside_site(site_dir, path, what="the campaign file")
    site = site or _load_site(site_dir)
    data = _read_bytes(path)
    digest = sha256_of(data)

    # look up without creating: a first import that fails leaves no ledger behind
    known_campaign = None
    if os.path.lexists(site_dir / LEDGER_NAME):
        with Ledger(site_dir) as ledger:
            existing = ledger.file_by_hash(digest)
            if existing is not None:
                return _skipped(path, digest, existing)
            if campaign is not None:
                known_campaign = ledger.campaign(campaign)
    info, toml = _campaign_for(known_campaign, path, campaign, campaign_date, description,
                               site_dir if from_site else None)
    window = _date_window(site)
    _check_campaign_date(info, window, toml or path, "date" if toml else "--date")
    result = _read(path, kind, site)
    if sha256_of(_read_bytes(path)) != digest:
        raise InputError("the file changed while it was being read; import it again", file=path)
    observations = _checked_observations(result.observations, result.kind, path)
    headers = _raw_headers(result.metadata)
    _check_row_dates(observations, info, window, path, headers.get("date", "date"))
    raw_rows = _raw_rows(result.raw)
    metadata = _json_safe({**dict(result.metadata or {}), "source_name": path.name})
    spec = SPECS.get(result.kind)
    id_column = headers.get(spec.id_column, spec.id_column) if spec else "item_id"
    with Ledger(site_dir) as ledger:
        record, written = ledger.write_import(
            campaign_name=info.name, campaign_date=info.date,
            campaign_description=info.description,
            file=NewFile(name=path.name, sha256=digest, size_bytes=len(data), kind=result.kind,
                         row_count=len(raw_rows), metadata=metadata),
            raw_rows=raw_rows, observations=observations, source=path, id_column=id_column)
    if not written:
        return _skipped(path, digest, record)
    notes = _notes(metadata)
    return ImportReport(
        path=path, campaign=info.name, kind=result.kind, sha256=digest, rows=len(raw_rows),
        observations=len(observations), imported=True,
        message=(f"imported {path.name} into campaign \"{info.name}\": {result.kind}, "
                 f"{len(raw_rows)} rows, {len(observations)} observations"),
        notes=notes)


def import_site(site_dir: str | Path, *,
                on_report: Callable[[ImportReport], None] | None = None) -> list[ImportReport]:
    """Import every campaign file of every campaign folder under ``campaigns/``.

    Each campaign folder needs a ``campaign.toml`` (name, date, description); every
    ``.csv`` and ``.xlsx`` file in it is imported with its kind detected from the headers.
    Each file is its own transaction; files already in the ledger are skipped, so running
    this again after fixing a file imports only what is new.

    Parameters
    ----------
    site_dir : str or Path
        The site folder.
    on_report : callable, optional
        Called with each `ImportReport` as soon as that file is done.

    Returns
    -------
    list of ImportReport
        In folder and file-name order.

    Raises
    ------
    InputError
        The first problem met (files before it stay imported, complete). Every campaign
        folder's ``campaign.toml`` and date, and every link under ``campaigns/``, are
        checked before any file is imported.
    """
    site_dir = Path(site_dir)
    site = _load_site(site_dir)
    campaigns_dir = site_dir / "campaigns"
    if os.path.lexists(campaigns_dir):
        inside_site(site_dir, campaigns_dir, what="the campaigns folder")
    if not campaigns_dir.is_dir():
        raise InputError("no campaigns/ folder in the site folder: put each inspection "
                         "campaign in campaigns/<folder>/ with a campaign.toml", file=site_dir)
    entries = sorted(p for p in campaigns_dir.iterdir() if not p.name.startswith((".", "_")))
    for entry in entries:
        inside_site(site_dir, entry, what="the campaign folder")
    folders = [p for p in entries if p.is_dir()]
    window = _date_window(site)
    plan: list[tuple[CampaignInfo, list[Path]]] = []
    seen: dict[str, Path] = {}
    for folder in folders:
        toml = folder / "campaign.toml"
        if os.path.lexists(toml):
            inside_site(site_dir, toml, what="campaign.toml")
        if not toml.is_file():
            raise InputError("missing campaign.toml (name, date, description) in this campaign "
                             "folder", file=folder)
        info = load_campaign(toml)
        _check_campaign_date(info, window, toml, "date")
        if info.name in seen:
            raise InputError(f'campaign name "{info.name}" is used by two folders: '
                             f"{seen[info.name]} and {folder}", file=toml, column="name")
        seen[info.name] = folder
        candidates = sorted(p for p in folder.iterdir()
                            if p.suffix.lower() in CAMPAIGN_FILE_SUFFIXES
                            and not p.name.startswith((".", "~$")))
        for candidate in candidates:
            inside_site(site_dir, candidate, what="the campaign file")
        plan.append((info, [p for p in candidates if p.is_file()]))
    reports = []
    for info, files in plan:
        for path in files:
            report = import_file(site_dir, path, campaign=info.name, campaign_date=info.date,
                                 description=info.description, site=site)
            reports.append(report)
            if on_report is not None:
                on_report(report)
    return reports


# --------------------------------------------------------------------------- helpers
def _lexically_inside(folder: Path, path: Path) -> bool:
    """True if `path` is written as a path inside `folder` (links not followed)."""
    base = os.path.abspath(folder)
    target = os.path.abspath(path)
    return target == base or target.startswith(base.rstrip(os.sep) + os.sep)


def _load_site(site_dir: Path) -> Site:
    site_file = site_dir / "site.toml"
    if os.path.lexists(site_file):
        inside_site(site_dir, site_file, what="the site file")
    return load_site(site_dir)


@dataclass(frozen=True)
class _DateWindow:
    earliest: dt.date
    latest: dt.date
    why: str

    def describe(self) -> str:
        return f"{self.earliest.isoformat()} to {self.latest.isoformat()} ({self.why})"


def _date_window(site: Site) -> _DateWindow:
    """Dates a sample can have: from 1 January of the year built to the assessment date or
    today, whichever is earlier."""
    earliest = dt.date(site.site.year_built, 1, 1)
    today = dt.date.today()
    if site.site.assessment_date <= today:
        latest, end = site.site.assessment_date, "the assessment date (site.assessment_date)"
    else:
        latest, end = today, "today"
    return _DateWindow(earliest, latest, f"from the year of construction "
                                         f"(site.year_built = {site.site.year_built}) to {end}")


def _check_campaign_date(info: CampaignInfo, window: _DateWindow, file: Path,
                         column: str) -> None:
    if not window.earliest <= info.date <= window.latest:
        raise InputError(f'campaign "{info.name}" is dated {info.date.isoformat()}, outside '
                         f"the allowed range {window.describe()}", file=file, column=column)


def _check_row_dates(observations: pd.DataFrame, info: CampaignInfo, window: _DateWindow,
                     path: Path, column: str) -> None:
    """Refuse a row sampled outside the window or well after its campaign's date."""
    last = min(window.latest, info.date + dt.timedelta(days=ROW_DATE_TOLERANCE_DAYS))
    for source_row, value in zip(observations["source_row"], observations["date"]):
        if _is_missing(value) or value == "":
            continue
        try:
            date = value if isinstance(value, dt.date) else dt.date.fromisoformat(str(value)[:10])
        except ValueError:
            raise InputError(f"bad date {value!r}: expected YYYY-MM-DD", file=path,
                             row=int(source_row), column=column) from None
        if isinstance(date, dt.datetime):
            date = date.date()
        if not window.earliest <= date <= window.latest:
            raise InputError(f"sampled on {date.isoformat()}, outside the allowed range "
                             f"{window.describe()}", file=path, row=int(source_row),
                             column=column)
        if date > last:
            raise InputError(f"sampled on {date.isoformat()}, more than "
                             f"{ROW_DATE_TOLERANCE_DAYS} days after its campaign "
                             f'"{info.name}" ({info.date.isoformat()}); allowed up to '
                             f"{last.isoformat()}. Put the row in the campaign it belongs to, "
                             f"or correct the date", file=path, row=int(source_row),
                             column=column)


def _raw_headers(metadata: dict | None) -> dict[str, str]:
    """Canonical column name -> the header as written in the file."""
    found = {}
    for raw in (metadata or {}).get("raw_headers") or ():
        try:
            found.setdefault(parse_header(str(raw)).name, str(raw))
        except InputError:
            continue
    return found


def _read(path: Path, kind: str | None, site: Site):
    return read_campaign_file(
        path, kind,
        binder_content=site.materials.binder_content,
        concrete_density=site.materials.concrete_density,
        known_zones=site.zone_ids,
        known_members={m.member_id: m.zone for m in site.members.values()},
        member_depths={m.member_id: m.depth for m in site.members.values()})


def _read_bytes(path: Path) -> bytes:
    if path.suffix.lower() not in CAMPAIGN_FILE_SUFFIXES:
        raise InputError(f"expected a campaign file ending in .csv or .xlsx, got "
                         f"'{path.suffix or path.name}'", file=path)
    try:
        return path.read_bytes()
    except FileNotFoundError:
        raise InputError("file not found", file=path) from None
    except IsADirectoryError:
        raise InputError("expected a file, found a folder", file=path) from None
    except OSError as exc:
        raise InputError(f"cannot read the file: {exc.strerror}", file=path) from None


def _skipped(path: Path, digest: str, existing: FileRecord) -> ImportReport:
    when = existing.imported_at[:10]
    where = f'{existing.name} (campaign "{existing.campaign}")'
    if existing.sha256 != digest:
        message = (f"skipped {path.name}: same content as {where}, imported on {when}; only "
                   f"line endings, the last newline or the row order differ")
    elif not existing.in_force:
        message = (f"skipped {path.name}: these bytes were imported on {when} as {where} and "
                   f"withdrawn on {existing.withdrawn_at[:10]} ({existing.withdrawal_reason}); "
                   f"a withdrawn file is not imported again")
    else:
        message = f"skipped {path.name}: already imported on {when} as {where}"
    return ImportReport(
        path=path, campaign=existing.campaign, kind=existing.kind, sha256=digest,
        rows=existing.row_count, observations=0, imported=False, message=message)


def _campaign_for(known: CampaignRecord | None, path: Path, name: str | None,
                  date: dt.date | None, description: str | None,
                  site_dir: Path | None) -> tuple[CampaignInfo, Path | None]:
    """The campaign of the file, and the campaign.toml its date came from (or None)."""
    toml = path.parent / "campaign.toml"
    if site_dir is not None and os.path.lexists(toml):
        inside_site(site_dir, toml, what="campaign.toml")
    folder_info = load_campaign(toml) if toml.is_file() else None
    if name is None:
        if folder_info is None:
            raise InputError("no campaign given and no campaign.toml beside the file: give "
                             "the campaign name (--campaign)", file=path)
        name = folder_info.name
    if not name.strip():
        raise InputError("the campaign name is empty", file=path)
    if known is not None and known.name != name:
        known = None
    if folder_info is not None and folder_info.name == name:
        info = folder_info
    elif known is not None:
        info = CampaignInfo(known.name, known.date, known.description)
    elif date is not None:
        info = CampaignInfo(name, date, description or "")
    else:
        raise InputError(f'campaign "{name}" is new: give its date (--date YYYY-MM-DD) or put '
                         f"the file in a campaign folder whose campaign.toml names it",
                         file=path)
    if date is not None and date != info.date:
        raise InputError(f'campaign "{name}" has date {info.date.isoformat()}, not '
                         f"{date.isoformat()}", file=path)
    return info, (toml if info is folder_info else None)


def _checked_observations(observations: pd.DataFrame, kind: str, path: Path) -> pd.DataFrame:
    """The reader's observations with `kind` added; refuse anything the ledger cannot hold."""
    missing = [c for c in OBSERVATION_FIELDS if c not in observations.columns]
    if missing:
        raise InputError(f"the {kind} reader gave no {', '.join(missing)}", file=path)
    frame = observations.loc[:, list(OBSERVATION_FIELDS)].copy()
    for record in frame.to_dict("records"):
        row = int(record["source_row"])
        value = record["value"]
        if isinstance(value, bool) or not isinstance(value, numbers.Real) \
                or not math.isfinite(float(value)):
            raise InputError(f"expected a finite number, got {value!r}", file=path, row=row,
                             column=str(record["quantity"]))
        for name in ("zone", "item_id", "quantity", "unit"):
            if _is_missing(record[name]) or not str(record[name]).strip():
                raise InputError(f"empty {name}", file=path, row=row, column=name)
    frame.insert(0, "kind", kind)
    return frame


def _raw_rows(raw: pd.DataFrame) -> list[tuple[int, dict[str, str]]]:
    """(source_row, {raw header: raw cell text}); a repeated header gets " (2)", " (3)" ..."""
    positions = [i for i, c in enumerate(raw.columns) if c != "source_row"]
    keys: list[str] = []
    for i in positions:
        key, n = str(raw.columns[i]), 1
        while key in keys:
            n += 1
            key = f"{raw.columns[i]} ({n})"
        keys.append(key)
    source_rows = raw["source_row"].tolist()
    values = raw.iloc[:, positions].itertuples(index=False, name=None)
    return [(int(row), {k: "" if _is_missing(v) else str(v) for k, v in zip(keys, cells)})
            for row, cells in zip(source_rows, values)]


def _notes(metadata: dict) -> tuple[str, ...]:
    notes = [f"converted {c}" for c in metadata.get("conversions") or ()]
    if metadata.get("ignored_sheets"):
        notes.append("sheets ignored: " + ", ".join(map(str, metadata["ignored_sheets"])))
    if metadata.get("ignored_columns"):
        notes.append("columns ignored: " + ", ".join(map(str, metadata["ignored_columns"])))
    return tuple(notes)


def _is_missing(value: Any) -> bool:
    return value is None or value is pd.NaT or (isinstance(value, float) and math.isnan(value))


def _json_safe(value: Any) -> Any:
    """Metadata as plain JSON types (unknown objects become their text)."""
    if isinstance(value, dict):
        return {str(k): _json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, set, frozenset)):
        return [_json_safe(v) for v in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if value is None or isinstance(value, (str, int, float, bool)):
        return value
    if hasattr(value, "tolist"):
        return _json_safe(value.tolist())
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return str(value)


__all__ = [
    "CAMPAIGN_FILE_SUFFIXES",
    "ROW_DATE_TOLERANCE_DAYS",
    "ImportReport",
    "import_file",
    "import_site",
    "sha256_of",
]
