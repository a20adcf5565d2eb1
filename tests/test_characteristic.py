"""Characteristic values by EN 1990 Annex D (D7.2) and the per-zone core summary."""

import math
from pathlib import Path

import numpy as np
import pytest

from inspection_io.characteristic import characteristic_value, kn_factor
from inspection_io.errors import InputError
from inspection_io.readers import read_campaign_file
from inspection_io.summary import core_zone_summary, summarise, summary_to_dict

DATA = Path(__file__).parent / "data_files"

# EN 1990:2002 Annex D, Table D1: k_n for the 5 % characteristic value
# (values checked against a quoted copy of the table).
TABLE_D1_N = [1, 2, 3, 4, 5, 6, 8, 10, 20, 30, math.inf]
TABLE_D1_V_KNOWN = [2.31, 2.01, 1.89, 1.83, 1.80, 1.77, 1.74, 1.72, 1.68, 1.67, 1.64]
TABLE_D1_V_UNKNOWN = [None, None, 3.37, 2.63, 2.33, 2.18, 2.00, 1.92, 1.76, 1.73, 1.64]


@pytest.mark.parametrize("n, table", [(n, k) for n, k in zip(TABLE_D1_N, TABLE_D1_V_UNKNOWN)
                                      if k is not None])
def test_kn_v_unknown_reproduces_en1990_table_d1(n, table):
    # EN 1990 Table D1, row "V unknown": t_{n-1,0.95} sqrt(1 + 1/n) rounded to the table's two
    # decimals is within 0.01 of it for n = 3..30 and infinity. Largest gap, n = 20: 1.772
    # (rounds to 1.77) against the table's 1.76.
    assert round(kn_factor(n, v_known=False), 2) == pytest.approx(table, abs=0.01 + 1e-9)


@pytest.mark.parametrize("n, table", list(zip(TABLE_D1_N, TABLE_D1_V_KNOWN)))
def test_kn_v_known_reproduces_en1990_table_d1(n, table):
    # EN 1990 Table D1, row "V known": u_0.95 sqrt(1 + 1/n) = 2.326, 2.015, 1.899, 1.839,
    # 1.802, 1.777, 1.745, 1.725, 1.685, 1.672, 1.645; the table lists them rounded
    # down (truncated), by up to 0.016 at n = 1 -> tolerance: the table's last digit + 0.01.
    computed = kn_factor(n, v_known=True)
    assert computed >= table - 0.001
    assert computed - table < 0.02


def test_kn_v_unknown_not_given_below_three_results():
    # EN 1990 Table D1 gives no "V unknown" factor for n = 1 and 2
    with pytest.raises(InputError, match="at least 3 test results"):
        kn_factor(2, v_known=False)


def _predictive_coverage(distribution, n, v=None, reps=200_000, seed=7):
    """Share of new observations below the characteristic value (vectorised Monte Carlo)."""
    rng = np.random.default_rng(seed)
    sigma = 0.12
    samples = rng.normal(3.5, sigma, size=(reps, n + 1))
    x = np.exp(samples) if distribution == "lognormal" else 10.0 * samples  # N(35, 1.2)
    tested, new = x[:, :n], x[:, n]
    if distribution == "lognormal":
        y = np.log(tested)
        s = np.full(reps, math.sqrt(math.log(1 + v * v))) if v else y.std(axis=1, ddof=1)
        xk = np.exp(y.mean(axis=1) - kn_factor(n, v is not None) * s)
    else:
        m = tested.mean(axis=1)
        cov = v if v else tested.std(axis=1, ddof=1) / m
        xk = m * (1 - kn_factor(n, v is not None) * cov)
    return np.mean(new < xk), reps


@pytest.mark.parametrize("distribution", ["lognormal", "normal"])
def test_v_unknown_is_a_5_percent_prediction_bound(distribution):
    # The EN 1990 "V unknown" value is the 5 % fractile of the predictive distribution of a
    # new result (Student-t prediction bound, a closed-form result): a fresh sample falls
    # below it 5 % of the time. Tolerance: 3 CoV of the Monte Carlo share.
    share, reps = _predictive_coverage(distribution, n=5)
    tolerance = 3 * math.sqrt(0.05 * 0.95 / reps)
    assert share == pytest.approx(0.05, abs=tolerance)


def test_v_known_lognormal_is_a_5_percent_prediction_bound():
    # with the true V (log-std 0.12 -> V = sqrt(exp(0.0144) - 1)) the bound holds exactly
    v = math.sqrt(math.exp(0.12**2) - 1)
    share, reps = _predictive_coverage("lognormal", n=4, v=v)
    assert share == pytest.approx(0.05, abs=3 * math.sqrt(0.05 * 0.95 / reps))


def test_characteristic_value_formula_layout():
    values = [28.0, 31.0, 33.5, 30.2, 35.1]
    # EN 1990 D7.2 lognormal, V unknown: exp(m_y - k_n s_y)
    y = np.log(values)
    res = characteristic_value(values)
    assert res["characteristic"] == pytest.approx(
        math.exp(y.mean() - kn_factor(5, False) * y.std(ddof=1)))
    # normal, V known: m (1 - k_n V)
    res = characteristic_value(values, "V known", "normal", v=0.12)
    assert res["characteristic"] == pytest.approx(np.mean(values) * (1 - 1.80 * 0.12), abs=0.01)
    assert res["n"] == 5 and res["v"] == 0.12


@pytest.mark.parametrize("kwargs, match", [
    ({"method": "V known"}, "positive coefficient of variation"),
    ({"method": "V est"}, "unknown method"),
    ({"distribution": "gumbel"}, "unknown distribution"),
])
def test_characteristic_value_bad_arguments(kwargs, match):
    with pytest.raises(InputError, match=match):
        characteristic_value([30.0, 32.0, 31.0], **kwargs)


def test_lognormal_needs_positive_values():
    with pytest.raises(InputError, match="positive values"):
        characteristic_value([30.0, -1.0, 31.0])


def test_core_zone_summary_leaves_flagged_cores_out_by_default():
    obs = read_campaign_file(DATA / "cores_good.csv").observations
    summary = core_zone_summary(obs).set_index("zone")
    insitu = obs[obs.quantity == "insitu_strength"]
    used_l1 = insitu[(insitu["zone"] == "L1") & (insitu["flags"] == "")]["value"].to_numpy()
    assert summary.loc["L1", "n"] == 3 and summary.loc["L1", "n_total"] == 4
    assert summary.loc["L1", "n_flagged"] == 1 and summary.loc["L1", "n_excluded"] == 1
    assert summary.loc["L1", "mean"] == pytest.approx(used_l1.mean())
    assert summary.loc["L1", "cov"] == pytest.approx(used_l1.std(ddof=1) / used_l1.mean())
    assert summary.loc["L1", "characteristic_v_unknown"] == pytest.approx(
        characteristic_value(used_l1)["characteristic"])
    assert summary.loc["L1", "k_n_v_unknown"] == pytest.approx(3.37, abs=0.01)  # Table D1
    # L2: one usable core (C6 damaged, C7 l/d 0.9) -> V unknown not defined, V known is
    assert summary.loc["L2", "n"] == 1
    assert math.isnan(summary.loc["L2", "characteristic_v_unknown"])
    assert summary.loc["L2", "k_n_v_known"] == pytest.approx(2.31, abs=0.02)  # Table D1, n = 1


def test_core_zone_summary_includes_flags_on_request_and_is_json_ready():
    obs = read_campaign_file(DATA / "cores_good.csv").observations
    summary = core_zone_summary(obs, include_flagged={"bar_in_core"}).set_index("zone")
    assert summary.loc["L1", "n"] == 4 and summary.loc["L1", "n_excluded"] == 0
    records = summary_to_dict(core_zone_summary(obs))
    assert records[1]["zone"] == "L2" and records[1]["characteristic_v_unknown"] is None
    assert isinstance(records[0]["n"], int)


def test_summary_for_cover_per_zone():
    obs = read_campaign_file(DATA / "cover_semicolon_cm.csv").observations
    summary = summarise("cover", obs).set_index("zone")
    assert summary.loc["L1", "mean"] == pytest.approx((32.0 + 28.0 + 41.0) / 3)
    assert summary.loc["L1", "std"] == pytest.approx(np.std([32.0, 28.0, 41.0], ddof=1))
    assert summary.loc["L2", "n"] == 1 and math.isnan(summary.loc["L2", "std"])
