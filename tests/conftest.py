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


CACHE_FOLDERS = tuple(Path("results") / part for part in ("posteriors", "reliability", "figures"))
"""Content-addressed caches of a site folder (`assess.updating.cache`,
`assess.site.result_cache`, `assess.report.figure_cache`): a file there is found only by the
hash of its inputs."""


def _copy_caches(source, folder) -> None:
    if source is None:
        return
    for part in CACHE_FOLDERS:
        if (source / part).is_dir():
            shutil.copytree(source / part, folder / part, dirs_exist_ok=True)


def _shared_demo_caches(tmp_path_factory):
    """Folder of a demo site whose caches hold the whole main job (every fit and every
    reliability result of ``assess run --quick``), made once for all xdist workers (a file
    lock, the pytest-xdist recipe for session fixtures); None when not under xdist.

    Session fixtures exist once per worker: without this each worker would sample the
    demo's MCMC itself. Each worker keeps its own site folder and ledger; only the
    content-addressed caches are copied, so every demo test sees the numbers of its own
    cold run (the warm run's identity is tested in tests/test_result_cache.py).
    """
    if int(os.environ.get("PYTEST_XDIST_WORKER_COUNT", "1")) < 2:
        return None
    from filelock import FileLock

    shared = tmp_path_factory.getbasetemp().parent / "demo-seed-job"
    folder = shared / "tanners-yard"
    with FileLock(str(shared) + ".lock"):
        if not (shared / "done").exists():
            from inspection_io.importing import import_site

            shutil.rmtree(shared, ignore_errors=True)
            shutil.copytree(DEMO, folder)
            import_site(folder)
            # the other workers run tests without the demo meanwhile (`SEEDED` tests come
            # first in the collection, so one worker starts here at once): the chains use
            # the cores in worker processes, as `assess run` does by default
            cores = os.environ.pop("ASSESS_MCMC_CORES", None)
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    from assess.report.job import run_and_report

                    run_and_report(folder, _quick_settings())
            finally:
                if cores is not None:
                    os.environ["ASSESS_MCMC_CORES"] = cores
            (shared / "done").write_text("ok")
    return folder


SEEDED = "demo_fits"
"""The fixture of every test that needs the demo's fits: under xdist these tests are put
first in the collection, so that the worker that takes the first half starts the shared
seed run at once and the other works through tests without the demo meanwhile."""


def pytest_collection_modifyitems(config, items):
    items.sort(key=lambda item: SEEDED not in getattr(item, "fixturenames", ()))


@pytest.fixture(scope="session")
def demo_fits(demo_site, tmp_path_factory):
    """The demo site with the stored fits and reliability results of the main job with
    `quick_settings` (shared under xdist; otherwise made by the first test that needs them)."""
    _copy_caches(_shared_demo_caches(tmp_path_factory), demo_site)
    return demo_site


@pytest.fixture(scope="session")
def quick_settings():
    """The run settings every demo-site test uses (same hash -> shared posteriors):
    those of ``assess ... --quick --seed SUITE_SEED``."""
    return _quick_settings()


def _quick_settings():
    from assess.site.settings import RunSettings

    return RunSettings(seed=SUITE_SEED, quick=True)


@pytest.fixture(scope="session")
def demo_update(demo_fits, quick_settings):
    """The demo site and its materials update with `quick_settings` (shared, not recorded)."""
    from assess.site.materials import update_site
    from inspection_io.site import load_site

    site = load_site(demo_fits)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        update = update_site(site, settings=quick_settings)
    return site, update


@pytest.fixture(scope="session")
def demo_job(demo_fits, quick_settings):
    """The main job with its report on the shared demo site, run once per session:
    (run, html_path, json_path, numbers of the JSON)."""
    import json

    from assess.report.job import run_and_report

    run, html_path, json_path = run_and_report(demo_fits, quick_settings)
    return run, html_path, json_path, json.loads(json_path.read_text())

