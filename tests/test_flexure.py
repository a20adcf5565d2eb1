"""Bending resistance: EN 1992-1-1 stress block (3.1.7), mean-value form."""

import numpy as np
import pytest
from scipy import optimize

from assess.errors import InputError
from assess.limit_states import (
    balanced_x_over_d,
    flexural_capacity,
    flexural_capacity_details,
    neutral_axis_ratio,
)


def test_hand_calculation_singly_reinforced_beam():
    # Hand calculation with EN 1992-1-1:2004 3.1.7(3), lambda = 0.8, eta = 1, gamma = 1:
    # b = 300, d = 450 mm, 4 bars of 20 mm: A_s = 4 pi 20^2/4 = 1256.64 mm2, f_y = 500, f_c = 30.
    # F_s = 1256.64 * 500 = 628 318.5 N
    # x = F_s / (0.8 * 1.0 * 30 * 300) = 628 318.5 / 7200 = 87.266 mm
    # M = F_s (d - 0.4 x) = 628 318.5 * (450 - 34.906) = 628 318.5 * 415.094 = 260.81e6 Nmm
    area = 4 * np.pi * 20.0 ** 2 / 4
    assert flexural_capacity(area, 500.0, 30.0, 300.0, 450.0) == pytest.approx(260.81, abs=0.01)
    assert neutral_axis_ratio(area, 500.0, 30.0, 300.0, 450.0) == pytest.approx(87.266 / 450, abs=1e-4)


def test_slab_strip_hand_calculation():
    # 1000 mm strip, d = 200 mm, A_s = 1000 mm2, f_y = 500, f_c = 30:
    # x = 500 000 / (0.8 * 30 * 1000) = 20.833 mm; M = 500 000 * (200 - 8.333) = 95.833 kNm.
    assert flexural_capacity(1000.0, 500.0, 30.0, 1000.0, 200.0) == pytest.approx(95.833, abs=1e-3)


def test_matches_k_method_inverse_design_formula():
    # Design-direction form used in UK Eurocode 2 textbooks (Mosley, Bungey & Hulse,
    # "Reinforced Concrete Design to Eurocode 2", ch. 4, from memory), written for
    # eta f_c instead of 0.567 f_ck: K = M/(b d^2 f_c), z = d (0.5 + sqrt(0.25 - K/(2 eta))),
    # A_s,req = M / (f_y z). It must give back the A_s we started from.
    rng = np.random.default_rng(1)
    area = rng.uniform(300, 2500, 50)
    fy, fc, b, d = 550.0, rng.uniform(20, 50, 50), 1000.0, rng.uniform(150, 300, 50)
    moment = flexural_capacity(area, fy, fc, b, d) * 1e6
    k = moment / (b * d ** 2 * fc)
    z = d * (0.5 + np.sqrt(0.25 - k / 2.0))
    np.testing.assert_allclose(moment / (fy * z), area, rtol=1e-10)


def test_independent_equilibrium_solution_including_over_reinforced():
    # Independent re-derivation: solve the force equilibrium C(x) = T(x) numerically with
    # steel stress min(E_s eps_cu (d - x)/x, f_y) (plane sections, EN 1992-1-1 3.1.7 and
    # 3.2.7) and take moments about the steel; compare with the closed forms.
    b, d, fc, fy, es, ecu = 300.0, 450.0, 30.0, 500.0, 200_000.0, 0.0035
    for area in (800.0, 2500.0, 4000.0, 6000.0):
        def residual(x):
            stress = min(es * ecu * (d - x) / x, fy)
            return 0.8 * fc * b * x - area * stress
        x = optimize.brentq(residual, 1e-6, d)
        reference = 0.8 * fc * b * x * (d - 0.4 * x) / 1e6
        got = flexural_capacity(area, fy, fc, b, d, over_reinforced="strain_compatibility")
        assert got == pytest.approx(reference, rel=1e-9)


def test_over_reinforced_is_capped_at_balanced_capacity_and_flagged():
    b, d, fc, fy = 300.0, 450.0, 30.0, 500.0
    xi = balanced_x_over_d(fy)
    # x_bal/d = 0.0035 / (0.0035 + 500/200000) = 0.5833 (EN 1992-1-1 Table 3.1, 3.2.7(4))
    assert xi == pytest.approx(0.0035 / 0.006)
    balanced_area = 0.8 * fc * b * xi * d / fy
    m_bal = 0.8 * fc * b * xi * d * (d - 0.4 * xi * d) / 1e6
    details = flexural_capacity_details(np.array([0.5, 1.0, 1.5, 3.0]) * balanced_area, fy, fc, b, d)
    np.testing.assert_allclose(details.moment_knm[1:], m_bal, rtol=1e-12)
    assert details.moment_knm[0] < m_bal
    np.testing.assert_array_equal(details.over_reinforced, [False, False, True, True])
    # x/d > 0.45 warning (EN 1992-1-1 5.6.3, from memory): 0.5 * 0.583 = 0.29 passes.
    np.testing.assert_array_equal(details.ductility_warning, [False, True, True, True])
    # Strain compatibility gives more than the cap (the cap is on the safe side).
    more = flexural_capacity(3.0 * balanced_area, fy, fc, b, d, over_reinforced="strain_compatibility")
    assert more > m_bal


def test_monotone_in_steel_area_and_strength():
    area = np.linspace(200, 3000, 40)
    m = flexural_capacity(area, 500.0, 30.0, 1000.0, 220.0)
    assert np.all(np.diff(m) > 0)
    fc = np.linspace(15, 50, 40)
    assert np.all(np.diff(flexural_capacity(1500.0, 500.0, fc, 1000.0, 220.0)) > 0)
    assert flexural_capacity(0.0, 500.0, 30.0, 1000.0, 200.0) == 0.0


def test_vectorised_over_samples():
    rng = np.random.default_rng(7)
    n = 100_000
    m = flexural_capacity(rng.normal(1000, 20, n), rng.normal(560, 30, n),
                          rng.lognormal(np.log(38), 0.12, n), 1000.0, rng.normal(200, 10, n))
    assert m.shape == (n,)
    assert np.all(np.isfinite(m))
    # broadcasting (n, 1) x (3,) -> (n, 3)
    assert flexural_capacity(np.full((n, 1), 1000.0), 500.0, np.array([25., 30., 35.]),
                             1000.0, 200.0).shape == (n, 3)


def test_bad_input_names_the_quantity():
    with pytest.raises(InputError, match="concrete strength must be > 0"):
        flexural_capacity(1000.0, 500.0, np.array([30.0, -1.0]), 1000.0, 200.0)
    with pytest.raises(InputError, match="over_reinforced"):
        flexural_capacity(1000.0, 500.0, 30.0, 1000.0, 200.0, over_reinforced="ignore")
