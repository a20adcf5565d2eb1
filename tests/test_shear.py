"""One-way shear without shear reinforcement: EN 1992-1-1 6.2.2(1), mean-value form."""

import numpy as np
import pytest

from assess.errors import InputError
from assess.limit_states import SHEAR_COEFFICIENTS, shear_capacity


def test_hand_calculation_mean_coefficient():
    # b_w = 1000, d = 200, A_sl = 1000 mm2, f_c = 30 MPa (EN 1992-1-1 6.2.2, expression 6.2.a):
    # k = 1 + sqrt(200/200) = 2.0; rho_l = 1000/(1000*200) = 0.005
    # (100 * 0.005 * 30)^(1/3) = 15^(1/3) = 2.46621
    # v = 0.23 * 2.0 * 2.46621 = 1.13446 MPa; V = 1.13446 * 1000 * 200 = 226.89 kN
    assert shear_capacity(1000.0, 30.0, 1000.0, 200.0) == pytest.approx(226.89, abs=0.01)


def test_reproduces_en1992_design_value_with_gamma_c():
    # With C = 0.18/1.5 = 0.12, f_ck = 30 and v_min kept, the function returns the EN 1992-1-1
    # design value V_Rd,c: v = 0.12 * 2 * 2.46621 = 0.59189 MPa;
    # v_min = 0.035 * 2^1.5 * 30^0.5 = 0.035 * 2.82843 * 5.47723 = 0.54222 MPa < v -> 118.38 kN.
    assert shear_capacity(1000.0, 30.0, 1000.0, 200.0, coefficient=0.12,
                          keep_v_min=True) == pytest.approx(118.38, abs=0.01)


def test_v_min_governs_for_light_reinforcement():
    # A_sl = 200 mm2: rho = 0.001, (100*0.001*30)^(1/3) = 3^(1/3) = 1.44225;
    # v = 0.18 * 2 * 1.44225 = 0.51921 < v_min = 0.54222 MPa (EN 1992-1-1 6.3N) -> 108.44 kN.
    args = (200.0, 30.0, 1000.0, 200.0)
    assert shear_capacity(*args, coefficient="characteristic") == pytest.approx(103.84, abs=0.01)
    assert shear_capacity(*args, coefficient="characteristic",
                          keep_v_min=True) == pytest.approx(108.44, abs=0.01)


def test_caps_on_k_and_rho():
    # d = 150: k = 1 + sqrt(200/150) = 2.1547, capped to 2.0 (EN 1992-1-1 6.2.2(1)).
    # A_sl = 4500: rho = 4500/(1000*150) = 0.03, capped to 0.02.
    # capped: 0.23 * 2 * (100*0.02*30)^(1/3) = 0.23 * 2 * 3.91487 = 1.80084 MPa -> 270.13 kN
    # uncapped: 0.23 * 2.1547 * (90)^(1/3) = 0.23 * 2.1547 * 4.48140 = 2.22087 MPa -> 333.13 kN
    assert shear_capacity(4500.0, 30.0, 1000.0, 150.0) == pytest.approx(270.13, abs=0.01)
    uncapped = shear_capacity(4500.0, 30.0, 1000.0, 150.0, keep_caps=False)
    assert uncapped == pytest.approx(333.13, abs=0.01)


def test_axial_compression_adds_k1_sigma_cp():
    # + 0.15 * 2 MPa * 1000 * 200 = 60 kN (EN 1992-1-1 6.2.2(1), k1 = 0.15)
    base = shear_capacity(1000.0, 30.0, 1000.0, 200.0)
    with_axial = shear_capacity(1000.0, 30.0, 1000.0, 200.0, axial_stress_mpa=2.0)
    assert with_axial == pytest.approx(base + 60.0)


def test_mean_coefficient_is_the_documented_choice():
    # 0.18 as 5 % fractile of a lognormal ratio with CoV 0.15: 0.18 exp(1.645*0.15) = 0.2304
    assert SHEAR_COEFFICIENTS["mean"][0] == pytest.approx(0.18 * np.exp(1.645 * 0.15), abs=0.001)
    ratio = shear_capacity(1000.0, 30.0, 1000.0, 200.0) / shear_capacity(
        1000.0, 30.0, 1000.0, 200.0, coefficient="characteristic")
    assert ratio == pytest.approx(0.23 / 0.18)


def test_monotone_and_vectorised():
    fc = np.linspace(15, 60, 30)
    assert np.all(np.diff(shear_capacity(1000.0, fc, 1000.0, 200.0)) > 0)
    area = np.linspace(100, 3000, 30)
    assert np.all(np.diff(shear_capacity(area, 30.0, 1000.0, 200.0)) > 0)
    depth = np.linspace(120, 500, 30)
    assert np.all(np.diff(shear_capacity(1500.0, 30.0, 1000.0, depth)) > 0)
    n = 100_000
    rng = np.random.default_rng(3)
    v = shear_capacity(rng.normal(1000, 20, n), rng.lognormal(np.log(38), 0.12, n), 1000.0,
                       rng.normal(200, 10, n))
    assert v.shape == (n,) and np.all(v > 0)


def test_bad_coefficient():
    with pytest.raises(InputError, match="shear coefficient"):
        shear_capacity(1000.0, 30.0, 1000.0, 200.0, coefficient="median")
