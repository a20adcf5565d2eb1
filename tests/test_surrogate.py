"""Polynomial chaos: orthonormal families against scipy, Sobol indices of the Ishigami
function and of linear models (closed forms), reliability on the surrogate."""

import math

import numpy as np
import pytest
from scipy import special

from assess.distributions import make_distribution
from assess.errors import AnalysisError
from assess.model import ProbabilisticModel
from assess.surrogate import chaos_reliability
from assess.surrogate.chaos import chaos_for_problem, multi_indices
from assess.surrogate.polynomials import Family, family_for, gauss_rule
from assess.surrogate.sensitivity import drivers, sobol_indices
from tests.reference_problems import four_branch_single, lognormal_r_s


@pytest.mark.parametrize("family", [Family("hermite"), Family("legendre"),
                                    Family("laguerre", alpha=1.5), Family("laguerre"),
                                    Family("jacobi", alpha=0.5, beta=2.0),
                                    Family("jacobi", alpha=-0.5, beta=-0.5)])
def test_families_are_orthonormal_under_their_weight(family):
    # Gauss quadrature of scipy (roots_hermitenorm, roots_legendre, roots_genlaguerre,
    # roots_jacobi) integrates p_m p_n exactly for m + n < 2 x 30.
    x, w = gauss_rule(family, 30)
    values = family.evaluate(x, 8)
    gram = (values * w[:, None]).T @ values
    assert np.allclose(gram, np.eye(9), atol=1e-10)


def test_hermite_and_legendre_match_scipy_closed_forms():
    # Orthonormal He_n = He_n / sqrt(n!), Legendre = sqrt(2n + 1) P_n (closed forms).
    x = np.linspace(-0.9, 0.9, 7)
    hermite = Family("hermite").evaluate(x, 6)
    legendre = Family("legendre").evaluate(x, 6)
    for n in range(7):
        assert np.allclose(hermite[:, n], special.eval_hermitenorm(n, x)
                           / math.sqrt(math.factorial(n)))
        assert np.allclose(legendre[:, n], math.sqrt(2 * n + 1) * special.eval_legendre(n, x))


def test_families_follow_the_askey_scheme():
    # Xiu & Karniadakis (2002): normal - Hermite, uniform - Legendre, gamma - Laguerre
    # (alpha = shape - 1), beta - Jacobi; other kinds fall back to Hermite in u.
    assert family_for(make_distribution("normal", mean=1, std=2)).name == "hermite"
    assert family_for(make_distribution("uniform", lower=0, upper=1)).name == "legendre"
    gamma = family_for(make_distribution("gamma", mean=6, std=3))
    assert gamma.name == "laguerre" and gamma.alpha == pytest.approx(3.0)
    assert family_for(make_distribution("beta", alpha=2, beta=3, lower=0,
                                        upper=1)).name == "jacobi"
    lognormal = family_for(make_distribution("lognormal", mean=1, std=0.2))
    assert lognormal.name == "hermite" and lognormal.source == "u"


def test_number_of_terms_of_a_total_degree_basis():
    # C(d + p, p) terms (combinatorics); hyperbolic truncation keeps fewer.
    for dim, degree in ((1, 4), (3, 3), (5, 2)):
        assert multi_indices(dim, degree).shape[0] == math.comb(dim + degree, degree)
    assert multi_indices(5, 4, q=0.5).shape[0] < math.comb(9, 4)


def test_ishigami_sobol_indices():
    # Ishigami function, X_i ~ U(-pi, pi), a = 7, b = 0.1 (Ishigami & Homma 1990; closed
    # forms V1 = (1 + b pi^4/5)^2 / 2, V2 = a^2/8, V13 = 8 b^2 pi^8 / 225, e.g. Sudret 2008).
    a, b = 7.0, 0.1
    model = ProbabilisticModel()
    for name in ("x1", "x2", "x3"):
        model.add(name, make_distribution("uniform", lower=-math.pi, upper=math.pi))
    problem = model.problem(lambda x: np.sin(x["x1"]) + a * np.sin(x["x2"]) ** 2
                            + b * x["x3"] ** 4 * np.sin(x["x1"]))
    v1, v2, v13 = 0.5 * (1 + b * math.pi**4 / 5) ** 2, a * a / 8, 8 * b * b * math.pi**8 / 225
    v = v1 + v2 + v13
    chaos, _ = chaos_for_problem(problem, 200, seed=1, model=model, max_degree=14)
    assert [f.name for f in chaos.families] == ["legendre"] * 3
    indices = chaos.sobol()
    assert indices["first"]["x1"] == pytest.approx(v1 / v, abs=0.005)
    assert indices["first"]["x2"] == pytest.approx(v2 / v, abs=0.005)
    assert indices["first"]["x3"] == pytest.approx(0.0, abs=0.005)
    assert indices["total"]["x1"] == pytest.approx((v1 + v13) / v, abs=0.005)
    assert indices["total"]["x3"] == pytest.approx(v13 / v, abs=0.005)
    assert chaos.mean == pytest.approx(a / 2, abs=1e-3)   # E[7 sin^2 x2] = 3.5
    assert chaos.variance == pytest.approx(v, rel=0.01)


def test_linear_model_sobol_indices_and_moments():
    # g = 2 X1 - X2 + 0.5 X3 with independent normal, gamma and uniform inputs: S_i =
    # S_Ti = a_i^2 Var(X_i) / sum (closed form for an additive linear model); mean and
    # variance exact. Each input gets its own family (Hermite, Laguerre, Legendre).
    model = ProbabilisticModel()
    model.add("x1", make_distribution("normal", mean=10.0, std=2.0))
    model.add("x2", make_distribution("gamma", mean=6.0, std=3.0))
    model.add("x3", make_distribution("uniform", lower=0.0, upper=12.0))
    problem = model.problem(lambda x: 2 * x["x1"] - x["x2"] + 0.5 * x["x3"])
    variances = np.array([4 * 4.0, 9.0, 0.25 * 12.0**2 / 12])
    result = sobol_indices(problem, n_samples=60, seed=2, max_degree=3, model=model)
    for name, share in zip(("x1", "x2", "x3"), variances / variances.sum()):
        assert result["first"][name] == pytest.approx(share, abs=1e-8)
        assert result["total"][name] == pytest.approx(share, abs=1e-8)
    assert result["loo_error"] < 1e-10
    assert result["n_calls"] == 60
    chaos, _ = chaos_for_problem(model.problem(lambda x: 2 * x["x1"] - x["x2"] + 0.5 * x["x3"]),
                                 60, seed=2, model=model, max_degree=2)
    assert [f.name for f in chaos.families] == ["hermite", "laguerre", "legendre"]
    assert chaos.mean == pytest.approx(20.0 - 6.0 + 3.0, abs=1e-8)
    assert chaos.variance == pytest.approx(variances.sum(), rel=1e-8)


def test_drivers_table_sorts_by_the_larger_share():
    rows = drivers({"a": 0.1, "b": 0.9}, {"first": {"a": 0.7, "b": 0.2},
                                           "total": {"a": 0.75, "b": 0.25}})
    assert [r["variable"] for r in rows] == ["b", "a"]
    assert rows[1]["sobol_total"] == 0.75


def test_reliability_on_the_surrogate_of_a_smooth_limit_state():
    # Lognormal R - S (closed form beta): accepted after the boundary check, within 3 of
    # its CoVs; only true evaluations are counted.
    case = lognormal_r_s()
    result = chaos_reliability(case.problem, seed=3)
    assert result.details["boundary_checks"][-1]["share"] <= 0.1
    assert abs(result.pf - case.pf) <= 3 * result.cov * case.pf
    assert result.n_calls == case.problem.n_calls <= 1000
    assert set(result.details["sobol"]["total"]) == {"R", "S"}


def test_surrogate_of_a_non_smooth_system_is_refused():
    # The four-branch system as one expression min(g1..g4) has kinks no polynomial follows:
    # the surrogate misclassifies near the boundary and the method refuses.
    with pytest.raises(AnalysisError, match="not accurate enough"):
        chaos_reliability(four_branch_single().problem, seed=4, max_samples=600)


def test_sobol_of_a_linear_problem_in_u_space():
    # In u-space with Hermite: g = 3 - (u1 + 2 u2)/sqrt(5): S1 = 1/5, S2 = 4/5 (closed form).
    from assess.reliability import StandardNormalProblem
    problem = StandardNormalProblem(lambda u: 3 - (u[:, 0] + 2 * u[:, 1]) / math.sqrt(5), 2)
    result = sobol_indices(problem, n_samples=30, seed=5)
    assert result["first"]["u1"] == pytest.approx(0.2, abs=1e-10)
    assert result["total"]["u2"] == pytest.approx(0.8, abs=1e-10)
