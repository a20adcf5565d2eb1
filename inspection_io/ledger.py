"""The ledger: one SQLite file per site that keeps every import and every result.

Nothing is ever changed or deleted. Campaigns, imported files (with their SHA-256),
the raw rows as read, the canonical observations and the analysis results are only
appended; SQLite triggers refuse UPDATE and DELETE on every one of these tables,
and the Python API offers no way to do either.

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
import sqlite3
from dataclasses import dataclass
from importlib import metadata as _metadata
from pathlib import Path
from typing import Any, Iterable, Iterator, Mapping, Sequence

import pandas as pd

from inspection_io.errors import InputError

LEDGER_NAME = "ledger.sqlite"
SCHEMA_VERSION = 1
APPEND_ONLY_TABLES = ("campaigns", "files", "raw_rows", "observations", "results")
OBSERVATION_COLUMNS = ("id", "campaign_id", "campaign", "file_id", "file", "source_row", "kind",
                       "zone", "member", "item_id", "date", "quantity", "value", "unit", "flags",
                       "extra")

_SCHEMA = """
CREATE TABLE schema_version (
    version INTEGER NOT NULL
);
CREATE TABLE campaigns (
    id          INTEGER PRIMARY KEY,
    name        TEXT NOT NULL UNIQUE,
    date        TEXT NOT NULL,              -- ISO date the samples were taken
    description TEXT NOT NULL DEFAULT '',
    created_at  TEXT NOT NULL               -- ISO date-time, UTC
);
CREATE TABLE files (
    id          INTEGER PRIMARY KEY,
    campaign_id INTEGER NOT NULL REFERENCES campaigns(id),
    name        TEXT NOT NULL,
    sha256      TEXT NOT NULL UNIQUE CHECK (length(sha256) = 64),
    size_bytes  INTEGER NOT NULL CHECK (size_bytes >= 0),
    kind        TEXT NOT NULL,
    row_count   INTEGER NOT NULL CHECK (row_count >= 0),
    imported_at TEXT NOT NULL,              -- ISO date-time, UTC
    metadata    TEXT NOT NULL DEFAULT '{}'  -- JSON: raw headers, units, sheets ignored
);
CREATE TABLE raw_rows (
    file_id    INTEGER NOT NULL REFERENCES files(id),
    source_row INTEGER NOT NULL,            -- spreadsheet row number (header = 1)
    cells      TEXT NOT NULL,               -- JSON object: raw header -> raw cell text
    PRIMARY KEY (file_id, source_row)
);
CREATE TABLE observations (
    id          INTEGER PRIMARY KEY,
    campaign_id INTEGER NOT NULL REFERENCES campaigns(id),
    file_id     INTEGER NOT NULL REFERENCES files(id),
    source_row  INTEGER NOT NULL,
    kind        TEXT NOT NULL,
    zone        TEXT NOT NULL,
    member      TEXT,
    item_id     TEXT NOT NULL,
    date        TEXT NOT NULL,              -- ISO date
    quantity    TEXT NOT NULL,
    value       REAL NOT NULL,
    unit        TEXT NOT NULL,
    flags       TEXT NOT NULL DEFAULT '',   -- screening flags, ';'-joined (as the readers give them)
    extra       TEXT NOT NULL DEFAULT '{}', -- JSON object
    FOREIGN KEY (file_id, source_row) REFERENCES raw_rows(file_id, source_row)
);
CREATE INDEX observations_by_kind_zone ON observations(kind, zone);
CREATE INDEX files_by_campaign ON files(campaign_id);
CREATE TABLE results (
    id           INTEGER PRIMARY KEY,
    created_at   TEXT NOT NULL,             -- ISO date-time, UTC
    kind         TEXT NOT NULL,             -- kind of result, e.g. "reliability", "update"
    member       TEXT,
    mode         TEXT,                      -- failure mode or limit state
    payload      TEXT NOT NULL,             -- JSON object of named values
    code_version TEXT NOT NULL,
    seed         INTEGER,
    settings     TEXT NOT NULL DEFAULT '{}' -- JSON object
);
CREATE INDEX results_by_member ON results(member, mode);
"""

_TRIGGER = """
CREATE TRIGGER {table}_no_{action} BEFORE {action_upper} ON {table}
BEGIN
    SELECT RAISE(ABORT, 'the ledger is append-only: rows of {table} are never {verb}');
END;
"""


def _triggers() -> str:
    return "".join(
        _TRIGGER.format(table=table, action=action, action_upper=action.upper(), verb=verb)
        for table in APPEND_ONLY_TABLES
        for action, verb in (("update", "changed"), ("delete", "deleted")))


def _statements(script: str) -> list[str]:
    """Split an SQL script into complete statements (trigger bodies hold inner semicolons)."""
    statements, buffer = [], ""
    for line in script.splitlines(keepends=True):
        buffer += line
        if sqlite3.complete_statement(buffer):
            statements.append(buffer.strip())
            buffer = ""
    return statements


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
    """A file row (an imported campaign file)."""

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
    def __enter__(self) -> "Ledger":
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
        """The open connection; opens it, and creates the schema, on first use."""
        if self._conn is None:
            if not self.path.parent.is_dir():
                raise InputError("the folder of the ledger does not exist", file=self.path)
            conn = sqlite3.connect(self.path, isolation_level=None, timeout=30.0)
            try:
                conn.execute("PRAGMA foreign_keys = ON")
                conn.execute("PRAGMA journal_mode = DELETE")
                conn.execute("PRAGMA synchronous = FULL")
                self._prepare(conn)
            except sqlite3.DatabaseError as exc:
                conn.close()
                raise InputError(f"this is not a readable ledger ({exc})", file=self.path) from None
            except BaseException:
                conn.close()
                raise
            self._conn = conn
        return self._conn

    def _prepare(self, conn: sqlite3.Connection) -> None:
        conn.execute("BEGIN IMMEDIATE")
        try:
            exists = conn.execute("SELECT 1 FROM sqlite_master WHERE type = 'table' "
                                  "AND name = 'schema_version'").fetchone()
            if not exists:
                for statement in _statements(_SCHEMA + _triggers()):
                    conn.execute(statement)
                conn.execute("INSERT INTO schema_version (version) VALUES (?)",
                             (SCHEMA_VERSION,))
            conn.execute("COMMIT")
        except BaseException:
            conn.execute("ROLLBACK")
            raise
        version = conn.execute("SELECT max(version) FROM schema_version").fetchone()[0]
        if version != SCHEMA_VERSION:
            raise InputError(f"the ledger has schema version {version}; this program reads "
                             f"version {SCHEMA_VERSION}", file=self.path)

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

    # ----------------------------------------------------------------- campaigns and files
    def campaigns(self) -> list[CampaignRecord]:
        """All campaigns, by date then name."""
        rows = self.connection().execute(
            "SELECT id, name, date, description, created_at FROM campaigns "
            "ORDER BY date, name").fetchall()
        return [CampaignRecord(r[0], r[1], dt.date.fromisoformat(r[2]), r[3], r[4])
                for r in rows]

    def campaign(self, name: str) -> CampaignRecord | None:
        """The campaign of that name, or None."""
        row = self.connection().execute(
            "SELECT id, name, date, description, created_at FROM campaigns WHERE name = ?",
            (name,)).fetchone()
        return None if row is None else CampaignRecord(row[0], row[1],
                                                       dt.date.fromisoformat(row[2]), *row[3:])

    def files(self, campaign_id: int | None = None) -> list[FileRecord]:
        """Imported files (of one campaign if given), in import order."""
        sql = ("SELECT f.id, f.campaign_id, c.name, f.name, f.sha256, f.size_bytes, f.kind, "
               "f.row_count, f.imported_at, f.metadata FROM files f "
               "JOIN campaigns c ON c.id = f.campaign_id")
        params: tuple = ()
        if campaign_id is not None:
            sql += " WHERE f.campaign_id = ?"
            params = (campaign_id,)
        rows = self.connection().execute(sql + " ORDER BY f.id", params).fetchall()
        return [FileRecord(*r[:9], json.loads(r[9])) for r in rows]

    def file_by_hash(self, sha256: str) -> FileRecord | None:
        """The imported file with this SHA-256, or None."""
        row = self.connection().execute("SELECT id FROM files WHERE sha256 = ?",
                                        (sha256,)).fetchone()
        return None if row is None else self._file(row[0])

    def write_import(self, *, campaign_name: str, campaign_date: dt.date,
                     campaign_description: str, file: NewFile,
                     raw_rows: Iterable[tuple[int, Mapping[str, str]]],
                     observations: pd.DataFrame) -> tuple[FileRecord, bool]:
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

        Returns
        -------
        (FileRecord, bool)
            The file row, and True if it was written now, False if a file with the same
            SHA-256 was already in the ledger (then nothing is written).

        Raises
        ------
        InputError
            The campaign exists with another date. Nothing is written.
        """
        with self.transaction() as conn:
            existing = conn.execute("SELECT id FROM files WHERE sha256 = ?",
                                    (file.sha256,)).fetchone()
            if existing:
                return self._file(existing[0]), False
            row = conn.execute("SELECT id, date FROM campaigns WHERE name = ?",
                               (campaign_name,)).fetchone()
            if row is None:
                campaign_id = conn.execute(
                    "INSERT INTO campaigns (name, date, description, created_at) "
                    "VALUES (?, ?, ?, ?)",
                    (campaign_name, campaign_date.isoformat(), campaign_description,
                     _now())).lastrowid
            elif row[1] != campaign_date.isoformat():
                raise InputError(f'campaign "{campaign_name}" is in the ledger with date '
                                 f"{row[1]}, not {campaign_date.isoformat()}; a campaign's "
                                 f"date cannot change (use another name)")
            else:
                campaign_id = row[0]
            file_id = conn.execute(
                "INSERT INTO files (campaign_id, name, sha256, size_bytes, kind, row_count, "
                "imported_at, metadata) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                (campaign_id, file.name, file.sha256, file.size_bytes, file.kind,
                 file.row_count, _now(), _json(dict(file.metadata)))).lastrowid
            _executemany(conn, "INSERT INTO raw_rows (file_id, source_row, cells) "
                               "VALUES (?, ?, ?)",
                         ((file_id, int(source_row), _json(dict(cells)))
                          for source_row, cells in raw_rows))
            default_date = campaign_date.isoformat()
            _executemany(conn, "INSERT INTO observations (campaign_id, file_id, source_row, "
                               "kind, zone, member, item_id, date, quantity, value, unit, "
                               "flags, extra) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                         (_observation_row(campaign_id, file_id, record, default_date)
                          for record in observations.to_dict("records")))
            return self._file(file_id), True

    def _file(self, file_id: int) -> FileRecord:
        row = self.connection().execute(
            "SELECT f.id, f.campaign_id, c.name, f.name, f.sha256, f.size_bytes, f.kind, "
            "f.row_count, f.imported_at, f.metadata FROM files f "
            "JOIN campaigns c ON c.id = f.campaign_id WHERE f.id = ?", (file_id,)).fetchone()
        return FileRecord(*row[:9], json.loads(row[9]))

    # ----------------------------------------------------------------- observations
    def observations(self, kind: str | None = None, zone: str | None = None,
                     campaign_ids: Iterable[int] | None = None,
                     until_date: dt.date | None = None) -> pd.DataFrame:
        """Canonical observations as a DataFrame, optionally filtered.

        Parameters
        ----------
        kind : str, optional
            Record kind (``"cores"``, ``"cover"``, ...).
        zone : str, optional
            Zone id.
        campaign_ids : iterable of int, optional
            Only these campaigns.
        until_date : datetime.date, optional
            Only observations dated on or before this day.

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
        sql = ("SELECT o.id, o.campaign_id, c.name, o.file_id, f.name, o.source_row, o.kind, "
               "o.zone, o.member, o.item_id, o.date, o.quantity, o.value, o.unit, o.flags, "
               "o.extra FROM observations o JOIN campaigns c ON c.id = o.campaign_id "
               "JOIN files f ON f.id = o.file_id")
        if where:
            sql += " WHERE " + " AND ".join(where)
        sql += " ORDER BY c.date, c.id, o.file_id, o.source_row, o.id"
        rows = self.connection().execute(sql, params).fetchall()
        frame = pd.DataFrame(rows, columns=list(OBSERVATION_COLUMNS))
        frame["date"] = [dt.date.fromisoformat(d) for d in frame["date"]]
        frame["value"] = frame["value"].astype(float)
        frame["member"] = frame["member"].astype(object).where(frame["member"].notna(), None)
        return frame

    def raw_rows(self, file_id: int) -> list[tuple[int, dict]]:
        """The raw rows of one file: (source_row, {raw header: raw cell text})."""
        rows = self.connection().execute(
            "SELECT source_row, cells FROM raw_rows WHERE file_id = ? ORDER BY source_row",
            (file_id,)).fetchall()
        return [(r[0], json.loads(r[1])) for r in rows]

    # ----------------------------------------------------------------- results
    def append_result(self, kind: str, payload: Mapping[str, Any], *, member: str | None = None,
                      mode: str | None = None, seed: int | None = None,
                      settings: Mapping[str, Any] | None = None,
                      code_version: str | None = None) -> int:
        """Append one result row; results are never changed or deleted.

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
            return conn.execute(
                "INSERT INTO results (created_at, kind, member, mode, payload, code_version, "
                "seed, settings) VALUES (?, ?, ?, ?, ?, ?, ?, ?)",
                (_now(), kind, member, mode, payload_json, code_version or _code_version(),
                 seed, settings_json)).lastrowid

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
        rows = self.connection().execute(sql + " ORDER BY id", params).fetchall()
        return [ResultRecord(r[0], r[1], r[2], r[3], r[4], json.loads(r[5]), r[6], r[7],
                             json.loads(r[8])) for r in rows]


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


__all__ = ["Ledger", "CampaignRecord", "FileRecord", "ResultRecord", "NewFile", "LEDGER_NAME",
           "SCHEMA_VERSION", "APPEND_ONLY_TABLES"]
