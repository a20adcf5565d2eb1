"""The value of information costs "keep as is" with the remaining-life curve's annual pf.

Closed forms: for independent years with annual failure probabilities p(t), the
probability of failing in year t is p(t) prod_{s<t} (1 - p(s)); with a constant p the
sum over T years is 1 - (1 - p)^T (EN 1990:2002 Annex C, the conversion between
reference periods, eq. C.3; from memory). The mean over the posterior draws of the
annual pf of "keep as is" in year t must equal the life curve's pf(t), so the summed
annual pf over the horizon equals the life curve's sum (one source for both sections).
"""

import dataclasses

import numpy as np
import pytest

from assess.site.worth_decision import failure_increments, time_dependent_annual_pf
from assess.worth import Alternative, DecisionProblem, discount_factors

KINDS = ["keep", "repair", "strengthen", "restrict_load", "replace"]


@dataclasses.dataclass
class Curve:
    years_from_assessment: np.ndarray
    pf: np.ndarray


def _pf_now(n=500, seed=4):
    rng = np.random.default_rng(seed)
    keep = 10.0 ** rng.uniform(-6.0, -4.0, n)          # spread over the draws (invented)
    return np.column_stack([keep, np.full(n, 1e-7), keep / 20.0, keep / 5.0,
                            np.full(n, 1e-6)])


def _curve(p0=2e-5, growth=0.15, years=50):
    t = np.arange(years + 1, dtype=float)
    return Curve(t, p0 * (1.0 + growth) ** t)           # geometric growth, closed form


def test_keep_follows_the_life_curve_year_by_year_and_its_sum():
    pf_now, curve = _pf_now(), _curve()
    yearly, note, follows, _ = time_dependent_annual_pf(pf_now, KINDS, curve, 15)
    assert follows and "remaining-life curve" in note
    keep = yearly[:, 0, :]
    # mean over draws of year t = life curve pf(t), t = 0..14
    np.testing.assert_allclose(keep.mean(axis=0), curve.pf[:15], rtol=1e-12)
    # summed annual pf over 15 years: closed form of the geometric series
    p0, g = 2e-5, 0.15
    closed = p0 * ((1 + g) ** 15 - 1) / g
    assert keep.mean(axis=0).sum() == pytest.approx(closed, rel=1e-12)
    # the old constant annual pf would have used 15 p0: the curve gives far more
    assert closed / (15 * p0) > 2.0
    # ranking of the draws is kept (the spread that gives tests their value)
    assert np.all(np.argsort(keep[:, 7]) == np.argsort(pf_now[:, 0]))


def test_other_alternatives_grow_relatively_or_stay_constant():
    pf_now, curve = _pf_now(), _curve()
    yearly, _, _, _ = time_dependent_annual_pf(pf_now, KINDS, curve, 15)
    growth = curve.pf[:15] / curve.pf[0]
    for a in (2, 3):  # strengthen, restrict load: bars keep corroding
        np.testing.assert_allclose(yearly[:, a, :], pf_now[:, a, None] * growth[None, :])
    for a in (1, 4):  # repair, replace: constant
        np.testing.assert_allclose(yearly[:, a, :], pf_now[:, a, None] * np.ones(15))


def test_horizon_beyond_the_curve_holds_its_last_value():
    curve = _curve(years=10)
    yearly, _, _, _ = time_dependent_annual_pf(_pf_now(), KINDS, curve, 15)
    np.testing.assert_allclose(yearly[:, 0, 10:].mean(axis=0), curve.pf[10], rtol=1e-12)


def test_without_a_curve_the_annual_pf_is_constant_and_said_so():
    pf_now = _pf_now()
    yearly, note, follows, _ = time_dependent_annual_pf(pf_now, KINDS, None, 15)
    assert not follows and "held constant" in note
    np.testing.assert_array_equal(yearly, np.repeat(pf_now[:, :, None], 15, axis=2))


def test_increments_reduce_to_the_annex_c_conversion_for_a_constant_pf():
    p, horizon = 3e-3, 20
    increments = failure_increments(np.full((1, 1, horizon), p))
    # EN 1990 Annex C: P_T = 1 - (1 - p)^T
    assert increments.sum() == pytest.approx(1.0 - (1.0 - p) ** horizon, rel=1e-12)


def test_increments_with_varying_pf_closed_form():
    p = np.array([0.1, 0.2, 0.3])
    increments = failure_increments(p[None, None, :])[0, 0]
    np.testing.assert_allclose(increments, [0.1, 0.9 * 0.2, 0.9 * 0.8 * 0.3])
    # survival to the end: (1 - sum) = prod (1 - p)
    assert 1.0 - increments.sum() == pytest.approx(0.9 * 0.8 * 0.7)


def test_keep_cost_in_the_decision_problem_uses_the_curve():
    pf_now, curve = _pf_now(), _curve()
    yearly, _, _, _ = time_dependent_annual_pf(pf_now, KINDS, curve, 15)
    problem = DecisionProblem(
        alternatives=[Alternative(k, 0.0 if k == "keep" else 1.0) for k in KINDS],
        failure_cost=1e7, theta=np.arange(pf_now.shape[0], dtype=float)[:, None],
        parameter_names=["k"], annual_pf=failure_increments(yearly), discount_rate=0.02,
        keep="keep")
    expected = 1e7 * (failure_increments(yearly)[:, 0, :] @ discount_factors(0.02, 15)).mean()
    assert problem.expected_costs()[0] == pytest.approx(expected, rel=1e-12)


def test_the_cap_at_one_removes_exactly_the_mass_it_reports():
    # closed form: keep-as-is draws 0.2 and 1.0 (mean 0.6) follow a flat curve at 0.9, so
    # each is scaled by 1.5 -> 0.3 and 1.5; the cap takes 1.5 to 1, removing 0.5 / 2 = 0.25
    pf_now = np.array([[0.2, 1e-7, 0.01, 0.05, 1e-6], [1.0, 1e-7, 0.05, 0.2, 1e-6]])
    curve = Curve(np.arange(6, dtype=float), np.full(6, 0.9))
    yearly, note, _, lost = time_dependent_annual_pf(pf_now, KINDS, curve, 3)
    np.testing.assert_allclose(yearly[:, 0, :], [[0.3] * 3, [1.0] * 3])
    np.testing.assert_allclose(lost, [0.25] * 3)
    np.testing.assert_allclose(yearly[:, 0, :].mean(axis=0) + lost, curve.pf[:3])
    assert "taken as 1" in note
