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
"""

from __future__ import annotations

import datetime as dt
import hashlib
import math
import numbers
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

import pandas as pd

from inspection_io.errors import InputError
from inspection_io.ledger import LEDGER_NAME, CampaignRecord, Ledger, NewFile
from inspection_io.readers import read_campaign_file
from inspection_io.site import CampaignInfo, Site, load_campaign, load_site

CAMPAIGN_FILE_SUFFIXES = (".csv", ".xlsx")
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
        are in the ledger already (nothing is read or written).

    Raises
    ------
    InputError
        Any problem with the file, a row, a column, the campaign or the site file. The
        ledger is unchanged.
    """
    site_dir = Path(site_dir)
    site = site or load_site(site_dir)
    path = Path(path)
    data = _read_bytes(path)
    digest = sha256_of(data)

    # look up without creating: a first import that fails leaves no ledger behind
    known_campaign = None
    if (site_dir / LEDGER_NAME).is_file():
        with Ledger(site_dir) as ledger:
            existing = ledger.file_by_hash(digest)
            if existing is not None:
                return _skipped(path, digest, existing)
            if campaign is not None:
                known_campaign = ledger.campaign(campaign)
    info = _campaign_for(known_campaign, path, campaign, campaign_date, description)
    result = _read(path, kind, site)
    if sha256_of(_read_bytes(path)) != digest:
        raise InputError("the file changed while it was being read; import it again", file=path)
    observations = _checked_observations(result.observations, result.kind, path)
    raw_rows = _raw_rows(result.raw)
    metadata = _json_safe({**dict(result.metadata or {}), "source_name": path.name})
    with Ledger(site_dir) as ledger:
        record, written = ledger.write_import(
            campaign_name=info.name, campaign_date=info.date,
            campaign_description=info.description,
            file=NewFile(name=path.name, sha256=digest, size_bytes=len(data), kind=result.kind,
                         row_count=len(raw_rows), metadata=metadata),
            raw_rows=raw_rows, observations=observations)
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
        folder's ``campaign.toml`` is checked before any file is imported.
    """
    site_dir = Path(site_dir)
    site = load_site(site_dir)
    campaigns_dir = site_dir / "campaigns"
    if not campaigns_dir.is_dir():
        raise InputError("no campaigns/ folder in the site folder: put each inspection "
                         "campaign in campaigns/<folder>/ with a campaign.toml", file=site_dir)
    folders = sorted(p for p in campaigns_dir.iterdir()
                     if p.is_dir() and not p.name.startswith((".", "_")))
    plan: list[tuple[CampaignInfo, list[Path]]] = []
    seen: dict[str, Path] = {}
    for folder in folders:
        toml = folder / "campaign.toml"
        if not toml.is_file():
            raise InputError("missing campaign.toml (name, date, description) in this campaign "
                             "folder", file=folder)
        info = load_campaign(toml)
        if info.name in seen:
            raise InputError(f'campaign name "{info.name}" is used by two folders: '
                             f"{seen[info.name]} and {folder}", file=toml, column="name")
        seen[info.name] = folder
        files = sorted(p for p in folder.iterdir()
                       if p.is_file() and p.suffix.lower() in CAMPAIGN_FILE_SUFFIXES
                       and not p.name.startswith((".", "~$")))
        plan.append((info, files))
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
def _read(path: Path, kind: str | None, site: Site):
    return read_campaign_file(
        path, kind,
        binder_content=site.materials.binder_content,
        concrete_density=site.materials.concrete_density,
        known_zones=site.zone_ids,
        known_members={m.member_id: m.zone for m in site.members.values()})


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


def _skipped(path: Path, digest: str, existing) -> ImportReport:
    when = existing.imported_at[:10]
    return ImportReport(
        path=path, campaign=existing.campaign, kind=existing.kind, sha256=digest,
        rows=existing.row_count, observations=0, imported=False,
        message=(f"skipped {path.name}: already imported on {when} as {existing.name} "
                 f"(campaign \"{existing.campaign}\")"))


def _campaign_for(known: CampaignRecord | None, path: Path, name: str | None,
                  date: dt.date | None, description: str | None) -> CampaignInfo:
    toml = path.parent / "campaign.toml"
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
    return info


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


__all__ = ["ImportReport", "import_file", "import_site", "sha256_of", "CAMPAIGN_FILE_SUFFIXES"]
