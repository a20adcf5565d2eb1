"""Imports that must never double data, read outside the site, or take impossible dates.

References: the correction route and the date window are the file contract of
docs/data-formats.md ("Correcting and withdrawing a file", "Dates"); SHA-256 of the
bytes per FIPS 180-4; sample statistics recomputed with numpy (ddof = 1).
"""

import datetime as dt
import shutil
from pathlib import Path

import numpy as np
import pytest

from inspection_io import importing
from inspection_io.errors import InputError
from inspection_io.importing import ROW_DATE_TOLERANCE_DAYS, import_file, import_site
from inspection_io.ledger import LEDGER_NAME, Ledger
from inspection_io.summary import summarise

TEMPLATES = Path(importing.__file__).parent / "templates"
CORES = ("zone,core_id,diameter [mm],length [mm],strength [MPa]\n"
         "Z1,C1,100,200,32.1\nZ1,C2,100,200,35.4\nZ1,C3,100,200,30.2\n")
MORE_CORES = ("zone,core_id,diameter [mm],length [mm],strength [MPa]\n"
              "Z1,C7,100,200,24.0\nZ1,C8,100,200,26.5\n")
SYSTEM_LINE = "root:x:0:0:root:/root:/bin/bash"


def make_site(root: Path, assessment="2026-11-30", built=1980) -> Path:
    text = (TEMPLATES / "site.toml").read_text()
    text = text.replace("assessment_date = 2026-01-01", f"assessment_date = {assessment}")
    text = text.replace("year_built = 1980", f"year_built = {built}")
    (root / "site.toml").write_text(text)
    folder = root / "campaigns" / "first"
    folder.mkdir(parents=True)
    (folder / "campaign.toml").write_text('name = "First survey"\ndate = 2026-03-02\n')
    return folder


@pytest.fixture
def site(tmp_path):
    root = tmp_path / "site"
    root.mkdir()
    make_site(root)
    return root


def cores_summary(site):
    with Ledger(site) as ledger:
        return summarise("cores", ledger.observations(kind="cores")).to_dict("records")


def ledger_bytes(site):
    return (site / LEDGER_NAME).read_bytes()


# ------------------------------------------------------------------ corrections (issue 15)
def test_a_corrected_file_imported_again_is_refused_with_the_route(site):
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES)
    assert import_file(site, path).imported
    before = ledger_bytes(site)
    path.write_text(CORES.replace("35.4", "36.4"))        # one value corrected
    with pytest.raises(InputError) as info:
        import_file(site, path)
    text = str(info.value)
    assert info.value.file == str(path)
    assert "cores.csv is in force" in text and "assess site withdraw" in text
    assert ledger_bytes(site) == before
    # the same rows under another file name: refused by specimen id, whatever the bytes
    copy = site / "campaigns" / "first" / "cores-v2.csv"
    copy.write_text(CORES.replace("35.4", "36.4"))
    with pytest.raises(InputError) as info:
        import_file(site, copy)
    assert (info.value.row, info.value.column) == (2, "core_id")
    assert 'id "C1" in zone Z1' in str(info.value) and "withdraw" in str(info.value)
    assert ledger_bytes(site) == before


def test_withdraw_then_import_the_corrected_file(site):
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text(CORES)
    import_file(site, path)
    path.write_text(CORES.replace("35.4", "36.4"))
    with Ledger(site) as ledger:
        (old,) = ledger.find_files("cores.csv", campaign="First survey")
        ledger.withdraw_file(old.id, "C2 strength mistyped")
    report = import_file(site, path)
    assert report.imported and report.observations == 6
    with Ledger(site) as ledger:
        tested = ledger.observations(kind="cores")
        strengths = tested[tested["quantity"] == "core_strength"]["value"].tolist()
        assert strengths == [32.1, 36.4, 30.2]           # only the corrected file counts
        assert len(ledger.observations(include_withdrawn=True)) == 12
    (summary,) = cores_summary(site)
    insitu = tested[tested["quantity"] == "insitu_strength"]["value"].to_numpy()
    assert summary["n"] == 3 and summary["mean"] == pytest.approx(insitu.mean())
    assert summary["std"] == pytest.approx(insitu.std(ddof=1))


def test_a_withdrawn_file_leaves_the_summary_as_before_its_import(site):
    first = site / "campaigns" / "first"
    (first / "cores.csv").write_text(CORES)
    import_file(site, first / "cores.csv")
    before = cores_summary(site)
    (first / "more-cores.csv").write_text(MORE_CORES)
    import_file(site, first / "more-cores.csv")
    assert cores_summary(site) != before
    with Ledger(site) as ledger:
        (extra,) = ledger.find_files("more-cores.csv")
        ledger.withdraw_file(extra.id, "cores of another structure")
    assert cores_summary(site) == before
    # the withdrawn file still lies in the folder: the next import skips it with a note
    reports = {r.path.name: r for r in import_site(site)}
    assert not reports["more-cores.csv"].imported
    assert "withdrawn on" in reports["more-cores.csv"].message
    assert cores_summary(site) == before


@pytest.mark.parametrize("variant", [
    lambda text: text.replace("\n", "\r\n"),              # CRLF line endings
    lambda text: text.rstrip("\n"),                       # no final newline
    lambda text: text.replace("\n", "\r\n").rstrip("\r\n"),
])
def test_line_ending_differences_do_not_double_count(site, variant):
    first = site / "campaigns" / "first"
    (first / "a-cores.csv").write_text(CORES)
    (first / "b-cores.csv").write_bytes(variant(CORES).encode())
    assert (first / "a-cores.csv").read_bytes() != (first / "b-cores.csv").read_bytes()
    reports = import_site(site)
    assert [r.imported for r in reports] == [True, False]
    assert "same content as a-cores.csv" in reports[1].message
    with Ledger(site) as ledger:
        assert len(ledger.observations(kind="cores")) == 6 and len(ledger.files()) == 1


# ------------------------------------------------------------------ links leading outside
def outside_file(tmp_path):
    target = tmp_path / "system"
    target.mkdir(exist_ok=True)
    passwd = target / "passwd.csv"
    passwd.write_text(SYSTEM_LINE + "\n" + "daemon:x:1:1::/:/sbin/nologin\n")
    return passwd


def test_a_linked_campaign_file_outside_is_never_read(site, tmp_path):
    link = site / "campaigns" / "first" / "cores.csv"
    link.symlink_to(outside_file(tmp_path))
    for call in (lambda: import_site(site), lambda: import_file(site, link)):
        with pytest.raises(InputError) as info:
            call()
        assert "outside the site folder" in str(info.value)
        assert "root:" not in str(info.value) and "daemon" not in str(info.value)
        assert info.value.file == str(link)
    assert not (site / LEDGER_NAME).exists()


def test_a_linked_campaign_folder_outside_is_refused_before_any_import(site, tmp_path):
    (site / "campaigns" / "first" / "cores.csv").write_text(CORES)
    outside = outside_file(tmp_path).parent
    (outside / "campaign.toml").write_text('name = "Elsewhere"\ndate = 2026-03-02\n')
    (site / "campaigns" / "z-linked").symlink_to(outside, target_is_directory=True)
    with pytest.raises(InputError, match="outside the site folder") as info:
        import_site(site)
    assert SYSTEM_LINE not in str(info.value)
    assert not (site / LEDGER_NAME).exists()     # checked before the first file


def test_linked_campaigns_folder_and_site_file_are_refused(tmp_path):
    site = tmp_path / "site"
    site.mkdir()
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    make_site(elsewhere)
    shutil.copy(elsewhere / "site.toml", site / "site.toml")
    (site / "campaigns").symlink_to(elsewhere / "campaigns", target_is_directory=True)
    with pytest.raises(InputError, match="campaigns folder leads outside"):
        import_site(site)
    (site / "campaigns").unlink()
    (site / "site.toml").unlink()
    (site / "site.toml").symlink_to(outside_file(tmp_path))
    with pytest.raises(InputError, match="site file leads outside") as info:
        import_site(site)
    assert "root:" not in str(info.value)


def test_a_file_named_from_outside_the_site_is_read_as_given(site, tmp_path):
    loose = tmp_path / "spot.csv"
    loose.write_text(CORES)
    report = import_file(site, loose, campaign="Spot", campaign_date=dt.date(2026, 4, 1))
    assert report.imported


# ------------------------------------------------------------------ dates
@pytest.mark.parametrize("campaign_date, words", [
    ("1979-12-31", "outside the allowed range 1980-01-01 to 2026-11-30"),
    ("2026-12-01", "outside the allowed range 1980-01-01 to 2026-11-30"),
])
def test_campaign_dates_outside_the_life_of_the_structure_are_refused(site, campaign_date,
                                                                      words):
    toml = site / "campaigns" / "first" / "campaign.toml"
    toml.write_text(f'name = "First survey"\ndate = {campaign_date}\n')
    (site / "campaigns" / "first" / "cores.csv").write_text(CORES)
    with pytest.raises(InputError, match=words) as info:
        import_site(site)
    assert (info.value.file, info.value.column) == (str(toml), "date")
    assert "site.year_built = 1980" in str(info.value)
    assert not (site / LEDGER_NAME).exists()


def test_future_dates_end_today_when_the_assessment_date_is_later(tmp_path):
    make_site(tmp_path, assessment="2099-01-01")
    tomorrow = dt.date.today() + dt.timedelta(days=1)
    loose = tmp_path / "campaigns" / "first" / "cover.csv"
    loose.write_text("zone,location_id,cover [mm]\nZ1,P1,30\n")
    with pytest.raises(InputError, match=r"to \d{4}-\d\d-\d\d \(.*to today\)") as info:
        import_file(tmp_path, loose, campaign="Planned", campaign_date=tomorrow)
    assert info.value.column == "--date"


@pytest.mark.parametrize("row_date, words", [
    ("1975-05-01", "outside the allowed range 1980-01-01 to 2026-11-30"),
    ("2026-12-24", "outside the allowed range"),
    ((dt.date(2026, 3, 2) + dt.timedelta(days=ROW_DATE_TOLERANCE_DAYS + 1)).isoformat(),
     f"more than {ROW_DATE_TOLERANCE_DAYS} days after its campaign"),
])
def test_row_dates_are_checked_with_file_row_column_and_range(site, row_date, words):
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text("zone,core_id,diameter [mm],length [mm],strength [MPa],Date\n"
                    "Z1,C1,100,200,32.1,2026-03-02\n"
                    f"Z1,C2,100,200,35.4,{row_date}\n")
    with pytest.raises(InputError, match=words) as info:
        import_file(site, path)
    assert (info.value.file, info.value.row, info.value.column) == (str(path), 3, "Date")
    assert not (site / LEDGER_NAME).exists()


def test_row_dates_within_the_tolerance_are_accepted(site):
    last = dt.date(2026, 3, 2) + dt.timedelta(days=ROW_DATE_TOLERANCE_DAYS)
    path = site / "campaigns" / "first" / "cores.csv"
    path.write_text("zone,core_id,diameter [mm],length [mm],strength [MPa],date\n"
                    "Z1,C1,100,200,32.1,2026-02-20\n"
                    f"Z1,C2,100,200,35.4,{last.isoformat()}\n")
    assert import_file(site, path).imported
    with Ledger(site) as ledger:
        assert set(ledger.observations()["date"]) == {dt.date(2026, 2, 20), last}


def test_demo_campaign_dates_lie_in_their_window(demo_site):
    # the shared demo import (tests/conftest.py) passed every date check
    with Ledger(demo_site) as ledger:
        dates = [c.date for c in ledger.campaigns()]
    assert len(dates) == 3 and all(dt.date(1974, 1, 1) <= d <= dt.date(2026, 11, 30)
                                   for d in dates)
    assert np.all(np.diff([d.toordinal() for d in dates]) > 0)
