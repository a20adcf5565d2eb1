"""Cover per bar layer (member and face): priors, layout, and the cell model against the
conjugate normal-gamma posterior."""

import math
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import special, stats

from assess.model import ProbabilisticModel
from assess.site.cover_layers import add_cover_model, cover_after_local, cover_layout
from assess.site.knowledge import COVER_N, COVER_NU, cover_layer_priors, design_knowledge
from assess.site.locations import knowledge_at
from assess.updating.to_model import add_uncertain_quantity
from inspection_io.site import load_site

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / "site.toml"


@pytest.fixture(scope="module")
def site():
    return load_site(DEMO_SITE)


def lognormal_of(population):
    """Lognormal with the mean and sd of the Student-t predictive of ln c (scipy)."""
    t = population.predictive()
    return stats.lognorm(s=t.std(), scale=math.exp(t.mean()))


def test_layer_priors_are_the_jcss_deviations_of_that_face(site):
    # JCSS PMC Part 3.10 (read): slab bottom deviation mean 0..10 mm (midpoint +5), sd 5..10
    # (7.5); slab top +10 mm, sd 10 mm. S2-05: one-way slab, cover 25 mm on its bottom bars,
    # continuous with top bars at top_cover 30 mm (the demo's site file).
    assert (site.members["S2-05"].cover, site.members["S2-05"].top_cover) == (25, 30)
    priors = cover_layer_priors(site, "L2", extra=[("S2-05", "top")])
    bottom = lognormal_of(priors[("S2-05", "bottom")])
    assert bottom.mean() == pytest.approx(25.0 + 5.0, rel=1e-12)
    assert bottom.std() == pytest.approx(7.5, rel=1e-12)
    top = lognormal_of(priors[("S2-05", "top")])
    assert top.mean() == pytest.approx(30.0 + 10.0, rel=1e-12)
    assert top.std() == pytest.approx(10.0, rel=1e-12)
    # C2-B3: flat-slab connection, main bars on top, cover 30 mm -> slab top row
    assert lognormal_of(priors[("C2-B3", "top")]).mean() == pytest.approx(40.0, rel=1e-12)
    # (None, top): mixture of the two top layers: mean of the means, variance = mean
    # variance + variance of the means (law of total variance)
    pooled = lognormal_of(priors[(None, "top")])
    assert pooled.mean() == pytest.approx(40.0, rel=1e-12)
    # both top layers have mean 40 mm: the variance of the means is zero
    assert pooled.std() == pytest.approx(math.sqrt(100.0 + 0.0**2), rel=1e-12)
    for ng in priors.values():
        assert (ng.n, ng.nu) == pytest.approx((COVER_N, COVER_NU))
        # lognormal: no cover at or below zero (JCSS PMC 3.10 advises against the normal)
        assert lognormal_of(ng).cdf(0.0) == 0.0


def test_cover_variable_in_the_member_model_is_lognormal(site):
    # the reliability variable of a population on ln c is the lognormal given (mu, sigma):
    # the 1e-6 quantile of the cover stays positive where a normal with the same mean and
    # sd (30, 7.5 mm) would be at 30 - 4.75 * 7.5 < 0
    population = cover_layer_priors(site, "L2")[("S2-05", "bottom")]
    model = ProbabilisticModel()
    add_uncertain_quantity(model, "cover", population, kind="lognormal")
    rng = np.random.default_rng(1)
    u = rng.standard_normal((200_000, model.dim))
    u[:, model.random_names.index("cover")] = stats.norm.ppf(1e-6)
    x = model.u_to_x(u)
    assert np.all(x["cover"] > 0)
    assert 30.0 + stats.norm.ppf(1e-6) * 7.5 < 0


def frame(rows):
    return pd.DataFrame(rows, columns=["zone", "member", "face", "value"])


def test_layout_keeps_faces_apart_and_fills_missing_faces(site):
    data = frame(
        [
            ("L2", "S2-05", "top", 30.0),
            ("L2", "S2-05", "top", 34.0),
            ("L2", "C2-B3", "top", 41.0),
            ("L2", "S2-05", None, 27.0),  # no face: S2-05's tension face (bottom)
            ("L2", None, None, 29.0),  # neither: most common tension face of L2
            ("L2", "X-99", "top", 36.0),  # not a member of the site file: no layer
        ]
    )
    layout = cover_layout(site, data)
    assert layout.cells[layout.main_cell["L2"]] == ("L2", "top")  # most readings
    assert set(layout.cells) >= {("L2", "top"), ("L2", "bottom")}
    assert layout.layers == [
        ("L2", "S2-05", "top"),
        ("L2", "C2-B3", "top"),
        ("L2", "S2-05", "bottom"),
    ]
    assert layout.layer_of_reading.tolist() == [0, 0, 1, 2, -1, -1]
    cells = [layout.cells[k] for k in layout.cell_of_reading]
    faces = {"C2-B3": "top", "S2-05": "bottom"}
    assert cells[3] == ("L2", faces["S2-05"])
    # L2 has one bottom (S2-05) and one top (C2-B3) main layer: a tie goes to the first
    # member of the site file, S2-05
    assert list(site.members).index("S2-05") < list(site.members).index("C2-B3")
    assert cells[4] == ("L2", "bottom")
    assert cells[5] == ("L2", "top")
    assert np.allclose(layout.values, np.log(data["value"]))
    # every zone has a cell (its main face), even without readings
    assert set(layout.main_cell) == set(site.zones)


@pytest.fixture(scope="module")
def one_cell_fit(site):
    """Small MCMC run: 12 readings of the top face of L2, none tied to a member."""
    import pymc as pm

    from assess.updating.models import sample_posterior

    rng = np.random.default_rng(12)
    values = np.exp(rng.normal(math.log(33.0), 0.2, 12))
    data = frame([("L2", None, "top", v) for v in values])
    layout = cover_layout(site, data)
    with pm.Model(coords={"group": list(site.zones)}) as model:
        add_cover_model(pm, layout)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        idata = sample_posterior(model, draws=600, tune=600, chains=2, seed=5)
    return layout, idata, values


def test_cell_posterior_is_the_conjugate_normal_gamma(site, one_cell_fit):
    # Readings with no member observe the cell mean: with the normal-gamma prior of
    # (None, top) this is the conjugate model of JCSS PMC Part 3.0 Annex A, whose
    # posterior is known in closed form (NormalGamma.update). Check the MCMC against it:
    # E[mu] = m'' and E[sigma] = sqrt(b) Gamma(a - 1/2) / Gamma(a) (precision ~ Gamma(a, b)),
    # each within 4 Monte Carlo standard errors (posterior sd / sqrt(ESS)).
    import arviz as az

    layout, idata, values = one_cell_fit
    k = layout.cells.index(("L2", "top"))
    prior = layout.cell_prior(k)
    exact = prior.update(np.log(values))
    post = idata.posterior
    mu = prior.center + post["cover::cell_shift"].values[..., k]
    sigma = post["cover::cell_sigma"].values[..., k]
    for draws, target in (
        (mu, exact.m),
        (
            sigma,
            math.sqrt(exact.rate)
            * math.exp(special.gammaln(exact.shape - 0.5) - special.gammaln(exact.shape)),
        ),
    ):
        ess = float(az.ess(draws))
        se = draws.std() / math.sqrt(ess)
        assert abs(draws.mean() - target) < 4 * se + 1e-12, (draws.mean(), target, se)


def test_local_populations_reach_knowledge_at(site, one_cell_fit):
    layout, idata, _ = one_cell_fit
    after = cover_after_local(idata, layout, seed=3, source="test")
    zone = design_knowledge(site)["L2"]
    # a face with readings: the (None, top) posterior, here for a member without readings
    top = knowledge_at(zone, after["L2"], "C2-B3", "top")["cover"]
    assert top is after["L2"][("C2-B3", "top")]["cover"]
    assert top.source.startswith("test; cover (member C2-B3 on the top face")
    # a face without readings keeps its own design prior: S2-05's bottom bars are not
    # set by deck-top readings
    bottom = knowledge_at(zone, after["L2"], "S2-05", "bottom")["cover"]
    assert bottom == layout.before_local["L2"][("S2-05", "bottom")]["cover"]
    assert lognormal_of(bottom).mean() == pytest.approx(30.0, rel=1e-12)
    # other quantities come from the zone
    assert knowledge_at(zone, after["L2"], "S2-05", "bottom")["concrete"] is zone["concrete"]


def test_design_cover_of_initiation_reads_the_lognormal(site):
    # the zone's design cover on ln c, carried to mm by the lognormal moments
    # E[c] = exp(m + s^2/2), sd = E[c] sqrt(exp(s^2) - 1) (closed form)
    from assess.site.initiation import design_cover

    jcss = design_knowledge(site)["L2"]["cover"].jcss
    cover = design_cover(site, "L2")
    mean = math.exp(jcss["m"] + 0.5 * jcss["s"] ** 2)
    assert cover.mean_mm == pytest.approx(mean, rel=1e-12)
    assert cover.scatter_mm == pytest.approx(
        stats.lognorm(s=jcss["s"], scale=math.exp(jcss["m"])).std(), rel=1e-12
    )


def test_design_only_update_carries_the_layer_priors(tmp_path):
    # a site with no campaign yet: before_local = after_local = the JCSS layer priors, and
    # knowledge_at gives each bar layer its own face's prior
    from assess.site.materials import update_site

    (tmp_path / "site.toml").write_text(DEMO_SITE.read_text())
    site = load_site(tmp_path)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        update = update_site(site)
    assert update.gate is None and update.after_local == update.before_local
    top = knowledge_at(update.before["L2"], update.before_local["L2"], "C2-B3", "top")
    bottom = knowledge_at(update.before["L2"], update.before_local["L2"], "S2-05", "bottom")
    # JCSS PMC 3.10: slab top c_nom + 10 (30 + 10 mm), slab bottom c_nom + 5 (25 + 5 mm)
    assert lognormal_of(top["cover"]).mean() == pytest.approx(40.0, rel=1e-12)
    assert lognormal_of(bottom["cover"]).mean() == pytest.approx(30.0, rel=1e-12)
