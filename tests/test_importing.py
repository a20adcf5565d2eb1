"""Importing campaign files: hashing, no-op re-import, one transaction, campaigns."""

import datetime as dt
import hashlib
import shutil
import sqlite3
from pathlib import Path

import openpyxl
import pytest

from inspection_io import importing
from inspection_io.errors import InputError
from inspection_io.importing import import_file, import_site, sha256_of
from inspection_io.ledger import APPEND_ONLY_TABLES, LEDGER_NAME, Ledger

TEMPLATES = Path(importing.__file__).parent / "templates"

CORES = """\
zone,member,core_id,diameter [mm],length [mm],strength [MPa],date
Z1,M1,C1,100,200,32.1,2026-01-03
Z1,M1,C2,100,200,35.4,
Z1,,C3,100,200,30.2,
"""
COVER = "zone,location_id,cover [cm]\nZ1,P1,3.1\nZ1,P2,2.8\n"


ASSESSMENT_DATE = "2026-11-30"


def make_site(root: Path, campaign_toml: bool = True) -> Path:
    """A site folder from the package templates (zone Z1, member M1, built 1980) with one
    campaign; assessment date 30 Nov 2026 (the template's is 1 Jan 2026)."""
    text = (TEMPLATES / "site.toml").read_text()
    assert "assessment_date = 2026-01-01" in text and "year_built = 1980" in text
    (root / "site.toml").write_text(text.replace("assessment_date = 2026-01-01",
                                                 f"assessment_date = {ASSESSMENT_DATE}"))
    folder = root / "campaigns" / "first"
    folder.mkdir(parents=True)
    if campaign_toml:
        (folder / "campaign.toml").write_text(
            'name = "First survey"\ndate = 2026-01-01\ndescription = "cores and cover"\n')
    return folder


def dump(site: Path) -> dict:
    """Every row of every ledger table, for before/after comparisons."""
    conn = sqlite3.connect(site / LEDGER_NAME)
    try:
        return {t: conn.execute(f"SELECT * FROM {t} ORDER BY rowid").fetchall()
                for t in APPEND_ONLY_TABLES + ("schema_version",)}
    finally:
        conn.close()


@pytest.fixture
def site(tmp_path):
    make_site(tmp_path)
    return tmp_path


def test_sha256_matches_the_fips_180_2_test_vector():
    # FIPS 180-2, Appendix B.1: SHA-256("abc")
    assert sha256_of(b"abc") == ("ba7816bf8f01cfea414140de5dae2223"
                                 "b00361a396177a9cb410ff61f20015ad")


def test_import_writes_campaign_file_raw_rows_and_observations(site):
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES)
    report = import_file(site, path)
    assert report.imported and report.kind == "cores" and report.rows == 3
    assert report.campaign == "First survey"
    assert report.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    with Ledger(site) as ledger:
        (campaign,) = ledger.campaigns()
        assert (campaign.name, campaign.date, campaign.description) == (
            "First survey", dt.date(2026, 1, 1), "cores and cover")
        (record,) = ledger.files()
        assert (record.name, record.size_bytes, record.row_count) == (
            "cores.csv", len(path.read_bytes()), 3)
        raw = ledger.raw_rows(record.id)
        assert raw[0] == (2, {"zone": "Z1", "member": "M1", "core_id": "C1",
                              "diameter [mm]": "100", "length [mm]": "200",
                              "strength [MPa]": "32.1", "date": "2026-01-03"})
        assert [r[0] for r in raw] == [2, 3, 4]  # header is row 1
        obs = ledger.observations(kind="cores")
    tested = obs[obs["quantity"] == "core_strength"]
    assert list(tested["value"]) == [32.1, 35.4, 30.2]
    # a row's own date wins; an empty date takes the campaign date
    assert list(tested["date"]) == [dt.date(2026, 1, 3), dt.date(2026, 1, 1),
                                    dt.date(2026, 1, 1)]
    assert list(tested["member"]) == ["M1", "M1", None]
    assert report.observations == len(obs) == 2 * 3  # core_strength + insitu_strength


def test_units_are_converted_and_noted(site):
    path = site / "campaigns" / "first" / "cover.csv"
    path.write_text(COVER)
    report = import_file(site, path)
    assert any("cm" in note for note in report.notes)
    with Ledger(site) as ledger:
        values = ledger.observations(kind="cover")["value"]
    assert list(values) == pytest.approx([31.0, 28.0])  # 1 cm = 10 mm


def test_importing_twice_is_a_no_op(site):
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES)
    import_file(site, path)
    before = dump(site)
    bytes_before = (site / LEDGER_NAME).read_bytes()
    again = import_file(site, path)
    assert not again.imported and again.observations == 0
    today = dt.datetime.now(dt.timezone.utc).date().isoformat()
    assert f"already imported on {today} as cores.csv" in again.message
    # the same bytes under another name and campaign are the same file
    copy = site / "elsewhere.csv"
    copy.write_bytes(path.read_bytes())
    third = import_file(site, copy, campaign="Other", campaign_date=dt.date(2026, 3, 1))
    assert not third.imported and "as cores.csv" in third.message
    assert dump(site) == before
    assert (site / LEDGER_NAME).read_bytes() == bytes_before


@pytest.mark.parametrize("bad_line, row, column", [
    ("Z1,M1,C3,100,200,abc,", 4, "strength [MPa]"),
    ("Z9,,C3,100,200,30.2,", 4, "zone"),
    ("Z1,M1,C1,100,200,30.2,", 4, "core_id"),          # duplicate core id
    ("Z1,,C3,100,200,30.2,2026-13-40", 4, "date"),
])
def test_one_bad_row_imports_nothing(site, bad_line, row, column):
    good = site / "campaigns" / "first" / "cover.csv"
    good.write_text(COVER)
    import_file(site, good)
    before = dump(site)
    bytes_before = (site / LEDGER_NAME).read_bytes()
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES.rsplit("Z1,,C3", 1)[0] + bad_line + "\n")
    with pytest.raises(InputError) as info:
        import_file(site, path)
    assert (info.value.file, info.value.row, info.value.column) == (str(path), row, column)
    assert dump(site) == before
    assert (site / LEDGER_NAME).read_bytes() == bytes_before


def test_failure_inside_the_write_leaves_the_ledger_unchanged(site, monkeypatch):
    good = site / "campaigns" / "first" / "cover.csv"
    good.write_text(COVER)
    import_file(site, good)
    before = dump(site)
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES)
    original = importing.Ledger.write_import

    def write_then_fail(self, **kwargs):
        # let the campaign, file and raw rows be written, then fail on the observations
        observations = kwargs["observations"].copy()
        observations.loc[observations.index[-1], "source_row"] = 999
        return original(self, **{**kwargs, "observations": observations})

    monkeypatch.setattr(importing.Ledger, "write_import", write_then_fail)
    with pytest.raises(sqlite3.IntegrityError):
        import_file(site, path, campaign="New", campaign_date=dt.date(2026, 5, 1))
    assert dump(site) == before


def test_reader_output_the_ledger_cannot_hold_is_an_input_error(site, monkeypatch):
    path = site / "campaigns" / "first" / "cover.csv"
    path.write_text(COVER)
    real = importing.read_campaign_file

    def nan_reader(*args, **kwargs):
        result = real(*args, **kwargs)
        result.observations.loc[1, "value"] = float("nan")
        return result

    monkeypatch.setattr(importing, "read_campaign_file", nan_reader)
    with pytest.raises(InputError) as info:
        import_file(site, path)
    assert info.value.row == 3
    assert not (site / LEDGER_NAME).exists()  # a failed first import creates no ledger


def test_campaign_resolution(site):
    loose = site / "loose.csv"
    loose.write_text(COVER)
    with pytest.raises(InputError, match="--campaign"):
        import_file(site, loose)
    with pytest.raises(InputError, match="is new: give its date"):
        import_file(site, loose, campaign="Spot check")
    report = import_file(site, loose, campaign="Spot check", campaign_date=dt.date(2026, 6, 1),
                         description="one-off")
    assert report.imported
    # an existing campaign keeps its date; a different date is refused
    other = site / "loose2.csv"
    other.write_text(COVER.replace("P1", "P3").replace("P2", "P4"))  # new locations
    with pytest.raises(InputError, match="2026-06-01"):
        import_file(site, other, campaign="Spot check", campaign_date=dt.date(2026, 6, 2))
    assert import_file(site, other, campaign="Spot check").imported
    with Ledger(site) as ledger:
        assert [(c.name, c.date) for c in ledger.campaigns()] == [
            ("Spot check", dt.date(2026, 6, 1))]


def test_kind_can_be_forced_and_bad_paths_are_input_errors(site):
    path = site / "campaigns" / "first" / "cover.csv"
    path.write_text(COVER)
    with pytest.raises(InputError) as info:
        import_file(site, path, kind="cores")
    assert info.value.file == str(path)
    with pytest.raises(InputError, match="not found"):
        import_file(site, site / "campaigns" / "first" / "missing.csv")
    notes = site / "campaigns" / "first" / "notes.txt"
    notes.write_text("x")
    with pytest.raises(InputError, match=".csv or .xlsx"):
        import_file(site, notes)
    assert import_file(site, path, kind="cover").kind == "cover"


def test_xlsx_file_is_imported(site):
    path = site / "campaigns" / "first" / "cover.xlsx"
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "cover"
    for row in [("zone", "location_id", "cover [mm]"), ("Z1", "P1", 31), ("Z1", "P2", 27.5)]:
        sheet.append(row)
    book.create_sheet("notes").append(["anything"])
    book.save(path)
    report = import_file(site, path)
    assert report.imported and report.kind == "cover" and report.rows == 2
    with Ledger(site) as ledger:
        assert list(ledger.observations()["value"]) == [31.0, 27.5]


def test_import_site_walks_every_campaign_folder(site):
    first = site / "campaigns" / "first"
    (first / "cores.csv").write_text(CORES)
    (first / "readme.txt").write_text("not a campaign file")
    (first / "~$cores.xlsx").write_bytes(b"lock file of a spreadsheet program")
    second = site / "campaigns" / "second"
    second.mkdir()
    (second / "campaign.toml").write_text('name = "Second survey"\ndate = 2026-05-01\n')
    (second / "cover.csv").write_text(COVER)
    seen = []
    reports = import_site(site, on_report=seen.append)
    assert [(r.path.name, r.campaign, r.imported) for r in reports] == [
        ("cores.csv", "First survey", True), ("cover.csv", "Second survey", True)]
    assert seen == reports
    with Ledger(site) as ledger:
        cover = ledger.observations(kind="cover")
    assert set(cover["date"]) == {dt.date(2026, 5, 1)}
    assert [r.imported for r in import_site(site)] == [False, False]


def test_import_site_checks_campaign_folders_first(site):
    (site / "campaigns" / "first" / "cores.csv").write_text(CORES)
    bare = site / "campaigns" / "zz-no-toml"
    bare.mkdir()
    with pytest.raises(InputError, match="campaign.toml") as info:
        import_site(site)
    assert info.value.file == str(bare)
    assert not (site / LEDGER_NAME).exists()
    shutil.rmtree(bare)
    twin = site / "campaigns" / "twin"
    twin.mkdir()
    (twin / "campaign.toml").write_text('name = "First survey"\ndate = 2026-01-01\n')
    with pytest.raises(InputError, match="used by two folders") as info:
        import_site(site)
    assert info.value.column == "name"


def test_import_site_stops_at_a_bad_file_and_keeps_complete_ones(site):
    first = site / "campaigns" / "first"
    (first / "a_cover.csv").write_text(COVER)
    (first / "b_cores.csv").write_text(CORES.replace("35.4", "-35.4"))
    with pytest.raises(InputError) as info:
        import_site(site)
    assert info.value.row == 3 and info.value.file == str(first / "b_cores.csv")
    with Ledger(site) as ledger:
        assert [f.name for f in ledger.files()] == ["a_cover.csv"]


def test_missing_site_file_is_an_input_error(tmp_path):
    (tmp_path / "x.csv").write_text(COVER)
    with pytest.raises(InputError, match="file not found"):
        import_file(tmp_path, tmp_path / "x.csv", campaign="c", campaign_date=dt.date(2020, 1, 1))
