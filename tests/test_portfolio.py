"""Portfolio of sites on a Dask local cluster (issue 18).

References: the acceptance checks of issue 18 (a portfolio run gives the same
numbers as single-site runs with the same seeds; a broken site fails alone with
its message; a re-run with nothing new does no work) and the urgency rule as
stated in docs/portfolio.md and `assess.portfolio.ranking`. The Dask machinery,
skipping and failure isolation are exercised with a light site job (seeded
crude Monte Carlo, well under a second per site); one test runs the real main
job on two small design-only sites.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import sys
import zlib
from pathlib import Path

import cloudpickle
import pytest

from assess.errors import InputError
from assess.portfolio import load_portfolio, run_portfolio
from assess.portfolio.hashing import site_hash
from assess.portfolio.ranking import rank_sites
from assess.portfolio.record import Record
from assess.portfolio.tasks import STEP_TOPIC, WORKER_ENVIRONMENT, one_core_per_task

# The light job below is defined in this test module, which workers cannot import:
# ship it by value.
cloudpickle.register_pickle_by_value(sys.modules[__name__])

SITE_TOML = """\
[site]
name = "{name}"
year_built = {year}
assessment_date = 2026-06-30
structure = "multi-storey car park"

[target]
consequence_class = "CC2"
reference_period = 1
cost_of_safety = "normal"

[materials]
concrete_class = "C30"
production = "ready-mixed"
steel_grade = "B500"

[loads]
superimposed_dead = 1.5
imposed_category = "F"
imposed_characteristic = 2.5
concrete_unit_weight = 25.0

[zones.Z1]
description = "invented deck"
exposure = "exposed deck"
"""

MEMBER_TOML = """
[members.{member}]
zone = "Z1"
kind = "one-way slab"
span = {span}
depth = {depth}
width = 1000
cover = 30
bar_diameter = 12
bar_spacing = 150
shear_reinforcement = false
tension_face = "bottom"
"""

CAMPAIGN_TOML = 'name = "first look"\ndate = 2026-05-01\ndescription = "invented"\n'


def make_site(folder: Path, name: str, members: dict, year: int = 1980) -> Path:
    """A small design-only site: ``members`` maps member id -> (span [m], depth [mm])."""
    folder.mkdir(parents=True)
    text = SITE_TOML.format(name=name, year=year)
    for member, (span, depth) in members.items():
        text += MEMBER_TOML.format(member=member, span=span, depth=depth)
    (folder / "site.toml").write_text(text)
    (folder / "campaigns" / "first-look").mkdir(parents=True)
    (folder / "campaigns" / "first-look" / "campaign.toml").write_text(CAMPAIGN_TOML)
    return folder


def light_job(folder, settings, step):
    """A seeded stand-in for the main job: crude Monte Carlo of g = R - S per member.

    R ~ lognormal with median depth/40 [-], S ~ Gumbel(3, 0.3) [-]; invented,
    only its determinism matters here. Appends one line per call to
    ``results/light-calls.txt`` in the site folder (the only file it writes).
    """
    import numpy as np
    from scipy import stats

    from inspection_io.site import load_site

    step("Reading the site file")
    site = load_site(folder)
    step("Crude Monte Carlo of every member")
    members = []
    for i, member in enumerate(site.members.values()):
        rng = np.random.default_rng([settings.get("seed", 1), zlib.crc32(member.member_id.encode()), i])
        r = rng.lognormal(np.log(member.depth / 40.0), 0.1, 100_000)
        s = rng.gumbel(3.0, 0.3, 100_000)
        pf = float(np.mean(r - s <= 0.0))
        beta = float(-stats.norm.ppf(pf)) if pf > 0 else math.inf
        years = 0.0 if beta < 3.0 else (beta - 3.0) / 0.05
        members.append({"member": member.member_id, "zone": member.zone, "kind": member.kind,
                        "governing_mode": "flexure", "beta_before": beta, "beta_now": beta,
                        "target": 3.0, "verdict": "meets target" if beta >= 3.0 else "below target",
                        "remaining_life_years": years if years < 50 else None,
                        "life_text": f"{years:.1f} yr"})
    calls = Path(folder) / "results" / "light-calls.txt"
    calls.parent.mkdir(exist_ok=True)
    with open(calls, "a") as handle:
        handle.write("call\n")
    return {"site": site.site.name, "assessment_date": site.site.assessment_date.isoformat(),
            "last_campaign": None, "campaigns": 0, "members": members, "worth": None,
            "report_html": None, "report_json": None, "settings": dict(settings)}


def calls(folder: Path) -> int:
    path = folder / "results" / "light-calls.txt"
    return len(path.read_text().splitlines()) if path.exists() else 0


@pytest.fixture(scope="module")
def client():
    """One local cluster (2 single-threaded worker processes) for the module."""
    from assess.portfolio.cluster import open_client

    with open_client(workers=2) as (dask_client, _description):
        yield dask_client


@pytest.fixture
def portfolio_folder(tmp_path):
    folder = tmp_path / "estate"
    make_site(folder / "alder-row", "Alder Row (invented)", {"S1": (5.0, 200), "S2": (4.8, 170)})
    make_site(folder / "brook-lane", "Brook Lane (invented)", {"S1": (5.4, 160)})
    (folder / "portfolio.toml").write_text('name = "Invented estate"\n[run]\nseed = 11\n')
    return folder


def test_two_sites_on_the_cluster_give_the_numbers_of_single_runs(portfolio_folder, client,
                                                                  tmp_path):
    # Reference: issue 18 acceptance - same numbers as single-site runs with the same seeds.
    portfolio = load_portfolio(portfolio_folder)
    run = run_portfolio(portfolio, job=light_job, client=client)
    assert run.ran == ["alder-row", "brook-lane"] and run.failed == []
    for entry in portfolio.sites:
        copy = tmp_path / "single" / entry.key
        shutil.copytree(entry.folder, copy, ignore=shutil.ignore_patterns("results"))
        alone = light_job(copy, {"seed": 11}, step=lambda _t: None)
        assert run.outcomes[entry.key]["summary"]["members"] == alone["members"]
        assert run.outcomes[entry.key]["worker"] != "" and calls(entry.folder) == 1
    # the numbers of one site do not depend on the other sites
    assert run.outcomes["alder-row"]["summary"]["members"][0]["beta_now"] != \
        run.outcomes["brook-lane"]["summary"]["members"][0]["beta_now"]
    # Per-site steps were reported from the workers as events.
    import time

    deadline = time.monotonic() + 10.0
    seen = set()
    while time.monotonic() < deadline and len(seen) < 2:
        seen = {m["site"] for _t, m in client.get_events(STEP_TOPIC)
                if m.get("step") == "Crude Monte Carlo of every member"}
        time.sleep(0.1)
    assert seen >= {"alder-row", "brook-lane"}
    # The page and the record were written by the client in the portfolio folder.
    assert run.report_html.is_file() and run.report_html.parent == portfolio_folder / "results" / "reports"
    numbers = json.loads(run.report_json.read_text())["numbers"]
    assert [r["site"] for r in numbers["sites"]] == rank_sites(
        {k: o["summary"] for k, o in run.outcomes.items()})


def test_real_main_job_on_the_cluster_matches_single_site_runs(tmp_path, client):
    # Reference: issue 18 acceptance, with the real main job (design-only sites, quick,
    # no history): numbers from the cluster equal those of run_one_site in this process.
    from assess.portfolio.site_job import run_one_site

    folder = tmp_path / "estate"
    make_site(folder / "cedar-court", "Cedar Court (invented)", {"S1": (5.0, 200)})
    make_site(folder / "dock-street", "Dock Street (invented)", {"S1": (5.6, 180)}, year=1968)
    settings = {"seed": 5, "quick": True, "history": False}
    run = run_portfolio(load_portfolio(folder), overrides=settings, client=client)
    assert run.failed == [], run.outcomes
    for key in ("cedar-court", "dock-street"):
        copy = tmp_path / "single" / key
        shutil.copytree(folder / key, copy, ignore=shutil.ignore_patterns("results", "ledger.sqlite"))
        alone = run_one_site(copy, settings)
        got = run.outcomes[key]["summary"]
        assert got["members"] == alone["members"]
        assert got["target"] == alone["target"]
        assert (folder / key / got["report_html"]).is_file()


def test_a_broken_site_fails_alone_with_its_message(portfolio_folder, client):
    # Reference: issue 18 acceptance - a site with broken input fails alone with its message.
    broken = make_site(portfolio_folder / "cinder-yard", "Cinder Yard (invented)", {"S1": (5.0, 200)})
    text = (broken / "site.toml").read_text().replace("span = 5.0", "span = -5.0")
    (broken / "site.toml").write_text(text)
    run = run_portfolio(load_portfolio(portfolio_folder), job=light_job, client=client)
    assert run.failed == ["cinder-yard"]
    failed = run.outcomes["cinder-yard"]
    assert failed["error_kind"] == "input"
    assert "site.toml" in failed["message"] and "members.S1.span" in failed["message"]
    assert {k for k, o in run.outcomes.items() if o["status"] == "done"} == {"alder-row", "brook-lane"}
    numbers = json.loads(run.report_json.read_text())["numbers"]
    assert [f["site"] for f in numbers["failed"]] == ["cinder-yard"]
    assert len(numbers["sites"]) == 2


def test_an_unexpected_error_or_lost_worker_is_reported_and_retried(portfolio_folder, client):
    def exploding(folder, settings, step):
        if Path(folder).name == "brook-lane":
            raise ZeroDivisionError("invented failure")
        return light_job(folder, settings, step)

    portfolio = load_portfolio(portfolio_folder)
    run = run_portfolio(portfolio, job=exploding, client=client)
    assert run.outcomes["brook-lane"]["error_kind"] == "error"
    assert "ZeroDivisionError: invented failure" in run.outcomes["brook-lane"]["message"]
    # an unexpected error is not a reason to skip: the next run tries that site again
    again = run_portfolio(portfolio, job=light_job, client=client)
    assert again.ran == ["brook-lane"] and again.failed == []


def test_a_rerun_with_nothing_new_does_no_work(portfolio_folder, client):
    # Reference: issue 18 acceptance - a re-run with nothing new does no work.
    portfolio = load_portfolio(portfolio_folder)
    first = run_portfolio(portfolio, job=light_job, client=client)
    record = portfolio_folder / "results" / "portfolio-record.jsonl"
    before = record.read_bytes()
    pages = sorted((portfolio_folder / "results" / "reports").iterdir())

    second = run_portfolio(portfolio, job=light_job, sequential=True)
    assert second.ran == [] and second.skipped == ["alder-row", "brook-lane"]
    assert record.read_bytes() == before  # nothing appended
    assert sorted((portfolio_folder / "results" / "reports").iterdir()) == pages  # no new page
    assert second.report_html == first.report_html
    assert calls(portfolio_folder / "alder-row") == 1 and calls(portfolio_folder / "brook-lane") == 1
    assert second.outcomes["alder-row"]["summary"] == first.outcomes["alder-row"]["summary"]

    # New campaign data in one site: only that site runs again.
    (portfolio_folder / "brook-lane" / "campaigns" / "first-look" / "cover.csv").write_text(
        "location_id,zone,member,cover [mm],face\nCV-1,Z1,S1,31,bottom\n")
    third = run_portfolio(portfolio, job=light_job, sequential=True)
    assert third.ran == ["brook-lane"] and calls(portfolio_folder / "alder-row") == 1
    # Changed settings: every site runs again.
    fourth = run_portfolio(portfolio, overrides={"seed": 12}, job=light_job, sequential=True)
    assert fourth.ran == ["alder-row", "brook-lane"]


def _blas_threads() -> list:
    from threadpoolctl import threadpool_info

    return sorted({pool["num_threads"] for pool in threadpool_info()})


def config_job(folder, settings, step):
    """The light job, plus what the task's process is configured with while it runs."""
    import os

    summary = light_job(folder, settings, step)
    summary["config"] = {"env": {name: os.environ.get(name) for name in WORKER_ENVIRONMENT},
                         "blas_threads": _blas_threads()}
    return summary


def test_a_task_on_a_worker_uses_one_core_and_in_this_process_runs_as_assess_run(
        portfolio_folder, client, monkeypatch):
    # Reference: common practice for one task per core (the environment Dask's nanny sets
    # before it starts a worker: distributed.nanny.pre-spawn-environ, Dask documentation);
    # threadpoolctl's threadpool_info / threadpool_limits as the outside reading.
    run = run_portfolio(load_portfolio(portfolio_folder), job=config_job, client=client)
    for key in ("alder-row", "brook-lane"):
        config = run.outcomes[key]["summary"]["config"]
        assert config["env"] == WORKER_ENVIRONMENT and config["blas_threads"] == [1]
        assert run.outcomes[key]["cpu_seconds"] > 0.0
    # One site after another in this process: no limits, the chains as `assess run` has them.
    before_env = {name: os.environ.get(name) for name in WORKER_ENVIRONMENT}
    before_threads = _blas_threads()
    alone = run_portfolio(load_portfolio(portfolio_folder), job=config_job, sequential=True,
                          force=True)
    for key in ("alder-row", "brook-lane"):
        assert alone.outcomes[key]["summary"]["config"] == {"env": before_env,
                                                            "blas_threads": before_threads}
    # The limits hold inside the context only; values already set are kept.
    for name in WORKER_ENVIRONMENT:
        monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("ASSESS_MCMC_CORES", "2")
    with one_core_per_task():
        assert _blas_threads() == [1]
        assert os.environ["ASSESS_MCMC_CORES"] == "2" and os.environ["OMP_NUM_THREADS"] == "1"
    assert _blas_threads() == before_threads


def test_site_hash_covers_inputs_and_settings_only(portfolio_folder):
    site = portfolio_folder / "alder-row"
    base = site_hash(site, {"seed": 1})
    assert site_hash(site, {"seed": 1}) == base
    assert site_hash(site, {"seed": 2}) != base
    (site / "results").mkdir()
    (site / "results" / "report.html").write_text("x")
    (site / "ledger.sqlite").write_bytes(b"x")
    assert site_hash(site, {"seed": 1}) == base  # the job's own output is not an input
    campaign = site / "campaigns" / "first-look"
    (campaign / "cores.csv").write_text("a\n")
    with_file = site_hash(site, {"seed": 1})
    assert with_file != base
    (campaign / "cores.csv").rename(campaign / "cores2.csv")
    assert site_hash(site, {"seed": 1}) not in (base, with_file)  # a renamed file is a change
    (site / "decisions.toml").write_text("currency = 'EUR'\n")
    assert site_hash(site, {"seed": 1}) != with_file


def test_record_is_append_only_lossless_and_survives_a_torn_line(tmp_path):
    record = Record(tmp_path)
    record.append({"kind": "site", "site_key": "a", "hash": "h1", "status": "done",
                   "summary": {"beta": math.inf, "low": -math.inf, "x": 1.5}})
    record.append({"kind": "site", "site_key": "a", "hash": "h2", "status": "failed",
                   "error_kind": "input", "message": "m"})
    text = record.path.read_text()
    assert all(json.loads(line) for line in text.splitlines())  # strict JSON lines
    entries = record.entries()
    assert entries[0]["summary"] == {"beta": math.inf, "low": -math.inf, "x": 1.5}
    assert record.latest_sites()["a"]["hash"] == "h2"
    with open(record.path, "a") as handle:  # a crash in the middle of an append
        handle.write('{"kind": "site", "site_k')
    with pytest.warns(UserWarning, match="incomplete last line"):
        assert len(record.entries()) == 2


def test_urgency_rule():
    # Reference: the urgency rule stated in docs/portfolio.md and assess.portfolio.ranking.
    def site(margins_years, keep=None):
        members = [{"member": f"M{i}", "beta_now": 3.0 + m, "target": 3.0,
                    "remaining_life_years": y} for i, (m, y) in enumerate(margins_years)]
        worth = None if keep is None else {"expected_cost_keep": keep}
        return {"members": members, "worth": worth}

    summaries = {
        "meets-soon": site([(0.5, 4.0), (1.0, None)]),
        "meets-late": site([(0.2, 30.0)]),
        "meets-never-costly": site([(2.0, None)], keep=90_000.0),
        "meets-never-cheap": site([(2.0, None)], keep=1_000.0),
        "below-slightly": site([(-0.1, 0.0), (1.0, None)]),
        "below-badly": site([(0.3, 10.0), (-1.5, 0.0)]),
        "no-result": site([(math.nan, None)]),
        "meets-late-costly": site([(0.2, 30.0)], keep=5_000.0),
    }
    assert rank_sites(summaries) == ["below-badly", "below-slightly", "no-result", "meets-soon",
                                     "meets-late-costly", "meets-late", "meets-never-costly",
                                     "meets-never-cheap"]
    # beta = +inf (no failed sample) is the safest, not an error
    summaries["inf"] = site([(math.inf, None)])
    assert rank_sites(summaries)[-1] == "inf"  # no keep cost: after "meets-never-cheap"


def test_portfolio_file_errors_name_file_and_key(portfolio_folder):
    file = portfolio_folder / "portfolio.toml"
    file.write_text('[run]\nseeed = 3\n')
    with pytest.raises(InputError, match=r"portfolio.toml.*run.seeed"):
        load_portfolio(portfolio_folder)
    file.write_text('sites = ["alder-row", "nowhere"]\n')
    with pytest.raises(InputError, match=r"sites\[1\]"):
        load_portfolio(file)
    file.write_text('sites = ["brook-lane"]\n[cluster]\nscheduler = "tcp://127.0.0.1:8786"\n')
    portfolio = load_portfolio(file)
    assert [s.key for s in portfolio.sites] == ["brook-lane"]
    assert portfolio.scheduler == "tcp://127.0.0.1:8786"


def test_cli_show_and_run(portfolio_folder, client):
    from typer.testing import CliRunner

    import assess.cli
    import assess.cli.portfolio  # noqa: F401  (registers "assess portfolio")
    from assess.cli.app import app

    runner = CliRunner()
    result = runner.invoke(app, ["portfolio", "show", str(portfolio_folder)])
    assert result.exit_code == 2 and "no site of this portfolio has been run" in result.output
    run_portfolio(load_portfolio(portfolio_folder), job=light_job, client=client)
    result = runner.invoke(app, ["portfolio", "show", str(portfolio_folder), "--json", "--members"])
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)
    assert [m["site"] for m in payload["members"]].count("alder-row") == 2
    result = runner.invoke(app, ["portfolio", "show", str(portfolio_folder)])
    assert result.exit_code == 0 and "Where to act and test first" in result.stdout
    # A portfolio whose only site is broken: the real job fails on input, exit code 1.
    estate = portfolio_folder.parent / "broken-estate"
    broken = make_site(estate / "dune-walk", "Dune Walk (invented)", {"S1": (5.0, 200)})
    (broken / "site.toml").write_text((broken / "site.toml").read_text() + "colour = 3\n")
    result = runner.invoke(app, ["portfolio", "run", str(estate), "--sequential"])
    assert result.exit_code == 1
    assert "dune-walk (input)" in result.stdout and "colour" in result.stdout
