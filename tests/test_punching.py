"""Punching at flat-slab columns: EN 1992-1-1 6.4.2-6.4.4, mean-value form."""

import numpy as np
import pytest

from assess.errors import InputError
from assess.limit_states import (
    PUNCHING_BETA,
    control_perimeter,
    punching_capacity,
    reinforcement_ratio,
)


def test_control_perimeters():
    # EN 1992-1-1 6.4.2 Figure 6.13: u1 = 2(c1 + c2) + 2 pi (2d) for a rectangle;
    # 400 x 400, d = 220: 1600 + 4 pi 220 = 1600 + 2764.60 = 4364.60 mm
    u1 = control_perimeter(220.0, column_c1_mm=400.0, column_c2_mm=400.0)
    assert u1 == pytest.approx(4364.60, abs=0.01)
    # circular D = 400, d = 200: pi (400 + 800) = 3769.91 mm
    assert control_perimeter(200.0, column_diameter_mm=400.0) == pytest.approx(3769.91, abs=0.01)
    # Figure 6.15 (from memory), flush edges: edge 2*400 + 300 + 2 pi 200 = 2356.64 mm;
    # corner 400 + 300 + pi 200 = 1328.32 mm
    assert control_perimeter(200.0, column_c1_mm=400.0, column_c2_mm=300.0,
                             position="edge") == pytest.approx(2356.64, abs=0.01)
    assert control_perimeter(200.0, column_c1_mm=400.0, column_c2_mm=300.0,
                             position="corner") == pytest.approx(1328.32, abs=0.01)


def test_control_perimeter_matches_geometry():
    # Independent check: perimeter of the set of points at distance 2d from a rectangle,
    # by polygonising the rounded rectangle (straight sides + 4 quarter circles).
    c1, c2, d = 450.0, 300.0, 210.0
    angles = np.linspace(0, np.pi / 2, 20001)
    pts = []
    for (cx, cy), start in (((c1 / 2, c2 / 2), 0.0), ((-c1 / 2, c2 / 2), np.pi / 2),
                            ((-c1 / 2, -c2 / 2), np.pi), ((c1 / 2, -c2 / 2), 1.5 * np.pi)):
        a = start + angles
        pts.append(np.column_stack([cx + 2 * d * np.cos(a), cy + 2 * d * np.sin(a)]))
    poly = np.vstack(pts + [pts[0][:1]])
    length = np.sum(np.hypot(*np.diff(poly, axis=0).T))
    assert control_perimeter(d, column_c1_mm=c1, column_c2_mm=c2) == pytest.approx(length, rel=1e-6)


def test_hand_calculation_interior_column():
    # EN 1992-1-1 6.4.4(1) with C = 0.23, gamma = 1; interior column 400 x 400 (beta = 1.15,
    # Figure 6.21N), d = 220 mm, rho_ly = 0.010, rho_lz = 0.008, f_c = 30 MPa:
    # rho_l = sqrt(0.010 * 0.008) = 0.0089443; k = 1 + sqrt(200/220) = 1.95346
    # (100 * 0.0089443 * 30)^(1/3) = 26.833^(1/3) = 2.99380
    # v = 0.23 * 1.95346 * 2.99380 = 1.34512 MPa
    # V = 1.34512 * 4364.60 * 220 / 1.15 / 1000 = 1123.1 kN
    v = punching_capacity(0.010, 0.008, 30.0, 220.0, column_c1_mm=400.0, column_c2_mm=400.0)
    assert v == pytest.approx(1123.1, abs=0.2)


def test_edge_and_corner_beta():
    assert PUNCHING_BETA == {"interior": 1.15, "edge": 1.4, "corner": 1.5}
    args = dict(column_c1_mm=400.0, column_c2_mm=300.0)
    interior = punching_capacity(0.01, 0.01, 30.0, 200.0, **args)
    edge = punching_capacity(0.01, 0.01, 30.0, 200.0, position="edge", **args)
    # same v_R; ratio = (u_edge/1.4)/(u_int/1.15) with u_int = 1400 + 800 pi = 3913.27 mm
    assert edge / interior == pytest.approx((2356.64 / 1.4) / (3913.27 / 1.15), rel=1e-5)
    own_beta = punching_capacity(0.01, 0.01, 30.0, 200.0, beta=1.0, **args)
    assert own_beta / interior == pytest.approx(1.15)


def test_caps_and_v_min():
    # rho 0.025 in both directions is capped at 0.02 (EN 1992-1-1 6.4.4(1))
    a = punching_capacity(0.025, 0.025, 30.0, 200.0, column_diameter_mm=400.0)
    b = punching_capacity(0.02, 0.02, 30.0, 200.0, column_diameter_mm=400.0)
    assert a == pytest.approx(b)
    low = dict(column_diameter_mm=400.0, coefficient="characteristic")
    # rho = 0.001: v = 0.18*2*3^(1/3) = 0.51921 < v_min = 0.54222 MPa
    ratio = punching_capacity(0.001, 0.001, 30.0, 200.0, keep_v_min=True, **low) / \
        punching_capacity(0.001, 0.001, 30.0, 200.0, **low)
    assert ratio == pytest.approx(0.54222 / 0.51921, rel=1e-4)


def test_reinforcement_ratio_and_monotonicity():
    # 12 mm bars at 150 mm: 754.0 mm2/m; d = 200 -> rho = 0.003770
    assert reinforcement_ratio(754.0, 200.0) == pytest.approx(0.00377)
    rho = np.linspace(0.002, 0.02, 30)
    v = punching_capacity(rho, rho, 30.0, 200.0, column_c1_mm=400.0, column_c2_mm=400.0)
    assert np.all(np.diff(v) > 0)


def test_vectorised_over_samples():
    n = 100_000
    rng = np.random.default_rng(11)
    v = punching_capacity(rng.normal(0.008, 0.0005, n), rng.normal(0.007, 0.0005, n),
                          rng.lognormal(np.log(38), 0.12, n), rng.normal(210, 8, n),
                          column_c1_mm=400.0, column_c2_mm=400.0)
    assert v.shape == (n,) and np.all(v > 0)


def test_bad_geometry():
    with pytest.raises(InputError, match="circular columns"):
        control_perimeter(200.0, column_diameter_mm=400.0, position="edge")
    with pytest.raises(InputError, match="column sides"):
        punching_capacity(0.01, 0.01, 30.0, 200.0)
    with pytest.raises(InputError, match="position"):
        control_perimeter(200.0, column_c1_mm=400.0, column_c2_mm=400.0, position="middle")
