"""``assess members`` and ``assess update`` through typer's CliRunner on a tiny invented site.

One site folder (one zone, a one-way slab and a flat-slab column connection, four
cores) serves the whole module; the MCMC runs with --quick and its posterior is
stored and reused by the later commands.
"""

import json
import math
import shutil
import textwrap

import pytest
from scipy import stats
from typer.testing import CliRunner

from assess.cli import app
from inspection_io.importing import import_site
from inspection_io.ledger import Ledger

SITE_TOML = textwrap.dedent("""\
    # Invented site for the CLI tests.
    [site]
    name = "Test deck (invented)"
    year_built = 1980
    assessment_date = 2026-11-30

    [target]
    consequence_class = "CC2"
    reference_period = 1
    cost_of_safety = "normal"

    [materials]
    concrete_class = "C35"
    production = "ready-mixed"
    steel_grade = "B500"

    [loads]
    superimposed_dead = 1.2
    imposed_category = "F"
    imposed_characteristic = 2.5
    concrete_unit_weight = 25.0

    [zones.Z1]
    description = "Upper deck"
    exposure = "exposed deck"

    [members.S1]
    zone = "Z1"
    kind = "one-way slab"
    span = 5.0
    depth = 200
    cover = 30
    bar_diameter = 12
    bar_spacing = 150

    [members.P1]
    zone = "Z1"
    kind = "flat-slab column connection"
    depth = 250
    cover = 30
    bar_diameter = 16
    bar_spacing = 150
    tension_face = "top"
    column_size = [400, 400]
    position = "interior"
    span_x = 7.2
    span_y = 6.0
    """)

CAMPAIGN_TOML = 'name = "First survey"\ndate = 2025-05-12\ndescription = "Four cores"\n'

# Invented core results (test input), 100 mm cores, l/d = 2 (no length correction).
CORES_CSV = ("zone,member,core_id,diameter [mm],length [mm],strength [MPa]\n"
             "Z1,S1,K1,100,200,41.5\n"
             "Z1,S1,K2,100,200,38.2\n"
             "Z1,P1,K3,100,200,44.0\n"
             "Z1,P1,K4,100,200,39.6\n")

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature

VERDICTS = {"meets target", "below target", "undecided"}  # assess.reliability.interval


def run(*args):
    result = CliRunner().invoke(app, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    return result


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cli") / "deck"
    campaign = folder / "campaigns" / "first-survey"
    campaign.mkdir(parents=True)
    (folder / "site.toml").write_text(SITE_TOML)
    (campaign / "campaign.toml").write_text(CAMPAIGN_TOML)
    (campaign / "cores.csv").write_text(CORES_CSV)
    reports = import_site(folder)
    assert [r.observations > 0 for r in reports] == [True]
    return folder


@pytest.fixture(scope="module")
def first_members_run(site):
    result = run("members", site, "--quick", "--json")
    assert result.exit_code == 0, result.stderr
    with Ledger(site / "ledger.sqlite") as ledger:
        rows = ledger.results(kind="reliability")
    return json.loads(result.stdout), rows


def test_update_json_prints_the_gate(site):
    result = run("update", site, "--json", "--quick")
    assert result.exit_code == 0, result.stderr
    payload = json.loads(result.stdout)
    gate = payload["gate"]
    # Gate of Vehtari et al. (2021), doi:10.1214/20-BA1221
    assert gate["passed"] is True
    assert gate["max_rhat"] <= 1.01 and gate["min_ess_bulk"] >= 400
    assert gate["divergences"] == 0 and gate["chains"] == 4
    assert len(payload["hash"]) == 64 and payload["posterior"].endswith(".nc")
    concrete = [r for r in payload["zones"] if r["quantity"] == "concrete"]
    assert [r["tests"] for r in concrete] == [4]


def test_members_json_has_every_mode_and_the_system(first_members_run):
    payload, _ = first_members_run
    rows = payload["results"]
    modes = {}
    for r in rows:
        modes.setdefault(r["member"], []).append(r["mode"])
    # slab without shear reinforcement: flexure and one-way shear (EN 1992-1-1 6.1, 6.2.2),
    # so a series system; the column connection has punching (6.4) only
    assert modes == {"S1": ["flexure", "shear", "system"], "P1": ["punching"]}
    for r in rows:
        for key in ("beta_before", "beta_after"):
            assert r[key] is None or math.isfinite(r[key]), (r["member"], r["mode"], key)
        assert r["verdict"] in VERDICTS
        # ductile flexure at the site target; brittle shear and punching (and a system with
        # a brittle mode) at the target of pf / 10 (assess.targets.mode_target, NKB Report 36
        # failure-type step, from memory): Phi^-1 by scipy
        site_beta = payload["target"]["beta"]
        brittle = r["mode"] in ("shear", "punching", "system")
        expected = stats.norm.isf(stats.norm.sf(site_beta) / 10.0) if brittle else site_beta
        assert r["target"] == pytest.approx(expected)
        # the verdict reads the interval of beta after: wholly above / below / straddling
        low, high = r["interval_after"]
        if low is not None and high is not None:
            assert low <= r["beta_after"] <= high
            expected = ("meets target" if low >= r["target"] else "below target"
                        if high < r["target"] else "undecided")
            assert r["verdict"] == expected
        assert r["n_calls"] >= 1 and r["change"]
    assert set(payload["undecided"]) == {f"{r['member']} {r['mode']}" for r in rows
                                         if r["verdict"] == "undecided"}
    # a series system is no more reliable than its weakest mode: pf_sys >= max pf_i
    # (Ditlevsen 1979 simple bounds). Both are sampling estimates (auto); the tolerance
    # is 3 standard errors of beta, sd(beta) ~ CoV(pf) Phi(-beta) / phi(beta) (delta method).
    system = next(r for r in rows if r["mode"] == "system")
    weakest = min((r for r in rows if r["member"] == "S1" and r["mode"] != "system"),
                  key=lambda r: r["beta_after"])

    def beta_sd(r):
        return r["cov_after"] * stats.norm.sf(r["beta_after"]) / stats.norm.pdf(r["beta_after"])

    tolerance = 3.0 * math.hypot(beta_sd(system), beta_sd(weakest))
    assert system["beta_after"] <= weakest["beta_after"] + tolerance


def test_target_is_the_jcss_annual_value(first_members_run):
    payload, _ = first_members_run
    target = payload["target"]
    # JCSS PMC Part 1 Table 2 / ISO 2394:2015 Annex G: annual ULS target 4.2 for moderate
    # consequences and normal relative cost of safety measures (from memory)
    assert target["beta"] == pytest.approx(4.2)
    assert target["reference_period_years"] == 1
    assert "JCSS" in target["source"] and "ISO 2394" in target["source"]


def test_members_writes_png_plots(site, first_members_run):
    payload, _ = first_members_run
    plots = [site / "results" / "plots" / p.rsplit("/", 1)[-1] for p in payload["plots"]]
    assert plots, "no plots written"
    assert any("beta-before-after" in p.name for p in plots)
    assert any("prior-posterior-concrete-Z1" in p.name for p in plots)
    for path in plots:
        assert path.is_file() and path.suffix == ".png"
        assert path.read_bytes()[:8] == PNG_MAGIC


def test_results_are_appended_never_replaced(site, first_members_run):
    payload, first_rows = first_members_run
    assert len(first_rows) == len(payload["results"])
    result = run("members", site, "--quick", "--json", "--no-plots")
    assert result.exit_code == 0, result.stderr
    second = json.loads(result.stdout)
    assert second["posterior"]["reused"] is True
    with Ledger(site / "ledger.sqlite") as ledger:
        rows = ledger.results(kind="reliability")
    assert len(rows) == len(first_rows) + len(second["results"])
    # the first run's rows are still there, unchanged
    assert [(r.id, r.payload) for r in rows[:len(first_rows)]] == [
        (r.id, r.payload) for r in first_rows]
    # same inputs and seed: the same betas (reproducibility, design decision 9)
    assert [r["beta_after"] for r in second["results"]] == [
        r["beta_after"] for r in payload["results"]]


def test_folder_without_site_file_is_an_input_error(site, tmp_path):
    empty = tmp_path / "not-a-site"
    empty.mkdir()
    shutil.copytree(site / "campaigns", empty / "campaigns")
    result = run("members", empty, "--quick", "--json")
    assert result.exit_code == 2
    assert str(empty / "site.toml") in result.stderr.replace("\n", "")
    assert "not found" in result.stderr
    assert result.stdout == ""
