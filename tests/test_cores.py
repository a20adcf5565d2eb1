"""Core strength and core -> in-situ strength corrections (inspection_io.cores)."""

import json
import math
from pathlib import Path

import pytest

from inspection_io import cores
from inspection_io.errors import InputError
from inspection_io.readers import read_campaign_file

DATA = Path(__file__).parent / "data_files"

# ASTM C42/C42M strength correction factors for l/d (from memory).
ASTM_C42_LD = {1.75: 0.98, 1.50: 0.96, 1.25: 0.93, 1.00: 0.87}
# Bartlett & MacGregor (1994), ACI Mater. J. 91(3): diameter, moisture, drilling damage (from memory).
BM_DIAMETER = {50.0: 1.06, 100.0: 1.00, 150.0: 0.98}
BM_MOISTURE = {"as-received": 1.00, "soaked": 1.09, "dry": 0.96}
BM_DAMAGE = 1.06


def test_strength_from_failure_load_closed_form():
    # A 100 mm core has an area of pi * 50^2 = 7853.98 mm2; 40 MPa on it is 314.159 kN.
    load_kn = 40.0 * math.pi * 50.0**2 / 1000.0
    assert cores.strength_from_failure_load(load_kn, 100.0) == pytest.approx(40.0, rel=1e-12)


@pytest.mark.parametrize("ratio, factor", ASTM_C42_LD.items())
def test_length_diameter_factor_reproduces_astm_c42(ratio, factor):
    assert cores.length_diameter_factor(ratio) == pytest.approx(factor, abs=1e-12)


def test_length_diameter_factor_interpolates_and_holds_outside():
    # halfway between the ASTM C42 entries for 1.00 (0.87) and 1.25 (0.93)
    assert cores.length_diameter_factor(1.125) == pytest.approx((0.87 + 0.93) / 2)
    assert cores.length_diameter_factor(2.0) == 1.0
    assert cores.length_diameter_factor(2.3) == 1.0
    assert cores.length_diameter_factor(0.8) == pytest.approx(0.87)
    assert cores.length_diameter_factor(1.0, method="none") == 1.0


@pytest.mark.parametrize("diameter, factor", BM_DIAMETER.items())
def test_diameter_factor_reproduces_bartlett_macgregor(diameter, factor):
    assert cores.diameter_factor(diameter) == pytest.approx(factor, abs=1e-12)


@pytest.mark.parametrize("condition, factor", BM_MOISTURE.items())
def test_moisture_factor(condition, factor):
    assert cores.moisture_factor(condition) == factor


def test_insitu_strength_is_the_product_of_the_factors():
    strength, factors = cores.insitu_strength(30.0, 75.0, 112.5, "soaked")
    # l/d = 1.5 -> 0.96; 75 mm halfway between 50 (1.06) and 100 (1.00) -> 1.03
    expected = 30.0 * 0.96 * 1.03 * BM_MOISTURE["soaked"] * BM_DAMAGE
    assert strength == pytest.approx(expected)
    assert factors["factor_l_d"] == pytest.approx(0.96)
    assert factors["length_to_diameter"] == pytest.approx(1.5)


@pytest.mark.parametrize("switch", ["length_diameter", "diameter", "moisture", "drilling_damage"])
def test_each_factor_can_be_switched_off(switch):
    on, _ = cores.insitu_strength(30.0, 75.0, 112.5, "soaked")
    off, factors = cores.insitu_strength(30.0, 75.0, 112.5, "soaked",
                                         cores.CoreCorrections(**{switch: "none"}))
    key = {"length_diameter": "factor_l_d", "diameter": "factor_diameter",
           "moisture": "factor_moisture", "drilling_damage": "factor_drilling_damage"}[switch]
    assert factors[key] == 1.0
    all_on = cores.insitu_strength(30.0, 75.0, 112.5, "soaked")[1][key]
    assert off == pytest.approx(on / all_on)
    assert factors["correction_methods"][switch] == "none"


def test_unknown_correction_method_is_refused():
    with pytest.raises(InputError, match="unknown correction method 'TR 11'"):
        cores.CoreCorrections(length_diameter="TR 11")


def test_reader_gives_core_and_insitu_strength_with_factors_in_extra():
    obs = read_campaign_file(DATA / "cores_good.csv").observations
    insitu = obs[obs.quantity == "insitu_strength"].set_index("item_id")
    # C2: l/d 1.5 (0.96), dry (0.96), drilling damage 1.06
    assert insitu.loc["C2", "value"] == pytest.approx(31.5 * 0.96 * 0.96 * BM_DAMAGE)
    # C3: l/d 1.0 (0.87), soaked (1.09)
    assert insitu.loc["C3", "value"] == pytest.approx(36.2 * 0.87 * 1.09 * BM_DAMAGE)
    # C6: 150 mm core (0.98)
    assert insitu.loc["C6", "value"] == pytest.approx(39.4 * 0.98 * BM_DAMAGE)
    extra = json.loads(insitu.loc["C2", "extra"])
    assert extra["factor_moisture"] == 0.96 and extra["moisture"] == "dry"
    assert extra["correction_methods"]["length_diameter"] == "ASTM C42"


def test_reader_applies_chosen_corrections():
    plain = cores.CoreCorrections("none", "none", "none", "none")
    obs = read_campaign_file(DATA / "cores_good.csv", core_corrections=plain).observations
    core = obs[obs.quantity == "core_strength"]["value"].to_numpy()
    insitu = obs[obs.quantity == "insitu_strength"]["value"].to_numpy()
    assert insitu == pytest.approx(core)
