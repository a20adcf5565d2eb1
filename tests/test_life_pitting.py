"""Pitting option of the remaining-life projection.

Reference: Val & Melchers (1997), J. Struct. Eng. 123(12): a hemispherical pit
removes area from a bar in addition to uniform loss, so the residual area with
a pit is never larger than with uniform corrosion alone; with pitting factor
R = 1 the deepest pit is the uniform front itself (no extra loss).
"""

import numpy as np

from assess.site.projection import area_factor


def test_pit_never_leaves_more_steel_than_uniform_corrosion():
    from assess.deterioration.corrosion import residual_area_ratio

    rng = np.random.default_rng(3)
    penetration = rng.uniform(0.0, 3.0, 5000)  # [mm] uniform penetration
    pitting = rng.uniform(1.0, 10.0, 5000)  # [-]
    uniform = residual_area_ratio(16.0, penetration, rule="uniform")
    pitted = residual_area_ratio(16.0, penetration, pitting, rule="uniform_then_pit")
    assert np.all(pitted <= uniform + 1e-12)
    assert np.all(pitted >= 0.0)
    # the factor of the projection is exactly 1 at the assessment date
    t_i, rate = rng.uniform(5.0, 40.0, 100), rng.uniform(0.1, 3.0, 100)
    np.testing.assert_array_equal(area_factor(t_i, rate, 50.0, 50.0, 16.0, pitting[:100]), 1.0)


def test_unit_pitting_factor_equals_uniform_corrosion():
    t_i = np.array([10.0, 20.0, 30.0])
    rate = np.array([0.5, 1.0, 2.0])
    for age in (55.0, 70.0):
        np.testing.assert_allclose(area_factor(t_i, rate, age, 50.0, 12.0, np.ones(3)),
                                   area_factor(t_i, rate, age, 50.0, 12.0), rtol=1e-12)


def test_deeper_pits_lose_more_area_over_the_same_years():
    t_i, rate = np.full(3, 10.0), np.full(3, 1.0)
    factors = area_factor(t_i, rate, 70.0, 50.0, 16.0, np.array([1.0, 4.0, 8.0]))
    assert factors[0] > factors[1] > factors[2]
