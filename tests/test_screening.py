"""Screening flags: row flags, the Grubbs outlier test, include/exclude in summaries."""

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from inspection_io import screening
from inspection_io.errors import InputError
from inspection_io.readers import read_campaign_file
from inspection_io.summary import core_zone_summary

DATA = Path(__file__).parent / "data_files"

# Two-sided 5 % critical values of the Grubbs statistic, ASTM E178 Table 1 (from memory).
ASTM_E178_TWO_SIDED_5PCT = {3: 1.155, 4: 1.481, 5: 1.715, 10: 2.290, 20: 2.709}


@pytest.mark.parametrize("n, table", ASTM_E178_TWO_SIDED_5PCT.items())
def test_grubbs_critical_matches_published_table(n, table):
    assert screening.grubbs_critical(n, 0.05) == pytest.approx(table, abs=0.002)


def test_grubbs_nist_handbook_example():
    # NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.5.17.1 (Tietjen-Moore data set,
    # n = 8): G = 2.4687, two-sided critical value at alpha = 0.05: 2.1266 (from memory).
    data = [199.31, 199.53, 200.19, 200.82, 201.92, 201.95, 202.18, 245.57]
    g, index = screening.grubbs_statistic(data)
    assert g == pytest.approx(2.4687, abs=1e-4)
    assert index == 7
    assert screening.grubbs_critical(8, 0.05) == pytest.approx(2.1266, abs=1e-4)
    assert screening.grubbs_outliers(data).tolist() == [False] * 7 + [True]


def test_grubbs_false_alarm_rate_is_alpha():
    # Under normal data the two-sided test at 5 % flags about 5 % of samples (the critical
    # value uses the Bonferroni bound, exact to within a few 1e-4 here). Tolerance: 3 CoV
    # of the Monte Carlo share.
    rng = np.random.default_rng(11)
    n, reps = 10, 40_000
    x = rng.standard_normal((reps, n))
    g = np.abs(x - x.mean(axis=1, keepdims=True)).max(axis=1) / x.std(axis=1, ddof=1)
    share = np.mean(g > screening.grubbs_critical(n, 0.05))
    assert share == pytest.approx(0.05, abs=3 * math.sqrt(0.05 * 0.95 / reps))


def test_core_reader_flags_low_core_as_outlier_and_keeps_it():
    result = read_campaign_file(DATA / "cores_outlier.csv")
    obs = result.observations
    flagged = obs.loc[obs["flags"].str.contains("outlier"), "item_id"].unique().tolist()
    assert flagged == ["A7"]
    assert len(obs) == 2 * 10  # nothing dropped
    # zone L2 has only 2 cores: not tested
    assert (obs.loc[obs["zone"] == "L2", "flags"] == "").all()


def test_outlier_test_skips_cores_with_other_flags():
    frame = pd.DataFrame({
        "zone": ["Z"] * 6, "item_id": list("abcdef"), "quantity": ["insitu_strength"] * 6,
        "value": [30.0, 31.0, 30.5, 29.8, 30.2, 12.0],
        "flags": ["", "", "", "", "", "damaged"],
    })
    assert screening.flag_outliers(frame)["flags"].tolist() == ["", "", "", "", "", "damaged"]
    frame.loc[5, "flags"] = ""
    assert screening.flag_outliers(frame)["flags"].tolist()[5] == "outlier"


def test_row_flags():
    flags = screening.core_row_flags(diameter=44.0, length_to_diameter=2.4, bar_in_core=True,
                                     damaged=False)
    assert flags == ["bar_in_core", "l/d outside 1-2", "diameter below 50 mm"]
    assert set(flags) <= set(screening.FLAG_REASONS)


def test_usable_mask_modes():
    flags = pd.Series(["", "bar_in_core", "outlier", "bar_in_core;damaged"])
    # an outlier is flagged and kept (KEPT_FLAGS); other flags leave the row out
    assert screening.usable_mask(flags).tolist() == [True, False, True, False]
    assert screening.usable_mask(flags, include_flagged={"bar_in_core"}).tolist() == \
        [True, True, True, False]
    assert screening.usable_mask(pd.Series(["outlier;damaged"])).tolist() == [False]
    assert screening.usable_mask(flags, exclude_flags={"outlier"}).tolist() == \
        [True, True, False, True]
    with pytest.raises(InputError, match="not both"):
        screening.usable_mask(flags, include_flagged={"outlier"}, exclude_flags={"damaged"})
    with pytest.raises(InputError, match="unknown flag 'bar'"):
        screening.usable_mask(flags, include_flagged={"bar"})


def test_summary_counts_outlier_and_can_take_it_back():
    obs = read_campaign_file(DATA / "cores_outlier.csv").observations
    # the outlier is flagged and kept by default; excluding the flag takes it out
    default = core_zone_summary(obs).set_index("zone")
    assert default.loc["L1", "n"] == 8 and default.loc["L1", "n_flagged"] == 1
    without = core_zone_summary(obs, exclude_flags={"outlier"}).set_index("zone")
    assert without.loc["L1", "n"] == 7
    assert default.loc["L1", "characteristic_v_unknown"] < \
        without.loc["L1", "characteristic_v_unknown"]


def test_engineer_excludes_named_tests_with_a_reason(tmp_path):
    import warnings
    from pathlib import Path

    from assess.site.materials import apply_exclusions, flagged_kept
    from inspection_io.site import load_site

    demo = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / "site.toml"
    site_file = tmp_path / "site.toml"
    site_file.write_text(demo.read_text() + '\n[exclude]\n"C-03" = "crushed at the saw cut"\n')
    site = load_site(site_file)
    assert dict(site.exclude) == {"C-03": "crushed at the saw cut"}
    site_file.write_text(demo.read_text() + '\n[exclude]\n"C-03" = " "\n')
    with pytest.raises(InputError, match="non-empty") as err:
        load_site(site_file)
    assert err.value.column == "exclude.C-03"

    cores = pd.DataFrame({"zone": ["L1"] * 4, "item_id": ["C-01", "C-02", "C-03", "C-04"],
                          "value": [30.0, 31.0, 12.0, 29.0],
                          "flags": ["", "", "outlier", ""]})
    data = {"concrete": cores, "cover": cores.iloc[:0]}
    # the outlier is flagged and kept until the engineer names it
    assert [r["item"] for r in flagged_kept(data)] == ["C-03"]
    kept, excluded = apply_exclusions(data, site.exclude)
    assert kept["concrete"]["item_id"].tolist() == ["C-01", "C-02", "C-04"]
    assert excluded == [{"quantity": "concrete", "zone": "L1", "item": "C-03", "value": 12.0,
                         "flags": "outlier", "reason": "crushed at the saw cut"}]
    assert flagged_kept(kept) == []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        apply_exclusions(data, {"C-3": "typo"})
    assert any("C-3" in str(w.message) for w in caught)
