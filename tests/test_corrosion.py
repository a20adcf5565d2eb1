"""Corrosion propagation: Faraday's law, uniform loss, Val & Melchers pitting, Vu & Stewart."""

import math

import numpy as np
import pytest
from scipy import integrate, stats

from assess.deterioration import corrosion
from assess.errors import InputError


def test_faraday_constant_is_about_11_6_micrometres_per_year():
    # Faraday's law: penetration rate = i M / (z F rho); i = 1 uA/cm2, M_Fe = 55.845 g/mol,
    # z = 2, F = 96485 C/mol, rho = 7.85 g/cm3, one year = 365.25 d
    rate_cm_per_s = 1e-6 * 55.845 / (2 * 96485.0 * 7.85)
    expected_mm_per_year = rate_cm_per_s * 10 * 365.25 * 86400
    assert corrosion.FARADAY_MM_PER_YEAR_PER_UA_CM2 == pytest.approx(expected_mm_per_year,
                                                                     rel=1e-5)
    # the rounded value quoted throughout the literature: 1 uA/cm2 = 11.6 um/yr (common practice)
    assert corrosion.FARADAY_MM_PER_YEAR_PER_UA_CM2 * 1000 == pytest.approx(11.6, abs=0.05)


def test_uniform_loss_and_time_since_initiation():
    t_p = corrosion.time_since_initiation([5.0, 30.0, 30.0], [10.0, 10.0, np.inf])
    np.testing.assert_array_equal(t_p, [0.0, 20.0, 0.0])
    p = corrosion.penetration_depth(2.0, t_p)
    np.testing.assert_allclose(p, 2.0 * corrosion.FARADAY_MM_PER_YEAR_PER_UA_CM2 * t_p)
    d = corrosion.uniform_residual_diameter(16.0, [0.0, 1.0, 9.0])
    np.testing.assert_array_equal(d, [16.0, 14.0, 0.0])


def vu_stewart_diameter_loss(wc, cover, t_p):
    # Vu & Stewart (2000), Struct. Saf. 22(4) (from memory):
    # D(t) = D0 - 1.0508 (1 - w/c)^-1.64 / cover * t_p^0.71, built with 0.0116 mm/yr per uA/cm2
    return 1.0508 * (1 - wc) ** -1.64 / cover * t_p**0.71


def test_vu_stewart_rate_and_penetration():
    i_1 = corrosion.vu_stewart_initial_rate(0.5, 50.0)
    assert i_1 == pytest.approx(37.8 * 0.5**-1.64 / 50.0)
    assert corrosion.vu_stewart_corrosion_rate(1.0, i_1) == pytest.approx(0.85 * i_1)
    t_p = 20.0
    integral, _ = integrate.quad(lambda t: corrosion.vu_stewart_corrosion_rate(t, i_1), 0.0, t_p)
    penetration = corrosion.vu_stewart_penetration(t_p, i_1)
    assert penetration == pytest.approx(corrosion.FARADAY_MM_PER_YEAR_PER_UA_CM2 * integral,
                                        rel=1e-6)
    # the published coefficient used 0.0116, this code 0.01163 (Faraday, computed): 0.3 % apart
    assert 2 * penetration == pytest.approx(vu_stewart_diameter_loss(0.5, 50.0, t_p), rel=5e-3)


def intersection_area_by_integration(p, d0):
    """Area of the bar circle (centre 0, radius d0/2) inside the pit circle (centre (0, d0/2),
    radius p), by quadrature over x of the overlapping vertical chords."""
    r = d0 / 2

    def overlap(x):
        if abs(x) >= min(p, r):
            return 0.0
        bar_half = math.sqrt(r * r - x * x)
        pit_half = math.sqrt(p * p - x * x)
        top = min(bar_half, r + pit_half)
        bottom = max(-bar_half, r - pit_half)
        return max(top - bottom, 0.0)

    lim = min(p, r)
    chord = p * math.sqrt(max(1 - (p / d0) ** 2, 0.0))  # the integrand has kinks at +-chord
    value, _ = integrate.quad(overlap, -lim, lim, points=[-chord, chord], limit=200,
                              epsabs=1e-12, epsrel=1e-11)
    return value


def lens_area(r1, r2, dist):
    # classical circle-circle intersection (lens) area, e.g. Weisstein, MathWorld "Circle-Circle
    # Intersection" (from memory)
    t1 = r1**2 * np.arccos((dist**2 + r1**2 - r2**2) / (2 * dist * r1))
    t2 = r2**2 * np.arccos((dist**2 + r2**2 - r1**2) / (2 * dist * r2))
    t3 = 0.5 * np.sqrt((-dist + r1 + r2) * (dist + r1 - r2) * (dist - r1 + r2) * (dist + r1 + r2))
    return t1 + t2 - t3


def test_pit_area_against_direct_numerical_integration():
    d0 = 16.0
    rng = np.random.default_rng(2)
    depths = np.concatenate([rng.uniform(0.01, d0, 24), [0.5, d0 / math.sqrt(2), d0 - 1e-6]])
    got = corrosion.pit_area(depths, d0)
    expected = np.array([intersection_area_by_integration(p, d0) for p in depths])
    np.testing.assert_allclose(got, expected, rtol=1e-7, atol=1e-9)
    np.testing.assert_allclose(got, lens_area(d0 / 2, depths, d0 / 2), rtol=1e-9)


def test_pit_area_limits_and_continuity():
    d0 = np.array([[10.0], [25.0]])
    full = math.pi * d0**2 / 4
    assert np.all(corrosion.pit_area(0.0, d0) == 0)
    np.testing.assert_allclose(corrosion.pit_area(np.array([1.0, 1.5, 3.0]) * d0, d0),
                               np.broadcast_to(full, (2, 3)))
    # a shallow pit is nearly a half disc of radius p (geometry)
    p = 1e-3
    assert corrosion.pit_area(p, 20.0) == pytest.approx(math.pi * p**2 / 2, rel=1e-3)
    # continuity where the branches meet, p = D0/sqrt(2), and at p = D0
    for edge in (d0 / math.sqrt(2), d0):
        below = corrosion.pit_area(edge * (1 - 1e-10), d0)
        above = corrosion.pit_area(edge * (1 + 1e-10), d0)
        np.testing.assert_allclose(below, above, rtol=1e-7)
    ps = np.linspace(0, 16, 321)
    assert np.all(np.diff(corrosion.pit_area(ps, 16.0)) > 0)
    assert np.all(corrosion.pit_area(np.linspace(16, 30, 5), 16.0) == math.pi * 64)


def test_residual_area_rules():
    d0, pen = 16.0, np.array([0.0, 0.2, 0.5, 1.0, 4.0, 9.0])
    a0 = math.pi * d0**2 / 4
    uniform = corrosion.residual_bar_area(d0, pen, rule="uniform")
    np.testing.assert_allclose(uniform, math.pi * np.maximum(d0 - 2 * pen, 0) ** 2 / 4)
    # R = 1: the pit adds nothing beyond uniform loss
    np.testing.assert_allclose(corrosion.residual_bar_area(d0, pen, 1.0), uniform)
    r = 6.0
    combined = corrosion.residual_bar_area(d0, pen, r)
    d_u = np.maximum(d0 - 2 * pen, 0)
    expected = np.maximum(math.pi * d_u**2 / 4 - corrosion.pit_area((r - 1) * pen, d_u), 0)
    np.testing.assert_allclose(combined, expected)
    assert np.all(combined <= uniform) and np.all(np.diff(combined) <= 0)
    pit_only = corrosion.residual_bar_area(d0, pen, r, rule="pit_only")
    np.testing.assert_allclose(pit_only, a0 - corrosion.pit_area(r * pen, d0))
    ratio = corrosion.residual_area_ratio(d0, pen, r)
    np.testing.assert_allclose(ratio, combined / a0)
    assert ratio[0] == 1.0 and ratio[-1] == 0.0
    with pytest.raises(InputError, match="rule"):
        corrosion.residual_bar_area(d0, pen, r, rule="mixed")
    with pytest.raises(InputError, match="pitting_factor"):
        corrosion.residual_bar_area(d0, pen, 0.5)


def test_pitting_factor_length_scaling_is_gumbel_max_stable():
    # the maximum of k independent Gumbel variables: F_kL0(r) = F_L0(r)^k (extreme-value theory)
    base = corrosion.pitting_factor_distribution(125.0)
    longer = corrosion.pitting_factor_distribution(4 * 125.0)
    r = np.linspace(3, 12, 10)
    np.testing.assert_allclose(longer.cdf(r), base.cdf(r) ** 4, rtol=1e-12)


def test_sampled_pitting_factor_is_reproducible_and_has_gumbel_mean():
    n = 200_000
    a = corrosion.sample_pitting_factor(n, seed=8)
    np.testing.assert_array_equal(a, corrosion.sample_pitting_factor(n, seed=8))
    assert a.min() >= 1.0
    dist = corrosion.pitting_factor_distribution()
    # Gumbel mean = location + Euler-Mascheroni constant x scale; 3 standard errors of the mean
    mean = 5.08 + np.euler_gamma / 1.02
    assert dist.mean() == pytest.approx(mean, rel=1e-12)
    assert abs(a.mean() - mean) <= 3 * dist.std() / math.sqrt(n)
    assert stats.kstest(a, dist.cdf).pvalue > 1e-3
