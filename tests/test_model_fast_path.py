"""The planned u_to_x (conditional distributions without a Distribution per call) gives the
same x as the direct path: every conditional built by `make_distribution` on every call.

Reference: the direct Rosenblatt (1952) map, written out here as it stood before the plan
(`reference_u_to_x`), and scipy's gamma quantile and cdf for the gamma fast maps.
"""

import dataclasses

import numpy as np
import pytest
from scipy import special, stats

from assess.distributions import conditional_x_from_u, make_distribution
from assess.errors import InputError
from assess.model import ProbabilisticModel, _Conditional, _Root
from assess.priors.normal_gamma import NormalGamma
from assess.updating.to_model import add_uncertain_quantity


def reference_u_to_x(model: ProbabilisticModel, u: np.ndarray) -> dict:
    """The direct path: Nataf roots, then each conditional rebuilt by make_distribution."""
    roots, _, _, L = model._build()
    column = {n: k for k, n in enumerate(model.random_names)}
    z = u[:, [column[n] for n in roots]] @ L.T
    z_of = {n: z[:, k] for k, n in enumerate(roots)}
    n_points = u.shape[0]
    x: dict = {}
    for name, variable in model._variables.items():
        if isinstance(variable, _Root):
            dist = variable.distribution
            coordinate = z_of[name] if dist.is_random else np.zeros(n_points)
        else:
            assert isinstance(variable, _Conditional)
            values = variable.params({p: x[p] for p in variable.parents})
            dist = make_distribution(variable.kind, name=name, **values)
            coordinate = u[:, column[name]] if dist.is_random else np.zeros(n_points)
        x[name] = np.broadcast_to(dist.x_from_u(coordinate), (n_points,)).astype(float)
    return x


def member_like_model(rho: float) -> ProbabilisticModel:
    """Four uncertain populations as a member model carries them, plus loads."""
    model = ProbabilisticModel()
    populations = {
        "fc": (NormalGamma.from_jcss(3.65, 3.0, 0.12, 10.0), "lognormal"),
        "fy": (NormalGamma.from_jcss(560.0, 2.0, 30.0, 50.0, log_scale=False), "normal"),
        "cover": (NormalGamma.from_jcss(35.0, 2.0, 8.0, 20.0, log_scale=False), "normal"),
        "area_ratio": (NormalGamma.from_jcss(0.95, 0.5, 0.02, 10.0, log_scale=False), "normal"),
    }
    for name, (population, kind) in populations.items():
        population = dataclasses.replace(population, rho=rho, z_mean=0.1 if rho else 0.0)
        add_uncertain_quantity(model, name, population, kind=kind)
    model.add("self_weight", make_distribution("normal", mean=6.0, std=0.3))
    model.add("imposed", make_distribution("gumbel", mean=2.5, std=0.6))
    model.add("theta", make_distribution("lognormal", mean=1.1, std=0.1))
    return model


def points(dim: int, n: int = 400, seed: int = 3) -> np.ndarray:
    u = np.random.default_rng(seed).standard_normal((n, dim)) * 2.5
    u[:4] = np.array([[-8.0], [8.0], [0.0], [-0.0]]) * np.ones((4, dim))  # far tails, centre
    return u


def assert_same(x: dict, y: dict) -> None:
    assert list(x) == list(y)
    for name in x:
        np.testing.assert_allclose(x[name], y[name], rtol=1e-12, atol=0.0, err_msg=name)


@pytest.mark.parametrize("rho", [0.0, 0.4, -0.6])
def test_member_like_model_same_x_as_direct_path(rho):
    model = member_like_model(rho)
    u = points(model.dim)
    assert_same(model.u_to_x(u), reference_u_to_x(model, u))


def test_correlated_roots_and_every_child_kind_same_x_as_direct_path():
    model = ProbabilisticModel()
    model.add("q", make_distribution("gamma", mean=2.0, std=0.5))
    model.add("w", make_distribution("weibull", mean=30.0, std=4.0))
    model.add("g", make_distribution("gumbel", mean=10.0, std=2.0))
    model.add("d", make_distribution("deterministic", mean=7.0))
    model.set_correlation("w", "g", 0.5)
    model.set_correlation("q", "w", -0.3)
    model.add_conditional("n_native", "normal", ["q"], lambda p: {"mu": 1.0 + p["q"], "sigma": 0.2})
    model.add_conditional(
        "ln_moments",
        "lognormal",
        ["w", "d"],
        lambda p: {"mean": p["w"] + p["d"], "std": 0.1 * p["w"]},
    )
    model.add_conditional(
        "gamma_child",
        "gamma",
        ["q"],  # no fast path: make_distribution
        lambda p: {"mean": p["q"], "std": 0.3},
    )
    model.add_conditional("fixed_child", "deterministic", ["g"], lambda p: {"value": 2.0 * p["g"]})
    model.add_conditional(
        "t_child", "student_t", ["g"], lambda p: {"nu": 5.0, "loc": p["g"], "scale": 1.0}
    )
    u = points(model.dim, seed=11)
    assert_same(model.u_to_x(u), reference_u_to_x(model, u))
    # round trip still holds (x_to_u keeps the direct path)
    np.testing.assert_allclose(model.x_to_u(model.u_to_x(u[4:])), u[4:], atol=1e-7)


def test_plan_follows_variables_added_after_first_use():
    model = member_like_model(0.3)
    model.u_to_x(points(model.dim, n=5))
    model.add_conditional("extra", "normal", ["fc"], lambda p: {"mean": p["fc"], "std": 1.0})
    u = points(model.dim, n=50)
    assert model.dim == u.shape[1]
    assert_same(model.u_to_x(u), reference_u_to_x(model, u))


@pytest.mark.parametrize(
    "kind,values",
    [
        ("normal", {"mean": np.array([1.0, 2.0, 3.0]), "std": 0.5}),
        ("normal", {"mu": 1.0, "sigma": np.array([0.1, 0.2, 0.3])}),
        ("lognormal", {"mean": np.array([10.0, 20.0, 30.0]), "std": np.array([1.0, 3.0, 9.0])}),
        ("lognormal", {"mu_ln": np.array([1.0, 2.0, 3.0]), "sigma_ln": 0.2}),
        ("gumbel", {"mean": 5.0, "std": np.array([1.0, 2.0, 3.0])}),
    ],
)
def test_conditional_x_from_u_equals_make_distribution(kind, values):
    u = np.array([-7.0, 0.3, 6.0])
    expected = make_distribution(kind, **values).x_from_u(u)
    np.testing.assert_array_equal(conditional_x_from_u(kind, values, u), expected)


@pytest.mark.parametrize(
    "values,message",
    [
        ({"mean": np.array([1.0, 2.0]), "std": np.array([0.5, 0.0])}, "std must be > 0"),
        ({"mean": np.array([1.0, np.nan]), "std": 0.5}, "finite"),
        ({"mean": np.array([1.0, -2.0]), "std": 0.5}, "mean must be > 0"),
        ({"mu_ln": 1.0, "sigma_ln": np.array([0.2, -0.1])}, "sigma_ln must be > 0"),
    ],
)
def test_conditional_x_from_u_refuses_as_make_distribution(values, message):
    with pytest.raises(InputError, match=message) as raised:
        conditional_x_from_u("lognormal", values, np.zeros(2), name="fc")
    assert "'fc'" in str(raised.value)


def test_gamma_maps_with_fixed_parameters_match_scipy():
    # scipy.stats.gamma: ppf in the lower half, isf of Phi(-u) in the upper half
    dist = make_distribution("gamma", shape=3.5, scale=0.02)
    u = np.linspace(-8.0, 8.0, 81)
    frozen = stats.gamma(a=3.5, scale=0.02)
    expected = np.where(u < 0, frozen.ppf(special.ndtr(u)), frozen.isf(special.ndtr(-u)))
    np.testing.assert_allclose(dist.x_from_u(u), expected, rtol=1e-10)
    np.testing.assert_allclose(dist.u_from_x(expected), u, rtol=1e-9, atol=1e-9)
    # the array-parameter branch gives the same numbers
    per_sample = make_distribution("gamma", shape=np.full(u.size, 3.5), scale=0.02)
    np.testing.assert_allclose(per_sample.x_from_u(u), dist.x_from_u(u), rtol=1e-14)
    np.testing.assert_allclose(
        per_sample.u_from_x(expected), dist.u_from_x(expected), rtol=1e-14, atol=1e-14
    )
