"""Reliability-result cache: a warm run samples nothing and gives the same numbers; any
changed input (populations, member entry, seed, options, method) runs again.

Reference for the numbers: the uncached run itself (`cache=False`); the stored floats are
compared exactly (JSON writes floats with Python's shortest round-trip repr, IEEE 754).
"""

import dataclasses
import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest

import assess.site.before_after as before_after
from assess.reliability.result import ReliabilityResult
from assess.site.knowledge import design_knowledge
from assess.site.result_cache import RESULT_FOLDER, decode_result, encode_result
from inspection_io.ledger import Ledger
from inspection_io.site import load_site

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"
MEMBER = "S1-03"  # one-way slab: flexure, shear and the system
OPTIONS = {"n_per_level": 200}
FORM = {"method": "form", "options": {"check": False, "design_points": 1}}


@pytest.fixture
def site(tmp_path):
    folder = tmp_path / "site"
    folder.mkdir()
    shutil.copy(DEMO / "site.toml", folder / "site.toml")
    with Ledger(folder) as ledger:  # an imported site has a ledger; empty is enough here
        ledger.connection()
    return load_site(folder)


@pytest.fixture
def calls(monkeypatch):
    """Counts the reliability runs `assess_members` makes (cache misses)."""
    counter = {"n": 0}
    original = before_after.run_method

    def counting(*args, **kwargs):
        counter["n"] += 1
        return original(*args, **kwargs)

    monkeypatch.setattr(before_after, "run_method", counting)
    return counter


def update_of(site, shift=0.0):
    """Before = design priors; after = the same with the concrete mean moved by ``shift``."""
    before = design_knowledge(site)
    after = {
        zone: {
            **pops,
            "concrete": dataclasses.replace(
                pops["concrete"], center=pops["concrete"].center + shift
            ),
        }
        for zone, pops in before.items()
    }
    from assess.site.materials import SiteUpdate

    return SiteUpdate(before, after, {}, None, None, "test", False, None, None)


def table(site, update, **kwargs):
    kwargs = {
        "method": "subset_simulation",
        "seed": 5,
        "options": OPTIONS,
        "importance": False,
        **kwargs,
    }
    assessment = before_after.assess_members(site, update, members=[MEMBER], **kwargs)
    return json.dumps([r.to_dict() for r in assessment.results], sort_keys=True)


def test_warm_run_samples_nothing_and_gives_the_same_numbers(site, calls):
    update = update_of(site, 0.05)
    uncached = table(site, update, cache=False)
    n_runs = calls["n"]
    assert n_runs == 3 * 2  # flexure, shear, system; before and after
    cold = table(site, update)
    assert calls["n"] == 2 * n_runs
    assert len(list((site.folder / RESULT_FOLDER).glob("*.json"))) == n_runs
    warm = table(site, update)
    assert calls["n"] == 2 * n_runs  # nothing run
    assert cold == uncached
    assert warm == cold


def test_a_changed_input_runs_again(site, calls):
    update = update_of(site, 0.05)
    table(site, update, **FORM)
    assert calls["n"] == 3 * 2  # flexure, shear, system; before and after
    base = calls["n"]
    table(site, update_of(site, 0.10), **FORM)  # new evidence: "after" only
    assert calls["n"] - base == 3
    base = calls["n"]
    table(site, update, **FORM, seed=6)
    assert calls["n"] - base == 6
    base = calls["n"]
    table(site, update, method="sorm", options=FORM["options"])
    assert calls["n"] - base == 6
    base = calls["n"]
    deeper = dataclasses.replace(site.members[MEMBER], depth=site.members[MEMBER].depth + 20)
    table(dataclasses.replace(site, members={**site.members, MEMBER: deeper}), update, **FORM)
    assert calls["n"] - base == 6  # another member entry
    base = calls["n"]
    table(site, update, **FORM)  # all of these are stored now
    table(site, update_of(site, 0.10), **FORM)
    assert calls["n"] == base


def test_damaged_file_is_set_aside_and_run_again(site, calls):
    update = update_of(site, 0.05)
    first = table(site, update, **FORM)
    stored = sorted((site.folder / RESULT_FOLDER).glob("*.json"))
    stored[0].write_text("{ not json")
    base = calls["n"]
    with pytest.warns(UserWarning, match="set aside"):
        again = table(site, update, **FORM)
    assert calls["n"] - base == 1
    assert again == first
    assert len(list((site.folder / RESULT_FOLDER).glob("*.damaged-*"))) == 1


def test_no_ledger_no_cache(tmp_path, calls):
    folder = tmp_path / "plain"
    folder.mkdir()
    shutil.copy(DEMO / "site.toml", folder / "site.toml")
    site = load_site(folder)
    table(site, update_of(site), **FORM)
    assert not (folder / "results").exists()


def test_result_round_trip_is_exact():
    result = ReliabilityResult(
        method="subset_simulation",
        pf=1.0 / 3.0e5,
        beta=4.5 + 1e-15,
        cov=math.nan,
        n_calls=7,
        seed=np.int64(3),
        settings={"p0": 0.2, "sampler": "acs", "levels": (1, 2)},
        warnings=("a", "b"),
        design_point_u=np.array([0.1, -np.inf, 1e-300]),
        design_point_x={"fc": 31.123456789012345},
        importance_factors=None,
        alpha=np.array([0.6, 0.8]),
        details={"pf_upper": math.inf, "levels": [{"p": 0.2}], "flags": np.array([True, False])},
    )
    back = decode_result(encode_result(result))
    for field in dataclasses.fields(result):
        np.testing.assert_equal(getattr(back, field.name), getattr(result, field.name))
    assert back.warnings == ("a", "b") and back.settings["levels"] == (1, 2)
    assert back.pf == result.pf and back.beta == result.beta and math.isnan(back.cov)


def test_remaining_life_curves_are_read_back_when_nothing_changed(site, monkeypatch):
    import assess.site.projection as projection
    from assess.site.corrosion import zone_corrosion_inputs

    made = {"n": 0}
    original = projection.project_member

    def counting(*args, **kwargs):
        made["n"] += 1
        if made["n"] == 1:
            made["curves"] = original(*args, **kwargs)
        return made["curves"]  # later misses only counted (the projection is slow)

    monkeypatch.setattr(projection, "project_member", counting)
    update = update_of(site, 0.05)
    corrosion = zone_corrosion_inputs(site, seed=4, prior_samples=2000)
    options = {
        "corrosion": corrosion,
        "members": [MEMBER],
        "horizon_years": 2.0,
        "n_samples": 200,
        "seed": 4,
    }
    cold = projection.project_site(site, update, **options)
    warm = projection.project_site(site, update, **options)
    assert made["n"] == 1
    assert [type(c) for c in warm] == [type(c) for c in cold]
    for a, b in zip(cold, warm):
        np.testing.assert_equal(dataclasses.asdict(a), dataclasses.asdict(b))
    projection.project_site(site, update, **{**options, "n_samples": 201})
    assert made["n"] == 2
