"""Shared fixtures: one imported copy of the demo site and one set of MCMC settings per session.

MCMC is the slow step; posteriors are stored in the site folder under a hash of
data and settings (`assess.updating.cache`), so tests that use `demo_site` with
`quick_settings` pay for each fit once in the whole session.

The seed of the session's MCMC and sampling runs is read from the environment
variable ``ASSESS_TEST_SEED`` (default `assess.site.settings.DEFAULT_SEED`), so
that the suite can be run with other seeds: no assert may depend on one
realisation of a posterior beyond what its own error allows.
"""

import os
import shutil
import warnings
from pathlib import Path

import pytest

from assess.site.settings import DEFAULT_SEED

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"

SUITE_SEED = int(os.environ.get("ASSESS_TEST_SEED", DEFAULT_SEED))
"""Seed of the session's MCMC runs (environment variable ASSESS_TEST_SEED)."""

# Chains one after another in the test process: on a 2-core machine running the suite this
# is faster than worker processes (each pays for importing PyMC and the compiled model), and
# the draws are the same (one seed per chain). See assess.updating.models.CORES_VARIABLE.
os.environ.setdefault("ASSESS_MCMC_CORES", "1")


@pytest.fixture(scope="session")
def suite_seed():
    return SUITE_SEED


@pytest.fixture(scope="session")
def demo_site(tmp_path_factory):
    """Path of an imported copy of the demo site (shared; do not modify its files)."""
    from inspection_io.importing import import_site

    folder = tmp_path_factory.mktemp("demo") / "tanners-yard"
    shutil.copytree(DEMO, folder)
    import_site(folder)
    return folder


@pytest.fixture(scope="session")
def quick_settings():
    """The run settings every demo-site test uses (same hash -> shared posteriors):
    those of ``assess ... --quick --seed SUITE_SEED``."""
    from assess.site.settings import RunSettings

    return RunSettings(seed=SUITE_SEED, quick=True)


@pytest.fixture(scope="session")
def demo_update(demo_site, quick_settings):
    """The demo site and its materials update with `quick_settings` (shared, not recorded)."""
    from assess.site.materials import update_site
    from inspection_io.site import load_site

    site = load_site(demo_site)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        update = update_site(site, settings=quick_settings)
    return site, update


@pytest.fixture(scope="session")
def demo_job(demo_site, quick_settings):
    """The main job with its report on the shared demo site, run once per session:
    (run, html_path, json_path, numbers of the JSON)."""
    import json

    from assess.report.job import run_and_report

    run, html_path, json_path = run_and_report(demo_site, quick_settings)
    return run, html_path, json_path, json.loads(json_path.read_text())


DEMO_FIXTURES = ("demo_site", "demo_update", "demo_job")
"""Session fixtures that run MCMC on the demo site (through the posterior cache)."""


def pytest_xdist_make_scheduler(config, log):
    """Scheduling for pytest-xdist (``--dist loadscope`` in pyproject.toml): by module, except
    that every module using a demo fixture goes to one worker ("demo").

    Session fixtures exist once per worker process, and so does the demo site's posterior
    cache: on one worker the demo's MCMC runs once in the suite instead of once on each
    worker. Grouping the other tests by module runs each module-scoped fixture (many sample
    a small model) once. The controller does not collect, so a module counts as a demo
    module when its text names a demo fixture.
    """
    if config.getvalue("dist") != "loadscope":
        return None
    import re

    from xdist.scheduler import LoadScopeScheduling

    uses_demo = re.compile(r"\b(" + "|".join(DEMO_FIXTURES) + r")\b")
    root = Path(str(config.rootpath))
    modules: dict[str, str] = {}

    class DemoOnOneWorker(LoadScopeScheduling):
        def _split_scope(self, nodeid: str) -> str:
            module = nodeid.split("::", 1)[0]
            if module not in modules:
                path = root / module
                text = path.read_text(encoding="utf-8") if path.is_file() else ""
                modules[module] = "demo" if uses_demo.search(text) else module
            return modules[module]

    return DemoOnOneWorker(config, log)
