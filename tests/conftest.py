"""Shared fixtures: one imported copy of the demo site per test session.

MCMC is the slow step; posteriors are stored in the site folder under a hash
of data and settings, so tests that use `demo_site` with `QUICK_UPDATE`
settings pay for one MCMC run per cut-off date in the whole session.
"""

import shutil
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


@pytest.fixture(scope="session")
def demo_site(tmp_path_factory):
    """Path of an imported copy of the demo site (shared; do not modify its files)."""
    from inspection_io.importing import import_site

    folder = tmp_path_factory.mktemp("demo") / "tanners-yard"
    shutil.copytree(DEMO, folder)
    import_site(folder)
    return folder


@pytest.fixture(scope="session")
def quick_update_settings():
    """The update settings every demo-site test uses (same hash -> shared posterior)."""
    from assess.assessment.site_update import UpdateSettings

    return UpdateSettings(draws=1000, tune=500, seed=20261202)
