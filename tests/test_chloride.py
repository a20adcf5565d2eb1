"""Chloride ingress (fib Bulletin 34 error-function model) against outside references."""

import math

import numpy as np
import pytest
from scipy import integrate, optimize, special

from assess.deterioration import chloride
from assess.errors import InputError


def reference_content(x, t, c_s, d_ref, t_ref, a, c_0=0.0, dx=0.0, k_e=1.0):
    """Independent form: C0 + (Cs - C0) erfc((x - dx) / (2 sqrt(k_e D_ref (t_ref/t)^a t)))."""
    d_app = k_e * d_ref * (t_ref / t) ** a
    return c_0 + (c_s - c_0) * special.erfc((x - dx) / (2.0 * np.sqrt(d_app * t)))


def test_content_matches_scipy_erfc_with_broadcasting():
    rng = np.random.default_rng(1)
    x = rng.uniform(5, 80, size=(6, 1))
    t = rng.uniform(1, 60, size=(1, 7))
    c_s = rng.uniform(1, 5, size=(6, 7))
    d_ref, t_ref, a = 300.0, 0.0767, rng.uniform(0, 0.9, size=7)
    c_0, dx, k_e = 0.05, 3.0, 0.8
    got = chloride.chloride_content(x, t, c_s, d_ref, t_ref, a, c_0, dx, k_e)
    assert got.shape == (6, 7)
    # scipy.special.erfc is the reference implementation of the complementary error function
    np.testing.assert_allclose(got, reference_content(x, t, c_s, d_ref, t_ref, a, c_0, dx, k_e),
                               rtol=1e-12)


def test_surface_value_at_zero_depth_and_inside_convection_zone():
    got = chloride.chloride_content([0.0, 4.0, 8.0], 20.0, 2.5, 50.0, 1.0, 0.4, 0.1,
                                    [0.0, 4.0, 10.0])
    # erfc(0) = 1: the content at the (substitute) surface is C_S
    np.testing.assert_allclose(got, 2.5, rtol=0, atol=1e-15)


def test_zero_age_gives_initial_content_beyond_surface():
    got = chloride.chloride_content([0.0, 1.0, 30.0], 0.0, 3.0, 100.0, 1.0, 0.3,
                                    initial_chloride=0.1)
    np.testing.assert_allclose(got, [3.0, 0.1, 0.1])


def test_no_ageing_gives_constant_diffusion_solution():
    # Crank (1975) eq. (2.45): C = Cs erfc(x / (2 sqrt(D t))) for constant D; t_ref then irrelevant
    x, t, d = np.array([10.0, 25.0, 50.0]), 30.0, 20.0
    for t_ref in (0.0767, 1.0, 50.0):
        got = chloride.chloride_content(x, t, 1.5, d, t_ref, 0.0)
        np.testing.assert_allclose(got, 1.5 * special.erfc(x / (2 * math.sqrt(d * t))), rtol=1e-13)


@pytest.mark.parametrize("z, erf_value", [
    # Abramowitz & Stegun (1964), Handbook of Mathematical Functions, Table 7.1 (from memory)
    (0.5, 0.5204999), (1.0, 0.8427008), (1.5, 0.9661051), (2.0, 0.9953223)])
def test_tabulated_error_function(z, erf_value):
    # D = 1 mm2/yr, t = 1 yr: 2 sqrt(D t) = 2 mm, so depth 2 z mm gives C/Cs = 1 - erf(z)
    got = chloride.chloride_content(2.0 * z, 1.0, 1.0, 1.0, 1.0, 0.0)
    assert got == pytest.approx(1.0 - erf_value, abs=6e-8)


def test_instantaneous_convention_uses_integral_of_diffusion_coefficient():
    # Crank (1975) section 5.2: with D(t), replace D t by int_0^t D(tau) dtau
    d_ref, t_ref, a, t, x = 200.0, 0.0767, 0.4, 25.0, 40.0
    integral, _ = integrate.quad(lambda tau: d_ref * (t_ref / tau) ** a, 0.0, t, limit=200)
    expected = 2.0 * special.erfc(x / (2.0 * math.sqrt(integral)))
    got = chloride.chloride_content(x, t, 2.0, d_ref, t_ref, a,
                                    diffusion_convention="instantaneous")
    assert got == pytest.approx(expected, rel=1e-8)
    # the time-averaged coefficient is 1/(1-a) times the instantaneous one at the same age
    ratio = (chloride.apparent_diffusion_coefficient(t, d_ref, t_ref, a,
                                                     diffusion_convention="instantaneous")
             / (d_ref * (t_ref / t) ** a))
    assert ratio == pytest.approx(1.0 / (1.0 - a), rel=1e-12)


def test_apparent_coefficient_fitted_at_inspection_reproduces_profile():
    # a D_app fitted to a profile at t_insp, used as reference at t_insp, gives that profile back
    t_insp, d_fit, x = 18.0, 12.0, np.linspace(0, 60, 7)
    got = chloride.chloride_content(x, t_insp, 2.2, d_fit, t_insp, 0.5)
    np.testing.assert_allclose(got, 2.2 * special.erfc(x / (2 * np.sqrt(d_fit * t_insp))),
                               rtol=1e-13)


def test_unit_conversion_and_temperature_factor():
    # 1 m2/s = 1e6 mm2 per second; Julian year 365.25 d
    assert chloride.m2_per_s_to_mm2_per_year(1e-12) == pytest.approx(1e-12 * 1e6 * 365.25 * 86400)
    # fib 34 k_e = exp(b_e (1/T_ref - 1/T_real)); equals 1 at T_ref, < 1 when colder
    assert chloride.temperature_factor(4800.0, 293.0) == pytest.approx(1.0)
    k_e = chloride.temperature_factor(4800.0, 283.0)
    assert k_e == pytest.approx(math.exp(4800.0 * (1 / 293.0 - 1 / 283.0)))
    assert k_e < 1.0


def test_content_rises_with_age_and_falls_with_depth():
    ages = np.linspace(0.5, 80, 50)
    c = chloride.chloride_content(40.0, ages, 3.0, 300.0, 0.0767, 0.3, 0.05, 5.0)
    assert np.all(np.diff(c) > 0)
    c_depth = chloride.chloride_content(np.linspace(6, 90, 50), 30.0, 3.0, 300.0, 0.0767, 0.3)
    assert np.all(np.diff(c_depth) < 0)


@pytest.mark.parametrize("convention", ["average", "instantaneous"])
def test_initiation_time_round_trips(convention):
    rng = np.random.default_rng(7)
    n = 2000
    cover = rng.uniform(20, 70, n)
    c_s = rng.uniform(1.5, 5.0, n)
    c_crit = rng.uniform(0.3, 1.2, n)
    d_ref = rng.uniform(100, 600, n)
    a = rng.uniform(0.0, 0.8, n)
    c_0 = rng.uniform(0.0, 0.1, n)
    dx = rng.uniform(0.0, 15.0, n)
    k_e = rng.uniform(0.6, 1.2, n)
    t_i = chloride.initiation_time(cover, c_crit, c_s, d_ref, 0.0767, a, c_0, dx, k_e,
                                   diffusion_convention=convention)
    assert np.all(np.isfinite(t_i)) and np.all(t_i > 0)
    back = chloride.chloride_content(cover, t_i, c_s, d_ref, 0.0767, a, c_0, dx, k_e,
                                     diffusion_convention=convention)
    np.testing.assert_allclose(back, c_crit, rtol=1e-9)


def test_initiation_time_closed_form_and_root_finder():
    cover, c_crit, c_s, d_ref, t_ref, a = 45.0, 0.6, 3.0, 315.0, 0.0767, 0.35
    # closed form: t^(1-a) = (x / (2 erfcinv(Ccrit/Cs)))^2 / (D_ref t_ref^a)
    expected = ((cover / (2 * special.erfcinv(c_crit / c_s))) ** 2
                / (d_ref * t_ref**a)) ** (1 / (1 - a))
    got = chloride.initiation_time(cover, c_crit, c_s, d_ref, t_ref, a)
    assert got == pytest.approx(expected, rel=1e-12)
    # scipy's Brent root finder on the forward model gives the same age
    root = optimize.brentq(lambda t: reference_content(cover, t, c_s, d_ref, t_ref, a) - c_crit,
                           1e-6, 1e4, xtol=1e-12, rtol=1e-14)
    assert got == pytest.approx(root, rel=1e-9)


def test_initiation_time_limiting_cases():
    t = chloride.initiation_time(
        cover_mm=[40.0, 40.0, 5.0, 40.0, 40.0, 40.0, 5.0],
        critical_chloride=[3.0, 0.05, 0.6, 0.6, 0.6, 0.6, 3.5],
        surface_chloride=3.0,
        d_app_ref_mm2_per_year=[300.0, 300.0, 300.0, 0.0, 300.0, 1e5, 300.0],
        age_ref_years=0.0767,
        ageing_exponent=[0.3, 0.3, 0.3, 0.3, 1.0, 1.0, 0.3],
        initial_chloride=0.1, delta_x_mm=8.0)
    # C_crit >= C_S: never; C_crit <= C0: at once; cover inside convection zone: at once;
    # D = 0: never; a = 1 freezes the profile (never, or at once when already above C_crit);
    # cover inside the convection zone but C_crit above C_S: never
    np.testing.assert_array_equal(t, [np.inf, 0.0, 0.0, np.inf, np.inf, 0.0, np.inf])


def test_invalid_inputs_name_the_parameter():
    with pytest.raises(InputError, match="ageing_exponent"):
        chloride.chloride_content(30.0, 10.0, 2.0, 100.0, 1.0, [0.2, 1.3])
    with pytest.raises(InputError, match="ageing_exponent"):
        chloride.initiation_time(30.0, 0.6, 2.0, 100.0, 1.0, 1.0,
                                 diffusion_convention="instantaneous")
    with pytest.raises(InputError, match="d_app_ref_mm2_per_year"):
        chloride.chloride_content(30.0, 10.0, 2.0, -1.0, 1.0, 0.3)
    with pytest.raises(InputError, match="diffusion_convention"):
        chloride.chloride_content(30.0, 10.0, 2.0, 100.0, 1.0, 0.3, diffusion_convention="mean")
    with pytest.raises(InputError, match="annual_mean_temperature_k"):
        chloride.temperature_factor(4800.0, 0.0)
