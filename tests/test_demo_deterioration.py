"""Chloride and carbonation evidence chained into the corrosion update, on the demo site.

References
- The parameters that generated the demo data (demo_sites/tanners-yard/truth.json) are the
  outside reference of the chloride posteriors. truth.json gives D_ref at t_ref = 10 yr
  (D_app(t) = D_ref (t_ref / t)^a); the fitted D_ref is at the fib 34 t0 = 28 d, so each
  draw is compared as D_app(10 yr) = D_ref,28d (t0 / 10)^a (same ageing law).
- truth.json: L1 never depassivates by chloride (surface content 0.57 % about C_crit 0.56 %)
  and carbonates to its mean cover in 85 yr; in L3 and L4 chloride comes first (29 and 38 yr)
  and carbonation would take over 700 yr.
- Local initiation time against cover: t_i ~ c^(2 / (1 - a)) for the fib 34 error-function
  model with Delta x = 0 (closed-form inverse, assess.deterioration.chloride.initiation_time,
  numpy), so sd(ln t_i) = 2 / (1 - a) sd(ln c) exactly for lognormal covers.
- Variance of a reading = variance of the true cover + variance of the reading error
  (independent errors).
"""

import json
import math

import numpy as np
import pytest
from scipy import stats

from assess.deterioration import chloride as chloride_forward
from assess.deterioration.defaults import REFERENCE_AGE_YEARS
from assess.errors import InputError
from assess.site.corrosion import update_corrosion
from assess.site.initiation import (
    COVER_READING_SD_MM,
    ZoneCover,
    initiation_data,
    initiation_time_draws,
    spatial_log_sd,
    surveyed_cover,
    update_initiation,
)
from assess.updating.corrosion import SPATIAL_LOG_SD


@pytest.fixture(scope="module")
def site(demo_fits):
    from inspection_io.site import load_site

    return load_site(demo_fits)


@pytest.fixture(scope="module")
def initiation(site, quick_settings):
    """Chloride and carbonation fits of every zone, as `update_corrosion` makes them
    (same settings and hash, so the stored fits are shared with tests/test_life.py)."""
    return update_initiation(site, settings=quick_settings)


@pytest.fixture(scope="module")
def truth(demo_site):
    return json.loads((demo_site / "truth.json").read_text())["zones"]


def test_every_fit_passed_the_gate_and_is_read_back_from_its_cache(site, initiation,
                                                                   quick_settings):
    fits = list(initiation.chloride.values()) + list(initiation.carbonation.values())
    assert set(initiation.chloride) == set(initiation.carbonation) == set(site.zones)
    assert all(f.gate.passed and f.gate.divergences == 0 for f in fits)
    stored = {p.name.split("-")[0] for p in (site.folder / "results" / "posteriors").glob("*.nc")}
    assert {"chloride", "carbonation"} <= stored
    again = update_initiation(site, settings=quick_settings)
    for zone in site.zones:
        first = initiation.chloride[zone].zone_draws(zone)["surface_chloride"]
        np.testing.assert_array_equal(again.chloride[zone].zone_draws(zone)["surface_chloride"],
                                      first)
        assert again.chloride[zone].gate.passed and again.carbonation[zone].gate.passed


def test_zones_of_one_exposure_class_share_one_chloride_fit(site, initiation):
    # L3 and L4 are both "exposed deck" (site.toml): one fit, one ageing exponent.
    assert initiation.chloride["L3"] is initiation.chloride["L4"]
    assert initiation.chloride["L1"] is not initiation.chloride["L2"]
    assert {site.zones[z].exposure for z in ("L3", "L4")} == {"exposed deck"}


def test_governing_mechanism_is_the_one_of_the_demo_truth(site, initiation, truth):
    for zone, carbonation_first in (("L1", True), ("L3", False), ("L4", False)):
        draws = initiation_time_draws(site, zone, initiation, seed=3)
        share = float(np.mean(draws["carbonation"] < draws["chloride"]))
        assert (share > 0.9) if carbonation_first else (share < 0.1), (zone, share)
    assert truth["L1"]["initiation_time_chloride"] > 1e6
    assert truth["L3"]["initiation_time_carbonation"] > 700


def test_corrosion_priors_come_from_the_site_evidence(site, initiation, quick_settings):
    fit = update_corrosion(site, settings=quick_settings, initiation=initiation)
    for zone in ("L1", "L3"):
        assert "carbonation depths of the site" in fit.priors[zone].source
        assert "chloride profiles of the site" in fit.priors[zone].source
    assert fit.breakout_quantile == 0.1
    # the spatial scatter follows the mechanism: chloride zones scatter more than the
    # carbonation zone for a similar cover CoV (exponent 2 / (1 - a) > 2)
    assert fit.spatial_log_sd["L1"] < fit.spatial_log_sd["L3"]
    assert all(0.2 < v < 1.5 for v in fit.spatial_log_sd.values())


def test_spatial_scatter_of_initiation_matches_the_closed_form_model():
    rng = np.random.default_rng(5)
    cover = ZoneCover(zone="Z", mean_mm=35.0, standard_error_mm=1.0, scatter_mm=6.0, n=20,
                      source="test")
    local = stats.lognorm(s=cover.log_scatter, scale=35.0).rvs(size=200_000, random_state=rng)
    ageing = 0.45
    # numpy closed-form inverse of the fib 34 erfc model: C_crit 0.6, C_S 3.0 % binder,
    # D_ref 300 mm2/yr at 28 d, C0 0.05 %, Delta x = 0
    t_i = chloride_forward.initiation_time(local, 0.6, 3.0, 300.0, REFERENCE_AGE_YEARS, ageing,
                                           0.05, 0.0)
    expected = spatial_log_sd(cover, np.full(10, 2.0 / (1.0 - ageing)))
    standard_error = expected / math.sqrt(2 * local.size)
    assert np.log(t_i).std() == pytest.approx(expected, abs=4 * standard_error)
    # the carbonation exponent is 2: half-cell scatter for (c / k)^2
    assert spatial_log_sd(cover, np.full(10, 2.0)) == pytest.approx(2.0 * cover.log_scatter)
    assert spatial_log_sd(cover, np.full(10, 2.0)) < SPATIAL_LOG_SD


def test_survey_scatter_removes_the_reading_error():
    rng = np.random.default_rng(8)
    true_sd, n = 7.0, 400_000
    readings = rng.normal(40.0, true_sd, n) + rng.normal(0.0, COVER_READING_SD_MM, n)
    cover = surveyed_cover("Z", readings)
    assert cover.scatter_mm == pytest.approx(true_sd, rel=0.01)
    assert cover.standard_error_mm == pytest.approx(
        math.hypot(true_sd, COVER_READING_SD_MM) / math.sqrt(n), rel=0.01)
    # a survey no wider than its reading error keeps the reading error as scatter
    assert surveyed_cover("Z", [30.0, 31.0, 32.0]).scatter_mm == COVER_READING_SD_MM
    with pytest.raises(InputError, match="at least 2 readings"):
        surveyed_cover("Z", [30.0])


def test_ledger_profiles_are_in_percent_binder_with_mid_depths(site):
    data = initiation_data(site)
    chloride = data.chloride
    # 3 campaigns x 4 zones x 3 profiles x 6 increments of 10 mm (demo_sites/README.md)
    assert chloride["chloride"].size == 216
    assert set(np.unique(chloride["depth_mm"])) == {5.0, 15.0, 25.0, 35.0, 45.0, 55.0}
    # 2009 values were given in % of concrete: x 2400 / 350 to % binder
    first = chloride["age_years"] < 36
    assert chloride["chloride"][first].max() > 1.0
    assert set(data.covers) == set(site.zones) and all(c.n >= 2 for c in data.covers.values())
