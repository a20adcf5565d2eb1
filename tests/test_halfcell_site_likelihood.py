"""Half-cell likelihood per zone: the published range of the zone's condition, or the site's
own calibration (``[zones.<id>.half_cell_calibration]``), and the report's warning while
defaults are in use.

Outside references: the RILEM TC 154-EMC recommendation (Elsener et al., Materials and
Structures 36, pp. 461-471, 2003), table of typical potential ranges of steel in concrete vs
CSE (values from memory: wet, chloride-contaminated -600 to -400 mV; humid, carbonated -400
to +100 mV; humid, chloride-free -200 to +100 mV; dry 0 to +200 mV), each range read as the
central 90 % of a normal (our reading); the normal probabilities from scipy.
"""

from __future__ import annotations

import dataclasses
import types
import warnings
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from assess.deterioration.halfcell import HALF_CELL_CONDITIONS
from assess.site.half_cell_likelihood import zone_half_cell_likelihood
from inspection_io.errors import InputError
from inspection_io.site import load_site

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / "site.toml"

CALIBRATION = """
[zones.L3.half_cell_calibration]
active_mean = -470
active_sd = 55
passive_mean = -160
passive_sd = 65
basis = "break-outs at 12 surveyed grid points, test text"
"""

# RILEM TC 154-EMC ranges (from memory), mV vs CSE
RILEM_RANGES = {
    "wet, chloride-contaminated": {"active": (-600.0, -400.0), "passive": (-200.0, 100.0)},
    "humid, carbonated": {"active": (-400.0, 100.0), "passive": (-200.0, 100.0)},
    "dry": {"active": (0.0, 200.0), "passive": (0.0, 200.0)},
}


def site_with(tmp_path, extra="", exposure=None):
    text = DEMO_SITE.read_text()
    if exposure is not None:
        text = text.replace('exposure = "exposed deck"', f"exposure = {exposure}", 1)
    folder = tmp_path / "site"
    folder.mkdir(exist_ok=True)
    (folder / "site.toml").write_text(text + "\n" + extra)
    return load_site(folder)


@pytest.mark.parametrize("condition", sorted(RILEM_RANGES))
def test_each_condition_puts_90_percent_of_each_state_in_its_published_range(condition):
    params = HALF_CELL_CONDITIONS[condition]
    for state, (low, high) in RILEM_RANGES[condition].items():
        mean, sd = params[f"{state}_mean_mv"], params[f"{state}_sd_mv"]
        mass = stats.norm.cdf(high, mean, sd) - stats.norm.cdf(low, mean, sd)
        # 0.90 by construction; the tabulated sds are rounded to 10 mV (+-0.015)
        assert mass == pytest.approx(0.90, abs=0.015), (condition, state)


def test_each_zone_takes_the_condition_of_its_exposure(tmp_path):
    site = site_with(tmp_path)
    expected = {"L1": "dry", "L2": "humid, carbonated", "L3": "wet, chloride-contaminated",
                "L4": "wet, chloride-contaminated"}
    assert {z: site.zones[z].exposure for z in expected} == {
        "L1": "internal", "L2": "sheltered soffit", "L3": "exposed deck", "L4": "exposed deck"}
    likelihood = zone_half_cell_likelihood(site)
    for zone, condition in expected.items():
        table = {k: v for k, v in HALF_CELL_CONDITIONS[condition].items() if k.endswith("_mv")}
        assert dict(likelihood.params[zone]) == table
        assert condition in likelihood.sources[zone]
    assert likelihood.calibrated == ()
    assert not likelihood.all_calibrated(["L3"]) and likelihood.all_calibrated([])


def test_an_en206_class_chooses_the_condition_too(tmp_path):
    # EN 206 XC3 (moderate humidity, carbonation) -> "sheltered soffit" -> humid, carbonated
    site = site_with(tmp_path, exposure='"XC3"')
    assert site.zones["L3"].exposure == "sheltered soffit"
    assert zone_half_cell_likelihood(site, ["L3"]).params["L3"]["active_mean_mv"] == (
        HALF_CELL_CONDITIONS["humid, carbonated"]["active_mean_mv"])


def test_a_site_calibration_replaces_the_published_range_of_its_zone_only(tmp_path):
    site = site_with(tmp_path, CALIBRATION)
    likelihood = zone_half_cell_likelihood(site)
    assert dict(likelihood.params["L3"]) == {"active_mean_mv": -470.0, "active_sd_mv": 55.0,
                                             "passive_mean_mv": -160.0, "passive_sd_mv": 65.0}
    assert likelihood.calibrated == ("L3",)
    assert "break-outs at 12 surveyed grid points" in likelihood.sources["L3"]
    assert likelihood.all_calibrated(["L3"]) and not likelihood.all_calibrated(["L3", "L4"])
    assert likelihood.params["L4"]["active_mean_mv"] == (
        HALF_CELL_CONDITIONS["wet, chloride-contaminated"]["active_mean_mv"])


@pytest.mark.parametrize("change, key, message", [
    (("active_mean = -470", "active_mean = -100"), "active_mean", "below passive_mean"),
    (("active_sd = 55", "active_sd = 0"), "active_sd", "(0, 300]"),
    (("passive_mean = -160", "passive_mean = -2000"), "passive_mean", "[-1000, 300]"),
    (("passive_sd = 65", 'passive_sd = "wide"'), "passive_sd", "expected a number"),
    (('basis = "break-outs at 12 surveyed grid points, test text"\n', ""), "basis",
     "missing required key"),
    (("basis =", "bassis ="), "bassis", "unknown key"),
])
def test_a_bad_calibration_names_file_key_and_what_was_expected(tmp_path, change, key,
                                                                message):
    with pytest.raises(InputError) as info:
        site_with(tmp_path, CALIBRATION.replace(*change))
    assert info.value.column == f"zones.L3.half_cell_calibration.{key}"
    assert Path(info.value.file).name == "site.toml"
    assert message in info.value.message


def test_update_corrosion_passes_each_zone_its_parameters_and_the_calibrated_flag(
        tmp_path, monkeypatch):
    """The corrosion step hands the per-zone parameters to the fit and into its content
    hash; 'calibrated' is true only when every zone with readings is calibrated (the MCMC
    itself is replaced by a recorder: this checks the wiring, not the sampler)."""
    import assess.site.corrosion as site_corrosion
    import assess.site.initiation as initiation
    from assess.updating.corrosion import HalfCellData, ZoneCorrosionPrior

    monkeypatch.setattr(initiation, "initiation_prior", lambda *a, **k: (
        ZoneCorrosionPrior(0.5, 0.5, 25.0, 0.4), 0.6))
    seen = {}

    def record(folder, kind, payload, **options):
        seen["payload"] = payload
        seen["fit"] = options["sample"]  # not called
        return types.SimpleNamespace(fit=None)

    monkeypatch.setattr(site_corrosion, "cached_posterior", record)
    evidence = site_corrosion.CorrosionEvidence(
        ("L3", "L4"), None,
        HalfCellData(np.full(4, 30.0), np.array([-450.0, -120.0, -300.0, -90.0]),
                     np.array([0, 0, 1, 1])),
        {"L3": {"section_loss": 0, "half_cell": 2}, "L4": {"section_loss": 0, "half_cell": 2}})
    for extra, calibrated in (("", False), (CALIBRATION, False),
                              (CALIBRATION + CALIBRATION.replace("L3", "L4"), True)):
        site = site_with(tmp_path, extra)
        site_corrosion.update_corrosion(site, evidence=evidence, initiation=object(),
                                        store=False)
        model = seen["payload"]["half_cell_model"]["params"]
        assert set(model) == {"L3", "L4"}
        assert model["L3"]["active_mean_mv"] == (-470.0 if extra else -500.0)
        # the calibrated flag reaches the fit through the sampling closure
        closure = dict(zip(seen["fit"].__code__.co_freevars,
                           (c.cell_contents for c in seen["fit"].__closure__)))
        assert closure["model"].half_cell_calibrated is calibrated


def half_cell_fit(calibrated):
    """A corrosion fit of one zone with 25 readings: draws of t_i from a lognormal (the
    warning only reports them, so any draws serve)."""
    import arviz as az

    from assess.updating.corrosion import CorrosionFit, HalfCellData, prepare_half_cell

    rng = np.random.default_rng(3)
    e = np.where(rng.random(25) < 0.5, rng.normal(-500, 60, 25), rng.normal(-50, 90, 25))
    prepared = prepare_half_cell(HalfCellData(np.full(25, 40.0), e, np.zeros(25, int)), ["L3"],
                                 params=dict(HALF_CELL_CONDITIONS["wet, chloride-contaminated"]))
    t_i = np.exp(rng.normal(np.log(30.0), 0.3, (4, 500, 1)))
    idata = az.from_dict(posterior={"initiation_time": t_i,
                                    "corrosion_rate": np.full_like(t_i, 0.1)},
                         coords={"zone": ["L3"]}, dims={"initiation_time": ["zone"],
                                                        "corrosion_rate": ["zone"]})
    return CorrosionFit(idata, None, ("L3",), {}, {"L3": 0.6}, 1, half_cell=prepared,
                        half_cell_calibrated=calibrated)


@pytest.mark.parametrize("calibrated", [False, True])
def test_the_defaults_warning_is_there_until_the_site_calibrates(calibrated):
    from assess.site.corrosion import warn_half_cell

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        warn_half_cell(half_cell_fit(calibrated), {"L3": "site-calibrated (test)"})
    texts = [str(w.message) for w in caught]
    assert len(texts) == 1 and "L3 [site-calibrated (test)]: 25 readings" in texts[0]
    assert ("defaults rather than site-calibrated" in texts[0]) is (not calibrated)


def test_the_report_column_follows_the_fit():
    fit = dataclasses.replace(half_cell_fit(False), half_cell_calibrated=True)
    assert fit.half_cell_effect("L3")["calibrated"] is True
