"""Member mechanics: continuous members (hogging), vehicle point loads, stress block, mode targets.

Outside references, named at each check:
- Hicks, *Civil Engineering Formulas* (McGraw-Hill), Table 2.1 "Uniformly loaded continuous
  beams over equal spans" (read through the search tool): support moments 1/8, 1/10, 3/28 and
  2/28, 4/38 and 3/38 wl^2; largest span moments 0.0703; 0.080, 0.025; 0.0772, 0.0364;
  0.0779, 0.0332, 0.0461 wl^2; shears beside the supports 5/8; 4/10, 6/10, 5/10 wl;
- simply supported beam under a point load P at a: M(x) = P b x / L (x <= a), b = L - a,
  and the left reaction P b / L (textbook beam formulas, e.g. Roark's Formulas for Stress
  and Strain, simply supported beam with a concentrated load; from memory);
- two equal spans with P at the centre of one span: support moment 3PL/32, outer reaction of
  the loaded span 13P/32 (beam tables, from memory);
- EN 1992-1-1:2004 3.1.7(3): lambda = 0.8 - (fck - 50)/400, eta = 1.0 - (fck - 50)/200 for
  50 < fck <= 90 MPa; Table 3.1 epsilon_cu3 3.5, 3.1, 2.9, 2.7, 2.6, 2.6 per mille for
  fck <= 50, 55, 60, 70, 80, 90 MPa (from memory);
- scipy: quadrature of influence lines and surfaces, the exact distribution of the maximum of
  n normal values Phi(x)^n;
- hand calculations written out beside the checks.
"""

import dataclasses
import math
import textwrap
import warnings

import numpy as np
import pytest
from scipy import integrate, stats

from assess.errors import InputError
from assess.limit_states.flexure import (
    flexural_capacity,
    stress_block_factors,
    ultimate_concrete_strain,
)
from assess.limit_states.influence import (
    moment_influence,
    shear_influence,
    support_moments,
    uniform_moment,
    uniform_shear,
    uniform_support_moments,
)
from assess.limit_states.point_loads import (
    column_effect,
    column_reaction_influence,
    effect_sums,
    line_effect,
)
from assess.priors.actions import normal_extremes_constants, vehicle_weight_maximum_prior
from assess.site.knowledge import weak_normal_gamma
from assess.targets import mode_target, system_target, target_beta
from inspection_io.errors import InputError as FileInputError
from inspection_io.site import load_site

# --------------------------------------------------------------------------- influence lines


@pytest.mark.parametrize("n, supports", [
    (2, [1 / 8]),
    (3, [1 / 10, 1 / 10]),
    (4, [3 / 28, 2 / 28, 3 / 28]),
    (5, [4 / 38, 3 / 38, 3 / 38, 4 / 38]),
])
def test_uniform_support_moments_match_hicks_table_2_1(n, supports):
    # Hicks, Civil Engineering Formulas, Table 2.1: moment over each support, x w l^2
    m = uniform_support_moments(n, 1.0)
    np.testing.assert_allclose(-m[1:-1], supports, rtol=1e-12)
    assert m[0] == m[-1] == 0.0


@pytest.mark.parametrize("n, spans", [
    (2, [(0, 0.375, 0.0703)]),
    (3, [(0, 0.400, 0.080), (1, 0.500, 0.025)]),
    (4, [(0, 0.393, 0.0772), (1, 0.536, 0.0364)]),
    (5, [(0, 0.394, 0.0779), (1, 0.526, 0.0332), (2, 0.500, 0.0461)]),
])
def test_uniform_span_moments_match_hicks_table_2_1(n, spans):
    # Hicks Table 2.1: largest moment in each span [w l^2] at the tabulated distance from
    # the span's left support [l]; the table rounds to 3-4 digits.
    for k, x, expected in spans:
        assert uniform_moment(n, 1.0, (k, x)) == pytest.approx(expected, abs=6e-5)
        # it is the largest moment of the span (to the table's precision of x)
        xs = np.linspace(0.0, 1.0, 401)
        largest = max(uniform_moment(n, 1.0, (k, xi)) for xi in xs)
        assert largest == pytest.approx(expected, abs=6e-5)


def test_uniform_shears_match_hicks_table_2_1():
    # Hicks Table 2.1, shear on each side of the supports [w l]: 2 spans 3/8 | 5/8;
    # 3 spans 4/10 | 6/10 and 5/10
    assert uniform_shear(2, 1.0, (0, 0.0)) == pytest.approx(3 / 8)
    assert uniform_shear(2, 1.0, (0, 1.0), near="right") == pytest.approx(5 / 8)
    assert uniform_shear(3, 1.0, (0, 0.0)) == pytest.approx(4 / 10)
    assert uniform_shear(3, 1.0, (0, 1.0), near="right") == pytest.approx(6 / 10)
    assert uniform_shear(3, 1.0, (1, 0.0)) == pytest.approx(5 / 10)


def test_point_load_on_simply_supported_beam_by_hand():
    # M(x) = P b x / L for x <= a, M(x) = P a (L - x)/L for x >= a; R_left = P b/L
    # (textbook simply supported beam, concentrated load at any point). L = 6 m, P = 1 kN.
    length, a = 6.0, 2.0
    b = length - a
    assert moment_influence(1, length, (0, 2.0), [a])[0] == pytest.approx(a * b / length)  # 4/3
    assert moment_influence(1, length, (0, 3.0), [a])[0] == pytest.approx(a * (length - 3) / length)
    assert moment_influence(1, length, (0, 1.0), [a])[0] == pytest.approx(b * 1.0 / length)
    assert shear_influence(1, length, (0, 0.0), [a])[0] == pytest.approx(b / length)
    assert shear_influence(1, length, (0, length), [a], near="right")[0] == pytest.approx(a / length)


def test_point_load_on_two_equal_spans_by_hand():
    # Two equal spans, P at the centre of span 1: M_B = -3PL/32; outer reaction 13P/32
    # (beam tables, from memory). L = 4 m.
    length = 4.0
    m = support_moments(2, length, [2.0])
    assert m[0, 1] == pytest.approx(-3 * length / 32)
    assert shear_influence(2, length, (0, 0.0), [2.0])[0] == pytest.approx(13 / 32)
    # Maxwell: a load on span 2 gives the same support moment by symmetry
    assert support_moments(2, length, [6.0])[0, 1] == pytest.approx(-3 * length / 32)


@pytest.mark.parametrize("n", [1, 2, 3, 4])
def test_influence_lines_integrate_to_uniform_coefficients(n):
    # The effect of w = 1 on every span is the integral of the influence line (scipy quad,
    # span by span, so that the kinks sit at the ends of the intervals).
    length = 5.0
    sections = [(0, 0.4 * length), (n - 1, 0.5 * length)]
    for section in sections:
        total = sum(integrate.quad(lambda x: moment_influence(n, length, section, [x])[0],
                                   k * length, (k + 1) * length, points=[
                                       section[0] * length + section[1]])[0] for k in range(n))
        assert total == pytest.approx(uniform_moment(n, length, section), rel=1e-8)
    total = sum(integrate.quad(lambda x: shear_influence(n, length, (0, 0.0), [x])[0],
                               k * length, (k + 1) * length)[0] for k in range(n))
    assert total == pytest.approx(uniform_shear(n, length, (0, 0.0)), rel=1e-8)


def test_bad_sections_are_refused():
    with pytest.raises(InputError):
        uniform_moment(3, 5.0, (3, 1.0))
    with pytest.raises(InputError):
        moment_influence(2, 5.0, (0, 6.0), [1.0])
    with pytest.raises(InputError):
        support_moments(2, 5.0, [10.5])


# --------------------------------------------------------------------------- point loads


def test_effect_sums_of_a_slab_strip_by_hand():
    # Hand calculation: 1 m strip of a 5.0 m simply supported slab, bays 2.4 m along the span
    # (centres at 0.1, 2.5, 4.9 m) and 5.0 m across, so the strip carries m = 1/5 of each
    # vehicle. Midspan moment of P = 1 at a: a (L - x)/L with x = L/2 for a <= x:
    # 0.1 x 2.5/5 = 0.05, 2.5 x 2.5/5 = 1.25, 0.05 m.
    # s1 = 0.2 (0.05 + 1.25 + 0.05) = 0.27 m; s2 = 0.2^2 (0.05^2 2 + 1.25^2) = 0.0627 m2
    c = moment_influence(1, 5.0, (0, 2.5), [0.1, 2.5, 4.9])
    np.testing.assert_allclose(c, [0.05, 1.25, 0.05])
    s1, s2 = effect_sums(c, 0.2)
    assert s1 == pytest.approx(0.27)
    assert s2 == pytest.approx(0.0627)
    # beam of tributary width 7.5 m: m = 1.5 vehicles side by side, variance m sigma^2
    s1, s2 = effect_sums([1.0, -0.5], 1.5)
    assert (s1, s2) == pytest.approx((1.5, 1.5))  # the bay of negative influence stays empty


def test_layout_search_is_at_least_as_adverse_as_hand_layouts():
    length, cov, a_n = 5.0, 0.25, 3.0

    def influence(p):
        return moment_influence(1, length, (0, 2.5), p)

    found = line_effect(influence, length, 1.0, vehicle_cov=cov, extreme_factor=a_n)
    # hand layouts: (i) 2.4 m pitch from 0.1 m, share 1/5; (ii) one vehicle at midspan,
    # 5.0 m pitch, share 1/2.4: s1 = 1.25/2.4, s2 = 1.25^2/2.4^2
    hand = [effect_sums(influence(np.array([0.1, 2.5, 4.9])), 0.2),
            (1.25 / 2.4, (1.25 / 2.4) ** 2)]
    score = found.s1 + a_n * cov * math.sqrt(found.s2)
    for s1, s2 in hand:
        assert score >= s1 + a_n * cov * math.sqrt(s2) - 1e-12
    assert found.s1 == pytest.approx(1.25 / 2.4)  # (ii) is the worse one here
    assert found.spread == pytest.approx(1.0)  # one vehicle: CoV of the effect = CoV of W


@pytest.mark.parametrize("position, share", [("interior", 1.0), ("edge", 0.5),
                                             ("corner", 0.25)])
def test_column_reaction_surface_integrates_to_tributary_area(position, share):
    # The reaction influence surface integrates to the tributary area of TRIBUTARY_SHARE
    # (scipy dblquad); a load on the column goes to it whole.
    lx, ly = 7.2, 6.0
    total = integrate.dblquad(
        lambda y, x: float(column_reaction_influence(x, y, lx, ly, position)),
        -lx, lx, -ly, ly, epsabs=1e-6)[0]
    assert total == pytest.approx(share * lx * ly, rel=1e-5)
    assert float(column_reaction_influence(0.0, 0.0, lx, ly, position)) == 1.0


def test_column_effect_tends_to_the_smeared_load_for_many_vehicles():
    # s1 of a column is about (tributary area)/(bay area) vehicles (the uniform load of
    # one vehicle per 12 m2) and at least that for the adverse layout; the spread is far
    # below one vehicle's (many vehicles share the reaction).
    effect = column_effect(12.0, 12.0, "interior")
    assert effect.s1 >= 144.0 / 12.0 * 0.97
    assert effect.s1 <= 144.0 / 12.0 * 1.15
    assert 0.1 < effect.spread < 0.3


def test_vehicle_maximum_prior_against_exact_maximum_of_normals():
    # The maximum of n normal states N(mu, (k sigma)^2) has cdf Phi((x - mu)/(k sigma))^n
    # (exact, scipy); the Gumbel approximation by the normal-extremes constants must give
    # its median within 3 % of the standard deviation k sigma x (the asymptotic error of
    # the constants for n ~ 1000, Gumbel 1958; from memory: O(1/ln n)).
    n = 3.2 * 312.0  # commercial car park, 1 year
    spread = 0.5
    prior = vehicle_weight_maximum_prior(spread, 1.0, use="commercial")
    mu, sd = 15.0, 0.25 * 15.0 * spread
    exact_median = mu + sd * stats.norm.ppf(0.5 ** (1.0 / n))
    scale = prior.std * math.sqrt(6.0) / math.pi
    location = prior.mean - 0.5772156649 * scale
    gumbel_median = location - scale * math.log(math.log(2.0))
    assert abs(gumbel_median - exact_median) < 0.03 * sd * stats.norm.ppf(0.5 ** (1.0 / n))
    a_n, b_n = normal_extremes_constants(n)
    assert location == pytest.approx(mu + a_n * sd)
    with pytest.raises(InputError):
        vehicle_weight_maximum_prior(1.5)


# --------------------------------------------------------------------------- stress block


def test_stress_block_factors_en1992_3_1_7():
    # EN 1992-1-1 3.1.7(3) expressions (3.19)-(3.22), hand values
    fck = np.array([30.0, 50.0, 60.0, 70.0, 90.0])
    lam, eta = stress_block_factors(fck)
    np.testing.assert_allclose(lam, [0.8, 0.8, 0.775, 0.75, 0.70])
    np.testing.assert_allclose(eta, [1.0, 1.0, 0.95, 0.90, 0.80])


def test_ultimate_strain_en1992_table_3_1():
    # EN 1992-1-1 Table 3.1, epsilon_cu3 [per mille] rounded to 0.1 as tabulated (from memory)
    fck = np.array([40.0, 50.0, 55.0, 60.0, 70.0, 80.0, 90.0])
    table = [3.5, 3.5, 3.1, 2.9, 2.7, 2.6, 2.6]
    np.testing.assert_allclose(np.round(ultimate_concrete_strain(fck) * 1000, 1), table)


def test_high_strength_capacity_by_hand():
    # fc = 70 MPa: lambda = 0.75, eta = 0.90 (3.1.7(3)). A_s = 1500 mm2, f_y = 500 MPa,
    # b = 1000 mm, d = 200 mm: x = 1500 500 / (0.75 0.9 70 1000) = 15.873 mm,
    # M = 1500 500 (200 - 0.75 x / 2) = 145.536 kNm (hand calculation)
    x = 1500 * 500 / (0.75 * 0.9 * 70 * 1000)
    expected = 1500 * 500 * (200 - 0.75 * x / 2) / 1e6
    assert float(flexural_capacity(1500.0, 500.0, 70.0, 1000.0, 200.0)) == pytest.approx(expected)
    # per sample: the factors follow each strength (vectorised)
    got = flexural_capacity(1500.0, 500.0, np.array([40.0, 70.0]), 1000.0, 200.0)
    x40 = 1500 * 500 / (0.8 * 40 * 1000)
    assert got[0] == pytest.approx(1500 * 500 * (200 - 0.4 * x40) / 1e6)
    assert got[1] == pytest.approx(expected)


# --------------------------------------------------------------------------- mode targets


def test_mode_targets_brittle_stricter():
    site_target = target_beta("CC2", 1.0, "normal")  # JCSS annual 4.2
    assert mode_target("flexure", site_target).beta == 4.2
    assert mode_target("hogging", site_target).beta == 4.2
    # brittle: pf / 10 (NKB Report 36 failure-type step, from memory): Phi(-4.2)/10 -> scipy
    expected = stats.norm.isf(stats.norm.sf(4.2) / 10.0)
    for mode in ("shear", "punching"):
        got = mode_target(mode, site_target)
        assert got.beta == pytest.approx(expected)
        assert got.beta == pytest.approx(4.69, abs=0.01)
        assert "brittle" in got.note and got.reference_period_years == 1.0
    assert system_target(["flexure", "shear"], site_target).beta == pytest.approx(expected)
    assert system_target(["flexure", "hogging"], site_target).beta == 4.2
    with pytest.raises(InputError):
        mode_target("torsion", site_target)


# --------------------------------------------------------------------------- invented site

SITE = textwrap.dedent("""\
    # Invented site for the member-mechanics tests.
    [site]
    name = "Invented deck"
    year_built = 1985
    assessment_date = 2026-11-30

    [target]
    consequence_class = "CC2"
    reference_period = 1
    cost_of_safety = "normal"

    [materials]
    concrete_class = "C35"
    steel_grade = "B500"

    [loads]
    superimposed_dead = 1.2
    imposed_category = "F"
    imposed_characteristic = 2.5
    concrete_unit_weight = 25.0

    [zones.Z1]
    description = "Upper deck"
    exposure = "exposed deck"

    [members.S1]
    zone = "Z1"
    kind = "one-way slab"
    span = 5.0
    depth = 200
    cover = 30
    bar_diameter = 12
    bar_spacing = 200
    continuous = true
    span_count = 3
    span_position = "end"
    top_bar_diameter = 12
    top_bar_spacing = 150
    top_cover = 40

    [members.S2]
    zone = "Z1"
    kind = "one-way slab"
    span = 5.0
    depth = 220
    cover = 30
    bar_diameter = 12
    bar_spacing = 150

    [members.P1]
    zone = "Z1"
    kind = "flat-slab column connection"
    depth = 250
    cover = 30
    bar_diameter = 16
    bar_spacing = 150
    tension_face = "top"
    column_size = [400, 400]
    position = "interior"
    span_x = 7.2
    span_y = 6.0
    """)


@pytest.fixture(scope="module")
def invented(tmp_path_factory):
    from assess.site.knowledge import design_knowledge

    folder = tmp_path_factory.mktemp("mechanics")
    (folder / "site.toml").write_text(SITE)
    site = load_site(folder)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        knowledge = design_knowledge(site)
    return site, knowledge


def _form_betas(member_model, modes=None):
    """FORM betas (one design point each: deterministic, no scouting samples)."""
    from assess.reliability.form import form

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return {m: form(member_model.problem([m])).beta for m in modes or member_model.modes}


def test_site_file_reads_continuity(invented):
    site, _ = invented
    s1 = site.members["S1"]
    assert (s1.continuous, s1.span_count, s1.span_position) == (True, 3, "end")
    assert s1.top_tension_steel_area == pytest.approx(math.pi * 36 * 1000 / 150)
    assert s1.top_bar_cover == 40
    assert site.members["S2"].continuous is False
    assert site.members["S2"].top_tension_steel_area is None


@pytest.mark.parametrize("change, key", [
    (("top_bar_diameter = 12\n", ""), "members.S1.top_bar_diameter"),
    (('span_position = "end"', 'span_position = "interior"\nspan_count = 2'), None),
    (("continuous = true", "continuous = false"), "members.S1.span_count"),
    (("top_bar_spacing = 150\n", ""), "members.S1.top_bar_spacing"),
    (("span_count = 3", "span_count = 1"), "members.S1.span_count"),
])
def test_site_file_refuses_bad_continuity(tmp_path, change, key):
    text = SITE.replace(*change)
    if key is None:  # interior span of a 2-span run
        text = SITE.replace("span_count = 3\n", "").replace('span_position = "end"',
                                                           'span_position = "interior"\n'
                                                           "span_count = 2")
        key = "members.S1.span_position"
    (tmp_path / "site.toml").write_text(text)
    with pytest.raises(FileInputError) as info:
        load_site(tmp_path)
    assert key in str(info.value)


def test_continuous_member_without_top_bars_message(tmp_path):
    (tmp_path / "site.toml").write_text(SITE.replace("top_bar_diameter = 12\n", "")
                                        .replace("top_bar_spacing = 150\n", "")
                                        .replace("top_cover = 40\n", ""))
    with pytest.raises(FileInputError, match="top bars"):
        load_site(tmp_path)


def test_continuous_coefficients_of_the_member(invented):
    from assess.site.member_models import one_way_effects

    site, _ = invented
    length = 5.0
    effects = one_way_effects(site.members["S1"])
    # Hicks Table 2.1, three equal spans, end span: 0.080 wl^2 at 0.4 l, support 1/10 wl^2,
    # shear beside the first interior support 6/10 wl, top bars in tension there
    assert effects["flexure"].permanent == pytest.approx(0.080 * length**2)
    assert effects["hogging"].permanent == pytest.approx(0.100 * length**2)
    assert effects["shear"].permanent == pytest.approx(0.6 * length)
    assert effects["hogging"].top_bars and effects["shear"].top_bars
    simple = one_way_effects(site.members["S2"])
    assert simple["flexure"].permanent == pytest.approx(5.0**2 / 8)
    assert simple["shear"].permanent == pytest.approx(5.0 / 2)
    assert "hogging" not in simple and not simple["shear"].top_bars


def test_hogging_with_deck_top_loss_is_below_sagging(invented):
    from assess.site.member_models import build_member_model

    site, knowledge = invented
    zone = knowledge["Z1"]
    # invented top-face section loss of the zone: residual area ratio about 0.65
    loss = weak_normal_gamma(0.65, 0.08, 4.0, 20.0, source="invented top-face loss (test)")
    local = {(None, "top"): {"area_ratio": loss}}
    plain = build_member_model(site, site.members["S1"], zone, reference_period_years=1.0)
    damaged = build_member_model(site, site.members["S1"], zone, reference_period_years=1.0,
                                 local=local)
    assert list(damaged.modes) == ["flexure", "hogging", "shear"]
    assert damaged.faces == {"flexure": "bottom", "hogging": "top", "shear": "top"}
    assert damaged.sources["area_ratio_top"].startswith("invented top-face loss")
    betas_plain, betas = _form_betas(plain), _form_betas(damaged)
    # deterministic FORM: the bottom layer is untouched by the top-face population
    assert betas["flexure"] == pytest.approx(betas_plain["flexure"], abs=1e-6)
    # without loss this member's support is the stronger section (more top steel) ...
    assert betas_plain["hogging"] > betas_plain["flexure"]
    # ... with the deck-top loss it governs
    assert betas["hogging"] < betas_plain["hogging"] - 0.3
    assert betas["hogging"] < betas["flexure"] - 0.3
    assert betas["shear"] < betas_plain["shear"]  # top bars are its tension steel
    # a member-and-face population wins over the face population
    member_local = {**local, ("S1", "top"): {"area_ratio": zone["area_ratio"]}}
    again = build_member_model(site, site.members["S1"], zone, reference_period_years=1.0,
                               local=member_local)
    assert _form_betas(again, ["hogging"])["hogging"] == pytest.approx(betas_plain["hogging"], abs=1e-6)


def test_top_cover_shift_lowers_hogging_capacity(invented):
    # No top-face cover population: the top bars keep their own nominal cover (40 mm, 10 mm
    # more than the bottom's); d_top = 200 - 40 - 6 = 154 mm instead of 164 mm at the median.
    from assess.site.member_models import build_member_model, nominal_check

    site, knowledge = invented
    member = site.members["S1"]
    deeper = dataclasses.replace(member, top_cover=30.0)
    shallow = build_member_model(site, member, knowledge["Z1"], reference_period_years=1.0)
    deep = build_member_model(site, deeper, knowledge["Z1"], reference_period_years=1.0)
    assert nominal_check(shallow)["hogging"] < nominal_check(deep)["hogging"]
    assert any("shifted by +10 mm" in n for n in shallow.notes)


def test_point_load_effect_in_the_member_model_by_hand(invented):
    # Simply supported slab S2: at the median point the flexure limit state is
    # theta_R M_R - theta_E (w L^2/8 + s1 Q); check the vehicle part by hand: s1 of the most
    # adverse layout is one vehicle at midspan shared over the 2.4 m bay width,
    # s1 = (2.5 x 2.5 / 5) / 2.4 = 0.5208 m (see test_layout_search_...).
    from assess.site.member_models import build_member_model

    site, knowledge = invented
    model = build_member_model(site, site.members["S2"], knowledge["Z1"],
                               reference_period_years=1.0)
    u = np.zeros((1, model.model.dim))
    x = model.model.u_to_x(u)
    x_no_vehicle = dict(x)
    x_no_vehicle["imposed"] = np.zeros(1)
    drop = model.modes["flexure"](x_no_vehicle)[0] - model.modes["flexure"](x)[0]
    assert drop == pytest.approx(x["theta_E_moment"][0] * 1.25 / 2.4 * x["imposed"][0])


def test_mode_targets_in_assess_members(invented):
    from assess.site.before_after import assess_members

    site, knowledge = invented

    class Update:  # design knowledge only, no test data
        before = after = knowledge
        before_local = after_local = {}
        data_hash = ""

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = assess_members(site, Update(), method="form", importance=False,
                                members=["S1", "P1"], options={"design_points": 1})
    targets = {(r.member, r.mode): r for r in result.results}
    brittle = stats.norm.isf(stats.norm.sf(4.2) / 10.0)
    assert targets[("S1", "flexure")].target == 4.2
    assert targets[("S1", "hogging")].target == 4.2
    assert targets[("S1", "shear")].target == pytest.approx(brittle)
    assert targets[("S1", "system")].target == pytest.approx(brittle)
    assert targets[("P1", "punching")].target == pytest.approx(brittle)
    row = targets[("P1", "punching")].to_dict()
    assert "brittle" in row["target_basis"] and row["target"] == pytest.approx(brittle)
