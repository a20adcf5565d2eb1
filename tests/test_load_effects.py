"""Load effects of simply supported members and flat-slab column reactions."""

import numpy as np
import pytest
from scipy import integrate

from assess.errors import InputError
from assess.limit_states import (
    column_reaction,
    line_load,
    load_effect_model_uncertainty,
    one_way_load_effects,
    self_weight_area_load,
    simply_supported_moment,
    simply_supported_shear,
)


def test_statics_of_simply_supported_member():
    # Closed-form statics: w = 10 kN/m, L = 6 m -> M = 10*36/8 = 45 kNm, V = 10*6/2 = 30 kN;
    # at a = 0.2 m from the support V = 10*(3 - 0.2) = 28 kN.
    assert simply_supported_moment(10.0, 6.0) == pytest.approx(45.0)
    assert simply_supported_shear(10.0, 6.0) == pytest.approx(30.0)
    assert simply_supported_shear(10.0, 6.0, distance_from_support_m=0.2) == pytest.approx(28.0)


def test_midspan_moment_equals_integral_of_shear():
    # Independent: M(L/2) = integral of V(x) from 0 to L/2 (equilibrium of a beam element).
    w, span = 7.3, 8.4
    value, _ = integrate.quad(lambda a: simply_supported_shear(w, span, distance_from_support_m=a),
                              0.0, span / 2)
    assert simply_supported_moment(w, span) == pytest.approx(value, rel=1e-10)


def test_self_weight_and_line_load():
    # 250 mm deck at 25 kN/m3 (EN 1991-1-1 Annex A, from memory): 6.25 kN/m2; 2.5 m width -> 15.625 kN/m
    g = self_weight_area_load(250.0)
    assert g == pytest.approx(6.25)
    assert line_load(g, 2.5) == pytest.approx(15.625)


def test_one_way_effects_with_model_uncertainty():
    # strip 1 m, L = 5 m, g = 6.25 + 1.5, q = 2.5 -> w = 10.25 kN/m
    # M = 10.25*25/8 = 32.03 kNm, x theta 1.1 = 35.23; V = 25.625 kN x 0.9 = 23.06
    eff = one_way_load_effects(5.0, 1.0, 7.75, 2.5, theta_moment=1.1, theta_shear=0.9)
    assert eff.moment_knm == pytest.approx(10.25 * 25 / 8 * 1.1)
    assert eff.shear_kn == pytest.approx(10.25 * 2.5 * 0.9)


def test_column_reactions_by_position():
    # Tributary areas (common practice): 10 kN/m2 on a 7.5 x 7.5 m grid:
    # interior 562.5 kN, edge 281.25 kN, corner 140.625 kN.
    assert column_reaction(10.0, 7.5, 7.5) == pytest.approx(562.5)
    assert column_reaction(10.0, 7.5, 7.5, position="edge") == pytest.approx(281.25)
    assert column_reaction(10.0, 7.5, 7.5, position="corner") == pytest.approx(140.625)
    assert column_reaction(10.0, 7.5, 7.5, continuity_factor=1.15) == pytest.approx(646.875)


def test_jcss_load_effect_model_uncertainties():
    # JCSS PMC Part 3.9 table: frames moments LN 1.0/0.10, shear 1.0/0.10; plates moments 0.20,
    # forces 0.10.
    cases = {("beam", "moment"): 0.10, ("one_way_slab", "shear"): 0.10,
             ("flat_slab", "moment"): 0.20, ("flat_slab", "reaction"): 0.10}
    for (member, effect), cov in cases.items():
        prior = load_effect_model_uncertainty(member, effect)
        assert prior.kind == "lognormal" and prior.mean == 1.0
        assert prior.cov == pytest.approx(cov)
    with pytest.raises(InputError, match="no load-effect"):
        load_effect_model_uncertainty("flat_slab", "torsion")


def test_vectorised_over_samples():
    n = 100_000
    rng = np.random.default_rng(5)
    w = rng.normal(10.0, 1.0, n)
    assert simply_supported_moment(w, 6.0).shape == (n,)
    assert column_reaction(w, rng.normal(7.5, 0.02, n), 7.5).shape == (n,)
    eff = one_way_load_effects(6.0, 1.0, rng.normal(7.0, 0.5, n), rng.gumbel(1.5, 0.4, n),
                               theta_moment=rng.lognormal(0.0, 0.1, n))
    assert eff.moment_knm.shape == eff.shear_kn.shape == (n,)


def test_bad_input():
    with pytest.raises(InputError, match="span must be > 0"):
        simply_supported_moment(10.0, 0.0)
    with pytest.raises(InputError, match="half the span"):
        simply_supported_shear(10.0, 6.0, distance_from_support_m=3.5)
    with pytest.raises(InputError, match="column position"):
        column_reaction(10.0, 7.5, 7.5, position="inner")
