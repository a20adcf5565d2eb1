"""The optional [priors] table of site.toml: checks, and overrides reaching the design priors."""

import math
import warnings
from pathlib import Path

import pytest
from scipy import stats

from assess.priors.actions import CAR_PARK_VEHICLES
from assess.site.before_after import assess_members
from assess.site.knowledge import OVERRIDE_SOURCE, design_knowledge
from assess.site.materials import SiteUpdate
from inspection_io.errors import InputError
from inspection_io.site import CAR_PARK_USES, Priors, load_site

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / "site.toml"

# Invented override values (mean in-situ values, not class or grade values).
PRIORS = """
[priors]
concrete_mean = 38.4
concrete_cov = 0.14
steel_mean = 468.0
steel_std = 27.0
cover_mean = 33.5
cover_std = 6.5
imposed_use = "residential"
"""


def site_with(tmp_path, priors_text: str):
    path = tmp_path / "site.toml"
    path.write_text(DEMO_SITE.read_text() + priors_text)
    return load_site(path)


def quiet_knowledge(site):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return design_knowledge(site)


def test_without_a_priors_table_every_field_is_none():
    site = load_site(DEMO_SITE)
    assert site.priors == Priors()
    assert all(value is None for value in vars(site.priors).values())
    sources = {q: ng.source for q, ng in quiet_knowledge(site)["L1"].items()}
    assert all(OVERRIDE_SOURCE not in s for s in sources.values())
    assert "JCSS PMC Part 3.1" in sources["concrete"]


def test_priors_table_is_read_into_the_site(tmp_path):
    priors = site_with(tmp_path, PRIORS).priors
    assert priors == Priors(concrete_mean=38.4, concrete_cov=0.14, steel_mean=468.0,
                            steel_std=27.0, cover_mean=33.5, cover_std=6.5,
                            imposed_use="residential")


def test_concrete_override_is_a_normal_gamma_with_the_jcss_weight(tmp_path):
    site = site_with(tmp_path, PRIORS)
    with warnings.catch_warnings():
        # a class off the JCSS table would warn; the override must not consult the table
        warnings.simplefilter("error")
        knowledge = design_knowledge(site)
    concrete = knowledge["L3"]["concrete"]
    jcss = concrete.jcss
    # n' = 3 and nu' = 10 as the JCSS PMC Part 3.1 ready-mixed rows (concrete.CONCRETE_PRIORS)
    assert jcss["n"] == pytest.approx(3.0)
    assert jcss["nu"] == pytest.approx(10.0)
    # lognormal with the given mean and CoV: checked with scipy's lognorm moments
    lognormal = stats.lognorm(s=jcss["s"], scale=math.exp(jcss["m"]))
    assert lognormal.mean() == pytest.approx(38.4, rel=1e-12)
    assert lognormal.std() / lognormal.mean() == pytest.approx(0.14, rel=1e-12)
    assert OVERRIDE_SOURCE in concrete.source and "38.4" in concrete.source


def test_steel_and_cover_overrides_give_the_stated_predictive_mean_and_std(tmp_path):
    knowledge = quiet_knowledge(site_with(tmp_path, PRIORS))
    for zone in ("L1", "L2", "L3", "L4"):
        for name, mean, std in (("steel", 468.0, 27.0), ("cover", 33.5, 6.5)):
            population = knowledge[zone][name]
            # Student-t predictive (JCSS PMC Part 3.0 Annex A) through scipy.stats.t
            predictive = population.predictive()
            if name == "cover":
                # cover on ln c: the lognormal with the predictive's mean and sd of ln c
                # has the stated mean and sd (scipy.stats.lognorm moments)
                lognormal = stats.lognorm(s=predictive.std(), scale=math.exp(predictive.mean()))
                predictive = lognormal
            assert predictive.mean() == pytest.approx(mean, rel=1e-12)
            assert predictive.std() == pytest.approx(std, rel=1e-12)
            assert OVERRIDE_SOURCE in population.source
    # area ratio has no override: JCSS bar area prior stays
    assert OVERRIDE_SOURCE not in knowledge["L1"]["area_ratio"].source


def test_partial_override_leaves_the_other_priors_alone(tmp_path):
    site = site_with(tmp_path, "\n[priors]\ncover_mean = 40.0\ncover_std = 8.0\n")
    plain = quiet_knowledge(load_site(DEMO_SITE))
    knowledge = quiet_knowledge(site)
    assert knowledge["L2"]["concrete"] == plain["L2"]["concrete"]
    assert knowledge["L2"]["steel"] == plain["L2"]["steel"]
    assert knowledge["L2"]["cover"] != plain["L2"]["cover"]
    # cover on ln c: lognormal with mean 40, sd 8 -> E[ln c] = ln 40 - ln(1 + 0.2^2) / 2
    assert knowledge["L2"]["cover"].predictive().mean() == pytest.approx(
        math.log(40.0) - 0.5 * math.log1p(0.2**2))


@pytest.mark.parametrize("key, value, kind", [
    ("concrete_mean", 30.0, "concrete_cov = 0.15"),   # C30: EN 206 class f_ck
    ("concrete_mean", 37.0, "concrete_cov = 0.15"),   # C30/37: cube class
    ("steel_mean", 500.0, "steel_std = 30.0"),        # B500 grade f_yk
    ("steel_mean", 410.0, "steel_std = 30.0"),        # S410 grade f_yk
])
def test_characteristic_looking_mean_warns(tmp_path, key, value, kind):
    site = site_with(tmp_path, f"\n[priors]\n{key} = {value}\n{kind}\n")
    with pytest.warns(UserWarning, match=rf"\[priors\] {key} = {value:g} MPa .*needs mean values"):
        design_knowledge(site)


def test_mean_values_do_not_warn_as_characteristic(tmp_path):
    site = site_with(tmp_path, PRIORS)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        design_knowledge(site)
    assert not [w for w in caught if "characteristic" in str(w.message)]


BAD = [
    ("concrete_mea = 38.0\nconcrete_cov = 0.1", "priors.concrete_mea", "did you mean 'concrete_mean'"),
    ("concrete_mean = 38.0", "priors.concrete_cov", "without 'concrete_cov'"),
    ("steel_std = 30.0", "priors.steel_mean", "without 'steel_mean'"),
    ("concrete_mean = 38.0\nconcrete_cov = 0", "priors.concrete_cov", "(0, 0.5]"),
    ("concrete_mean = 38.0\nconcrete_cov = 15", "priors.concrete_cov", "(0, 0.5]"),
    ("concrete_mean = -5\nconcrete_cov = 0.1", "priors.concrete_mean", "[MPa]"),
    ('steel_mean = "470"\nsteel_std = 30', "priors.steel_mean", "expected a number [MPa]"),
    ("cover_mean = 35\ncover_std = 0.0", "priors.cover_std", "[mm]"),
    ("cover_mean = true\ncover_std = 5", "priors.cover_mean", "the boolean true"),
    ('imposed_use = "hotel"', "priors.imposed_use", '"residential"'),
]


@pytest.mark.parametrize("body, key_path, words", BAD, ids=[b[1] + ":" + b[2] for b in BAD])
def test_bad_priors_name_the_file_and_key_path(tmp_path, body, key_path, words):
    with pytest.raises(InputError) as info:
        site_with(tmp_path, f"\n[priors]\n{body}\n")
    assert info.value.column == key_path
    assert info.value.file == str(tmp_path / "site.toml")
    assert words in info.value.message


def test_priors_must_be_a_table(tmp_path):
    path = tmp_path / "site.toml"
    path.write_text("priors = 3\n" + DEMO_SITE.read_text())  # a top-level key, before any table
    with pytest.raises(InputError) as info:
        load_site(path)
    assert info.value.column == "priors"
    assert "expected a table [priors]" in info.value.message


def test_car_park_uses_match_the_vehicle_load_model():
    assert set(CAR_PARK_USES) == set(CAR_PARK_VEHICLES["use"])


def test_imposed_use_reaches_the_member_load_model(tmp_path):
    # Fewer load renewals per year give a smaller annual maximum (Gumbel extremes of the
    # JCSS car-park model, CAR_PARK_VEHICLES): "rail or airport" (30 busy days x 1.3 vehicles
    # per bay) must give a higher FORM beta than "commercial" (312 x 3.2) for the same slab.
    betas = {}
    for use in ("commercial", "rail or airport"):
        site = site_with(tmp_path, f'\n[priors]\nimposed_use = "{use}"\n')
        knowledge = quiet_knowledge(site)
        update = SiteUpdate(knowledge, knowledge, {}, None, None, "", False, None, None)
        table = assess_members(site, update, method="form", importance=False,
                               members=["S1-03"])
        betas[use] = {r.mode: r.after.beta for r in table.results if r.mode != "system"}
    assert betas["rail or airport"]["flexure"] > betas["commercial"]["flexure"] + 0.01


def test_concrete_before_is_the_in_situ_strength_of_the_jcss_f_co_prior():
    # JCSS PMC Part 3.1: ln f_c = ln alpha2(t) + 0.96 ln f_co + ln Y1; the demo site (built
    # 1974, assessed 2026) is older than the 365-day cap of alpha2 = 0.6 + 0.12 ln t.
    from assess.priors import concrete_prior
    from assess.priors.insitu import y1_log_parameters

    site = load_site(DEMO_SITE)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # C30 is interpolated between the JCSS rows
        f_co = concrete_prior(site.materials.concrete_class, site.materials.production)
        concrete = design_knowledge(site)["L1"]["concrete"]
    mu1, _ = y1_log_parameters(0.06)
    assert concrete.m == pytest.approx(math.log(0.6 + 0.12 * math.log(365.0)) + 0.96 * f_co.m
                                       + mu1, rel=1e-12)
    assert concrete.s == pytest.approx(0.96 * f_co.s, rel=1e-12)
    assert "in situ" in concrete.source
