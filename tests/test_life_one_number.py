"""One number at the assessment date: the life curve starts at the members' beta after.

The curve is shifted in beta, beta(t) = beta_curve(t) + (beta_members - beta_curve(0))
(our rule; the change beta(t) - beta(0) of the curve is kept exactly). Checks are
closed forms on invented curves.
"""

import math
import types

import numpy as np
import pytest
from scipy import stats

from assess.site.life import anchor_to_members
from assess.site.projection import LifeCurve, beta_band, remaining_life
from assess.targets import Target


def _curve(member="B1", mode="system", p0=1e-5, growth=0.2, years=30):
    t = np.arange(years + 1, dtype=float)
    pf = p0 * (1.0 + growth) ** t
    cov = np.full(t.size, 0.05)
    beta, lower, upper = beta_band(pf, cov)
    target = Target(4.2, 1.0, "annual target (invented for the test)")
    return LifeCurve(member=member, zone="Z", kind="beam", mode=mode, years_from_assessment=t,
                     calendar_year=2026 + t, age_years=30 + t, beta=beta, pf=pf, cov=cov,
                     beta_lower=lower, beta_upper=upper, target=target,
                     remaining_life=remaining_life(t, beta, lower, upper, 4.2),
                     governing_mode="flexure", corrosion={}, n_samples=1000, n_calls=0,
                     seed=1, centres=[], warnings=[])


def _assessment(beta_after, period=1.0, member="B1", mode="system", cov=0.04):
    after = types.SimpleNamespace(beta=beta_after, pf=float(stats.norm.sf(beta_after)), cov=cov,
                                  method="subset_simulation")
    result = types.SimpleNamespace(member=member, mode=mode, after=after)
    return types.SimpleNamespace(reference_period_years=period, results=[result])


def test_curve_starts_at_the_members_beta_after_and_keeps_its_change():
    curve = _curve()
    change = curve.beta - curve.beta[0]
    notes = anchor_to_members([curve], _assessment(4.0))
    assert curve.beta[0] == 4.0                                # the same number, exactly
    np.testing.assert_allclose(curve.beta - curve.beta[0], change, atol=1e-12)
    np.testing.assert_allclose(curve.pf, stats.norm.sf(curve.beta), rtol=1e-12)
    assert curve.anchor["beta_members_after"] == 4.0
    assert curve.anchor["beta_curve_own"] == pytest.approx(stats.norm.isf(1e-5))
    # 4.0 is 0.26 below the curve's own 4.26: under the note threshold of 0.5
    assert notes == []
    # it starts below the target 4.2, so the member is already below
    assert curve.remaining_life.status == "already below target"


def test_remaining_life_follows_the_shifted_curve_closed_form():
    curve = _curve()
    anchor_to_members([curve], _assessment(4.6))
    # closed form: isf(1e-5 1.2^t) + (4.6 - isf(1e-5)) = 4.2
    #   ->  1e-5 1.2^t = sf(isf(1e-5) - 0.4)  ->  t = ln(sf(isf(1e-5) - 0.4) / 1e-5) / ln 1.2
    t_star = math.log(stats.norm.sf(stats.norm.isf(1e-5) - 0.4) / 1e-5) / math.log(1.2)
    # linear interpolation of beta between whole years: within one year of the exact crossing
    assert abs(curve.remaining_life.years - t_star) < 1.0
    # band at t = 0 from the members' CoV (delta method)
    se = 0.04 * stats.norm.sf(4.6) / stats.norm.pdf(4.6)
    assert curve.beta_upper[0] - 4.6 == pytest.approx(2 * se, rel=1e-6)


def test_far_tail_shift_stays_bounded_and_is_said():
    # pf(0) = 1e-20 far in the tail (beta 9.26), the members say beta 8.5: a ratio of pf
    # would multiply later years by ~2000; the shift moves them by 0.76 in beta only
    curve = _curve(p0=1e-20, growth=3.0, years=5)
    later = curve.beta[1:].copy()
    notes = anchor_to_members([curve], _assessment(8.5))
    np.testing.assert_allclose(curve.beta[1:], later + (8.5 - stats.norm.isf(1e-20)))
    assert notes and "differ by 0.76" in notes[0]


def test_other_reference_period_is_not_tied_and_is_said():
    curve = _curve()
    before = curve.beta.copy()
    notes = anchor_to_members([curve], _assessment(3.0, period=50.0))
    assert "different quantities" in notes[0]
    np.testing.assert_array_equal(curve.beta, before)


def test_zero_pf_is_not_tied():
    # members found no failed sample (beta = +inf): both show "> 8", nothing to tie, no note
    curve = _curve()
    assert anchor_to_members([curve], _assessment(math.inf)) == []
    assert not curve.anchor
    # the curve found none at t = 0 but the members did: not tied, and said
    curve = _curve(p0=0.0)
    notes = anchor_to_members([curve], _assessment(4.0))
    assert notes and "could not be tied" in notes[0]
    assert not curve.anchor
