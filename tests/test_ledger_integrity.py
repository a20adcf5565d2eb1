"""The ledger survives damage: no REPLACE, a hash chain, a check, refusals, upgrades.

References
----------
- SQLite documentation, "The ON CONFLICT clause" (lang_conflict.html): "When the REPLACE
  conflict resolution strategy deletes rows in order to satisfy a constraint, delete
  triggers fire if and only if recursive triggers are enabled."
- SQLite documentation, "Database File Format", 1.3 The database header: every database
  file begins with the 16 bytes "SQLite format 3\\000".
- SQLite documentation, "PRAGMA integrity_check": returns the single row "ok" when no
  problem is found.
- FIPS 180-4 (SHA-256) through Python's hashlib for the chain links.
"""

import datetime as dt
import hashlib
import os
import sqlite3
import subprocess
import sys
import textwrap

import pandas as pd
import pytest

from inspection_io.errors import InputError
from inspection_io.ledger import APPEND_ONLY_TABLES, LEDGER_NAME, Ledger, NewFile
from inspection_io.ledger_check import check_ledger
from inspection_io.ledger_schema import GENESIS, SCHEMA_VERSION, trigger_statements

# The schema of version 1 as shipped (inspection_io/ledger.py before version 2), frozen here.
V1_SCHEMA = """
CREATE TABLE schema_version (version INTEGER NOT NULL);
CREATE TABLE campaigns (id INTEGER PRIMARY KEY, name TEXT NOT NULL UNIQUE, date TEXT NOT NULL,
    description TEXT NOT NULL DEFAULT '', created_at TEXT NOT NULL);
CREATE TABLE files (id INTEGER PRIMARY KEY, campaign_id INTEGER NOT NULL REFERENCES campaigns(id),
    name TEXT NOT NULL, sha256 TEXT NOT NULL UNIQUE CHECK (length(sha256) = 64),
    size_bytes INTEGER NOT NULL CHECK (size_bytes >= 0), kind TEXT NOT NULL,
    row_count INTEGER NOT NULL CHECK (row_count >= 0), imported_at TEXT NOT NULL,
    metadata TEXT NOT NULL DEFAULT '{}');
CREATE TABLE raw_rows (file_id INTEGER NOT NULL REFERENCES files(id),
    source_row INTEGER NOT NULL, cells TEXT NOT NULL, PRIMARY KEY (file_id, source_row));
CREATE TABLE observations (id INTEGER PRIMARY KEY,
    campaign_id INTEGER NOT NULL REFERENCES campaigns(id),
    file_id INTEGER NOT NULL REFERENCES files(id), source_row INTEGER NOT NULL,
    kind TEXT NOT NULL, zone TEXT NOT NULL, member TEXT, item_id TEXT NOT NULL,
    date TEXT NOT NULL, quantity TEXT NOT NULL, value REAL NOT NULL, unit TEXT NOT NULL,
    flags TEXT NOT NULL DEFAULT '', extra TEXT NOT NULL DEFAULT '{}',
    FOREIGN KEY (file_id, source_row) REFERENCES raw_rows(file_id, source_row));
CREATE INDEX observations_by_kind_zone ON observations(kind, zone);
CREATE INDEX files_by_campaign ON files(campaign_id);
CREATE TABLE results (id INTEGER PRIMARY KEY, created_at TEXT NOT NULL, kind TEXT NOT NULL,
    member TEXT, mode TEXT, payload TEXT NOT NULL, code_version TEXT NOT NULL, seed INTEGER,
    settings TEXT NOT NULL DEFAULT '{}');
CREATE INDEX results_by_member ON results(member, mode);
"""
V1_TABLES = ("campaigns", "files", "raw_rows", "observations", "results")
V1_ROWS = """
INSERT INTO schema_version VALUES (1);
INSERT INTO campaigns VALUES (1, 'First', '2009-06-15', '', '2020-01-01T00:00:00+00:00');
INSERT INTO files VALUES (1, 1, 'cores.csv', '{sha}', 10, 'cores', 2,
                          '2020-01-01T00:00:00+00:00', '{{}}');
INSERT INTO raw_rows VALUES (1, 2, '{{"core_id": "C1", "zone": "L1"}}');
INSERT INTO raw_rows VALUES (1, 3, '{{"core_id": "C2", "zone": "L1"}}');
INSERT INTO observations VALUES (1, 1, 1, 2, 'cores', 'L1', NULL, 'C1', '2009-06-15',
                                 'core_strength', 31.5, 'MPa', '', '{{}}');
INSERT INTO observations VALUES (2, 1, 1, 3, 'cores', 'L1', NULL, 'C2', '2009-06-15',
                                 'core_strength', 28.25, 'MPa', '', '{{}}');
INSERT INTO results VALUES (1, '2020-01-02T00:00:00+00:00', 'reliability', 'S1', 'flexure',
                            '{{"beta": 3.1}}', '0.1', 7, '{{}}');
"""


def v1_triggers() -> str:
    return "".join(
        f"CREATE TRIGGER {t}_no_{a} BEFORE {a.upper()} ON {t} BEGIN SELECT RAISE(ABORT, "
        f"'the ledger is append-only: rows of {t} are never {v}'); END;\n"
        for t in V1_TABLES for a, v in (("update", "changed"), ("delete", "deleted")))


def make_v1(path):
    conn = sqlite3.connect(path)
    conn.executescript(V1_SCHEMA + v1_triggers() + V1_ROWS.format(sha="a" * 64))
    conn.commit()
    conn.close()


def dump(path, tables):
    conn = sqlite3.connect(path)
    try:
        return {t: conn.execute(f"SELECT * FROM {t} ORDER BY rowid").fetchall() for t in tables}
    finally:
        conn.close()


def fill(ledger):
    """One import, one withdrawal, one more import, two results."""
    def write(sha, ids, name):
        frame = pd.DataFrame({"kind": "cores", "source_row": [2, 3], "item_id": ids,
                              "zone": "L1", "member": [None, None], "date": [None, None],
                              "quantity": "core_strength", "value": [31.5, 28.25],
                              "unit": "MPa", "flags": ["", ""], "extra": ["{}", "{}"]})
        raw = [(2, {"zone": "L1", "core_id": ids[0]}), (3, {"zone": "L1", "core_id": ids[1]})]
        return ledger.write_import(campaign_name="First", campaign_date=dt.date(2009, 6, 15),
                                   campaign_description="", file=NewFile(name, sha, 10, "cores",
                                                                         2, {}),
                                   raw_rows=raw, observations=frame)[0]

    first = write("a" * 64, ["C1", "C2"], "cores.csv")
    ledger.withdraw_file(first.id, "typing error")
    write("b" * 64, ["C1", "C3"], "cores.csv")
    ledger.append_result("reliability", {"beta": 3.1}, member="S1", mode="flexure", seed=7)
    ledger.append_result("reliability", {"beta": 2.9}, member="S2", mode="shear", seed=7)


@pytest.fixture
def filled(tmp_path):
    with Ledger(tmp_path) as ledger:
        fill(ledger)
    return tmp_path / LEDGER_NAME


def raw(path):
    return sqlite3.connect(path, isolation_level=None)


def edit_behind_the_triggers(path, sql, *params):
    """Drop the update/delete triggers, run `sql`, put the triggers back exactly."""
    conn = raw(path)
    triggers = trigger_statements()
    for name in triggers:
        if name.endswith(("_no_update", "_no_delete")):
            conn.execute(f"DROP TRIGGER IF EXISTS {name}")
    conn.execute(sql, params)
    for name, statement in triggers.items():
        if name.endswith(("_no_update", "_no_delete")):
            conn.execute(statement)
    conn.close()


# ------------------------------------------------------------------ REPLACE and schema_version
@pytest.mark.parametrize("table", APPEND_ONLY_TABLES)
@pytest.mark.parametrize("verb", ["INSERT OR REPLACE", "REPLACE", "INSERT OR IGNORE"])
def test_a_row_with_an_existing_key_is_never_replaced(filled, table, verb):
    before = dump(filled, APPEND_ONLY_TABLES)
    conn = raw(filled)  # any connection: the triggers live in the file
    assert conn.execute("PRAGMA recursive_triggers").fetchone() == (0,)
    with pytest.raises(sqlite3.IntegrityError, match="never replaced"):
        conn.execute(f"{verb} INTO {table} SELECT * FROM {table} ORDER BY rowid LIMIT 1")
    conn.close()
    assert dump(filled, APPEND_ONLY_TABLES) == before


def test_without_the_insert_triggers_replace_rewrites_a_version_1_ledger(tmp_path):
    # the flaw this fixes (SQLite "The ON CONFLICT clause": REPLACE deletes without firing
    # delete triggers unless recursive_triggers): a version-1 ledger lets a row be rewritten
    path = tmp_path / LEDGER_NAME
    make_v1(path)
    conn = raw(path)
    conn.execute("INSERT OR REPLACE INTO results VALUES (1, '2020-01-02T00:00:00+00:00', "
                 "'reliability', 'S1', 'flexure', '{\"beta\": 9.9}', '0.1', 7, '{}')")
    assert conn.execute("SELECT payload FROM results").fetchone() == ('{"beta": 9.9}',)
    conn.close()
    with Ledger(path) as ledger:  # upgraded to version 2 on open: now refused
        ledger.connection()
    conn = raw(path)
    with pytest.raises(sqlite3.IntegrityError, match="never replaced"):
        conn.execute("INSERT OR REPLACE INTO results SELECT * FROM results WHERE id = 1")
    conn.close()


def test_schema_version_only_grows(filled):
    conn = raw(filled)
    for sql in ("UPDATE schema_version SET version = 1", "DELETE FROM schema_version",
                f"INSERT INTO schema_version VALUES ({SCHEMA_VERSION})",
                "INSERT INTO schema_version VALUES (1)",
                "INSERT OR REPLACE INTO schema_version (rowid, version) VALUES (1, 99)"):
        with pytest.raises(sqlite3.IntegrityError):
            conn.execute(sql)
    assert conn.execute("SELECT version FROM schema_version").fetchall() == [(SCHEMA_VERSION,)]
    conn.close()


# ------------------------------------------------------------------ hash chain and check
def test_a_sound_ledger_passes_the_check(filled):
    report = check_ledger(filled.parent)
    assert report.ok, report.problems
    assert report.schema_version == SCHEMA_VERSION
    assert report.chain_length == 2 + 1 + 2      # two imports, a withdrawal, two results
    assert report.counts["results"] == 2 and report.counts["withdrawals"] == 1
    with Ledger(filled) as ledger:
        assert ledger.chain_head() == (report.chain_length, report.chain_head)


def test_chain_links_follow_the_published_formula(filled):
    # chain_hash(n) = SHA-256(chain_hash(n-1) | n | subject | subject id | content SHA-256)
    conn = raw(filled)
    rows = conn.execute("SELECT id, subject, subject_id, content_sha256, chain_hash FROM chain "
                        "ORDER BY id").fetchall()
    conn.close()
    previous = GENESIS
    for chain_id, subject, subject_id, content, chain_hash in rows:
        text = f"{previous}|{chain_id}|{subject}|{subject_id}|{content}".encode()
        assert hashlib.sha256(text).hexdigest() == chain_hash
        previous = chain_hash
    assert [r[1] for r in rows] == ["import", "withdrawal", "import", "result", "result"]


@pytest.mark.parametrize("sql, words", [
    ("UPDATE results SET payload = '{\"beta\": 4.5}' WHERE id = 1", "results row 1 was changed"),
    ("UPDATE observations SET value = 45.0 WHERE id = 3", "files row 2 was changed"),
    ("UPDATE raw_rows SET cells = '{}' WHERE file_id = 1 AND source_row = 2",
     "files row 1 was changed"),
    ("UPDATE campaigns SET date = '2010-01-01'", "files row 1 was changed"),
    ("UPDATE withdrawals SET reason = 'no reason'", "withdrawals row 1 was changed"),
    ("DELETE FROM withdrawals", "withdrawals row 1 (chain row 2) is missing"),
    ("UPDATE chain SET content_sha256 = '" + "f" * 64 + "' WHERE id = 4",
     "chain row 4 does not link"),
    ("DELETE FROM chain WHERE id = 2", "chain row 2 is missing"),
])
def test_the_chain_detects_a_row_edited_behind_the_triggers(filled, sql, words):
    edit_behind_the_triggers(filled, sql)
    report = check_ledger(filled)
    assert not report.ok
    assert any(words in p for p in report.problems), report.problems
    # the triggers are back exactly: only the chain can have caught it
    assert not any("trigger" in p for p in report.problems)


def test_rows_added_outside_the_api_and_dropped_triggers_are_reported(filled):
    conn = raw(filled)
    conn.execute("INSERT INTO results (created_at, kind, payload, code_version) "
                 "VALUES ('2030-01-01', 'reliability', '{\"beta\": 5}', 'x')")
    conn.execute("DROP TRIGGER results_no_delete")
    conn.close()
    problems = check_ledger(filled).problems
    assert "results row 3 is not in the hash chain (added outside the ledger)" in problems
    assert "append-only trigger results_no_delete is missing" in problems
    # a ledger that lost a trigger is not worked on (rows may have been rewritten)
    with pytest.raises(InputError, match="trigger results_no_delete is missing or changed"):
        Ledger(filled).connection()


def test_a_cut_back_chain_is_caught_by_a_kept_anchor(filled):
    head = check_ledger(filled).chain_head
    conn = raw(filled)
    for name in ("results_no_delete", "chain_no_delete"):
        conn.execute(f"DROP TRIGGER {name}")
    conn.execute("DELETE FROM results WHERE id = 2")
    conn.execute("DELETE FROM chain WHERE id = 5")
    for name in ("results_no_delete", "chain_no_delete"):
        conn.execute(trigger_statements()[name])
    conn.close()
    assert check_ledger(filled).ok          # a keyless chain cannot see its own tail go
    report = check_ledger(filled, anchor=head)
    assert any("no longer in the chain" in p for p in report.problems)


def test_damaged_pages_fail_sqlites_integrity_check(filled):
    data = bytearray(filled.read_bytes())
    page = 4096
    assert len(data) >= 4 * page
    data[2 * page + 8: 3 * page] = b"\xff" * (page - 8)   # scribble over a b-tree page
    filled.write_bytes(bytes(data))
    report = check_ledger(filled)
    assert not report.ok
    assert any("integrity" in p or "malformed" in p or "cannot be read" in p
               for p in report.problems), report.problems


# ------------------------------------------------------------------ what is refused
def test_a_zero_byte_ledger_is_refused_and_left_as_it_is(tmp_path):
    path = tmp_path / LEDGER_NAME
    path.write_bytes(b"")
    with pytest.raises(InputError, match="zero bytes") as info:
        Ledger(tmp_path).connection()
    assert info.value.file == str(path)
    assert path.read_bytes() == b""
    assert sorted(p.name for p in tmp_path.iterdir()) == [LEDGER_NAME]
    assert not check_ledger(tmp_path).ok


@pytest.mark.parametrize("make, words", [
    (lambda p: p.write_bytes(b"PK\x03\x04 a zip archive, not a ledger" * 50),
     "not a readable ledger"),
    (lambda p: sqlite3.connect(p).executescript("CREATE TABLE x (a); INSERT INTO x VALUES (1);"),
     "not a ledger"),
    (lambda p: sqlite3.connect(p).execute("PRAGMA user_version = 5").connection.commit(),
     "empty SQLite database"),
])
def test_a_foreign_file_where_the_ledger_should_be_is_refused(tmp_path, make, words):
    path = tmp_path / LEDGER_NAME
    make(path)
    before = path.read_bytes()
    with pytest.raises(InputError, match=words):
        Ledger(path).connection()
    assert path.read_bytes() == before


def test_a_dropped_results_table_gives_a_clear_message(filled):
    conn = raw(filled)
    conn.execute("DROP TABLE results")
    conn.close()
    with pytest.raises(InputError, match="table results is missing") as info:
        Ledger(filled).connection()
    assert "assess site check" in str(info.value)
    problems = check_ledger(filled).problems
    assert any("results missing" in p for p in problems), problems


def test_ledger_links_leading_outside_are_refused(tmp_path):
    site, outside = tmp_path / "site", tmp_path / "outside"
    site.mkdir()
    outside.mkdir()
    (site / LEDGER_NAME).symlink_to(outside / "ledger.sqlite")            # dangling
    with pytest.raises(InputError, match="outside the site folder"):
        Ledger(site).connection()
    assert list(outside.iterdir()) == []                                  # nothing created there
    (site / LEDGER_NAME).unlink()
    with Ledger(outside) as ledger:
        fill(ledger)
    before = (outside / LEDGER_NAME).read_bytes()
    (site / LEDGER_NAME).symlink_to(outside / LEDGER_NAME)                # existing, outside
    with pytest.raises(InputError, match="outside the site folder"):
        Ledger(site / LEDGER_NAME).connection()
    (site / LEDGER_NAME).unlink()
    with Ledger(site) as ledger:
        ledger.connection()
    (site / f"{LEDGER_NAME}-journal").symlink_to(outside / "journal")     # journal to outside
    with pytest.raises(InputError, match="journal"):
        Ledger(site).connection()
    assert (outside / LEDGER_NAME).read_bytes() == before
    assert not (outside / "journal").exists()


# ------------------------------------------------------------------ upgrades and creation
def test_a_version_1_ledger_is_upgraded_by_appending_only(tmp_path):
    path = tmp_path / LEDGER_NAME
    make_v1(path)
    before = dump(path, V1_TABLES)
    with Ledger(tmp_path) as ledger:
        frame = ledger.observations()
        assert list(frame["value"]) == [31.5, 28.25]
        assert ledger.results()[0].payload == {"beta": 3.1}
        assert ledger.chain_head()[0] == 2              # the old import and the old result
    after = dump(path, V1_TABLES + ("schema_version",))
    for table in V1_TABLES:
        assert after[table] == before[table]
    assert after["schema_version"] == [(1,), (2,)]
    assert check_ledger(path).ok
    with Ledger(tmp_path) as ledger:                      # opening again changes nothing
        ledger.connection()
    assert dump(path, V1_TABLES + ("schema_version",)) == after


def test_check_reads_a_version_1_ledger_without_upgrading_it(tmp_path):
    path = tmp_path / LEDGER_NAME
    make_v1(path)
    before = path.read_bytes()
    report = check_ledger(path)
    assert report.ok and report.schema_version == 1
    assert any("upgraded" in note for note in report.notes)
    assert path.read_bytes() == before


def test_processes_creating_the_ledger_at_once_get_one_ledger(tmp_path):
    script = textwrap.dedent("""
        import sys, time, pathlib
        from inspection_io.ledger import Ledger
        go = pathlib.Path(sys.argv[2])
        while not go.exists():
            time.sleep(0.001)
        with Ledger(sys.argv[1]) as ledger:
            ledger.append_result("probe", {"n": int(sys.argv[3])})
    """)
    go = tmp_path / "go"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    children = [subprocess.Popen([sys.executable, "-c", script, str(tmp_path), str(go), str(i)],
                                 env=env) for i in range(2)]
    go.touch()
    assert [c.wait(timeout=120) for c in children] == [0, 0]
    with Ledger(tmp_path) as ledger:
        assert sorted(r.payload["n"] for r in ledger.results()) == [0, 1]
        versions = ledger.connection().execute("SELECT version FROM schema_version").fetchall()
    assert versions == [(SCHEMA_VERSION,)]
    assert check_ledger(tmp_path).ok
    assert sorted(p.name for p in tmp_path.iterdir()) == ["go", LEDGER_NAME]
