"""The ledger's SQL schema, its append-only triggers, its hash chain and its upgrades.

Schema versions
---------------
1. ``schema_version``, ``campaigns``, ``files``, ``raw_rows``, ``observations``,
   ``results``; triggers refuse UPDATE and DELETE.
2. adds ``withdrawals`` (a file taken out of force, with a reason and a date) and
   ``chain`` (the hash chain), and triggers that refuse an INSERT whose key already
   exists. Without them ``INSERT OR REPLACE`` rewrote rows: REPLACE deletes the
   conflicting row without firing delete triggers unless ``recursive_triggers`` is on
   (SQLite documentation, "The ON CONFLICT clause"). ``schema_version`` only ever
   grows. A version-1 ledger is upgraded on first open by appending: new tables, new
   triggers, one chain entry per existing import and result, and the row ``2``.

Hash chain
----------
Every import (campaign row, file row, raw rows and observations of the file), every
withdrawal and every result row gets one row in ``chain``, appended in the same
transaction. A chain row stores the SHA-256 of its subject's content and
``chain_hash = SHA-256(previous chain_hash | id | subject | subject id | content
hash)``, the first row linking to 64 zeros. Editing any covered row, deleting one,
or adding one outside the ledger API breaks the chain (`inspection_io.ledger_check`).
The chain has no secret: someone who rewrites rows and recomputes every later link
is caught only by comparing the chain head with a copy kept elsewhere (the head is
printed by ``assess site check`` and can be written into each report).
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
from typing import Any

SCHEMA_VERSION = 2
GENESIS = "0" * 64
CHAIN_SUBJECTS = ("import", "withdrawal", "result")

#: Tables whose rows are only ever appended (all of them, except schema_version).
APPEND_ONLY_TABLES = ("campaigns", "files", "raw_rows", "observations", "results",
                      "withdrawals", "chain")
#: Tables each schema version must have.
REQUIRED_TABLES = {
    1: ("schema_version", "campaigns", "files", "raw_rows", "observations", "results"),
    2: ("schema_version", "campaigns", "files", "raw_rows", "observations", "results",
        "withdrawals", "chain"),
}

TABLES_V1 = """
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

TABLES_V2 = """
CREATE TABLE IF NOT EXISTS withdrawals (
    id           INTEGER PRIMARY KEY,
    file_id      INTEGER NOT NULL UNIQUE REFERENCES files(id),
    reason       TEXT NOT NULL CHECK (length(trim(reason)) > 0),
    withdrawn_at TEXT NOT NULL              -- ISO date-time, UTC
);
CREATE TABLE IF NOT EXISTS chain (
    id             INTEGER PRIMARY KEY,
    subject        TEXT NOT NULL CHECK (subject IN ('import', 'withdrawal', 'result')),
    subject_id     INTEGER NOT NULL,
    content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
    chain_hash     TEXT NOT NULL CHECK (length(chain_hash) = 64),
    UNIQUE (subject, subject_id)
);
"""

# Keys whose repetition an INSERT must never resolve by replacing the old row.
_KEYS = {
    "campaigns": ("id = NEW.id", "name = NEW.name"),
    "files": ("id = NEW.id", "sha256 = NEW.sha256"),
    "raw_rows": ("file_id = NEW.file_id AND source_row = NEW.source_row",),
    "observations": ("id = NEW.id",),
    "results": ("id = NEW.id",),
    "withdrawals": ("id = NEW.id", "file_id = NEW.file_id"),
    "chain": ("id = NEW.id", "subject = NEW.subject AND subject_id = NEW.subject_id"),
}


def trigger_statements() -> dict[str, str]:
    """Every trigger of the current schema: name -> CREATE TRIGGER statement."""
    triggers = {}
    for table in APPEND_ONLY_TABLES + ("schema_version",):
        for action, verb in (("update", "changed"), ("delete", "deleted")):
            name = f"{table}_no_{action}"
            triggers[name] = (
                f"CREATE TRIGGER {name} BEFORE {action.upper()} ON {table}\n"
                f"BEGIN\n"
                f"    SELECT RAISE(ABORT, 'the ledger is append-only: rows of {table} are "
                f"never {verb}');\n"
                f"END;")
    for table, keys in _KEYS.items():
        name = f"{table}_no_replace"
        condition = " OR ".join(f"({key})" for key in keys)
        triggers[name] = (
            f"CREATE TRIGGER {name} BEFORE INSERT ON {table}\n"
            f"WHEN EXISTS (SELECT 1 FROM {table} WHERE {condition})\n"
            f"BEGIN\n"
            f"    SELECT RAISE(ABORT, 'the ledger is append-only: a row of {table} with this "
            f"key exists and is never replaced');\n"
            f"END;")
    triggers["schema_version_forward_only"] = (
        "CREATE TRIGGER schema_version_forward_only BEFORE INSERT ON schema_version\n"
        "WHEN NEW.version IS NULL\n"
        "  OR NEW.version <= (SELECT coalesce(max(version), 0) FROM schema_version)\n"
        "  OR EXISTS (SELECT 1 FROM schema_version WHERE rowid = NEW.rowid)\n"
        "BEGIN\n"
        "    SELECT RAISE(ABORT, 'the ledger schema version only grows; its rows are never "
        "replaced');\n"
        "END;")
    return triggers


def squash(sql: str | None) -> str:
    """A statement's text with runs of white space made one space, no final semicolon."""
    return " ".join((sql or "").split()).rstrip(";")


def damaged_triggers(conn: sqlite3.Connection) -> list[str]:
    """Names of the current schema's triggers that are missing or not as created."""
    found = {r[0]: r[1] for r in conn.execute("SELECT name, sql FROM sqlite_master "
                                              "WHERE type = 'trigger'")}
    return [name for name, statement in trigger_statements().items()
            if name not in found or squash(found[name]) != squash(statement)]


def statements(script: str) -> list[str]:
    """Split an SQL script into complete statements (trigger bodies hold inner semicolons)."""
    found, buffer = [], ""
    for line in script.splitlines(keepends=True):
        buffer += line
        if sqlite3.complete_statement(buffer):
            found.append(buffer.strip())
            buffer = ""
    return found


def create_schema(conn: sqlite3.Connection) -> None:
    """Create a new ledger's tables, triggers and version row (inside a transaction)."""
    for statement in statements(TABLES_V1 + TABLES_V2):
        conn.execute(statement)
    for statement in trigger_statements().values():
        conn.execute(statement)
    conn.execute("INSERT INTO schema_version (version) VALUES (?)", (SCHEMA_VERSION,))


def upgrade_1_to_2(conn: sqlite3.Connection) -> None:
    """Upgrade a version-1 ledger by appending only (inside a transaction).

    New tables and triggers are created, every existing import and result gets its chain
    row (files first, then results, each in id order), and version 2 is recorded. No
    existing row is changed.
    """
    for statement in statements(TABLES_V2):
        conn.execute(statement)
    existing = {r[0] for r in conn.execute("SELECT name FROM sqlite_master "
                                           "WHERE type = 'trigger'")}
    for name, statement in trigger_statements().items():
        if name not in existing:
            conn.execute(statement)
    for (file_id,) in conn.execute("SELECT id FROM files ORDER BY id").fetchall():
        append_chain(conn, "import", file_id, import_content_sha256(conn, file_id))
    for (result_id,) in conn.execute("SELECT id FROM results ORDER BY id").fetchall():
        append_chain(conn, "result", result_id, result_content_sha256(conn, result_id))
    conn.execute("INSERT INTO schema_version (version) VALUES (2)")


UPGRADES = {1: upgrade_1_to_2}


# --------------------------------------------------------------------------- chain
def canonical(value: Any) -> str:
    """One fixed text form of stored values (floats by shortest repr, keys in order)."""
    return json.dumps(value, ensure_ascii=False, separators=(",", ":"), allow_nan=True)


def link(previous: str, chain_id: int, subject: str, subject_id: int, content: str) -> str:
    """``SHA-256(previous | id | subject | subject_id | content)`` as 64 hex digits."""
    text = f"{previous}|{chain_id}|{subject}|{subject_id}|{content}"
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def append_chain(conn: sqlite3.Connection, subject: str, subject_id: int,
                 content_sha256: str) -> str:
    """Append one chain row after the last one (inside the caller's transaction)."""
    last = conn.execute("SELECT id, chain_hash FROM chain ORDER BY id DESC LIMIT 1").fetchone()
    chain_id, previous = (last[0] + 1, last[1]) if last else (1, GENESIS)
    chain_hash = link(previous, chain_id, subject, subject_id, content_sha256)
    conn.execute("INSERT INTO chain (id, subject, subject_id, content_sha256, chain_hash) "
                 "VALUES (?, ?, ?, ?, ?)",
                 (chain_id, subject, subject_id, content_sha256, chain_hash))
    return chain_hash


def import_content_sha256(conn: sqlite3.Connection, file_id: int) -> str | None:
    """SHA-256 of everything one import wrote: campaign, file, raw rows, observations.

    None if the file row does not exist.
    """
    file_row = conn.execute(
        "SELECT id, campaign_id, name, sha256, size_bytes, kind, row_count, imported_at, "
        "metadata FROM files WHERE id = ?", (file_id,)).fetchone()
    if file_row is None:
        return None
    digest = hashlib.sha256()
    campaign = conn.execute("SELECT id, name, date, description, created_at FROM campaigns "
                            "WHERE id = ?", (file_row[1],)).fetchone()
    digest.update(canonical(["campaign", list(campaign) if campaign else None]).encode())
    digest.update(canonical(["file", list(file_row)]).encode())
    for row in conn.execute("SELECT source_row, cells FROM raw_rows WHERE file_id = ? "
                            "ORDER BY source_row", (file_id,)):
        digest.update(canonical(["raw", list(row)]).encode())
    for row in conn.execute(
            "SELECT id, campaign_id, file_id, source_row, kind, zone, member, item_id, date, "
            "quantity, value, unit, flags, extra FROM observations WHERE file_id = ? "
            "ORDER BY id", (file_id,)):
        digest.update(canonical(["observation", list(row)]).encode())
    return digest.hexdigest()


def result_content_sha256(conn: sqlite3.Connection, result_id: int) -> str | None:
    """SHA-256 of one results row as stored (None if it does not exist)."""
    row = conn.execute("SELECT id, created_at, kind, member, mode, payload, code_version, "
                       "seed, settings FROM results WHERE id = ?", (result_id,)).fetchone()
    return None if row is None else hashlib.sha256(canonical(list(row)).encode()).hexdigest()


def withdrawal_content_sha256(conn: sqlite3.Connection, withdrawal_id: int) -> str | None:
    """SHA-256 of one withdrawals row as stored (None if it does not exist)."""
    row = conn.execute("SELECT id, file_id, reason, withdrawn_at FROM withdrawals "
                       "WHERE id = ?", (withdrawal_id,)).fetchone()
    return None if row is None else hashlib.sha256(canonical(list(row)).encode()).hexdigest()


CONTENT_SHA256 = {"import": import_content_sha256, "withdrawal": withdrawal_content_sha256,
                  "result": result_content_sha256}
SUBJECT_TABLES = {"import": "files", "withdrawal": "withdrawals", "result": "results"}


def content_fingerprint(kind: str, raw_rows: list[tuple[int, dict]]) -> str:
    """SHA-256 of a file's content, blind to line endings, a final newline and row order.

    Built from the kind and the raw rows as read (header -> cell text), sorted; the same
    table saved with CRLF instead of LF, or without its last newline, gives the same
    fingerprint. Row numbers are left out, so blank lines do not matter either.
    """
    rows = sorted(canonical(sorted(cells.items())) for _, cells in raw_rows)
    return hashlib.sha256(canonical([kind, rows]).encode("utf-8")).hexdigest()


__all__ = [
    "APPEND_ONLY_TABLES",
    "CONTENT_SHA256",
    "GENESIS",
    "REQUIRED_TABLES",
    "SCHEMA_VERSION",
    "SUBJECT_TABLES",
    "UPGRADES",
    "append_chain",
    "canonical",
    "content_fingerprint",
    "create_schema",
    "damaged_triggers",
    "import_content_sha256",
    "link",
    "result_content_sha256",
    "squash",
    "trigger_statements",
    "withdrawal_content_sha256",
]
