"""``assess site ...`` through typer's CliRunner: exit codes, stdout/stderr, no tracebacks."""

import json
import math
import shutil
import sqlite3
from pathlib import Path

import numpy as np
import pytest
from scipy import stats
from typer.testing import CliRunner

import assess.cli.site  # noqa: F401  (registers the sub-application)
from assess.cli import app
from inspection_io.ledger import LEDGER_NAME

TEMPLATES = Path(assess.cli.site.__file__).parents[2] / "inspection_io" / "templates"

# Invented in-situ-like values; mean and spread checked below against numpy/scipy.
STRENGTHS = [32.1, 35.4, 30.2, 33.0, 28.7]
CORES = ("zone,core_id,diameter [mm],length [mm],strength [MPa],bar_in_core\n"
         + "".join(f"Z1,C{i},100,200,{s},{'yes' if i == 4 else 'no'}\n"
                   for i, s in enumerate(STRENGTHS)))
COVER = "zone,location_id,cover [mm]\nZ1,P1,31\nZ1,P2,28\nZ1,P3,25\n"


def run(*args):
    result = CliRunner().invoke(app, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    return result


@pytest.fixture
def site(tmp_path):
    folder = tmp_path / "deck"
    result = run("site", "new", folder)
    assert result.exit_code == 0, result.stderr
    site_file = folder / "site.toml"   # the template's assessment date is 2026-01-01
    site_file.write_text(site_file.read_text().replace("assessment_date = 2026-01-01",
                                                       "assessment_date = 2026-11-30"))
    data = folder / "campaigns" / "first-survey"
    (data / "cores.csv").write_text(CORES)
    (data / "cover.csv").write_text(COVER)
    return folder


def test_new_creates_the_folder_from_templates_and_never_overwrites(tmp_path):
    folder = tmp_path / "deck"
    result = run("site", "new", folder)
    assert result.exit_code == 0
    site_file = folder / "site.toml"
    assert result.stdout.split() == [str(site_file),
                                     str(folder / "campaigns" / "first-survey" / "campaign.toml")]
    assert site_file.read_text() == (TEMPLATES / "site.toml").read_text()
    site_file.write_text("# edited by the engineer\n")
    again = run("site", "new", folder)
    assert again.exit_code == 2
    assert "never overwritten" in again.stderr and again.stdout == ""
    assert site_file.read_text() == "# edited by the engineer\n"


def test_import_all_then_again(site):
    first = run("site", "import", site)
    assert first.exit_code == 0, first.stderr
    assert "imported cores.csv" in first.stdout and "imported cover.csv" in first.stdout
    second = run("site", "import", site)
    assert second.exit_code == 0
    assert second.stdout.count("already imported on") == 2


def test_import_json_prints_only_json(site):
    result = run("site", "import", site, "--json")
    assert result.exit_code == 0
    reports = json.loads(result.stdout)
    assert [(r["file"].rsplit("/", 1)[-1], r["kind"], r["rows"], r["imported"])
            for r in reports] == [("cores.csv", "cores", 5, True), ("cover.csv", "cover", 3, True)]


def test_import_one_file_with_campaign_kind_and_date(site, tmp_path):
    loose = tmp_path / "spot.csv"
    loose.write_text(COVER.replace("31", "33"))
    result = run("site", "import", site, loose, "--campaign", "Spot", "--kind", "cover",
                 "--date", "2026-02-03")
    assert result.exit_code == 0, result.stderr
    assert 'campaign "Spot"' in result.stdout
    listing = json.loads(run("site", "campaigns", site, "--json").stdout)
    assert [(c["name"], c["date"]) for c in listing] == [("Spot", "2026-02-03")]


@pytest.mark.parametrize("extra, words", [
    (["--date", "03/02/2027"], "YYYY-MM-DD"),
    (["--kind", "pachometer", "--date", "2026-02-03"], "unknown record kind"),
    ([], "is new: give its date"),
])
def test_import_bad_options_exit_2_without_traceback(site, tmp_path, extra, words):
    loose = tmp_path / "spot.csv"
    loose.write_text(COVER)
    result = run("site", "import", site, loose, "--campaign", "Spot", *extra)
    assert result.exit_code == 2
    assert words in result.stderr and result.stdout == ""


def test_options_without_a_file_are_refused(site):
    result = run("site", "import", site, "--kind", "cores")
    assert result.exit_code == 2 and "apply to one file" in result.stderr


def test_bad_row_exit_2_names_file_row_column_and_changes_nothing(site):
    bad = site / "campaigns" / "first-survey" / "cores.csv"
    bad.write_text(CORES.replace("35.4", "thirty"))
    result = run("site", "import", site)
    assert result.exit_code == 2
    assert str(bad) in result.stderr and "row 3" in result.stderr
    assert "strength [MPa]" in result.stderr
    # cores.csv sorts first: nothing was imported before it, so no ledger was even created
    assert not (site / LEDGER_NAME).exists()


def test_campaigns_lists_files_with_hash_prefix(site):
    empty = run("site", "campaigns", site)
    assert empty.exit_code == 0 and "No campaigns" in empty.stderr and empty.stdout == ""
    assert not (site / LEDGER_NAME).exists()  # listing does not create a ledger
    run("site", "import", site)
    table = run("site", "campaigns", site)
    assert table.exit_code == 0
    assert "First survey" in table.stdout and "cores.csv" in table.stdout
    listing = json.loads(run("site", "campaigns", site, "--json").stdout)
    files = listing[0]["files"]
    assert [f["rows"] for f in files] == [5, 3]
    assert files[0]["sha256"][:12] in table.stdout


def test_summary_json_matches_independent_statistics(site):
    assert run("site", "summary", site).exit_code == 2  # nothing imported yet
    run("site", "import", site)
    result = run("site", "summary", site, "--json")
    assert result.exit_code == 0, result.stderr
    summary = json.loads(result.stdout)
    (cover,) = summary["cover"]
    # sample statistics by numpy (ddof = 1)
    assert cover["n"] == 3 and cover["mean"] == pytest.approx(np.mean([31, 28, 25]))
    assert cover["std"] == pytest.approx(np.std([31, 28, 25], ddof=1))
    (cores,) = summary["cores"]
    assert (cores["n_total"], cores["n_flagged"], cores["n"]) == (5, 1, 4)  # bar in core C4
    # characteristic in-situ strength, EN 1990 Annex D "V unknown", lognormal:
    # exp(m_Y - k_n s_Y), k_n = t_{n-1,0.95} sqrt(1 + 1/n); n = 4 gives k_n = 2.63 (Table D1)
    assert cores["k_n_v_unknown"] == pytest.approx(2.63, abs=0.01)
    with_flagged = json.loads(run("site", "summary", site, "--json", "--include-flagged",
                                  "bar_in_core").stdout)["cores"][0]
    assert with_flagged["n"] == 5
    # in-situ strengths are the reader's corrected values; recompute the fractile from them
    conn = sqlite3.connect(site / LEDGER_NAME)
    values = [r[0] for r in conn.execute(
        "SELECT value FROM observations WHERE quantity = 'insitu_strength' ORDER BY id")]
    conn.close()
    logs = np.log(values)
    expected = math.exp(logs.mean() - stats.t.ppf(0.95, 4) * math.sqrt(1 + 1 / 5)
                        * logs.std(ddof=1))
    assert with_flagged["characteristic_v_unknown"] == pytest.approx(expected, rel=1e-9)


def test_summary_table_and_bad_flag(site):
    run("site", "import", site)
    table = run("site", "summary", site)
    assert table.exit_code == 0 and "Cores" in table.stdout and "Cover" in table.stdout
    bad = run("site", "summary", site, "--include-flagged", "wobbly")
    assert bad.exit_code == 2 and "unknown flag" in bad.stderr


def test_broken_site_file_exit_2_with_key_path(site):
    site_file = site / "site.toml"
    site_file.write_text(site_file.read_text().replace("span = 5.0", "span = 5000"))
    result = run("site", "import", site)
    assert result.exit_code == 2
    assert "members.M1.span" in result.stderr


def test_missing_folder_exit_2(tmp_path):
    for command in ("campaigns", "summary", "import"):
        result = run("site", command, tmp_path / "nowhere")
        assert result.exit_code == 2, command
    shutil.rmtree(tmp_path)
