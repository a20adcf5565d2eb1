"""Updating the demo site with PyMC: the posterior finds the generating values.

The demo site (demo_sites/tanners-yard) was generated from known values kept in
truth.json; its data are invented. The materials update of the session
(`demo_update` in conftest.py, 4 chains x 1000 draws) serves every test here; the
coverage of the generating values is counted in test_demo_coverage.py.
"""

import datetime as dt
import json
import shutil
import warnings

import pytest

from assess.site.materials import _hash, collect_data
from assess.site.run import SiteRun, run_step
from assess.updating.cache import POSTERIOR_FOLDER
from inspection_io.ledger import Ledger
from inspection_io.site import load_site


@pytest.fixture(scope="module")
def demo(demo_site, demo_update, quick_settings, tmp_path_factory):
    """A private copy of the updated demo (stored posteriors included) for ledger counts."""
    folder = tmp_path_factory.mktemp("update") / "tanners-yard"
    shutil.copytree(demo_site, folder)
    site = load_site(folder)
    with Ledger(folder) as ledger:
        rows_before = len(ledger.results(kind="posterior"))
    with warnings.catch_warnings():
        # C30 lies between the JCSS rows C25 and C35: the interpolation warns (by design)
        warnings.filterwarnings("ignore", message="concrete class C30")
        update = run_step(SiteRun(site, quick_settings), "materials")
    with Ledger(folder) as ledger:
        rows_after_first = len(ledger.results(kind="posterior")) - rows_before
    truth = json.loads((folder / "truth.json").read_text())
    return site, update, truth, rows_after_first, quick_settings


def test_the_run_passes_the_convergence_gate(demo):
    _, update, _, _, _ = demo
    # Gate of Vehtari et al. (2021), doi:10.1214/20-BA1221: R-hat <= 1.01, ESS >= 400,
    # no divergences, 4 chains.
    assert update.gate.passed, update.gate.problems
    assert update.gate.max_rhat <= 1.01
    assert update.gate.min_ess_bulk >= 400 and update.gate.min_ess_tail >= 400
    assert update.gate.divergences == 0 and update.gate.chains == 4
    assert update.posterior_path.is_file()


def test_second_update_reuses_the_stored_posterior(demo):
    site, first, _, rows_after_first, settings = demo
    assert rows_after_first == 1
    stored_before = sorted((site.folder / POSTERIOR_FOLDER).glob("*.nc"))
    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message="concrete class C30")
        second = run_step(SiteRun(site, settings), "materials")
    assert second.reused
    assert second.data_hash == first.data_hash
    assert second.posterior_path == first.posterior_path
    assert sorted((site.folder / POSTERIOR_FOLDER).glob("*.nc")) == stored_before  # nothing new
    assert first.posterior_path in stored_before
    assert second.after == first.after
    with Ledger(site.folder) as ledger:
        rows = ledger.results(kind="posterior")
    assert rows[-1].payload["reused"] and rows[-2].payload["hash"] == rows[-1].payload["hash"]
    assert {r.payload["hash"] for r in rows} == {first.data_hash}


def test_reassessment_at_an_earlier_date_uses_no_later_data(demo):
    # update_site(until_date=...) reads the ledger through collect_data and names the run
    # by _hash; calling those two directly checks the same path without a second full
    # MCMC run (the time budget of the test set allows one).
    site, update, truth, _, settings = demo
    first_survey = dt.date.fromisoformat(truth["campaigns"]["2009-first-survey"]["date"])
    second_survey = dt.date.fromisoformat(truth["campaigns"]["2017-condition-survey"]["date"])
    until = second_survey - dt.timedelta(days=1)
    with Ledger(site.folder) as ledger:
        earlier = collect_data(ledger, until_date=until)
    for name, frame in earlier.items():
        assert (frame["date"] <= until).all()
        assert len(frame) < len(update.data[name]), name
    # the first survey's file sizes from truth.json: 4 tensile tests; 12 cores of which
    # C09-06 has a bar in the core (core_conversion.flagged_cores) and is screened out
    files = truth["campaigns"]["2009-first-survey"]["files"]
    assert "C09-06" in truth["core_conversion"]["flagged_cores"]
    assert len(earlier["steel"]) == files["tensile.csv"]["rows"]
    assert len(earlier["concrete"]) == files["cores.csv"]["rows"] - 1
    assert set(earlier["concrete"]["date"]) == {first_survey}
    assert _hash(site, earlier, update.before, settings) != update.data_hash


def test_cover_populations_per_member_and_face(demo_update):
    # The demo's cover readings are on the deck top and on the soffit (campaign files), with
    # their own truth per face. A layer with readings gets its own posterior; faces are not
    # pooled: S2-05's bottom layer lies nearer its soffit readings than its top readings.
    # A member's top layer with readings is shrunk from the sample mean of its ln c towards
    # the cell: the centre lies between the prior centre and the sample mean, widened by 4
    # posterior sds of the mean (generous: partial pooling, MCMC noise).
    import math

    import numpy as np

    from assess.site.cover_layers import assign_layers
    from assess.site.locations import knowledge_at

    site, update = demo_update
    zone = update.after["L2"]
    readings = assign_layers(site, update.data["cover"])
    bottom = knowledge_at(zone, update.after_local["L2"], "S2-05", "bottom")["cover"]
    assert bottom is update.after_local["L2"][("S2-05", "bottom")]["cover"]
    assert bottom != update.before_local["L2"][("S2-05", "bottom")]["cover"]
    s205 = readings[readings["member"] == "S2-05"]
    soffit = float(np.log(s205[s205["face"] == "bottom"]["value"]).mean())
    deck_top = float(np.log(s205[s205["face"] == "top"]["value"]).mean())
    assert abs(bottom.center - soffit) < abs(bottom.center - deck_top)
    top = knowledge_at(zone, update.after_local["L2"], "C2-B3", "top")["cover"]
    assert top is update.after_local["L2"][("C2-B3", "top")]["cover"]
    mine = readings[(readings["member"] == "C2-B3") & (readings["face"] == "top")]
    assert len(mine) >= 10
    sample_mean = float(np.log(mine["value"]).mean())
    prior_centre = update.before_local["L2"][("C2-B3", "top")]["cover"].center
    sd_mean = top.z_std * math.sqrt(top.rate / top.shape)  # z_std * typical sigma
    low, high = sorted((sample_mean, prior_centre))
    assert low - 4 * sd_mean <= top.center <= high + 4 * sd_mean
    # closer to the data than to the prior: 17+ readings against n' = 2
    assert abs(top.center - sample_mean) < abs(top.center - prior_centre)
