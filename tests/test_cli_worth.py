"""``assess worth`` end to end on a copy of the demo site (invented data).

The shared demo copy is updated once with the ``--quick`` settings (posterior stored
in it, ledger untouched); this module works on its own copy of that folder, so the
command reuses the stored posterior and its ledger rows and plots stay here.
"""

import json
import shutil

import pytest
from conftest import SUITE_SEED
from typer.testing import CliRunner

import assess.cli.worth  # noqa: F401  (registers the command)
from assess.cli.app import app
from inspection_io.ledger import Ledger

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


def run(*args):
    result = CliRunner().invoke(app, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    return result


@pytest.fixture(scope="module")
def site(demo_site, demo_update, tmp_path_factory):
    # the command's own update settings (--quick, the session seed): stored posterior shared
    folder = tmp_path_factory.mktemp("worth") / "tanners-yard"
    shutil.copytree(demo_site, folder)
    return folder


def worth_rows(site):
    with Ledger(site) as ledger:
        return ledger.results(kind="worth")


@pytest.fixture(scope="module")
def json_run(site):
    before = len(worth_rows(site))  # the shared demo copy may hold rows of other tests' runs
    result = run("worth", site, "--quick", "--seed", SUITE_SEED, "--json", "--outcomes", 200)
    assert result.exit_code == 0, result.stderr
    added = worth_rows(site)[before:]  # read now: other tests of the module run worth again
    return {**json.loads(result.stdout), "rows_added": added}


def test_json_gives_the_ranking(json_run, site):
    payload = json_run
    ranking = payload["ranking"]
    assert len(ranking) == 5
    net = [r["net_value"] for r in ranking]
    assert net == sorted(net, reverse=True)
    for r in ranking:
        # Raiffa & Schlaifer (1961): 0 <= EVSI <= EVPI (3 Monte Carlo standard errors allowed)
        assert 0.0 <= r["evsi"] <= r["evpi"] + 3.0 * (r["evsi_standard_error"]
                                                       + r["evpi_standard_error"])
        assert r["net_value"] == pytest.approx(r["evsi"] - r["programme_cost"])
        assert 0.0 <= r["probability_adequate"] <= 1.0
    assert payload["prior_decision"] in [a["name"] for a in payload["alternatives"]]
    assert payload["alternatives"][0] == {**payload["alternatives"][0], "name": "keep as is",
                                          "cost": 0.0}
    assert payload["posterior"]["reused"] is True
    assert "licensed structural engineer" in payload["recommendation"]
    added = payload["rows_added"]
    assert len(added) == 5 and {r.member for r in added} == {payload["member"]}
    plot = site / payload["plot"] if not payload["plot"].startswith("/") else payload["plot"]
    with open(plot, "rb") as handle:
        assert handle.read(8) == PNG_MAGIC


def test_table_output_names_the_upper_bound(site, json_run):
    result = run("worth", site, "--quick", "--seed", SUITE_SEED, "--outcomes", 50, "--no-plots",
                 "--member", json_run["member"])
    assert result.exit_code == 0, result.stderr
    assert "value of perfect information" in result.stdout
    assert "leave-one-out" in result.stderr


def test_missing_decision_file_exits_2(site, tmp_path):
    result = run("worth", site, "--decisions", tmp_path / "none.toml", "--json")
    assert result.exit_code == 2
    assert "none.toml" in result.stderr and "not found" in result.stderr


def test_bad_decision_key_exits_2_with_key_path(site, tmp_path):
    bad = tmp_path / "bad.toml"
    text = (site / "decisions.toml").read_text(encoding="utf-8")
    bad.write_text(text.replace("capacity_factor = 1.3", "capacity_factor = 0.8"),
                   encoding="utf-8")
    result = run("worth", site, "--decisions", bad)
    assert result.exit_code == 2
    assert "alternatives.strengthen.capacity_factor" in result.stderr


def test_unknown_member_exits_2(site):
    result = run("worth", site, "--quick", "--member", "NOPE", "--no-plots")
    assert result.exit_code == 2
    assert "NOPE" in result.stderr
