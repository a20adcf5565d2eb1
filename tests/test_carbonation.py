"""Carbonation: square-root-of-time law and the fib Bulletin 34 form."""

import math

import numpy as np
import pytest

from assess.deterioration import carbonation
from assess.errors import InputError


def test_square_root_law_and_its_inverses():
    # Tuutti (1982): x_c = k sqrt(t); 3 mm/sqrt(yr) for 25 yr gives 15 mm
    ages = np.array([[1.0], [25.0], [64.0]])
    k = np.array([2.0, 3.0, 5.0])
    depth = carbonation.carbonation_depth(ages, k)
    np.testing.assert_allclose(depth, k * np.sqrt(ages))
    assert depth[1, 1] == pytest.approx(15.0)
    np.testing.assert_allclose(carbonation.carbonation_rate_from_depth(depth, ages),
                               np.broadcast_to(k, depth.shape))
    t_i = carbonation.initiation_time(depth, k)
    np.testing.assert_allclose(t_i, np.broadcast_to(ages, depth.shape))


def test_initiation_time_edge_cases():
    t = carbonation.initiation_time([30.0, 0.0, 30.0], [0.0, 4.0, 6.0])
    np.testing.assert_array_equal(t, [np.inf, 0.0, 25.0])


def test_fib34_rate_matches_hand_evaluation_in_si_units():
    # fib 34 Annex B (from memory): x_c = sqrt(2 k_e k_c (k_t R^-1 + eps_t) C_S) sqrt(t) W(t),
    # SI units (m, s); here evaluated by hand for RH = 0.75, t_c = 3 d
    rh, t_c, r_inv = 0.75, 3.0, 5.0e-11
    k_e = ((1 - rh**5.0) / (1 - 0.65**5.0)) ** 2.5
    k_c = (t_c / 7.0) ** -0.567
    coefficient = 2 * k_e * k_c * (1.25 * r_inv + 1.0e-11) * 8.2e-4  # m2/s
    age = 30.0
    depth_m = math.sqrt(coefficient * age * 365.25 * 86400)
    rate = carbonation.fib34_carbonation_rate(rh, t_c, r_inv)
    assert rate * math.sqrt(age) == pytest.approx(depth_m * 1000, rel=1e-12)
    # RH_ref and 7 days of curing make k_e = k_c = 1; drier air carbonates faster
    plain = carbonation.fib34_carbonation_rate(0.65, 7.0, r_inv)
    assert plain == pytest.approx(math.sqrt(2 * (1.25 * r_inv + 1.0e-11) * 8.2e-4
                                            * 365.25 * 86400) * 1000, rel=1e-12)
    assert carbonation.fib34_carbonation_rate(0.55, 7.0, r_inv) > plain


def test_weather_function_and_its_inverse():
    k, t0 = 4.0, 28 / 365.25
    ages = np.array([5.0, 20.0, 80.0])
    np.testing.assert_allclose(carbonation.fib34_carbonation_depth(ages, k),
                               carbonation.carbonation_depth(ages, k))
    w = 0.12
    depth = carbonation.fib34_carbonation_depth(ages, k, w)
    np.testing.assert_allclose(depth, k * np.sqrt(ages) * (t0 / ages) ** w)
    np.testing.assert_allclose(carbonation.fib34_initiation_time(depth, k, w), ages, rtol=1e-12)


def test_invalid_inputs():
    with pytest.raises(InputError, match="rate_mm_per_sqrt_year"):
        carbonation.carbonation_depth(10.0, -1.0)
    with pytest.raises(InputError, match="relative_humidity"):
        carbonation.fib34_carbonation_rate(1.2, 7.0, 5e-11)
    with pytest.raises(InputError, match="weather_exponent"):
        carbonation.fib34_carbonation_depth(10.0, 3.0, 0.5)
