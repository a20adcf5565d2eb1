"""Which uncertainty drives the risk: importance factors (FORM and failure samples) and
grouped Sobol indices against closed forms, and the report section built from a stub run."""

from __future__ import annotations

import math
import types

import numpy as np
import pytest

from assess.distributions import make_distribution
from assess.model import ProbabilisticModel
from assess.reliability.form import form
from assess.surrogate.chaos import chaos_for_problem
from assess.surrogate.sensitivity import group_sobol, importance_from_failures, risk_drivers

# g = 25 + 2 R1 + 1.5 R2 - 3 S (beta about 3): every input normal, so g is linear in u and
# alpha_i = a_i sigma_i / sqrt(sum_j a_j^2 sigma_j^2) (closed form of FORM for a linear
# limit state in normal variables, e.g. Madsen, Krenk & Lind 1986, ch. 5, from memory);
# the Sobol indices of a linear model are S_i = S_Ti = a_i^2 sigma_i^2 / sum (closed form).
COEFFICIENTS = {"R.mean_part": 2.0, "R.scatter": 1.5, "S": -3.0}
MEANS = {"R.mean_part": 10.0, "R.scatter": 5.0, "S": 12.0}
SIGMAS = {"R.mean_part": 1.5, "R.scatter": 2.0, "S": 1.2}


def _linear_problem():
    model = ProbabilisticModel()
    for name in COEFFICIENTS:
        model.add(name, make_distribution("normal", mean=MEANS[name], std=SIGMAS[name]))

    def g(x):
        return 25.0 + sum(a * x[n] for n, a in COEFFICIENTS.items())

    return model.problem(g)


def _closed_form_shares() -> dict:
    terms = {n: (a * SIGMAS[n]) ** 2 for n, a in COEFFICIENTS.items()}
    total = sum(terms.values())
    return {"R": (terms["R.mean_part"] + terms["R.scatter"]) / total, "S": terms["S"] / total}


def test_form_importance_factors_and_sobol_of_a_linear_limit_state():
    problem = _linear_problem()
    first_order = form(problem)
    found = risk_drivers(problem, form_result=first_order, seed=11, n_samples=40)
    expected = _closed_form_shares()
    assert found["importance_source"] == "FORM design point"
    # the merged alpha^2 of R (its two columns) and of S, closed form
    for name, share in expected.items():
        assert found["importance"][name] == pytest.approx(share, abs=1e-6)
        assert found["sobol_first"][name] == pytest.approx(share, abs=1e-8)
        assert found["sobol_total"][name] == pytest.approx(share, abs=1e-8)
    # per column, FORM's alpha_i against the closed form alpha_i = a_i sigma_i / sqrt(sum)
    norm = math.sqrt(sum((a * SIGMAS[n]) ** 2 for n, a in COEFFICIENTS.items()))
    for name, a in COEFFICIENTS.items():
        assert first_order.importance_factors[name] == pytest.approx(
            (a * SIGMAS[name] / norm) ** 2, abs=1e-6)
    assert found["n_calls"] == 40      # FORM's result was reused: only the expansion's design


def test_importance_factors_from_independent_failure_samples():
    # For a linear limit state E[u | failure] lies on the FORM direction (closed form: the
    # standard normal is symmetric about that line), so the estimator differs from the
    # closed form by its sampling error only. Independent samples (crude Monte Carlo):
    # across the direction each component of the failure mean has standard deviation
    # 1/sqrt(N_fail) (unit variance), so alpha_i is off by at most 4/(sqrt(N_fail) |u_bar|)
    # at 4 standard deviations and alpha_i^2 by twice that (|d(a^2)| <= 2 |da|, |a| <= 1).
    names = list(COEFFICIENTS)
    u = np.random.default_rng(21).standard_normal((1_000_000, len(names)))
    g = 25.0 + sum(a * (MEANS[n] + SIGMAS[n] * u[:, k])
                   for k, (n, a) in enumerate(COEFFICIENTS.items()))
    n_fail = int(np.count_nonzero(g <= 0))
    centre = np.linalg.norm(u[g <= 0].mean(axis=0))
    tolerance = 2 * 4 / (math.sqrt(n_fail) * centre)
    shares = importance_from_failures(u, g, names)
    norm2 = sum((a * SIGMAS[n]) ** 2 for n, a in COEFFICIENTS.items())
    for name, a in COEFFICIENTS.items():
        assert shares[name] == pytest.approx((a * SIGMAS[name]) ** 2 / norm2, abs=tolerance)
    assert tolerance < 0.1        # the check is sharp enough to tell the shares apart


def test_without_form_the_failure_samples_of_subset_simulation_are_used():
    # No FORM result: the last level of subset simulation gives the failure samples. Its
    # Markov chains start from n_per_level * p0 = 100 seeds; counting each chain as one
    # independent sample (the most conservative effective size) gives the tolerance as above.
    problem = _linear_problem()
    found = risk_drivers(problem, form_result=None, seed=12, sobol=False)
    assert found["importance_source"] == "failure samples of subset simulation"
    assert found["sobol_first"] is None
    beta = form(_linear_problem()).beta
    tolerance = 2 * 4 / (math.sqrt(100) * beta)
    for name, share in _closed_form_shares().items():
        assert found["importance"][name] == pytest.approx(share, abs=tolerance)
    assert sum(found["importance"].values()) == pytest.approx(1.0, abs=1e-12)


def test_importance_from_failures_is_the_direction_of_the_failure_mean():
    u = np.array([[3.0, 4.0], [3.0, 4.0], [-1.0, 0.0]])
    g = np.array([-1.0, -0.5, 2.0])
    shares = importance_from_failures(u, g, ["a", "b"])
    assert shares == pytest.approx({"a": 9 / 25, "b": 16 / 25})     # (3, 4)/5 squared
    assert importance_from_failures(u, np.ones(3), ["a", "b"]) is None


def test_grouped_sobol_indices_keep_the_interaction_inside_the_group():
    # g = X1 X2 + X3 with X_i ~ N(0, 1) independent: Var = 1 (X1 X2) + 1 (X3). Alone, X1
    # has S_1 = 0 and S_T1 = 1/2; the group {X1, X2} has closed first-order index
    # Var(E[g | X1, X2]) / Var = 1/2 (the interaction lies inside it), total 1/2
    # (closed form, Sobol 1993 definitions; Sudret 2008 eq. for PCE coefficients).
    model = ProbabilisticModel()
    for name in ("pair.x1", "pair.x2", "x3"):
        model.add(name, make_distribution("normal", mean=0.0, std=1.0))
    problem = model.problem(lambda x: x["pair.x1"] * x["pair.x2"] + x["x3"])
    chaos, _ = chaos_for_problem(problem, 40, seed=13, model=model, max_degree=2)
    single = chaos.sobol()
    assert single["first"]["pair.x1"] == pytest.approx(0.0, abs=1e-8)
    assert single["total"]["pair.x1"] == pytest.approx(0.5, abs=1e-8)
    grouped = group_sobol(chaos)
    assert grouped["first"] == pytest.approx({"pair": 0.5, "x3": 0.5}, abs=1e-8)
    assert grouped["total"] == pytest.approx({"pair": 0.5, "x3": 0.5}, abs=1e-8)


def test_sobol_indices_of_a_rough_expansion_are_withheld():
    # g = 1 - |u1| - |u2|/2 + ... : a kink no cubic follows; the leave-one-out error is
    # large, and the indices are not shown (with a note saying why).
    model = ProbabilisticModel()
    for name in ("a", "b"):
        model.add(name, make_distribution("normal", mean=0.0, std=1.0))
    problem = model.problem(lambda x: 2.5 - np.sign(x["a"]) * np.sign(x["b"]) * 0.5
                            - 0.3 * np.abs(x["a"]))
    found = risk_drivers(problem, form_result=None, seed=14, n_samples=60, max_degree=3)
    assert found["sobol_loo_error"] > 0.10
    assert found["sobol_total"] is None and "not shown" in found["sobol_note"]


def test_report_section_shows_plain_names_and_how_to_read_it():
    from assess.report.assemble import DRIVERS_READING, _section_drivers
    from assess.report.document import ReportDocument
    from assess.site.drivers import MemberDrivers

    drivers = [
        MemberDrivers("S3-02", "shear", 3.1, {"cover_top": 0.55, "theta_shear": 0.3,
                                               "imposed": 0.15}, "FORM design point",
                      {"cover_top": 0.4, "theta_shear": 0.35, "imposed": 0.2},
                      {"cover_top": 0.45, "theta_shear": 0.35, "imposed": 0.2}, 0.02),
        MemberDrivers("B1-02", "flexure", 4.0, {"fc": 0.1, "area_ratio": 0.9},
                      "failure samples of subset simulation", None, None, 0.3,
                      note="Sobol indices not shown"),
    ]
    run = types.SimpleNamespace(result=lambda name: types.SimpleNamespace(drivers=drivers))
    doc = ReportDocument("stub")
    numbers = _section_drivers(doc, run)
    html = doc.to_html()
    assert "Which uncertainty drives the risk" in html
    assert DRIVERS_READING.split(":")[0] in html
    for words in ("concrete cover, top bars", "shear resistance model", "vehicle load",
                  "residual bar area"):
        assert words in html
    assert "cover_top" not in html and "theta_shear" not in html
    assert "failure samples of subset simulation" in html
    assert [d["member"] for d in numbers] == ["S3-02", "B1-02"]
    assert numbers[0]["importance"]["cover_top"] == 0.55
    assert numbers[0]["variable_words"]["cover_top"] == "concrete cover, top bars"
    # beside the value of information: the populations in plain words
    from assess.report.assemble import _population_shares

    doc = ReportDocument("stub")
    _population_shares(doc.add_section("Is more testing worth it"),
                       {"alternative": "keep as is", "mode": "shear", "largest_correlation": 0.02,
                        "shares": {"area_ratio": 0.6, "cover": 0.3, "concrete": 0.1}})
    html = doc.to_html()
    assert "Residual bar area ratio" in html and "Concrete cover" in html
    assert "area_ratio" not in html and "approximate" not in html


def test_population_shares_of_an_additive_beta_surrogate():
    # beta = 3 + 0.5 z1 + 0.2 z5^2 in independent standard normal columns: Var = 0.25 (concrete
    # mu) + 0.04 Var(z^2) = 0.08 (cover sigma), Var(z^2) = 2 for a standard normal (closed
    # form); first-order = total for an additive model. The sample variances of N = 20,000
    # draws are within about 4 sqrt(2/N) relative (4 standard errors of a variance).
    from assess.site.drivers import population_shares
    from assess.site.worth_decision import QuadraticSurrogate, zone_columns

    rng = np.random.default_rng(31)
    theta = rng.standard_normal((20_000, 8))
    design = theta[:60]
    beta = 3 + 0.5 * design[:, 0] + 0.2 * design[:, 5] ** 2
    centre, scale = np.zeros(8), np.ones(8)
    weak = QuadraticSurrogate.fit(design, beta, centre, scale)
    strong = QuadraticSurrogate.fit(design, beta + 5.0, centre, scale)
    decision = types.SimpleNamespace(
        surrogates={"keep as is": {"shear": strong, "flexure": weak}},
        member_theta=lambda: theta, member_columns=zone_columns("L1"))
    found = population_shares(decision)
    assert found["mode"] == "flexure"             # the mode that carries the pf
    tolerance = 4 * math.sqrt(2 / theta.shape[0])
    assert found["shares"]["concrete"] == pytest.approx(0.25 / 0.33, abs=tolerance)
    assert found["shares"]["cover"] == pytest.approx(0.08 / 0.33, abs=tolerance)
    assert found["shares"]["steel"] == pytest.approx(0.0, abs=1e-9)
    assert list(found["shares"])[0] == "concrete"
    assert found["largest_correlation"] < 4 / math.sqrt(theta.shape[0])
