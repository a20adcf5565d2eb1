"""Value of information on a real site: decision file, fixed-population model, beta surrogate.

The demo site (invented data) is updated once per session by the update of
``assess worth --quick`` (its posterior is stored in the shared copy and reused by
tests/test_cli_worth.py).
"""

import math
import warnings
from pathlib import Path

import numpy as np
import pytest
import tomllib
from scipy import special, stats

from assess.errors import InputError
from assess.model import ProbabilisticModel
from assess.site.worth_decision import (
    ALTERNATIVE_NAMES,
    QuadraticSurrogate,
    add_fixed_quantity,
    build_site_decision,
    farthest_point_design,
)
from assess.targets import convert_reference_period
from assess.worth import rank_programmes
from assess.worth.decision_file import parse_decision_setup, read_decision_setup

DEMO_DECISIONS = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard" / \
    "decisions.toml"


def demo_data() -> dict:
    return tomllib.loads(DEMO_DECISIONS.read_text(encoding="utf-8"))


# --------------------------------------------------------------------------- decision file
def test_demo_decision_file_reads():
    setup = read_decision_setup(DEMO_DECISIONS)
    assert [a.kind for a in setup.alternatives] == ["keep", "repair", "strengthen",
                                                    "restrict_load", "replace"]
    assert setup.alternatives[0].cost == 0.0
    assert [p.kind for p in setup.programmes] == ["cores", "breakouts", "cover", "half-cell",
                                                  "cores"]
    assert setup.horizon_years == 15 and setup.discount_rate == 0.02


@pytest.mark.parametrize("change, key_path", [
    (lambda d: d["alternatives"]["strengthen"].update(capacity_factr=1.3),
     "alternatives.strengthen.capacity_factr"),
    (lambda d: d["alternatives"]["strengthen"].update(capacity_factor=0.9),
     "alternatives.strengthen.capacity_factor"),
    (lambda d: d["programmes"][1].update(count=0), "programmes[1].count"),
    (lambda d: d["programmes"][2].update(kind="radar"), "programmes[2].kind"),
    (lambda d: d["programmes"][3].update(probability_of_detection=0.1),
     "programmes[3].probability_of_detection"),
    (lambda d: d.pop("failure_cost"), "failure_cost"),
    (lambda d: d.update(horizon=12.5), "horizon"),
    (lambda d: d["alternatives"].update(demolish={"cost": 1}), "alternatives.demolish"),
    (lambda d: d["alternatives"]["restrict_load"].update(cost=5), "alternatives.restrict_load.cost"),
    (lambda d: d["programmes"][4].update(name="6 cores"), "programmes[4].name"),
])
def test_bad_keys_name_the_file_and_key_path(change, key_path):
    data = demo_data()
    change(data)
    with pytest.raises(InputError) as info:
        parse_decision_setup(data, "decisions.toml")
    assert info.value.column == key_path
    assert info.value.file == "decisions.toml"


def test_missing_and_broken_files(tmp_path):
    with pytest.raises(InputError, match="not found"):
        read_decision_setup(tmp_path / "none.toml")
    broken = tmp_path / "broken.toml"
    broken.write_text("failure_cost = = 3\n")
    with pytest.raises(InputError, match="TOML"):
        read_decision_setup(broken)


# --------------------------------------------------------------------------- building blocks
def test_fixed_lognormal_quantity_matches_scipy():
    # P(f_c <= 30) of a lognormal with mu_ln = 3.6, sigma_ln = 0.12, against scipy.stats.lognorm
    model = ProbabilisticModel()
    add_fixed_quantity(model, "fc", 3.6, 0.12, "lognormal")
    expected = stats.lognorm(s=0.12, scale=math.exp(3.6)).cdf(30.0)
    assert model.marginal("fc").cdf(30.0) == pytest.approx(expected, rel=1e-12)
    with pytest.raises(InputError):
        add_fixed_quantity(model, "fy", 450.0, 0.0, "normal")


def test_surrogate_leave_one_out_equals_refitting_without_each_point():
    # PRESS identity e_(i) = e_i / (1 - h_ii) (Allen 1974, from memory) checked against brute force
    rng = np.random.default_rng(7)
    theta = rng.normal(size=(30, 3)) * [1.0, 2.0, 0.5] + [3.0, -1.0, 10.0]
    beta = 3.0 + 0.4 * theta[:, 0] - 0.2 * theta[:, 1] ** 2 + 0.05 * rng.normal(size=30)
    center, scale = theta.mean(axis=0), theta.std(axis=0)
    fitted = QuadraticSurrogate.fit(theta, beta, center, scale)
    brute = []
    for i in range(30):
        keep = np.arange(30) != i
        refit = QuadraticSurrogate.fit(theta[keep], beta[keep], center, scale)
        brute.append(beta[i] - refit.predict(theta[i])[0])
    assert fitted.loo_rmse_ == pytest.approx(math.sqrt(np.mean(np.square(brute))), rel=1e-9)


def test_surrogate_reproduces_an_exact_quadratic():
    rng = np.random.default_rng(8)
    theta = rng.normal(size=(25, 2))
    beta = 1.0 + 2.0 * theta[:, 0] - 0.5 * theta[:, 1] ** 2
    fitted = QuadraticSurrogate.fit(theta, beta, np.zeros(2), np.ones(2))
    new = rng.normal(size=(5, 2))
    assert fitted.predict(new) == pytest.approx(1.0 + 2.0 * new[:, 0] - 0.5 * new[:, 1] ** 2,
                                                abs=1e-10)
    assert fitted.loo_rmse_ < 1e-10


def test_farthest_point_design_takes_the_extremes_first():
    z = np.linspace(-3.0, 3.0, 61)[:, None]
    design = farthest_point_design(z, 3)
    assert len(set(design)) == 3
    assert set(z[design, 0]) == {-3.0, 0.0, 3.0}


# --------------------------------------------------------------------------- the demo site
@pytest.fixture(scope="module")
def update(demo_update):
    # the update of `assess worth --quick` (same hash: its stored posterior is shared)
    return demo_update


@pytest.fixture(scope="module")
def decision(update):
    site, result = update
    setup = read_decision_setup(DEMO_DECISIONS)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return build_site_decision(site, result, setup, n_draws=1000, n_design=48, seed=11), setup


def test_surrogate_agrees_with_direct_form_at_held_out_draws(decision):
    made, setup = decision
    rng = np.random.default_rng(5)
    held_out = rng.choice(np.setdiff1d(np.arange(made.problem.n_draws), made.design_index), 4,
                          replace=False)
    theta = made.member_theta(held_out)
    for spec in setup.alternatives:
        if spec.kind == "replace":
            continue
        direct, converged = made.reliability.betas(theta, spec)
        assert converged.all()
        surrogates = made.surrogates[ALTERNATIVE_NAMES[spec.kind]]
        predicted = np.column_stack([surrogates[m].predict(theta) for m in made.reliability.modes])
        # Stated tolerance: 0.05 in beta (about 15 % in pf near beta = 2.5) where the pf
        # matters (beta below 5, pf above 3e-7); above it the surrogate's warning level 0.10
        # (SURROGATE_WARNING_RMSE): a pf below 3e-7 a year adds nothing to the costs
        error = np.abs(predicted - direct)
        assert np.max(error[direct < 5.0], initial=0.0) < 0.05, spec.kind
        assert np.max(error) < 0.10, spec.kind


def test_horizon_pf_and_replacement_follow_the_annual_model(decision):
    made, setup = decision
    problem = made.problem
    keep = problem.names.index("keep as is")
    annual = special.ndtr(-made.annual_beta["keep as is"])
    # Independent years: P(failure within T years) = 1 - (1 - p)^T (EN 1990 Annex C)
    assert problem.horizon_pf[:, keep] == pytest.approx(
        1.0 - (1.0 - annual) ** setup.horizon_years, rel=1e-9)
    # New member at the JCSS annual target (normal cost of safety, CC2): beta 4.2
    replace = problem.names.index("replace")
    assert problem.horizon_pf[0, replace] == pytest.approx(
        -math.expm1(setup.horizon_years * math.log1p(-stats.norm.sf(4.2))), rel=1e-9)
    assert made.horizon_target_beta == pytest.approx(
        convert_reference_period(4.2, 1.0, setup.horizon_years), rel=1e-12)
    # Strengthening raises beta at every draw; repair removes the section-loss penalty
    assert np.all(made.annual_beta["strengthen"] > made.annual_beta["keep as is"])
    assert np.all(made.annual_beta["repair"] > made.annual_beta["keep as is"])


@pytest.fixture(scope="module")
def ranking(decision):
    made, _ = decision
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return rank_programmes(made.problem, made.programmes, n_outcomes=200, seed=3,
                               target_beta=made.horizon_target_beta)


def test_value_of_information_is_bounded_by_perfect_information(ranking):
    # Raiffa & Schlaifer (1961): 0 <= EVSI <= EVPI; Monte Carlo allowance of 3 standard errors
    for result in ranking.results:
        assert result.evsi >= 0.0
        assert result.evsi <= result.evpi + 3.0 * (result.evsi_standard_error
                                                   + result.evpi_standard_error)


def test_a_programme_in_another_zone_is_worth_about_nothing(update, decision):
    site, result = update
    made, _ = decision
    other = next(z for z in site.zones if z != made.zone)
    data = demo_data()
    data["member"] = made.member
    data["programmes"] = [
        {"name": "here", "kind": "breakouts", "count": 4, "measurement_sd": 0.02, "cost": 1.0},
        {"name": "there", "kind": "breakouts", "zone": other, "count": 4,
         "measurement_sd": 0.02, "cost": 1.0}]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        both = build_site_decision(site, result, parse_decision_setup(data), n_draws=1000,
                                   n_design=48, seed=11)
        values = {r.programme: r for r in rank_programmes(
            both.problem, both.programmes, n_outcomes=200, seed=4).results}
    # The area-ratio populations of the zones are not pooled (assess.site.knowledge),
    # so break-outs elsewhere say nothing about the member; only chance correlation between
    # the finite posterior draws can give them value.
    assert values["here"].evsi > 0.0
    assert values["there"].evsi <= max(3.0 * values["there"].evsi_standard_error,
                                       0.05 * values["here"].evsi)
