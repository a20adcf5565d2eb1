"""``assess life`` through typer's CliRunner: exit codes, JSON, table, plot and ledger rows.

The numbers themselves are checked in tests/test_life.py against reference solutions;
here the command must report what the library computes, annual and against the annual
target (JCSS PMC Part 1 / ISO 2394 annual ULS target for CC2, normal cost: 4.2).
"""

import json

import pytest
from conftest import SUITE_SEED
from scipy import stats
from typer.testing import CliRunner

import assess.cli.life  # noqa: F401  (registers the command)
from assess.cli import app
from inspection_io.ledger import Ledger

SEED = str(SUITE_SEED)  # the session's seed: the stored posteriors are shared


def run(*args):
    result = CliRunner().invoke(app, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    return result


def ledger_rows(folder):
    with Ledger(folder / "ledger.sqlite") as ledger:
        return ledger.results(kind="remaining_life")


def test_life_json_curves_plot_and_ledger_rows(demo_fits):
    demo_site = demo_fits
    before = len(ledger_rows(demo_site))
    result = run("life", demo_site, "--quick", "--seed", SEED, "--member", "S3-02",
                 "--member", "C2-B3", "--horizon", "30", "--json")
    assert result.exit_code == 0, result.stderr
    payload = json.loads(result.stdout)
    assert payload["reference"] == "annual"
    # the target shown is that of the first member system; both members carry a brittle
    # mode (S3-02 shear without stirrups, C2-B3 punching), so it is the JCSS annual 4.2 (CC2,
    # normal cost of safety) with its pf divided by 10 (assess.targets.mode_target; scipy)
    assert payload["target"]["beta"] == pytest.approx(stats.norm.isf(0.1 * stats.norm.sf(4.2)))
    curves = payload["curves"]
    # S3-02 is an end span of a continuous slab (site.toml): sagging, hogging over the
    # support, shear and its system; C2-B3 a column connection: punching
    assert {(c["member"], c["mode"]) for c in curves} == {
        ("S3-02", "flexure"), ("S3-02", "hogging"), ("S3-02", "shear"), ("S3-02", "system"),
        ("C2-B3", "punching")}
    for c in curves:
        assert len(c["beta"]) == 31 and c["reference_period_years"] == 1.0
        assert c["remaining_life"]["text"]
        # two bands, each named for what it is (issue 13)
        assert "sampling" in c["sampling_band"]["what"]
        assert c["parameter_band"]["draws"] >= 2 and "parameters" in c["parameter_band"]["what"]
        assert len(c["parameter_band"]["lower"]) == 31
        assert c["remaining_life"]["parameter_band"] != "-"
    assert len(ledger_rows(demo_site)) == before + len(curves)
    assert all(p.endswith(".png") for p in payload["plots"])
    assert {z["origin"] for z in payload["corrosion"].values()} == {"posterior"}


def test_life_table_says_annual(demo_fits):
    demo_site = demo_fits
    result = run("life", demo_site, "--quick", "--seed", SEED, "--member", "S4-01",
                 "--horizon", "20", "--no-plots")
    assert result.exit_code == 0, result.stderr
    assert "S4-01" in result.stdout and "annual" in result.stdout
    assert "annual reliability index" in result.stderr
    # both bands, named in the note, each in its own column (7 columns: 6 inner borders)
    assert "Parameter band" in result.stderr and "Sampling band" in result.stderr
    assert result.stdout.splitlines()[1].count("┳") == 6


def test_life_bad_input_exits_2(demo_site):
    result = run("life", demo_site, "--member", "X9-99")
    assert result.exit_code == 2 and "X9-99" in result.stderr
    result = run("life", demo_site, "--horizon", "-5")
    assert result.exit_code == 2 and "--horizon" in result.stderr
