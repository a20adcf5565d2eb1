"""The history step's cut-off fits sampled in a background process (issue 17: independent
steps in parallel). A tiny invented site with two campaigns: the background process must
leave in the posterior store the fit of the first campaign's cut-off, under the hash the
history step looks up, so that the step reads it back instead of sampling it again. The
control: without the background process the same lookup samples (``reused`` False).
"""

import datetime as dt

import pytest
from test_cli_members import SITE_TOML

from assess.site.history import campaign_cutoffs
from assess.site.history_prefetch import cutoff_dates, start_cutoff_prefetch
from assess.site.materials import update_site
from assess.site.settings import RunSettings
from assess.updating.models import CORES_VARIABLE
from inspection_io.importing import import_site
from inspection_io.ledger import Ledger
from inspection_io.site import load_site

HEADER = "zone,member,core_id,diameter [mm],length [mm],strength [MPa]\n"
# Invented core results (test input), two campaigns of the same deck
CAMPAIGNS = {
    "2019-survey": ("2019-06-03", "Z1,S1,K1,100,200,41.5\nZ1,P1,K2,100,200,38.2\n"),
    "2025-survey": ("2025-05-12", "Z1,S1,K3,100,200,44.0\nZ1,P1,K4,100,200,39.6\n"
                                  "Z1,S1,K5,100,200,42.1\n"),
}


@pytest.fixture()
def two_campaign_site(tmp_path):
    folder = tmp_path / "deck"
    for name, (date, rows) in CAMPAIGNS.items():
        campaign = folder / "campaigns" / name
        campaign.mkdir(parents=True)
        (campaign / "campaign.toml").write_text(f'name = "{name}"\ndate = {date}\n')
        (campaign / "cores.csv").write_text(HEADER + rows)
    (folder / "site.toml").write_text(SITE_TOML)
    import_site(folder)
    return load_site(folder)


def test_cutoffs_needing_a_fit_are_every_campaign_but_the_last(two_campaign_site):
    with Ledger(two_campaign_site.folder / "ledger.sqlite") as ledger:
        cutoffs = campaign_cutoffs(ledger)
    assert [c[0] for c in cutoffs] == ["2019-survey", "2025-survey"]
    assert cutoff_dates(two_campaign_site.folder) == [dt.date(2019, 6, 3)]


def test_background_fit_is_read_back_by_the_history_lookup(two_campaign_site, monkeypatch,
                                                           suite_seed):
    settings = RunSettings(seed=suite_seed, quick=True)
    store = two_campaign_site.folder / "results" / "posteriors"
    monkeypatch.setenv(CORES_VARIABLE, "1")
    assert start_cutoff_prefetch(two_campaign_site, settings) is None  # one core: no helper

    monkeypatch.setenv(CORES_VARIABLE, "2")
    assert not list(store.glob("materials-*.nc"))  # control: nothing stored before
    prefetch = start_cutoff_prefetch(two_campaign_site, settings)
    assert prefetch is not None and prefetch.until_dates == [dt.date(2019, 6, 3)]
    assert prefetch.wait(timeout=600)
    assert prefetch.process.exitcode == 0
    assert len(list(store.glob("materials-*.nc"))) == 1

    monkeypatch.setenv(CORES_VARIABLE, "1")
    first = update_site(two_campaign_site, settings=settings, until_date=dt.date(2019, 6, 3))
    assert first.reused and first.gate.passed
    assert first.counts()["concrete"] == {"Z1": 2}
