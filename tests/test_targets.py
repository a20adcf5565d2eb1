"""Target reliability indices and reference-period conversion."""

import numpy as np
import pytest
from scipy import stats

from assess.errors import InputError
from assess.targets import Target, convert_reference_period, target_beta, verdict


@pytest.mark.parametrize("cost, cc, beta", [
    # JCSS PMC Part 1 section 7 / ISO 2394 Annex G cost-optimal annual targets
    ("high", "CC1", 3.1), ("high", "CC2", 3.3), ("high", "CC3", 3.7),
    ("normal", "CC1", 3.7), ("normal", "CC2", 4.2), ("normal", "CC3", 4.4),
    ("low", "CC1", 4.2), ("low", "CC2", 4.4), ("low", "CC3", 4.7),
])
def test_jcss_annual_table(cost, cc, beta):
    target = target_beta(cc, 1.0, cost)
    assert target.beta == beta
    assert target.reference_period_years == 1.0
    assert "JCSS" in target.source


@pytest.mark.parametrize("cc, beta_1, beta_50", [
    # EN 1990:2002 Annex B Table B2 (from memory)
    ("CC1", 4.2, 3.3), ("CC2", 4.7, 3.8), ("CC3", 5.2, 4.3),
])
def test_en1990_table(cc, beta_1, beta_50):
    assert target_beta(cc, 1, basis="en1990").beta == beta_1
    assert target_beta(cc, 50, basis="en1990").beta == beta_50


def test_iso13822_table_without_conversion():
    # ISO 13822:2010 Table F.1 (from memory): low 3.1, medium 3.8, high 4.3, very low 2.3
    for cc, beta in (("CC1", 3.1), ("CC2", 3.8), ("CC3", 4.3), ("very_low", 2.3)):
        t = target_beta(cc, 15, basis="iso13822")
        assert t.beta == beta and t.reference_period_years == 15


def test_reference_period_conversion_en1990_pair():
    # EN 1990 Annex C: beta_1 = 4.7 <-> beta_50 = 3.8 (computed: 3.83)
    assert convert_reference_period(4.7, 1, 50) == pytest.approx(3.83, abs=0.005)
    assert convert_reference_period(3.8263, 50, 1) == pytest.approx(4.7, abs=1e-3)
    # independent: p_50 = 1 - (1 - p_1)^50 with scipy
    p1 = stats.norm.sf(4.2)
    assert convert_reference_period(4.2, 1, 50) == pytest.approx(
        stats.norm.isf(1 - (1 - p1) ** 50), abs=1e-6)
    assert target_beta("CC2", 50).beta == pytest.approx(convert_reference_period(4.2, 1, 50))
    assert "Annex C" in target_beta("CC2", 50).note


def test_conversion_is_tail_safe_and_vectorised():
    # For beta_1 = 9, pf_1 = 1.1e-19: 1 - cdf underflows in double precision; pf_50 = 50 pf_1
    # to first order (the second-order term is ~1e-35 relative).
    expected = stats.norm.isf(50 * stats.norm.sf(9.0))
    assert convert_reference_period(9.0, 1, 50) == pytest.approx(expected, abs=1e-9)
    out = convert_reference_period(np.array([3.0, 4.0, 5.0]), 1, 50)
    assert out.shape == (3,) and np.all(np.diff(out) > 0)


def test_verdict():
    target = target_beta("CC2")
    assert verdict(4.3, target) == "meets target"
    assert verdict(4.2, target) == "meets target"
    assert verdict(4.19, target) == "below target"
    assert verdict(3.0, 3.1) == "below target"
    with pytest.raises(InputError, match="convert"):
        verdict(4.3, target, reference_period_years=50)


def test_target_pf_and_bad_input():
    assert Target(4.2, 1.0, "x").pf == pytest.approx(1.3346e-5, rel=1e-3)  # Phi(-4.2), scipy
    with pytest.raises(InputError, match="consequence class"):
        target_beta("CC4")
    with pytest.raises(InputError, match="basis"):
        target_beta("CC2", basis="nen")
    with pytest.raises(InputError, match="cost_of_safety"):
        target_beta("CC2", 1, "medium")
