"""Probabilistic model: Rosenblatt children, Nataf roots, round trips and DAG errors."""

import math

import numpy as np
import pytest
from scipy import stats

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.model import ProbabilisticModel
from assess.nataf import nataf_correlation
from assess.reliability.problem import StandardNormalProblem


def test_conditional_normal_reproduces_law_of_total_variance():
    # X1 ~ N(10, 2); X2 | X1 ~ N(3 X1, 1.5). Exactly: E[X2] = 30,
    # Var[X2] = E[Var(X2|X1)] + Var(E[X2|X1]) = 1.5^2 + 3^2 2^2 = 38.25 (law of total variance).
    model = ProbabilisticModel()
    model.add("x1", make_distribution("normal", mean=10.0, std=2.0))
    model.add_conditional("x2", "normal", ["x1"], lambda p: {"mean": 3.0 * p["x1"], "std": 1.5})
    n = 50_000
    x2 = model.sample(n, seed=7)["x2"]
    variance = 1.5**2 + 3.0**2 * 2.0**2
    # 3 standard errors: mean sqrt(V/n); variance V sqrt(2/(n-1)) (X2 is normal here)
    assert x2.mean() == pytest.approx(30.0, abs=3 * math.sqrt(variance / n))
    assert x2.var(ddof=1) == pytest.approx(variance, abs=3 * variance * math.sqrt(2 / (n - 1)))


def test_lognormal_child_of_normal_log_mean_is_exact_in_u():
    # ln fc = M + s U2 with M = m + t U1: the Rosenblatt map is linear in log space.
    model = ProbabilisticModel()
    model.add("log_mean", make_distribution("normal", mean=3.4, std=0.05))
    model.add_conditional("fc", "lognormal", ["log_mean"],
                          lambda p: {"mu_ln": p["log_mean"], "sigma_ln": 0.12})
    u = np.array([[0.0, 0.0], [-3.0, 2.0], [4.0, -7.5]])
    x = model.u_to_x(u)
    np.testing.assert_allclose(np.log(x["fc"]), 3.4 + 0.05 * u[:, 0] + 0.12 * u[:, 1], rtol=1e-13)


def build_mixed_model():
    model = ProbabilisticModel()
    model.add("fc", make_distribution("lognormal", mean=30.0, std=4.5))  # [MPa]
    model.add("gamma_c", make_distribution("deterministic", value=24.0))  # [kN/m3]
    model.add("fy", make_distribution("normal", mean=560.0, std=30.0))  # [MPa]
    model.add("q", make_distribution("gumbel", mean=2.0, std=0.6))  # [kN/m2]
    model.add("cover", make_distribution("weibull", mean=45.0, std=9.0))  # [mm]
    # tensile strength f_ct = 0.3 f_c^(2/3) Y2, Y2 with CoV 0.30 (JCSS PMC 3.1.2)
    model.add_conditional("fct", "lognormal", ["fc"],
                          lambda p: {"mean": 0.3 * p["fc"] ** (2 / 3),
                                     "std": 0.30 * 0.3 * p["fc"] ** (2 / 3)})
    model.add_conditional("theta", "student_t", ["fy"],
                          lambda p: {"nu": 6.0, "loc": p["fy"] / 560.0, "scale": 0.1})
    model.add_conditional("self_weight", "deterministic", ["gamma_c"],
                          lambda p: {"value": 0.25 * p["gamma_c"]})
    model.set_correlation("fc", "fy", 0.3)
    model.set_correlation("q", "cover", -0.4)
    model.set_correlation("fy", "cover", 0.2)
    return model


def test_structure_and_names():
    model = build_mixed_model()
    assert model.names == ["fc", "gamma_c", "fy", "q", "cover", "fct", "theta", "self_weight"]
    assert model.random_names == ["fc", "fy", "q", "cover", "fct", "theta"]
    assert model.dim == 6
    assert model.parents("fct") == ("fc",)
    assert model.marginal("q").kind == "gumbel"


def test_round_trip_u_x_u():
    model = build_mixed_model()
    u = np.random.default_rng(3).uniform(-6.0, 6.0, size=(200, model.dim))
    x = model.u_to_x(u)
    assert all(v.shape == (200,) for v in x.values())
    np.testing.assert_array_equal(x["self_weight"], np.full(200, 6.0))
    np.testing.assert_allclose(model.x_to_u(x), u, rtol=0, atol=1e-8)


def test_first_root_maps_through_its_own_marginal():
    model = build_mixed_model()
    u = np.zeros((1, model.dim))
    u[0, 0] = -2.5  # fc is correlated with fy only, and fc comes first: z_fc = u_fc
    x = model.u_to_x(u)
    # reference: scipy lognormal with the textbook parameters
    sigma_ln = math.sqrt(math.log(1 + 0.15**2))
    reference = stats.lognorm(sigma_ln, scale=30.0 / math.sqrt(1 + 0.15**2))
    assert x["fc"][0] == pytest.approx(reference.ppf(stats.norm.cdf(-2.5)), rel=1e-12)


def test_correlated_roots_reproduce_pearson_correlation():
    model = ProbabilisticModel()
    model.add("q", make_distribution("gumbel", mean=2.0, std=0.6))
    model.add("r", make_distribution("lognormal", mean=1.0, std=0.5))
    rho = 0.7
    model.set_correlation("q", "r", rho)
    roots, R, R0 = model.correlation_matrix()
    assert roots == ["q", "r"] and R[0, 1] == rho
    expected = nataf_correlation(model.marginal("q"), model.marginal("r"), rho)
    assert R0[0, 1] == pytest.approx(expected, rel=1e-12)
    n = 200_000
    x = model.sample(n, seed=11)
    # standard error of a correlation coefficient (1 - rho^2)/sqrt(n), 3 of them
    tolerance = 3 * (1 - rho**2) / math.sqrt(n)
    assert abs(R0[0, 1] - rho) > tolerance  # without the correction the check would fail
    assert np.corrcoef(x["q"], x["r"])[0, 1] == pytest.approx(rho, abs=tolerance)


def test_sample_is_reproducible_and_accepts_a_generator():
    model = build_mixed_model()
    first = model.sample(50, seed=5)
    second = model.sample(50, seed=5)
    third = model.sample(50, seed=np.random.default_rng(5))
    for name in model.names:
        np.testing.assert_array_equal(first[name], second[name])
        np.testing.assert_array_equal(first[name], third[name])


def test_problem_linear_normal_closed_form():
    # g = R - S with R ~ N(10, 1.5), S ~ N(5, 1): beta = 5 / sqrt(3.25) (Cornell, closed form);
    # g vanishes at the design point u* = (-beta 1.5/sigma_g, beta 1/sigma_g).
    model = ProbabilisticModel()
    model.add("resistance", make_distribution("normal", mean=10.0, std=1.5))
    model.add("effect", make_distribution("normal", mean=5.0, std=1.0))
    problem = model.problem(lambda x: x["resistance"] - x["effect"])
    assert isinstance(problem, StandardNormalProblem)
    assert problem.dim == 2 and problem.names == ["resistance", "effect"]
    sigma_g = math.sqrt(3.25)
    beta = 5.0 / sigma_g
    u = np.array([[0.0, 0.0], [-beta * 1.5 / sigma_g, beta * 1.0 / sigma_g]])
    np.testing.assert_allclose(problem.g(u), [5.0, 0.0], atol=1e-12)
    assert problem.n_calls == 2
    assert problem.to_physical(u[:1])["effect"][0] == 5.0


def test_dag_errors():
    model = ProbabilisticModel()
    model.add("a", make_distribution("normal", mean=0.0, std=1.0))
    with pytest.raises(InputError, match=r"variable 'b': parent 'c' is not defined yet; add every "
                                         r"parent before.*\(defined so far: a\)"):
        model.add_conditional("b", "normal", ["a", "c"], lambda p: {"mean": p["a"], "std": 1.0})
    with pytest.raises(InputError, match=r"variable 'a' is already defined"):
        model.add("a", make_distribution("normal", mean=0.0, std=1.0))
    with pytest.raises(InputError, match=r"unknown distribution kind 'norm'"):
        model.add_conditional("b", "norm", ["a"], lambda p: {"mean": p["a"], "std": 1.0})
    with pytest.raises(InputError, match=r"root variable needs fixed \(scalar\) parameters"):
        model.add("v", make_distribution("normal", mean=np.array([1.0, 2.0]), std=1.0))
    model.add_conditional("b", "normal", ["a"], lambda p: {"mean": p["a"], "std": 1.0})
    model.add("d", make_distribution("deterministic", value=2.0))
    with pytest.raises(InputError, match=r"'b' is conditional on other variables"):
        model.set_correlation("a", "b", 0.5)
    with pytest.raises(InputError, match=r"'d' is deterministic"):
        model.set_correlation("a", "d", 0.5)
    with pytest.raises(InputError, match=r"'zz' is not defined"):
        model.set_correlation("a", "zz", 0.5)
    model.add("e", make_distribution("gamma", mean=2.0, std=1.0))
    with pytest.raises(InputError, match=r"strictly between -1 and 1"):
        model.set_correlation("a", "e", 1.0)
    with pytest.raises(InputError, match=r"u must have shape \(n, 3\)"):
        model.u_to_x(np.zeros((4, 2)))
    with pytest.raises(InputError, match=r"values missing for variable\(s\): b, d, e"):
        model.x_to_u({"a": np.zeros(3)})


def test_bad_conditional_parameters_name_the_variable():
    model = ProbabilisticModel()
    model.add("a", make_distribution("normal", mean=0.0, std=1.0))
    model.add_conditional("b", "normal", ["a"], lambda p: {"mean": 0.0, "std": p["a"]})
    with pytest.raises(InputError, match=r"variable 'b': std must be > 0, got -1 at sample 1"):
        model.u_to_x(np.array([[1.0, 0.0], [-1.0, 0.0]]))
    other = ProbabilisticModel()
    other.add("a", make_distribution("normal", mean=0.0, std=1.0))
    other.add_conditional("c", "normal", ["a"], lambda p: [p["a"], 1.0])
    with pytest.raises(InputError, match=r"variable 'c': params must return a dict"):
        other.sample(3, seed=1)


def test_non_positive_definite_correlations_named():
    model = ProbabilisticModel()
    for name in ("fc", "fy", "cover"):
        model.add(name, make_distribution("normal", mean=1.0, std=0.1))
    model.set_correlation("fc", "fy", 0.9)
    model.set_correlation("fc", "cover", 0.9)
    model.set_correlation("fy", "cover", -0.9)
    with pytest.raises(InputError, match=r"correlation matrix is not positive definite.*'fc'"):
        model.sample(10, seed=1)
