"""Ledger: schema, foreign keys, append-only triggers, results API, withdrawals and as_of."""

import datetime as dt
import json
import sqlite3

import numpy as np
import pandas as pd
import pytest

from inspection_io.errors import InputError
from inspection_io.ledger import APPEND_ONLY_TABLES, LEDGER_NAME, SCHEMA_VERSION, Ledger, NewFile


def new_file(sha="a" * 64, name="cores.csv", rows=2):
    return NewFile(name=name, sha256=sha, size_bytes=123, kind="cores", row_count=rows,
                   metadata={"raw_headers": ["zone", "core_id"]})


def observations(rows=(2, 3), date=None, tag="C"):
    return pd.DataFrame({
        "kind": "cores", "source_row": list(rows), "item_id": [f"{tag}{r}" for r in rows],
        "zone": "L1", "member": [None] * len(rows), "date": [date] * len(rows),
        "quantity": "core_strength", "value": [30.0 + r for r in rows], "unit": "MPa",
        "flags": (["", "bar_in_core;damaged"] * len(rows))[:len(rows)], "extra": ['{"diameter": 100.0}'] * len(rows),
    })


def write_one(ledger, sha="a" * 64, campaign="2009 first survey", date=dt.date(2009, 6, 15),
              rows=(2, 3), obs_date=None, tag=None, name="cores.csv"):
    """One cores file; its ids are <tag><row> with the tag "C" for sha "a"*64, else sha[0]."""
    tag = tag or ("C" if sha == "a" * 64 else sha[0])
    raw = [(r, {"zone": "L1", "core_id": f"{tag}{r}"}) for r in rows]
    return ledger.write_import(campaign_name=campaign, campaign_date=date,
                               campaign_description="Cores",
                               file=new_file(sha, name=name, rows=len(rows)),
                               raw_rows=raw, observations=observations(rows, obs_date, tag))


@pytest.fixture
def ledger(tmp_path):
    with Ledger(tmp_path) as opened:
        yield opened


def test_schema_tables_version_and_pragmas(ledger, tmp_path):
    assert ledger.path == tmp_path / LEDGER_NAME and ledger.path.is_file()
    conn = ledger.connection()
    tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")}
    assert {"schema_version", "campaigns", "files", "raw_rows", "observations",
            "results"} <= tables
    assert conn.execute("SELECT version FROM schema_version").fetchall() == [(SCHEMA_VERSION,)]
    assert conn.execute("PRAGMA foreign_keys").fetchone() == (1,)
    assert conn.execute("PRAGMA journal_mode").fetchone() == ("delete",)
    observation_columns = [r[1] for r in conn.execute("PRAGMA table_info(observations)")]
    # data-formats.md, "Canonical observation"
    for column in ("campaign_id", "file_id", "source_row", "kind", "zone", "member", "item_id",
                   "date", "quantity", "value", "unit", "flags"):
        assert column in observation_columns


def test_reopening_keeps_the_schema_and_rows(tmp_path):
    with Ledger(tmp_path) as ledger:
        write_one(ledger)
    with Ledger(tmp_path) as ledger:
        assert [c.name for c in ledger.campaigns()] == ["2009 first survey"]
        assert ledger.connection().execute("SELECT count(*) FROM schema_version").fetchone() == (1,)


def test_foreign_keys_are_enforced(ledger):
    conn = ledger.connection()
    with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
        conn.execute("INSERT INTO files (campaign_id, name, sha256, size_bytes, kind, row_count, "
                     "imported_at) VALUES (99, 'x.csv', ?, 1, 'cores', 0, 'now')", ("b" * 64,))
    write_one(ledger)
    with pytest.raises(sqlite3.IntegrityError, match="FOREIGN KEY"):
        # an observation must point at a raw row of its file
        conn.execute("INSERT INTO observations (campaign_id, file_id, source_row, kind, zone, "
                     "item_id, date, quantity, value, unit) VALUES "
                     "(1, 1, 99, 'cores', 'L1', 'C9', '2009-06-15', 'core_strength', 1, 'MPa')")


@pytest.mark.parametrize("table", APPEND_ONLY_TABLES)
def test_update_and_delete_are_refused_by_triggers(ledger, table):
    record, _ = write_one(ledger)
    ledger.append_result("reliability", {"beta": 3.1})
    ledger.withdraw_file(record.id, "wrong zone")
    conn = ledger.connection()
    before = conn.execute(f"SELECT * FROM {table}").fetchall()
    assert before
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute(f"UPDATE {table} SET rowid = rowid")
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute(f"DELETE FROM {table}")
    assert conn.execute(f"SELECT * FROM {table}").fetchall() == before


def test_ledger_api_has_no_update_or_delete():
    public = [name for name in dir(Ledger) if not name.startswith("_")]
    assert not [n for n in public if any(w in n for w in ("update", "delete", "remove", "drop"))]


def test_write_import_and_observation_query(ledger):
    record, written = write_one(ledger)
    assert written and record.sha256 == "a" * 64 and record.campaign == "2009 first survey"
    frame = ledger.observations()
    assert list(frame["source_row"]) == [2, 3]
    # an empty observation date takes the campaign date
    assert set(frame["date"]) == {dt.date(2009, 6, 15)}
    assert list(frame["flags"]) == ["", "bar_in_core;damaged"]
    assert json.loads(frame["extra"].iloc[0]) == {"diameter": 100.0}
    assert frame["campaign"].iloc[0] == "2009 first survey"
    assert ledger.raw_rows(record.id)[0] == (2, {"zone": "L1", "core_id": "C2"})
    metadata = ledger.files()[0].metadata
    assert metadata["raw_headers"] == ["zone", "core_id"]
    assert len(metadata["content_sha256"]) == 64


def test_same_hash_twice_writes_nothing(ledger):
    write_one(ledger)
    record, written = write_one(ledger, campaign="another")
    assert not written and record.campaign == "2009 first survey"
    assert len(ledger.observations()) == 2 and len(ledger.campaigns()) == 1


def test_campaign_date_conflict_is_an_input_error_and_writes_nothing(ledger):
    write_one(ledger)
    with pytest.raises(InputError, match="2009-06-15"):
        write_one(ledger, sha="b" * 64, date=dt.date(2010, 1, 1))
    assert len(ledger.files()) == 1


def test_failure_inside_the_transaction_rolls_back_everything(ledger):
    bad = observations()
    bad.loc[1, "source_row"] = 7  # no raw row 7: foreign key fails on the last insert
    with pytest.raises(sqlite3.IntegrityError):
        ledger.write_import(campaign_name="c", campaign_date=dt.date(2020, 1, 1),
                            campaign_description="", file=new_file(),
                            raw_rows=[(2, {}), (3, {})], observations=bad)
    conn = ledger.connection()
    for table in APPEND_ONLY_TABLES:
        assert conn.execute(f"SELECT count(*) FROM {table}").fetchone() == (0,)


def test_observation_filters(ledger):
    write_one(ledger, sha="a" * 64, campaign="one", date=dt.date(2009, 6, 15))
    write_one(ledger, sha="b" * 64, campaign="two", date=dt.date(2015, 6, 15), rows=(2,))
    assert len(ledger.observations(kind="cores")) == 3
    assert len(ledger.observations(kind="cover")) == 0
    assert len(ledger.observations(zone="L2")) == 0
    two = ledger.campaign("two").id
    assert list(ledger.observations(campaign_ids=[two])["campaign"]) == ["two"]
    assert len(ledger.observations(campaign_ids=[])) == 0
    assert len(ledger.observations(until_date=dt.date(2010, 1, 1))) == 2
    assert len(ledger.observations(until_date=dt.date(2015, 6, 15))) == 3


def test_results_are_appended_and_queried(ledger):
    first = ledger.append_result("reliability", {"beta": np.float64(3.2), "alpha": np.array([0.6, 0.8])},
                                 member="S1-03", mode="flexure", seed=np.int64(42),
                                 settings={"method": "FORM"}, code_version="9.9")
    second = ledger.append_result("reliability", {"beta": 3.0}, member="S1-03", mode="shear")
    assert second > first
    flexure = ledger.results(member="S1-03", mode="flexure")
    assert len(flexure) == 1
    assert flexure[0].payload == {"beta": 3.2, "alpha": [0.6, 0.8]}
    assert (flexure[0].seed, flexure[0].code_version) == (42, "9.9")
    assert flexure[0].settings == {"method": "FORM"}
    assert [r.mode for r in ledger.results(kind="reliability")] == ["flexure", "shear"]
    assert ledger.results(kind="remaining_life") == []


@pytest.mark.parametrize("kwargs", [{"seed": -1}, {"seed": 2 ** 63}, {"seed": 1.5},
                                    {"payload": {"x": object()}}, {"kind": ""}])
def test_bad_results_are_input_errors(ledger, kwargs):
    arguments = {"kind": "reliability", "payload": {"beta": 1.0}, **kwargs}
    with pytest.raises(InputError):
        ledger.append_result(arguments.pop("kind"), arguments.pop("payload"), **arguments)
    assert ledger.results() == []


def test_a_file_that_is_not_a_ledger_is_an_input_error(tmp_path):
    path = tmp_path / LEDGER_NAME
    path.write_bytes(b"this is not sqlite" * 100)
    with pytest.raises(InputError, match="not a readable ledger"):
        Ledger(path).connection()


def test_newer_schema_version_is_refused(tmp_path):
    newer = SCHEMA_VERSION + 1
    with Ledger(tmp_path) as ledger:
        ledger.connection().execute("INSERT INTO schema_version VALUES (?)", (newer,))
    with pytest.raises(InputError, match=f"schema version {newer}"):
        Ledger(tmp_path).connection()


# ------------------------------------------------------------------ files in force
def test_same_content_with_other_bytes_is_skipped(ledger):
    first, _ = write_one(ledger)
    # same raw rows, other SHA-256 (e.g. CRLF line endings): nothing is written
    record, written = write_one(ledger, sha="b" * 64, tag="C")
    assert not written and record.id == first.id
    assert len(ledger.files()) == 1 and len(ledger.observations()) == 2


def test_same_name_in_the_same_campaign_is_refused_with_the_route(ledger):
    write_one(ledger)
    with pytest.raises(InputError) as info:
        write_one(ledger, sha="b" * 64, tag="X")
    text = str(info.value)
    assert "cores.csv is in force" in text and "withdraw" in text
    assert len(ledger.files()) == 1


def test_specimen_ids_in_force_are_refused_whatever_the_file(ledger):
    write_one(ledger, rows=(2, 3))
    with pytest.raises(InputError) as info:
        write_one(ledger, sha="b" * 64, tag="C", rows=(3, 4), name="more-cores.csv")
    assert info.value.row == 3 and info.value.column == "item_id"
    assert 'id "C3" in zone L1' in str(info.value) and "withdraw" in str(info.value)
    # the same id in another zone is another specimen
    other = observations((3,), tag="C").assign(zone="L2")
    record, written = ledger.write_import(
        campaign_name="2009 first survey", campaign_date=dt.date(2009, 6, 15),
        campaign_description="", file=new_file("c" * 64, name="l2.csv", rows=1),
        raw_rows=[(3, {"zone": "L2", "core_id": "C3"})], observations=other)
    assert written


def test_survey_locations_repeat_on_another_date(ledger):
    def cover(sha, campaign, date, value):
        frame = pd.DataFrame({"kind": "cover", "source_row": [2], "item_id": ["P1"],
                              "zone": "L1", "member": [None], "date": [None],
                              "quantity": "cover", "value": [value], "unit": "mm",
                              "flags": [""], "extra": ["{}"]})
        return ledger.write_import(
            campaign_name=campaign, campaign_date=date, campaign_description="",
            file=NewFile("cover.csv", sha, 10, "cover", 1, {}),
            raw_rows=[(2, {"zone": "L1", "location_id": "P1", "cover": str(value)})],
            observations=frame)

    assert cover("a" * 64, "first", dt.date(2009, 6, 15), 30.0)[1]
    assert cover("b" * 64, "second", dt.date(2017, 5, 9), 28.0)[1]      # re-survey: fine
    with pytest.raises(InputError, match="measured on 2017-05-09"):
        cover("c" * 64, "second b", dt.date(2017, 5, 9), 27.0)


def test_withdrawal_takes_a_file_out_of_force_append_only(ledger):
    old, _ = write_one(ledger)
    withdrawal = ledger.withdraw_file(old.id, "  strengths typed in the wrong column ")
    assert withdrawal.reason == "strengths typed in the wrong column"
    assert ledger.observations().empty
    assert len(ledger.observations(include_withdrawn=True)) == 2
    (record,) = ledger.files()
    assert not record.in_force and record.withdrawal_reason == withdrawal.reason
    assert ledger.files(in_force_only=True) == []
    # the corrected file (same name, same ids) now imports
    new, written = write_one(ledger, sha="b" * 64, tag="C", rows=(2, 3, 4))
    assert written and len(ledger.observations()) == 3
    with pytest.raises(InputError, match="already withdrawn"):
        ledger.withdraw_file(old.id, "again")
    with pytest.raises(InputError, match="reason"):
        ledger.withdraw_file(new.id, "  ")
    with pytest.raises(InputError, match="no imported file"):
        ledger.withdraw_file(999, "x")
    # the exact bytes of a withdrawn file are recognised (and not imported again)
    again, written = write_one(ledger)
    assert not written and not again.in_force
    assert [f.name for f in ledger.find_files("cores.csv")] == ["cores.csv", "cores.csv"]
    assert ledger.find_files(new.sha256[:10])[0].id == new.id
    assert ledger.find_files("cores.csv", campaign="nope") == []


def test_as_of_shows_what_was_known_on_each_day(ledger, monkeypatch):
    from inspection_io import ledger as module

    clock = {"now": "2026-01-10T09:00:00.000000+00:00"}
    monkeypatch.setattr(module, "_now", lambda: clock["now"])
    old, _ = write_one(ledger)                                     # imported 10 Jan
    clock["now"] = "2026-02-01T08:00:00.000000+00:00"
    ledger.withdraw_file(old.id, "wrong values")                   # withdrawn 1 Feb
    write_one(ledger, sha="b" * 64, tag="C", rows=(2, 3, 4))       # corrected, 1 Feb

    def rows(day):
        return len(ledger.observations(as_of=dt.date.fromisoformat(day)))

    assert rows("2026-01-09") == 0        # nothing imported yet
    assert rows("2026-01-10") == 2        # the first file, in force then
    assert rows("2026-01-31") == 2
    assert rows("2026-02-01") == 3        # withdrawn and replaced that day
    assert len(ledger.observations()) == 3
    assert len(ledger.observations(as_of=dt.date(2026, 2, 1), include_withdrawn=True)) == 5
