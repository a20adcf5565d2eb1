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


# ------------------------------------------------------------------ correct, withdraw, check
def test_correct_a_file_withdraw_and_import_again(site):
    assert run("site", "import", site).exit_code == 0
    cores = site / "campaigns" / "first-survey" / "cores.csv"
    cores.write_text(CORES.replace("35.4", "36.4"))           # one value corrected
    refused = run("site", "import", site)
    assert refused.exit_code == 2
    assert "assess site withdraw" in refused.stderr and str(cores) in refused.stderr
    no_reason = run("site", "withdraw", site, "cores.csv")
    assert no_reason.exit_code == 2 and "--reason" in no_reason.stderr
    done = run("site", "withdraw", site, cores, "--reason", "C1 strength mistyped")
    assert done.exit_code == 0, done.stderr
    assert 'withdrew cores.csv of campaign "First survey"' in done.stdout
    assert "10 observations now out of force" in done.stdout      # 5 cores x 2 quantities
    again = run("site", "withdraw", site, "cores.csv", "--reason", "twice")
    assert again.exit_code == 2 and "already withdrawn" in again.stderr
    imported = run("site", "import", site)
    assert imported.exit_code == 0 and "imported cores.csv" in imported.stdout
    listing = json.loads(run("site", "campaigns", site, "--json").stdout)
    statuses = [(f["name"], f["in_force"], f["withdrawal_reason"]) for f in listing[0]["files"]]
    assert statuses == [("cores.csv", False, "C1 strength mistyped"), ("cover.csv", True, None),
                        ("cores.csv", True, None)]
    assert "withdrawn" in run("site", "campaigns", site).stdout
    (summary,) = json.loads(run("site", "summary", site, "--json").stdout)["cores"]
    assert summary["n_total"] == 5                                # not doubled
    conn = sqlite3.connect(site / LEDGER_NAME)
    values = [r[0] for r in conn.execute(
        "SELECT value FROM observations WHERE quantity = 'core_strength' AND file_id = 3 "
        "ORDER BY id")]
    conn.close()
    assert values == [32.1, 36.4, 30.2, 33.0, 28.7]
    before_import = run("site", "summary", site, "--json", "--as-of", "2000-01-01")
    assert before_import.exit_code == 0 and json.loads(before_import.stdout) == {}
    assert run("site", "summary", site, "--as-of", "yesterday").exit_code == 2


def test_withdraw_unknown_or_ambiguous_file(site, tmp_path):
    run("site", "import", site)
    unknown = run("site", "withdraw", site, "nothing.csv", "--reason", "x")
    assert unknown.exit_code == 2 and "files in force: cores.csv" in unknown.stderr
    loose = tmp_path / "cores.csv"
    loose.write_text(CORES.replace("C", "K"))
    assert run("site", "import", site, loose, "--campaign", "Spot", "--date",
               "2026-02-03").exit_code == 0
    ambiguous = run("site", "withdraw", site, "cores.csv", "--reason", "x")
    assert ambiguous.exit_code == 2 and "--campaign" in ambiguous.stderr
    chosen = run("site", "withdraw", site, "cores.csv", "--campaign", "Spot", "--reason", "x")
    assert chosen.exit_code == 0 and 'campaign "Spot"' in chosen.stdout


def test_check_reports_a_sound_and_a_damaged_ledger(site):
    assert run("site", "check", site).exit_code == 2              # nothing imported yet
    run("site", "import", site)
    sound = run("site", "check", site)
    assert sound.exit_code == 0 and "no damage found" in sound.stdout
    head = json.loads(run("site", "check", site, "--json").stdout)["chain_head"]
    assert len(head) == 64 and head in sound.stdout
    assert run("site", "check", site, "--anchor", head).exit_code == 0
    assert run("site", "check", site, "--anchor", "0" * 64).exit_code == 1
    conn = sqlite3.connect(site / LEDGER_NAME, isolation_level=None)
    conn.execute("DROP TRIGGER observations_no_update")
    conn.execute("UPDATE observations SET value = 99.0 WHERE id = 1")
    conn.close()
    damaged = run("site", "check", site)
    assert damaged.exit_code == 1
    assert "DAMAGED" in damaged.stdout and "files row 1 was changed" in damaged.stdout
    assert "observations_no_update is missing" in damaged.stdout
    report = json.loads(run("site", "check", site, "--json").stdout)
    assert not report["ok"] and report["problems"]
    refused = run("site", "summary", site)
    assert refused.exit_code == 2 and "observations_no_update" in refused.stderr


def test_a_zero_byte_or_cut_ledger_never_ends_in_a_traceback(site):
    ledger = site / LEDGER_NAME
    ledger.write_bytes(b"")
    for command in ("campaigns", "summary", "import"):
        result = run("site", command, site)
        assert result.exit_code == 2 and "zero bytes" in result.stderr, command
    assert ledger.read_bytes() == b""
    checked = run("site", "check", site)
    assert checked.exit_code == 1 and "zero bytes" in checked.stdout
    ledger.unlink()
    run("site", "import", site)
    conn = sqlite3.connect(ledger)
    conn.execute("DROP TABLE results")
    conn.close()
    result = run("site", "summary", site)
    assert result.exit_code == 2 and "table results is missing" in result.stderr
    assert run("site", "check", site).exit_code == 1


def test_import_waits_for_another_process_then_refuses(site, monkeypatch):
    import os
    import subprocess
    import sys

    holder = subprocess.Popen(
        [sys.executable, "-c", ("import sys\nfrom inspection_io.locking import site_lock\n"
                                "with site_lock(sys.argv[1]):\n"
                                "    print('locked', flush=True)\n"
                                "    sys.stdin.readline()\n"), str(site)],
        stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True,
        env={**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)})
    try:
        assert holder.stdout.readline().strip() == "locked"
        monkeypatch.setattr(assess.cli.site, "LOCK_WAIT_SECONDS", 0.2)
        busy = run("site", "import", site)
        assert busy.exit_code == 2 and "another assess process" in busy.stderr
        assert f"process {holder.pid}" in busy.stderr
        assert not (site / LEDGER_NAME).exists()
    finally:
        holder.stdin.close()
        holder.wait(timeout=30)
    assert run("site", "import", site).exit_code == 0
