"""Check a ledger for damage: SQLite's own check, the hash chain and the ledger's rules.

`check_ledger` never changes the ledger (it does not even upgrade an old one) and never
raises for damage: it returns a `LedgerCheck` listing every problem found.

What is checked
---------------
1. The file: present, a regular file, the SQLite header, not a link leading out.
2. ``PRAGMA integrity_check`` (SQLite's check of the b-trees, indexes and constraints)
   and ``PRAGMA foreign_key_check``.
3. The schema: every table and every append-only trigger of the schema version, with
   the statement it was created with; ``schema_version`` rows only growing.
4. The hash chain (`inspection_io.ledger_schema`): chain rows numbered 1, 2, 3 ...
   without gaps, each link recomputed from the previous hash, each content hash
   recomputed from the rows it covers; every import, withdrawal and result in the chain
   exactly once. An optional `anchor` (a chain hash kept from an earlier report) must
   still be in the chain.
5. The ledger's own rules: each file's ``row_count`` equals its raw rows; each
   observation belongs to its file's campaign; dates are ISO dates.
"""

from __future__ import annotations

import itertools
import os
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path

from inspection_io.errors import InputError
from inspection_io.ledger import LEDGER_NAME, check_ledger_file
from inspection_io.ledger_schema import (
    CONTENT_SHA256,
    GENESIS,
    REQUIRED_TABLES,
    SCHEMA_VERSION,
    SUBJECT_TABLES,
    damaged_triggers,
    link,
)

__all__ = ["LedgerCheck", "check_ledger"]

_MAX_LISTED = 20  # problems of one kind listed before "and N more"


@dataclass
class LedgerCheck:
    """What `check_ledger` found."""

    path: Path
    problems: list[str] = field(default_factory=list)
    """Each a sentence naming what is wrong (empty: the ledger is sound)."""
    notes: list[str] = field(default_factory=list)
    """Remarks that are not damage (an old schema version, ...)."""
    counts: dict = field(default_factory=dict)
    """Rows per table."""
    schema_version: int | None = None
    chain_length: int = 0
    chain_head: str | None = None
    """The last chain hash: keep it to detect a rewritten ledger later."""

    @property
    def ok(self) -> bool:
        return not self.problems

    def to_dict(self) -> dict:
        return {"ledger": str(self.path), "ok": self.ok, "problems": list(self.problems),
                "notes": list(self.notes), "counts": dict(self.counts),
                "schema_version": self.schema_version, "chain_length": self.chain_length,
                "chain_head": self.chain_head}


def _add(problems: list[str], found: list[str]) -> None:
    problems.extend(found[:_MAX_LISTED])
    if len(found) > _MAX_LISTED:
        problems.append(f"... and {len(found) - _MAX_LISTED} more like these")


def check_ledger(path: str | os.PathLike, *, anchor: str | None = None) -> LedgerCheck:
    """Check the ledger of a site folder (or a ledger file) without changing it.

    Parameters
    ----------
    path : path
        The site folder or the ledger file.
    anchor : str, optional
        A chain hash kept from earlier (e.g. from a report): it must still be in the chain.

    Returns
    -------
    LedgerCheck
        ``ok`` is True when no problem was found.

    Raises
    ------
    InputError
        No ledger at that place (nothing to check), or the folder does not exist.
    """
    path = Path(path)
    if path.is_dir():
        path = path / LEDGER_NAME
    if not path.parent.is_dir():
        raise InputError("folder not found", file=path.parent)
    if not os.path.lexists(path):
        raise InputError("no ledger here: nothing was imported yet", file=path)
    report = LedgerCheck(path)
    try:
        check_ledger_file(path)
    except InputError as exc:
        report.problems.append(exc.message)
        return report
    try:
        conn = sqlite3.connect(f"file:{path}?mode=rw", uri=True, isolation_level=None)
    except sqlite3.Error as exc:
        report.problems.append(f"the ledger cannot be opened ({exc})")
        return report
    try:
        _check(conn, report, anchor)
    except sqlite3.DatabaseError as exc:
        report.problems.append(f"the ledger cannot be read to the end ({exc})")
    finally:
        conn.close()
    return report


def _check(conn: sqlite3.Connection, report: LedgerCheck, anchor: str | None) -> None:
    problems = report.problems
    conn.execute("BEGIN")  # one consistent snapshot (a hot journal is rolled back first)
    try:
        integrity = [r[0] for r in conn.execute("PRAGMA integrity_check")]
    except sqlite3.DatabaseError as exc:
        problems.append(f"SQLite's integrity check failed ({exc})")
        return
    if integrity != ["ok"]:
        _add(problems, [f"SQLite's integrity check: {line}" for line in integrity])
    tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    if "schema_version" not in tables:
        problems.append("this SQLite database is not a ledger (no schema_version table)")
        return
    versions = [r[0] for r in conn.execute("SELECT version FROM schema_version ORDER BY rowid")]
    if not versions or any(b <= a for a, b in itertools.pairwise(versions)) \
            or not all(isinstance(v, int) for v in versions):
        problems.append(f"schema_version rows must only grow, found {versions}")
    version = max((v for v in versions if isinstance(v, int)), default=None)
    report.schema_version = version
    if version not in REQUIRED_TABLES:
        problems.append(f"unknown schema version {version!r} (this program knows "
                        f"{sorted(REQUIRED_TABLES)})")
        return
    missing = [t for t in REQUIRED_TABLES[version] if t not in tables]
    if missing:
        problems.append(f"table {', '.join(missing)} missing")
    present = [t for t in REQUIRED_TABLES[version] if t in tables]
    report.counts = {t: conn.execute(f"SELECT count(*) FROM {t}").fetchone()[0]
                     for t in present if t != "schema_version"}
    foreign = conn.execute("PRAGMA foreign_key_check").fetchall()
    _add(problems, [f"row {r[1]} of {r[0]} points at a missing row of {r[2]}" for r in foreign])
    if version < SCHEMA_VERSION:
        report.notes.append(f"schema version {version}: readable; it is upgraded (by "
                            f"appending) the next time the ledger is opened for work, and "
                            f"only then has a hash chain")
        _check_rules(conn, problems, tables)
        return
    _check_triggers(conn, problems)
    _check_rules(conn, problems, tables)
    if not missing:
        _check_chain(conn, report, anchor)


def _check_triggers(conn: sqlite3.Connection, problems: list[str]) -> None:
    found = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")}
    _add(problems, [f"append-only trigger {name} is {'changed' if name in found else 'missing'}"
                    for name in damaged_triggers(conn)])


def _check_rules(conn: sqlite3.Connection, problems: list[str], tables: set[str]) -> None:
    if {"files", "raw_rows"} <= tables:
        rows = conn.execute(
            "SELECT f.id, f.name, f.row_count, (SELECT count(*) FROM raw_rows r "
            "WHERE r.file_id = f.id) FROM files f").fetchall()
        _add(problems, [f"file {name} (id {i}) says {n} rows but the ledger holds {m}"
                        for i, name, n, m in rows if n != m])
    if {"files", "observations"} <= tables:
        rows = conn.execute("SELECT o.id FROM observations o JOIN files f ON f.id = o.file_id "
                            "WHERE o.campaign_id != f.campaign_id").fetchall()
        _add(problems, [f"observation {r[0]} belongs to another campaign than its file"
                        for r in rows])
        rows = conn.execute("SELECT id, date FROM observations WHERE date NOT GLOB "
                            "'[0-9][0-9][0-9][0-9]-[0-1][0-9]-[0-3][0-9]'").fetchall()
        _add(problems, [f"observation {i} has no ISO date ({d!r})" for i, d in rows])


def _check_chain(conn: sqlite3.Connection, report: LedgerCheck, anchor: str | None) -> None:
    problems = report.problems
    bad: list[str] = []
    previous, expected_id, seen = GENESIS, 1, {s: set() for s in SUBJECT_TABLES}
    hashes = set()
    for chain_id, subject, subject_id, content, chain_hash in conn.execute(
            "SELECT id, subject, subject_id, content_sha256, chain_hash FROM chain ORDER BY id"):
        if chain_id != expected_id:
            bad.append(f"chain row {expected_id} is missing (next is {chain_id}): rows were "
                       f"deleted")
        if link(previous, chain_id, subject, subject_id, content) != chain_hash:
            bad.append(f"chain row {chain_id} does not link to the row before it: the chain "
                       f"was edited")
        if subject in CONTENT_SHA256:
            actual = CONTENT_SHA256[subject](conn, subject_id)
            table = SUBJECT_TABLES[subject]
            if actual is None:
                bad.append(f"{table} row {subject_id} (chain row {chain_id}) is missing")
            elif actual != content:
                bad.append(f"{table} row {subject_id} was changed after it was written "
                           f"(chain row {chain_id})" + (": its file, campaign, raw rows or "
                                                        "observations differ"
                                                        if subject == "import" else ""))
            if subject_id in seen[subject]:
                bad.append(f"{table} row {subject_id} is in the chain twice")
            seen[subject].add(subject_id)
        else:
            bad.append(f"chain row {chain_id} has an unknown subject {subject!r}")
        previous, expected_id = chain_hash, chain_id + 1
        hashes.add(chain_hash)
    report.chain_length = expected_id - 1
    report.chain_head = previous if report.chain_length else None
    for subject, table in SUBJECT_TABLES.items():
        ids = [r[0] for r in conn.execute(f"SELECT id FROM {table} ORDER BY id")]
        outside = [i for i in ids if i not in seen[subject]]
        bad.extend(f"{table} row {i} is not in the hash chain (added outside the ledger)"
                   for i in outside)
    _add(problems, bad)
    if anchor is not None and anchor.strip().lower() not in hashes:
        problems.append(f"the chain hash kept earlier ({anchor.strip()[:16]}...) is no longer "
                        f"in the chain: the ledger was rewritten or cut back")

