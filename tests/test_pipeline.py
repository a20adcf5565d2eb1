"""One site pipeline: every command runs the same recorded steps; a failed step never takes
the report down; a site with no campaign yet runs on its design information.

These are behaviour checks of the tool's own pipeline (no outside reference is
involved: the numbers themselves are checked against published sources in the
modules of each model). The convergence gate that the corrosion fit is made to
fail is the one of Vehtari et al. (2021), doi:10.1214/20-BA1221.
"""

from __future__ import annotations

import json
import re
import shutil

import pytest
from typer.testing import CliRunner

from assess.cli import app
from inspection_io.ledger import Ledger

SEED = "4711"
FAST = ("--quick", "--samples", "200", "--seed", SEED)


def run(*args):
    result = CliRunner().invoke(app, [str(a) for a in args])
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    return result


@pytest.fixture(scope="module")
def fresh_site(tmp_path_factory):
    """A site straight after 'assess site new': the template, no campaign imported."""
    folder = tmp_path_factory.mktemp("fresh") / "site"
    result = run("site", "new", folder)
    assert result.exit_code == 0, result.stderr
    return folder


@pytest.fixture(scope="module")
def fresh_run(fresh_site, tmp_path_factory):
    folder = tmp_path_factory.mktemp("fresh-run") / "site"
    shutil.copytree(fresh_site, folder)
    result = run("run", folder, *FAST, "--json")
    return folder, result


def numbers_of(result):
    payload = json.loads(result.stdout)
    with open(payload["numbers"], encoding="utf-8") as handle:
        return payload, json.load(handle)


def test_a_fresh_site_runs_end_to_end_on_design_information(fresh_run):
    folder, result = fresh_run
    assert result.exit_code == 0, result.stderr
    payload, numbers = numbers_of(result)
    assert payload["results"], "before/after betas of the template member"
    report = numbers["numbers"]
    assert report["test_data_used"] is False
    html = open(payload["report"], encoding="utf-8").read()
    assert "No test data has been used yet" in html
    steps = report["steps"]
    assert steps["materials"]["status"] == steps["members"]["status"] == "done"
    assert steps["life"]["status"] == "done"
    for row in payload["results"]:  # no data: after is the design-stage belief
        assert row["beta_after"] == row["beta_before"]


def test_every_warning_printed_reaches_the_report_json_once(fresh_run):
    _, result = fresh_run
    _, numbers = numbers_of(result)
    printed = re.findall(r"Warning: (.+)", result.stderr)
    stored = numbers["numbers"]["warnings"]
    assert len(stored) == len(set(stored))
    for line in printed:
        assert any(text.startswith(line.strip()[:60]) for text in stored), line


def ledger_rows(folder, kind):
    with Ledger(folder) as ledger:
        return [(r.kind, r.member, r.mode, r.seed, json.dumps(r.payload, sort_keys=True))
                for r in ledger.results(kind=kind)]


def test_run_and_the_single_commands_write_the_same_rows(fresh_site, fresh_run, tmp_path):
    run_folder, _ = fresh_run
    single = tmp_path / "site"
    shutil.copytree(fresh_site, single)
    assert run("members", single, *FAST, "--json", "--no-plots").exit_code == 0
    assert run("life", single, "--quick", "--seed", SEED, "--json", "--no-plots").exit_code == 0
    for kind in ("reliability", "remaining_life"):
        from_run, from_commands = ledger_rows(run_folder, kind), ledger_rows(single, kind)
        assert from_run and from_run == from_commands, kind


def test_a_failed_fit_leaves_a_report_with_every_other_section_and_exit_1(
        fresh_site, tmp_path, monkeypatch):
    # The corrosion fit fails its gate: simulated here (a real failing run is in
    # test_a_gate_failure_names_the_settings_of_its_fit), so that the test stays fast.
    from assess.errors import ConvergenceError
    from assess.updating.gate import how_to_fix

    def failing_fit(site, **_options):
        raise ConvergenceError("the MCMC run for the corrosion initiation and rate failed the "
                               "convergence gate: t_i: tail ESS 120 < 400",
                               fix=how_to_fix("corrosion"), fit="corrosion")

    monkeypatch.setattr("assess.site.corrosion.update_corrosion", failing_fit)
    folder = tmp_path / "site"
    shutil.copytree(fresh_site, folder)
    result = run("run", folder, *FAST, "--no-history", "--json")
    assert result.exit_code == 1, result.stderr
    payload, numbers = numbers_of(result)
    steps = numbers["numbers"]["steps"]
    assert steps["corrosion"]["status"] == "failed"
    assert "convergence gate" in steps["corrosion"]["reason"]
    assert "--sampling corrosion.draws" in steps["corrosion"]["fix"]
    assert steps["life"]["status"] == "failed"  # it needs the corrosion fit
    assert steps["materials"]["status"] == steps["members"]["status"] == "done"
    assert numbers["numbers"]["members"], "the member results are kept"
    html = open(payload["report"], encoding="utf-8").read()
    assert "not available" in html and "What to do" in html
    with Ledger(folder) as ledger:
        failed = [r for r in ledger.results(kind="step") if r.payload["status"] == "failed"]
    assert {r.mode for r in failed} == {"corrosion", "life"}


def test_a_gate_failure_names_the_settings_of_its_fit(tmp_path):
    # A real run too short for the gate (Vehtari et al. 2021: ESS >= 400, R-hat <= 1.01):
    # 4 chains of 30 draws without tuning on a one-parameter model.
    import numpy as np
    import pymc as pm

    from assess.errors import ConvergenceError
    from assess.updating.cache import cached_posterior
    from assess.updating.gate import require_convergence
    from assess.updating.models import sample_posterior

    class Fit:
        def __init__(self, idata):
            self.idata = idata
            self.gate = require_convergence(idata, ["mu"], what="test mean")

    with pm.Model() as model:
        mu = pm.Normal("mu", 0.0, 10.0)
        pm.Normal("y", mu, 1.0, observed=np.array([0.3, -0.2, 0.5]))
    with pytest.raises(ConvergenceError) as caught:
        cached_posterior(tmp_path, "corrosion", {"case": 1},
                         sample=lambda: Fit(sample_posterior(model, draws=30, tune=0, seed=1)),
                         rebuild=None, parameter_names=["mu"], what="test mean",
                         fit="corrosion")
    assert caught.value.fit == "corrosion"
    assert "--sampling corrosion.draws" in str(caught.value)
    assert not list(tmp_path.rglob("*.nc")), "a run that fails the gate is never stored"


def test_bad_sampler_settings_exit_2_before_any_work(fresh_site, tmp_path):
    folder = tmp_path / "site"
    shutil.copytree(fresh_site, folder)
    for args in (("--draws", "0"), ("--draws", "-1"), ("--seed", "-3"),
                 ("--sampling", "corrosion.draws=abc"), ("--sampling", "nonsense"),
                 ("--target-accept", "1.5"), ("--sampler", "other")):
        result = run("run", folder, "--quick", *args)
        assert result.exit_code == 2, (args, result.stderr)
    assert not (folder / "results").exists()


def test_site_file_sampling_table_is_read_and_checked(fresh_site, tmp_path):
    from assess.pipeline import settings_for_site
    from inspection_io.site import load_site

    folder = tmp_path / "site"
    shutil.copytree(fresh_site, folder)
    text = (folder / "site.toml").read_text()
    (folder / "site.toml").write_text(text + "\n[sampling.corrosion]\ndraws = 3000\n"
                                      "target_accept = 0.99\n")
    settings = settings_for_site(load_site(folder), quick=True)
    assert settings.fit("corrosion").draws == 3000
    assert settings.fit("corrosion").target_accept == 0.99
    assert settings.fit("materials").draws == 1000 and settings.fit("materials").tune == 500
    (folder / "site.toml").write_text(text + "\n[sampling.corrosion]\ndraws = 10\n")
    result = run("run", folder, "--quick")
    assert result.exit_code == 2 and "sampling.corrosion.draws" in result.stderr


def test_a_target_set_in_the_site_file_replaces_the_site_target(fresh_site, tmp_path):
    folder = tmp_path / "site"
    shutil.copytree(fresh_site, folder)
    text = (folder / "site.toml").read_text()
    text = text.replace('[members.M1]\n', '[members.M1]\ntarget_beta = 3.1\n'
                        'target_beta_reason = "agreed with the owner for a closed deck"\n')
    (folder / "site.toml").write_text(text)
    result = run("members", folder, *FAST, "--json", "--no-plots")
    assert result.exit_code == 0, result.stderr
    payload = json.loads(result.stdout)
    rows = [r for r in payload["results"] if r["member"] == "M1"]
    assert rows and all(r["target"] == 3.1 for r in rows)
    for r in rows:  # the verdict is against the member's own target
        # the interval of beta after decides (assess.reliability.interval.interval_verdict)
        low, high = r["interval_after"]
        if r["verdict"] == "meets target":
            assert r["beta_after"] >= 3.1 and (low is None or low >= 3.1)
        elif r["verdict"] == "below target":
            assert r["beta_after"] < 3.1 and (high is None or high < 3.1)
        else:
            assert r["verdict"] == "undecided" and low < 3.1 <= high
    assert any("agreed with the owner" in note for note in payload["notes"])
