"""The ledger: one SQLite file per site that keeps every import and every result.

Nothing is ever changed or deleted. Campaigns, imported files (with their SHA-256),
the raw rows as read, the canonical observations, withdrawals of files and the
analysis results are only appended; SQLite triggers refuse UPDATE, DELETE and an
INSERT that would replace a row with the same key, and the Python API offers no way
to do any of these. Every import, withdrawal and result is also linked into a hash
chain (`inspection_io.ledger_schema`) that `inspection_io.ledger_check` verifies.

Files in force
--------------
A file stays in the ledger for good. To correct one, the engineer withdraws it (a
row in ``withdrawals`` with a reason and a date) and imports the corrected file.
`Ledger.observations` gives by default only the observations of files in force; with
``as_of`` it gives what the ledger held, and had not withdrawn, at the end of that day.
A file in force is never doubled: the same bytes, or the same content saved with other
line endings, are skipped; a file of the same name in the same campaign, or a row whose
specimen id is already in force, is refused with the way to correct it.

Opening
-------
A ledger is created whole or not at all: the schema is written to a temporary file
which is then linked under ``ledger.sqlite``. An existing file is opened only if it is
an SQLite database holding a ledger: a zero-byte file, a foreign file or a foreign
database where the ledger should be is refused with an `InputError` and left as it is.
The ledger (or its journal) being a link that leads outside the site folder is refused.
A version-1 ledger is upgraded on first open, by appending only.

Atomicity
---------
An import is written in one transaction (``BEGIN IMMEDIATE ... COMMIT``). The
ledger uses the rollback journal (``journal_mode = DELETE``) with
``synchronous = FULL``. Both the rollback journal and WAL are atomic when the
process is killed (SIGKILL) mid-transaction: the pages already handed to the
operating system survive the kill, and the next connection either rolls back the
left-over ("hot") journal or ignores the uncommitted WAL frames. The rollback
journal is chosen because after every COMMIT the whole ledger is in the single
file ``ledger.sqlite``: copying or archiving the site folder (common with site
records) never misses a committed campaign, whereas in WAL mode recent commits
live in ``ledger.sqlite-wal`` until a checkpoint, and WAL's shared-memory index
does not work on network drives. WAL's concurrency gain is of no use for one
engineer working on one site. ``synchronous = FULL`` adds durability against
power loss. After a kill, a ``ledger.sqlite-journal`` file may remain next to the
ledger until the next connection rolls it back: keep it with the ledger.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import json
import math
import os
import secrets
import sqlite3
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from importlib import metadata as _metadata
from pathlib import Path
from typing import Any

import pandas as pd

from inspection_io.errors import InputError
from inspection_io.ledger_schema import (
    APPEND_ONLY_TABLES,
    REQUIRED_TABLES,
    SCHEMA_VERSION,
    UPGRADES,
    append_chain,
    content_fingerprint,
    create_schema,
    damaged_triggers,
    import_content_sha256,
    result_content_sha256,
    withdrawal_content_sha256,
)
from inspection_io.paths import inside_site, remove_stale_temporaries

LEDGER_NAME = "ledger.sqlite"
OBSERVATION_COLUMNS = ("id", "campaign_id", "campaign", "file_id", "file", "source_row", "kind",
                       "zone", "member", "item_id", "date", "quantity", "value", "unit", "flags",
                       "extra")
#: The first 16 bytes of every SQLite database file (SQLite file format, "The database
#: header": the header string "SQLite format 3" and a nul byte).
SQLITE_HEADER = b"SQLite format 3\x00"
#: Record kinds whose ids name a place that a later survey measures again: an id is
#: unique per kind, zone and date. Every other kind names a specimen taken from the
#: structure once (a core, a bar, a dust sample, a break-out): unique per kind and zone.
SURVEY_KINDS = frozenset({"cover", "carbonation", "halfcell"})
_SIDE_FILES = ("-journal", "-wal", "-shm")
_CHECK_HINT = "run 'assess site check' on the site folder for a full report"


@dataclass(frozen=True)
class CampaignRecord:
    """A campaign row."""

    id: int
    name: str
    date: dt.date
    description: str
    created_at: str


@dataclass(frozen=True)
class FileRecord:
    """A file row (an imported campaign file), with its withdrawal if it was withdrawn."""

    id: int
    campaign_id: int
    campaign: str
    name: str
    sha256: str
    size_bytes: int
    kind: str
    row_count: int
    imported_at: str
    metadata: dict
    withdrawn_at: str | None = None
    """ISO date-time (UTC) of the withdrawal, None while the file is in force."""
    withdrawal_reason: str | None = None

    @property
    def in_force(self) -> bool:
        """True unless the file was withdrawn."""
        return self.withdrawn_at is None


@dataclass(frozen=True)
class WithdrawalRecord:
    """A withdrawals row: a file taken out of force."""

    id: int
    file_id: int
    reason: str
    withdrawn_at: str


@dataclass(frozen=True)
class ResultRecord:
    """A results row."""

    id: int
    created_at: str
    kind: str
    member: str | None
    mode: str | None
    payload: dict
    code_version: str
    seed: int | None
    settings: dict


@dataclass(frozen=True)
class NewFile:
    """What `Ledger.write_import` needs to know about the file being imported."""

    name: str
    sha256: str
    size_bytes: int
    kind: str
    row_count: int
    metadata: Mapping[str, Any]


def _now() -> str:
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec="microseconds")


def _json(value: Any) -> str:
    return json.dumps(value, default=_json_default, sort_keys=True, ensure_ascii=False)


def _json_default(value: Any) -> Any:
    # numpy scalars and arrays, dates, paths, tuples and sets, without importing numpy here
    if hasattr(value, "tolist"):
        return value.tolist()
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    if isinstance(value, Path):
        return str(value)
    if isinstance(value, (set, frozenset)):
        return sorted(value)
    raise TypeError(f"cannot store a {type(value).__name__} in the ledger as JSON")


def _code_version() -> str:
    try:
        return _metadata.version("assess-rc")
    except _metadata.PackageNotFoundError:
        return "unknown"


def _executemany(conn: sqlite3.Connection, sql: str, rows: Iterable[Sequence[Any]],
                 chunk: int = 500) -> None:
    """Insert rows in chunks (one place to look at when an import is slow)."""
    batch = []
    for row in rows:
        batch.append(row)
        if len(batch) >= chunk:
            conn.executemany(sql, batch)
            batch = []
    if batch:
        conn.executemany(sql, batch)


def _fsync_folder(folder: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def check_ledger_file(path: Path) -> None:
    """Refuse what must never be opened as the ledger; nothing is written.

    Raises `InputError` when the ledger or one of its side files (journal, WAL) is a
    link leading outside its folder, when the ledger is a link to a missing file, or
    when an existing ledger file is not a regular file, is empty (zero bytes) or does
    not start with the SQLite header. A missing ledger passes (it will be created).
    """
    folder = path.parent
    for candidate in [path] + [Path(f"{path}{suffix}") for suffix in _SIDE_FILES]:
        if os.path.lexists(candidate):
            inside_site(folder, candidate, what="the ledger" if candidate == path
                        else "the ledger's journal")
    if path.is_symlink() and not path.exists():
        raise InputError("the ledger is a link to a missing file; refused (it would be "
                         "created elsewhere). Remove the link or restore the ledger",
                         file=path)
    if not os.path.lexists(path):
        return
    if not path.is_file():
        raise InputError("expected the ledger file, found something else (a folder?); "
                         "it was left as it is", file=path)
    try:
        with open(path, "rb") as handle:
            header = handle.read(len(SQLITE_HEADER))
    except OSError as exc:
        raise InputError(f"cannot read the ledger: {exc.strerror}", file=path) from None
    if not header:
        raise InputError("the ledger file is empty (zero bytes): it holds no ledger and was "
                         "left as it is. Restore the ledger from a copy of the site folder; "
                         "if nothing was ever imported, delete this file", file=path)
    if header != SQLITE_HEADER:
        raise InputError("this is not a readable ledger: the file does not start with the "
                         "SQLite header; it was left as it is", file=path)


def _create(path: Path) -> None:
    """Create a new ledger whole: schema in a temporary file, then linked into place."""
    folder = path.parent
    remove_stale_temporaries(folder, f".{path.name}.*.tmp", older_than=600)
    tmp = folder / f".{path.name}.{secrets.token_hex(8)}.tmp"
    try:
        conn = sqlite3.connect(tmp, isolation_level=None)
        try:
            conn.execute("PRAGMA journal_mode = DELETE")
            conn.execute("PRAGMA synchronous = FULL")
            conn.execute("BEGIN IMMEDIATE")
            create_schema(conn)
            conn.execute("COMMIT")
        finally:
            conn.close()
        with open(tmp, "rb") as handle:
            os.fsync(handle.fileno())
        try:
            os.link(tmp, path)  # atomic, and never replaces a ledger made meanwhile
        except FileExistsError:
            pass
        except OSError:
            if not os.path.lexists(path):  # file systems without hard links
                os.replace(tmp, path)
        _fsync_folder(folder)
    except OSError as exc:
        raise InputError(f"cannot create the ledger: {exc.strerror}", file=path) from None
    finally:
        with contextlib.suppress(OSError):
            tmp.unlink()


class Ledger:
    """The append-only SQLite ledger of a site.

    Parameters
    ----------
    path : str or Path
        The ledger file, or the site folder (then ``<folder>/ledger.sqlite``).
        The file and its schema are created on first use.

    Examples
    --------
    >>> with Ledger(site_folder) as ledger:             # doctest: +SKIP
    ...     cores = ledger.observations(kind="cores", zone="L1")
    """

    def __init__(self, path: str | Path):
        path = Path(path)
        self.path = path / LEDGER_NAME if path.is_dir() else path
        self._conn: sqlite3.Connection | None = None

    # ----------------------------------------------------------------- connection
    def __enter__(self) -> Ledger:
        self.connection()
        return self

    def __exit__(self, *exc_info) -> None:
        self.close()

    def close(self) -> None:
        """Close the connection (an open transaction is rolled back)."""
        if self._conn is not None:
            self._conn.close()
            self._conn = None

    def connection(self) -> sqlite3.Connection:
        """The open connection; creates the ledger on first use, upgrades an old one."""
        if self._conn is None:
            if not self.path.parent.is_dir():
                raise InputError("the folder of the ledger does not exist", file=self.path)
            check_ledger_file(self.path)
            if not os.path.lexists(self.path):
                _create(self.path)
            try:
                conn = sqlite3.connect(self.path, isolation_level=None, timeout=30.0)
            except sqlite3.Error as exc:
                raise InputError(f"cannot open the ledger ({exc})", file=self.path) from None
            try:
                conn.execute("PRAGMA foreign_keys = ON")
                conn.execute("PRAGMA recursive_triggers = ON")
                conn.execute("PRAGMA journal_mode = DELETE")
                conn.execute("PRAGMA synchronous = FULL")
                self._prepare(conn)
            except sqlite3.DatabaseError as exc:
                conn.close()
                raise InputError(f"this is not a readable ledger ({exc}); it was left as it "
                                 f"is", file=self.path) from None
            except BaseException:
                conn.close()
                raise
            self._conn = conn
        return self._conn

    def _tables(self, conn: sqlite3.Connection) -> set[str]:
        return {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}

    def _prepare(self, conn: sqlite3.Connection) -> None:
        tables = self._tables(conn)
        if "schema_version" not in tables:
            what = "an empty SQLite database" if not tables else "an SQLite database that is " \
                                                                 "not a ledger"
            raise InputError(f"{what} is where the ledger should be; it was left as it is "
                             f"(a ledger is only created where no file exists)", file=self.path)
        version = conn.execute("SELECT max(version) FROM schema_version").fetchone()[0]
        if version not in REQUIRED_TABLES and (version is None or version < SCHEMA_VERSION):
            raise InputError(f"the ledger's schema version is damaged ({version!r}); "
                             f"{_CHECK_HINT}", file=self.path)
        if version > SCHEMA_VERSION:
            raise InputError(f"the ledger has schema version {version}; this program reads "
                             f"version {SCHEMA_VERSION}", file=self.path)
        self._require_tables(conn, version)
        while version < SCHEMA_VERSION:
            try:
                conn.execute("BEGIN IMMEDIATE")
            except sqlite3.OperationalError as exc:
                raise InputError(f"the ledger (schema version {version}) must be upgraded "
                                 f"once, but it cannot be written ({exc}); copy the site "
                                 f"folder somewhere writable", file=self.path) from None
            try:
                now = conn.execute("SELECT max(version) FROM schema_version").fetchone()[0]
                if now == version:   # another process may have upgraded it meanwhile
                    UPGRADES[version](conn)
                conn.execute("COMMIT")
            except BaseException:
                conn.execute("ROLLBACK")
                raise
            version = conn.execute("SELECT max(version) FROM schema_version").fetchone()[0]
            self._require_tables(conn, version)
        bad = damaged_triggers(conn)
        if bad:
            raise InputError(f"the ledger is damaged: its append-only trigger "
                             f"{', '.join(bad[:3])}{' ...' if len(bad) > 3 else ''} "
                             f"{'is' if len(bad) == 1 else 'are'} missing or changed, so rows "
                             f"may have been rewritten. Nothing was read or written; "
                             f"{_CHECK_HINT}, and restore the ledger from a copy of the site "
                             f"folder", file=self.path)

    def _require_tables(self, conn: sqlite3.Connection, version: int) -> None:
        missing = [t for t in REQUIRED_TABLES[version] if t not in self._tables(conn)]
        if missing:
            raise InputError(f"the ledger is damaged: table {', '.join(missing)} "
                             f"{'is' if len(missing) == 1 else 'are'} missing. Nothing was "
                             f"read or written; {_CHECK_HINT}, and restore the ledger from a "
                             f"copy of the site folder", file=self.path)

    @contextlib.contextmanager
    def transaction(self) -> Iterator[sqlite3.Connection]:
        """``BEGIN IMMEDIATE`` ... ``COMMIT``; any exception rolls everything back."""
        conn = self.connection()
        conn.execute("BEGIN IMMEDIATE")
        try:
            yield conn
        except BaseException:
            conn.execute("ROLLBACK")
            raise
        conn.execute("COMMIT")

    def _query(self, sql: str, params: Sequence[Any] = ()) -> list[tuple]:
        try:
            return self.connection().execute(sql, params).fetchall()
        except sqlite3.DatabaseError as exc:
            raise InputError(f"the ledger cannot be read ({exc}); {_CHECK_HINT}",
                             file=self.path) from None

    # ----------------------------------------------------------------- campaigns and files
    def campaigns(self) -> list[CampaignRecord]:
        """All campaigns, by date then name."""
        rows = self._query("SELECT id, name, date, description, created_at FROM campaigns "
                           "ORDER BY date, name")
        return [CampaignRecord(r[0], r[1], dt.date.fromisoformat(r[2]), r[3], r[4])
                for r in rows]

    def campaign(self, name: str) -> CampaignRecord | None:
        """The campaign of that name, or None."""
        rows = self._query("SELECT id, name, date, description, created_at FROM campaigns "
                           "WHERE name = ?", (name,))
        return None if not rows else CampaignRecord(rows[0][0], rows[0][1],
                                                    dt.date.fromisoformat(rows[0][2]),
                                                    *rows[0][3:])

    _FILE_SQL = ("SELECT f.id, f.campaign_id, c.name, f.name, f.sha256, f.size_bytes, f.kind, "
                 "f.row_count, f.imported_at, f.metadata, w.withdrawn_at, w.reason FROM files f "
                 "JOIN campaigns c ON c.id = f.campaign_id "
                 "LEFT JOIN withdrawals w ON w.file_id = f.id")

    @staticmethod
    def _file_record(row: Sequence[Any]) -> FileRecord:
        return FileRecord(*row[:9], json.loads(row[9]), row[10], row[11])

    def files(self, campaign_id: int | None = None, *,
              in_force_only: bool = False) -> list[FileRecord]:
        """Imported files (of one campaign if given), in import order.

        Withdrawn files are listed too (``withdrawn_at`` set) unless `in_force_only`.
        """
        where, params = [], []
        if campaign_id is not None:
            where.append("f.campaign_id = ?")
            params.append(campaign_id)
        if in_force_only:
            where.append("w.id IS NULL")
        sql = self._FILE_SQL + (" WHERE " + " AND ".join(where) if where else "")
        return [self._file_record(r) for r in self._query(sql + " ORDER BY f.id", params)]

    def file_by_hash(self, sha256: str) -> FileRecord | None:
        """The imported file with this SHA-256 (in force or withdrawn), or None."""
        rows = self._query(self._FILE_SQL + " WHERE f.sha256 = ?", (sha256,))
        return self._file_record(rows[0]) if rows else None

    def _file(self, file_id: int) -> FileRecord:
        return self._file_record(self._query(self._FILE_SQL + " WHERE f.id = ?", (file_id,))[0])

    def find_files(self, name: str, campaign: str | None = None) -> list[FileRecord]:
        """Files whose name (or SHA-256 prefix of at least 8 hex digits) matches.

        Parameters
        ----------
        name : str
            The file name as imported (``cores.csv``) or the start of its SHA-256.
        campaign : str, optional
            Only files of this campaign.
        """
        sql = self._FILE_SQL + " WHERE (f.name = ?"
        params: list[Any] = [name]
        if len(name) >= 8 and all(ch in "0123456789abcdef" for ch in name.lower()):
            sql += " OR f.sha256 LIKE ?"
            params.append(name.lower() + "%")
        sql += ")"
        if campaign is not None:
            sql += " AND c.name = ?"
            params.append(campaign)
        return [self._file_record(r) for r in self._query(sql + " ORDER BY f.id", params)]

    def write_import(self, *, campaign_name: str, campaign_date: dt.date,
                     campaign_description: str, file: NewFile,
                     raw_rows: Iterable[tuple[int, Mapping[str, str]]],
                     observations: pd.DataFrame, source: str | Path | None = None,
                     id_column: str = "item_id") -> tuple[FileRecord, bool]:
        """Write one imported file in ONE transaction: campaign (if new), file, rows.

        Parameters
        ----------
        campaign_name, campaign_date, campaign_description
            The campaign; created if no campaign of that name exists, otherwise its date
            must match.
        file : NewFile
            Name, SHA-256, size, kind, row count and metadata of the file.
        raw_rows : iterable of (source_row, {raw header: raw cell text})
        observations : DataFrame
            Columns source_row, kind, zone, member, item_id, date, quantity, value, unit,
            flags, extra (``date`` may be empty: the campaign date is used).
        source : str or Path, optional
            The file as the engineer named it, for messages (default: ``file.name``).
        id_column : str
            Header of the id column, for messages.

        Returns
        -------
        (FileRecord, bool)
            The file row, and True if it was written now. False if nothing was written
            because the ledger holds a file with the same SHA-256 (in force or withdrawn:
            see ``FileRecord.withdrawn_at``), or a file in force of the same kind with the
            same content (`inspection_io.ledger_schema.content_fingerprint`, blind to line
            endings); then that file is returned.

        Raises
        ------
        InputError
            The campaign exists with another date; a file of the same name is in force in
            the campaign; or a specimen id of the file is already in force (per kind and
            zone, and date for `SURVEY_KINDS`). The message says how to correct a file:
            withdraw the one in force, then import the corrected one. Nothing is written.
        """
        raw_rows = [(int(r), dict(cells)) for r, cells in raw_rows]
        fingerprint = content_fingerprint(file.kind, raw_rows)
        where = source if source is not None else file.name
        default_date = campaign_date.isoformat()
        rows = [_observation_row(0, 0, record, default_date)
                for record in observations.to_dict("records")]
        with self.transaction() as conn:
            existing = conn.execute("SELECT id FROM files WHERE sha256 = ?",
                                    (file.sha256,)).fetchone()
            if existing:
                return self._file(existing[0]), False
            same = self._same_content(conn, file.kind, fingerprint)
            if same is not None:
                return same, False
            row = conn.execute("SELECT id, date FROM campaigns WHERE name = ?",
                               (campaign_name,)).fetchone()
            if row is not None and row[1] != campaign_date.isoformat():
                raise InputError(f'campaign "{campaign_name}" is in the ledger with date '
                                 f"{row[1]}, not {campaign_date.isoformat()}; a campaign's "
                                 f"date cannot change (use another name)", file=where)
            if row is not None:
                self._refuse_same_name(conn, row[0], campaign_name, file, where)
            self._refuse_ids_in_force(conn, file.kind, rows, where, id_column)
            if row is None:
                campaign_id = conn.execute(
                    "INSERT INTO campaigns (name, date, description, created_at) "
                    "VALUES (?, ?, ?, ?)",
                    (campaign_name, campaign_date.isoformat(), campaign_description,
                     _now())).lastrowid
            else:
                campaign_id = row[0]
            metadata = {**dict(file.metadata), "content_sha256": fingerprint}
            file_id = conn.execute(
                "INSERT INTO files (campaign_id, name, sha256, size_bytes, kind, row_count, "
                "imported_at, metadata) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                (campaign_id, file.name, file.sha256, file.size_bytes, file.kind,
                 file.row_count, _now(), _json(metadata))).lastrowid
            _executemany(conn, "INSERT INTO raw_rows (file_id, source_row, cells) "
                               "VALUES (?, ?, ?)",
                         ((file_id, source_row, _json(cells)) for source_row, cells in raw_rows))
            _executemany(conn, "INSERT INTO observations (campaign_id, file_id, source_row, "
                               "kind, zone, member, item_id, date, quantity, value, unit, "
                               "flags, extra) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                         ((campaign_id, file_id, *r[2:]) for r in rows))
            append_chain(conn, "import", file_id, import_content_sha256(conn, file_id))
            return self._file(file_id), True

    def _same_content(self, conn: sqlite3.Connection, kind: str,
                      fingerprint: str) -> FileRecord | None:
        """A file in force of this kind with the same content, or None."""
        for row in conn.execute(self._FILE_SQL + " WHERE f.kind = ? AND w.id IS NULL "
                                "ORDER BY f.id", (kind,)).fetchall():
            record = self._file_record(row)
            known = record.metadata.get("content_sha256")
            if known is None:  # imported before fingerprints were stored
                raw = [(r[0], json.loads(r[1])) for r in conn.execute(
                    "SELECT source_row, cells FROM raw_rows WHERE file_id = ?", (record.id,))]
                known = content_fingerprint(kind, raw)
            if known == fingerprint:
                return record
        return None

    @staticmethod
    def _route(name: str, campaign: str) -> str:
        return (f"a file in force is never added to or replaced. To correct it, withdraw it "
                f"first (assess site withdraw <site folder> {name} --campaign \"{campaign}\" "
                f"--reason \"...\"), then import the corrected file")

    def _refuse_same_name(self, conn: sqlite3.Connection, campaign_id: int, campaign: str,
                          file: NewFile, where: str | Path) -> None:
        row = conn.execute("SELECT f.imported_at, f.sha256 FROM files f LEFT JOIN withdrawals w "
                           "ON w.file_id = f.id WHERE f.campaign_id = ? AND f.name = ? AND "
                           "w.id IS NULL ORDER BY f.id LIMIT 1",
                           (campaign_id, file.name)).fetchone()
        if row is not None:
            raise InputError(f'a different file named {file.name} is in force in campaign '
                             f'"{campaign}" (imported {row[0][:10]}, SHA-256 {row[1][:12]}); '
                             + self._route(file.name, campaign), file=where)

    def _refuse_ids_in_force(self, conn: sqlite3.Connection, kind: str, rows: list[tuple],
                             where: str | Path, id_column: str) -> None:
        by_date = kind in SURVEY_KINDS
        wanted = {}
        for r in rows:  # r: (_, _, source_row, kind, zone, member, item_id, date, ...)
            key = (r[4], r[6], r[7]) if by_date else (r[4], r[6])
            wanted.setdefault(key, r[2])
        if not wanted:
            return
        held = conn.execute(
            "SELECT o.zone, o.item_id, o.date, f.name, c.name, o.source_row FROM observations o "
            "JOIN files f ON f.id = o.file_id JOIN campaigns c ON c.id = f.campaign_id "
            "WHERE o.kind = ? AND o.file_id NOT IN (SELECT file_id FROM withdrawals) "
            "ORDER BY o.id", (kind,)).fetchall()
        clashes = {}
        for zone, item, date, name, campaign, source_row in held:
            key = (zone, item, date) if by_date else (zone, item)
            if key in wanted and key not in clashes:
                clashes[key] = (name, campaign, source_row)
        if not clashes:
            return
        key = min(clashes, key=lambda k: wanted[k])
        name, campaign, source_row = clashes[key]
        on_date = f" measured on {key[2]}" if by_date else ""
        more = f" ({len(clashes) - 1} more ids too)" if len(clashes) > 1 else ""
        raise InputError(f'{kind} id "{key[1]}" in zone {key[0]}{on_date} is already in force '
                         f'from {name} (row {source_row}) in campaign "{campaign}"{more}; '
                         + self._route(name, campaign), file=where, row=wanted[key],
                         column=id_column)

    def withdraw_file(self, file_id: int, reason: str) -> WithdrawalRecord:
        """Take a file out of force, for good, with a reason; append-only.

        Its rows stay in the ledger; `observations` leaves them out from now on (and
        ``as_of`` a date before today still shows them).

        Raises
        ------
        InputError
            Empty reason, no such file, or the file is already withdrawn.
        """
        if not isinstance(reason, str) or not reason.strip():
            raise InputError("a withdrawal needs a reason (what was wrong with the file)",
                             column="--reason")
        with self.transaction() as conn:
            found = conn.execute(self._FILE_SQL + " WHERE f.id = ?", (file_id,)).fetchone()
            if found is None:
                raise InputError(f"no imported file with id {file_id}")
            record = self._file_record(found)
            if not record.in_force:
                raise InputError(f'{record.name} of campaign "{record.campaign}" was already '
                                 f"withdrawn on {record.withdrawn_at[:10]} "
                                 f"({record.withdrawal_reason})")
            withdrawal_id = conn.execute(
                "INSERT INTO withdrawals (file_id, reason, withdrawn_at) VALUES (?, ?, ?)",
                (file_id, reason.strip(), _now())).lastrowid
            append_chain(conn, "withdrawal", withdrawal_id,
                         withdrawal_content_sha256(conn, withdrawal_id))
            row = conn.execute("SELECT id, file_id, reason, withdrawn_at FROM withdrawals "
                               "WHERE id = ?", (withdrawal_id,)).fetchone()
        return WithdrawalRecord(*row)

    def withdrawals(self) -> list[WithdrawalRecord]:
        """Every withdrawal, oldest first."""
        return [WithdrawalRecord(*r) for r in self._query(
            "SELECT id, file_id, reason, withdrawn_at FROM withdrawals ORDER BY id")]

    # ----------------------------------------------------------------- observations
    def observations(self, kind: str | None = None, zone: str | None = None,
                     campaign_ids: Iterable[int] | None = None,
                     until_date: dt.date | None = None, *, as_of: dt.date | None = None,
                     include_withdrawn: bool = False) -> pd.DataFrame:
        """Canonical observations of the files in force, as a DataFrame, optionally filtered.

        Parameters
        ----------
        kind : str, optional
            Record kind (``"cores"``, ``"cover"``, ...).
        zone : str, optional
            Zone id.
        campaign_ids : iterable of int, optional
            Only these campaigns.
        until_date : datetime.date, optional
            Only observations sampled on or before this day.
        as_of : datetime.date, optional
            What the ledger held at the end of this day (UTC): files imported on or before
            it and not withdrawn on or before it. Default: now.
        include_withdrawn : bool
            Also the observations of withdrawn files (for audits).

        Returns
        -------
        DataFrame
            Columns: id, campaign_id, campaign (name), file_id, file (name), source_row, kind,
            zone, member, item_id, date (datetime.date), quantity, value (canonical unit),
            unit, flags (``;``-joined str, ``""`` if none) and extra (JSON text), the same
            conventions as `inspection_io.readers.ReadResult.observations`. Ordered by
            campaign date, file, row.
        """
        where, params = [], []
        if kind is not None:
            where.append("o.kind = ?")
            params.append(kind)
        if zone is not None:
            where.append("o.zone = ?")
            params.append(zone)
        if campaign_ids is not None:
            ids = [int(i) for i in campaign_ids]
            where.append(f"o.campaign_id IN ({', '.join('?' * len(ids))})" if ids else "0")
            params.extend(ids)
        if until_date is not None:
            where.append("o.date <= ?")
            params.append(until_date.isoformat())
        if as_of is not None:
            where.append("substr(f.imported_at, 1, 10) <= ?")
            params.append(as_of.isoformat())
        if not include_withdrawn:
            if as_of is None:
                where.append("o.file_id NOT IN (SELECT file_id FROM withdrawals)")
            else:
                where.append("o.file_id NOT IN (SELECT file_id FROM withdrawals "
                             "WHERE substr(withdrawn_at, 1, 10) <= ?)")
                params.append(as_of.isoformat())
        sql = ("SELECT o.id, o.campaign_id, c.name, o.file_id, f.name, o.source_row, o.kind, "
               "o.zone, o.member, o.item_id, o.date, o.quantity, o.value, o.unit, o.flags, "
               "o.extra FROM observations o JOIN campaigns c ON c.id = o.campaign_id "
               "JOIN files f ON f.id = o.file_id")
        if where:
            sql += " WHERE " + " AND ".join(where)
        sql += " ORDER BY c.date, c.id, o.file_id, o.source_row, o.id"
        rows = self._query(sql, params)
        frame = pd.DataFrame(rows, columns=list(OBSERVATION_COLUMNS))
        try:
            frame["date"] = [dt.date.fromisoformat(d) for d in frame["date"]]
        except (TypeError, ValueError) as exc:
            raise InputError(f"the ledger holds a bad observation date ({exc}); {_CHECK_HINT}",
                             file=self.path) from None
        frame["value"] = frame["value"].astype(float)
        frame["member"] = frame["member"].astype(object).where(frame["member"].notna(), None)
        return frame

    def raw_rows(self, file_id: int) -> list[tuple[int, dict]]:
        """The raw rows of one file: (source_row, {raw header: raw cell text})."""
        rows = self._query("SELECT source_row, cells FROM raw_rows WHERE file_id = ? "
                           "ORDER BY source_row", (file_id,))
        return [(r[0], json.loads(r[1])) for r in rows]

    # ----------------------------------------------------------------- results
    def append_result(self, kind: str, payload: Mapping[str, Any], *, member: str | None = None,
                      mode: str | None = None, seed: int | None = None,
                      settings: Mapping[str, Any] | None = None,
                      code_version: str | None = None) -> int:
        """Append one result row, linked into the hash chain; never changed or deleted.

        Parameters
        ----------
        kind : str
            Kind of result (e.g. ``"reliability"``, ``"update"``, ``"remaining_life"``).
        payload : mapping
            Named values, stored as JSON (numpy scalars and arrays are converted).
        member, mode : str, optional
            Member id and failure mode / limit state the result belongs to.
        seed : int, optional
            Seed that produced the result (0 <= seed < 2**63).
        settings : mapping, optional
            Method settings, stored as JSON.
        code_version : str, optional
            Defaults to the installed version of the package.

        Returns
        -------
        int
            The id of the new row.
        """
        if not isinstance(kind, str) or not kind:
            raise InputError(f"a result needs a non-empty kind, got {kind!r}")
        if seed is not None:
            if isinstance(seed, bool) or not isinstance(seed, int) and not hasattr(seed, "item"):
                raise InputError(f"a result seed must be an integer, got {seed!r}")
            seed = int(seed)
            if not 0 <= seed < 2 ** 63:
                raise InputError(f"a result seed must be in [0, 2**63), got {seed}")
        try:
            payload_json = _json(dict(payload))
            settings_json = _json(dict(settings or {}))
        except (TypeError, ValueError) as exc:
            raise InputError(f"result cannot be stored: {exc}") from None
        with self.transaction() as conn:
            result_id = conn.execute(
                "INSERT INTO results (created_at, kind, member, mode, payload, code_version, "
                "seed, settings) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                (_now(), kind, member, mode, payload_json, code_version or _code_version(),
                 seed, settings_json)).lastrowid
            append_chain(conn, "result", result_id, result_content_sha256(conn, result_id))
            return result_id

    def results(self, kind: str | None = None, member: str | None = None,
                mode: str | None = None) -> list[ResultRecord]:
        """Result rows, oldest first, optionally filtered by kind, member and mode."""
        where, params = [], []
        for column, value in (("kind", kind), ("member", member), ("mode", mode)):
            if value is not None:
                where.append(f"{column} = ?")
                params.append(value)
        sql = ("SELECT id, created_at, kind, member, mode, payload, code_version, seed, "
               "settings FROM results")
        if where:
            sql += " WHERE " + " AND ".join(where)
        rows = self._query(sql + " ORDER BY id", params)
        return [ResultRecord(r[0], r[1], r[2], r[3], r[4], json.loads(r[5]), r[6], r[7],
                             json.loads(r[8])) for r in rows]

    # ----------------------------------------------------------------- chain
    def chain_head(self) -> tuple[int, str]:
        """(number of chain rows, last chain hash): keep a copy to detect a rewritten ledger.

        ``(0, 64 zeros)`` for a ledger with nothing in it yet.
        """
        rows = self._query("SELECT id, chain_hash FROM chain ORDER BY id DESC LIMIT 1")
        return (rows[0][0], rows[0][1]) if rows else (0, "0" * 64)


def _observation_row(campaign_id: int, file_id: int, record: Mapping[str, Any],
                     default_date: str) -> tuple:
    date = record.get("date")
    if date is None or (isinstance(date, float) and math.isnan(date)) or date is pd.NaT:
        date = default_date
    elif isinstance(date, (dt.date, dt.datetime, pd.Timestamp)):
        date = (date.date() if isinstance(date, dt.datetime) else date).isoformat()
    else:
        date = str(date)
    member = record.get("member")
    if member is None or (isinstance(member, float) and math.isnan(member)) or member == "":
        member = None
    flags = record.get("flags")
    if flags is None or (isinstance(flags, float) and math.isnan(flags)):
        flags = ()
    elif isinstance(flags, str):
        flags = flags.split(";")
    flags = ";".join(dict.fromkeys(f.strip() for f in flags if f and f.strip()))
    extra = record.get("extra")
    if isinstance(extra, str) and extra.strip():
        extra = json.loads(extra)
    if not isinstance(extra, Mapping):
        extra = {}
    return (campaign_id, file_id, int(record["source_row"]), str(record["kind"]),
            str(record["zone"]), member, str(record["item_id"]), date, str(record["quantity"]),
            float(record["value"]), str(record["unit"]), flags, _json(dict(extra)))


__all__ = [
    "APPEND_ONLY_TABLES",
    "LEDGER_NAME",
    "SCHEMA_VERSION",
    "SQLITE_HEADER",
    "SURVEY_KINDS",
    "CampaignRecord",
    "FileRecord",
    "Ledger",
    "NewFile",
    "ResultRecord",
    "WithdrawalRecord",
    "check_ledger_file",
]
