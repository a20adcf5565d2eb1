"""Corrosion state where the damage is: present loss per face, one spatial quantile, pitting.

Outside references:
- uniform loss by Faraday's law, D(t) = D0 - 2 x 0.0116 i_corr (t - t_i) [mm], A/A0 =
  (D/D0)^2 (Andrade, Alonso & Molina 1993; Vu & Stewart 2000 with a constant rate; from
  memory), with 0.0116 mm/yr per uA/cm2 recomputed here from Faraday's constant (CODATA),
  the molar mass of iron (IUPAC) and a steel density of 7.85 g/cm3;
- spatial quantile exp(s Phi^-1(q)) with scipy.stats.norm.ppf;
- conjugate normal-gamma update of a mean (JCSS PMC Part 3.0 Annex A, from memory):
  m'' = (n' m' + n x_bar) / (n' + n);
- pitting lowers the residual area (Val & Melchers 1997 pit geometry, from memory).
"""

import math

import numpy as np
import pytest
from scipy import stats

from assess.site.corrosion import CorrosionInputs, age_at, zone_corrosion_inputs
from assess.site.corrosion_state import (
    FaceCorrosion,
    area_path,
    local_area_ratio,
    present_factor_draws,
    present_state,
    reading_face,
    site_corrosion_state,
)

SEED = 20261202
FARADAY_MM_PER_YEAR = 55.845 / (2 * 96485.33212) * 1e-6 * 365.25 * 86400 / 7.85 * 10.0


def deterministic_inputs(zone, t_i, rate, scatter=0.7, q=0.1):
    """CorrosionInputs with (almost) no spread: t_i [yr], i_corr [uA/cm2]."""
    return CorrosionInputs(
        zone=zone,
        initiation_log_mean=math.log(t_i),
        initiation_log_sd=1e-9,
        rate_log_mean=math.log(rate),
        rate_log_sd=1e-9,
        log_correlation=0.0,
        origin="prior",
        source="invented for the test",
        spatial_log_sd=scatter,
        state_quantile=q,
    )


def closed_form_area(age, t_i_local, rate, d0):
    """(D/D0)^2 with D = D0 - 2 x 0.0116 i_corr max(age - t_i, 0) [-]."""
    d = d0 - 2.0 * FARADAY_MM_PER_YEAR * rate * max(age - t_i_local, 0.0)
    return max(d / d0, 0.0) ** 2


@pytest.fixture(scope="module")
def site(demo_site):
    from inspection_io.site import load_site

    return load_site(demo_site)


def test_without_breakouts_today_area_is_the_loss_since_initiation(site):
    member = site.members["S4-01"]
    age_now = age_at(site, site.site.assessment_date)
    inputs = deterministic_inputs(member.zone, t_i=8.0, rate=1.0)
    factor = math.exp(0.7 * stats.norm.ppf(0.1))  # spatial quantile of the break-outs
    assert inputs.local_factor == pytest.approx(factor, rel=1e-12)
    state = FaceCorrosion(member.zone, "bottom", inputs, measured=False, breakouts=0, pitting=None)
    draws = present_factor_draws(site, member, state, n=500, seed=1)
    expected = closed_form_area(age_now, 8.0 * factor, 1.0, float(member.bar_diameter))
    assert age_now - 8.0 > 20.0  # initiation decades ago
    assert expected < 1.0
    np.testing.assert_allclose(draws["factor"], expected, rtol=1e-6)


def test_measured_face_keeps_the_measured_uniform_loss(site):
    member = site.members["C3-C4"]
    inputs = deterministic_inputs(member.zone, t_i=8.0, rate=1.0)
    state = FaceCorrosion(member.zone, "top", inputs, measured=True, breakouts=4, pitting=None)
    np.testing.assert_array_equal(present_factor_draws(site, member, state, n=50)["factor"], 1.0)


def test_present_and_future_use_the_same_spatial_quantile():
    # r(t) = r0 A_q(t) / A_q(t0): times the present A_q(t0) it is the closed-form loss at the
    # critical section's initiation time t_i exp(s Phi^-1(q)), at every age, t0 included
    t_i, rate, d0, age_now = 12.0, 0.8, 16.0, 45.0
    factor = math.exp(0.7 * stats.norm.ppf(0.1))
    now, _ = local_area_ratio(np.array([t_i]), np.array([rate]), age_now, d0, factor)
    for age in (age_now, age_now + 10.0, age_now + 40.0):
        path = area_path(np.array([t_i]), np.array([rate]), age, age_now, d0, factor)
        assert path[0] * now[0] == pytest.approx(
            closed_form_area(age, t_i * factor, rate, d0), rel=1e-9
        )
    assert area_path(np.array([t_i]), np.array([rate]), age_now, age_now, d0, factor)[0] == 1.0


def test_faceless_readings_act_on_the_deck_top_of_exposed_decks(site):
    assert reading_face(site, "L3", {}, "S3-02") == "top"  # exposed deck: salts from above
    assert reading_face(site, "L3", {"face": "bottom"}, "S3-02") == "bottom"
    assert reading_face(site, "L2", {}, "C2-B3") == site.members["C2-B3"].tension_face
    assert reading_face(site, "L2", {}, None) == "bottom"
    assert reading_face(site, "L3", {}, "S3-02", faceless_face="side") == "side"


def test_demo_state_per_face(site):
    inputs = zone_corrosion_inputs(site, seed=SEED, prior_samples=4000)
    state = site_corrosion_state(site, inputs, seed=SEED)
    top, bottom = state[("L3", "top")], state[("L3", "bottom")]
    assert top.measured and top.breakouts > 0 and top.pitting is not None
    assert len(top.pit_factors) > 0 and top.pitting.n_measured == len(top.pit_factors)
    # the soffit of an exposed deck: no break-out, no salts from above, no pits measured
    assert not bottom.measured and bottom.pitting is None
    assert bottom.inputs.source.startswith("face not reached")
    # a sheltered deck whose break-outs (top bars over supports) measured pits: pitting on
    l2_top = state[("L2", "top")]
    assert len(l2_top.pit_factors) > 0 and l2_top.pitting is not None


def test_present_state_lowers_the_area_of_unmeasured_faces(demo_update):
    site, update = demo_update
    inputs = {z: deterministic_inputs(z, t_i=5.0, rate=1.5) for z in site.zones}
    present, state = present_state(site, update, inputs, pitting=False, seed=SEED)
    # L1 is an internal zone: every face shares the zone's corrosion inputs; its
    # break-outs are on the bottom bars (S1-03), none on the top face
    assert state[("L1", "bottom")].measured and not state[("L1", "top")].measured
    population = present.after_local["L1"][(None, "top")]["area_ratio"]
    member = site.members["S1-03"]  # first member of L1: the bar diameter of the entry
    age_now = age_at(site, site.site.assessment_date)
    factor = math.exp(0.7 * stats.norm.ppf(0.1))
    expected = closed_form_area(age_now, 5.0 * factor, 1.5, float(member.bar_diameter))
    # manufacturing tolerance (mean 1, CoV 0.02) times the closed-form loss: the fitted
    # population's centre within a few per cent of the design scatter
    assert population.center == pytest.approx(expected, abs=0.01)
    assert population.center < 0.99
    # measured faces without pitting keep the measured population
    # (cover populations per face may be there: only the area ratio is checked)
    assert "area_ratio" not in present.after_local["L1"].get((None, "bottom"), {})
    assert present.after_local is not update.after_local


def test_corrosion_loss_prior_leaves_the_mean_to_the_breakouts():
    from assess.site.knowledge import corrosion_loss_prior

    measured = np.array([0.825, 0.81, 0.855, 0.868])  # invented break-out ratios [-]
    post = corrosion_loss_prior().update(measured)
    n_prior = 0.1
    expected = (n_prior * 1.0 + measured.size * measured.mean()) / (n_prior + measured.size)
    assert post.m == pytest.approx(expected, rel=1e-9)
    assert post.m - measured.mean() < 0.005  # the old prior (n' = 0.5) pulled 0.018 here


def test_pitting_lowers_beta_where_pits_are_measured(demo_update):
    from assess.site.projection import project_member

    site, update = demo_update
    inputs = zone_corrosion_inputs(site, seed=SEED, prior_samples=4000)
    curves = {}
    for pitting in (False, True):
        result = project_member(
            site,
            "C3-C4",
            update,
            corrosion=inputs,
            horizon_years=20,
            step_years=10,
            n_samples=3000,
            seed=SEED,
            pitting=pitting,
        )
        curves[pitting] = result[-1]
    assert curves[True].section_loss["measured_pits"] > 0
    for j in (0, -1):
        with_pits, without = curves[True], curves[False]
        se = math.hypot(with_pits.cov[j] * with_pits.pf[j], without.cov[j] * without.pf[j])
        assert with_pits.pf[j] > without.pf[j] + 3.0 * se, (j, with_pits.beta, without.beta)


def test_pitting_note_matches_the_half_disk_pit_of_a_thick_bar(site):
    # A pit of depth p << D in a bar of diameter D removes a half disk, pi p^2 / 2
    # (elementary geometry; the small-pit limit of Val & Melchers 1997). Uniform loss
    # 1 - (1 - 2P/D)^2. A nearly deterministic R = 5 (Gumbel scale 0.01).
    from types import SimpleNamespace

    from scipy import special

    from assess.deterioration.pitting import GumbelPitting
    from assess.site.corrosion_state import pitting_note

    shape, scale, r = 1e6, 0.01, 5.0
    pits = GumbelPitting(scale, shape, math.exp(float(special.digamma(shape)) - r / scale))
    member = SimpleNamespace(bar_diameter=400.0, span=0.375, depth=300.0)  # L = 125 mm
    age_now = age_at(site, site.site.assessment_date)
    rate = 2.0 / (FARADAY_MM_PER_YEAR * (age_now - 1.0))  # P = 2 mm today at t_i,q = 1 yr
    inputs = deterministic_inputs("L3", t_i=1.0, rate=rate, scatter=1e-6, q=0.5)
    state = FaceCorrosion("L3", "top", inputs, measured=False, breakouts=0, pitting=pits)
    note = pitting_note(site, member, state, 10.0, n=200, seed=3)
    d = 400.0
    p_unif = 2.0
    d_u = d - 2 * p_unif
    assert note["uniform_loss_now"] == pytest.approx(1 - (d_u / d) ** 2, rel=1e-6)
    half_disk = 0.5 * math.pi * ((r - 1.0) * p_unif) ** 2 / (0.25 * math.pi * d**2)
    assert note["pit_loss_now"] == pytest.approx(half_disk, rel=0.05)  # O(p/D) = 2 %
    assert note["pitting_governs_now"] is False  # 0.08 % against 2 %
