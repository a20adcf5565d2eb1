"""Closed-form maps to and from standard normal space, against scipy.stats (issue 17).

The engine maps normal, lognormal, Gumbel, Weibull and gamma variables with numpy and
scipy.special instead of scipy.stats frozen distributions, roots of one kind in one call
and the normal/lognormal conditional children of one layer in one call. Reference for
every value here: scipy.stats ppf in the lower half and isf of Phi(-u) in the upper half
(the nearer tail, so that u = +-8 keeps its digits), and scipy.stats cdf/sf for the way
back. Tolerances: 1e-12 relative (a few double spacings) for the explicit formulas, 1e-10
for gamma (the incomplete-gamma inverses iterate).
"""

import numpy as np
import pytest
from scipy import special, stats

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.model import ProbabilisticModel

U = np.concatenate([np.linspace(-8.0, 8.0, 161), [-7.99, -1e-9, 1e-9, 7.99]])

CASES = [  # kind, native parameters, the scipy.stats distribution with the same ones
    ("normal", {"mu": 30.0, "sigma": 4.5}, stats.norm(loc=30.0, scale=4.5)),
    ("lognormal", {"mu_ln": 3.4, "sigma_ln": 0.15}, stats.lognorm(s=0.15, scale=np.exp(3.4))),
    ("lognormal", {"mu_ln": -1.0, "sigma_ln": 1.2}, stats.lognorm(s=1.2, scale=np.exp(-1.0))),
    ("gumbel", {"loc": 2.2, "scale": 0.47}, stats.gumbel_r(loc=2.2, scale=0.47)),
    ("weibull", {"shape": 0.7, "scale": 12.0}, stats.weibull_min(c=0.7, scale=12.0)),
    ("weibull", {"shape": 2.0, "scale": 40.0}, stats.weibull_min(c=2.0, scale=40.0)),
    ("weibull", {"shape": 25.0, "scale": 1.3}, stats.weibull_min(c=25.0, scale=1.3)),
    ("gamma", {"shape": 0.6, "scale": 2.0}, stats.gamma(a=0.6, scale=2.0)),
    ("gamma", {"shape": 40.0, "scale": 0.01}, stats.gamma(a=40.0, scale=0.01)),
]


def scipy_x(frozen, u):
    """x = F^-1(Phi(u)) by scipy.stats, on the nearer tail."""
    return np.where(u < 0, frozen.ppf(special.ndtr(np.minimum(u, 0.0))),
                    frozen.isf(special.ndtr(-np.maximum(u, 0.0))))


def scipy_u(frozen, x):
    """u = Phi^-1(F(x)) by scipy.stats, on the nearer tail."""
    cdf, sf = frozen.cdf(x), frozen.sf(x)
    return np.where(cdf <= 0.5, special.ndtri(cdf), -special.ndtri(sf))


def rtol(kind):
    return 1e-10 if kind == "gamma" else 1e-12


@pytest.mark.parametrize("kind,params,frozen", CASES, ids=[f"{c[0]}-{i}" for i, c in
                                                         enumerate(CASES)])
def test_distribution_maps_match_scipy_both_tails(kind, params, frozen):
    dist = make_distribution(kind, **params)
    x = dist.x_from_u(U)
    np.testing.assert_allclose(x, scipy_x(frozen, U), rtol=rtol(kind), atol=0)
    np.testing.assert_allclose(dist.u_from_x(x), scipy_u(frozen, x), rtol=0, atol=1e-9)
    np.testing.assert_allclose(dist.u_from_x(x), U, rtol=0, atol=1e-8)  # round trip


def test_weibull_support_edge_and_infinite_u():
    # x below 0 lies outside the support: F = 0, u = -inf (scipy.stats: cdf 0)
    dist = make_distribution("weibull", shape=2.0, scale=40.0)
    assert dist.u_from_x(np.array([-1.0, 0.0])).tolist() == [-np.inf, -np.inf]
    assert dist.x_from_u(np.array([-np.inf, np.inf])).tolist() == [0.0, np.inf]


def all_kinds_model():
    """One root per case (uncorrelated), several per kind: the grouped root maps."""
    model = ProbabilisticModel()
    for k, (kind, params, _) in enumerate(CASES):
        model.add(f"{kind}{k}", make_distribution(kind, **params))
    return model


def test_grouped_roots_match_scipy_and_round_trip():
    model = all_kinds_model()
    u = np.column_stack([np.roll(U, 7 * k) for k in range(model.dim)])
    x = model.u_to_x(u)
    for k, (kind, _, frozen) in enumerate(CASES):
        np.testing.assert_allclose(x[f"{kind}{k}"], scipy_x(frozen, u[:, k]),
                                   rtol=rtol(kind), atol=0, err_msg=f"{kind}{k}")
    np.testing.assert_allclose(model.x_to_u(x), u, rtol=0, atol=1e-8)


def children_model():
    """Normal and lognormal children in two layers, by moments and by native parameters,
    with scalar and per-sample parameters (the batched child maps)."""
    model = ProbabilisticModel()
    model.add("q", make_distribution("gamma", shape=4.0, scale=0.5))
    model.add("w", make_distribution("weibull", shape=3.0, scale=20.0))
    model.add_conditional("a", "normal", ["q"], lambda p: {"mean": 5.0 + p["q"], "std": 0.4})
    model.add_conditional("b", "normal", ["w"], lambda p: {"mu": 1.0, "sigma": 0.05 * p["w"]})
    model.add_conditional("c", "lognormal", ["q", "w"],
                          lambda p: {"mean": p["w"], "std": 0.1 * p["w"] * p["q"]})
    model.add_conditional("d", "lognormal", ["q"],
                          lambda p: {"mu_ln": 2.0, "sigma_ln": 0.1 + 0.05 * p["q"]})
    # second layer: parents among the children
    model.add_conditional("e", "normal", ["a", "b"], lambda p: {"mean": p["a"] - p["b"],
                                                                "std": 0.5 + 0.0 * p["a"]})
    model.add_conditional("f", "lognormal", ["c", "q"],
                          lambda p: {"mean": p["c"], "std": 2.0})
    return model


def test_batched_children_match_scipy_per_sample():
    model = children_model()
    rng = np.random.default_rng(17)
    u = rng.standard_normal((60, model.dim)) * 2.5
    u[:2] = [[-8.0] * model.dim, [8.0] * model.dim]
    x = model.u_to_x(u)
    col = {n: k for k, n in enumerate(model.random_names)}
    q, w = x["q"], x["w"]

    def lognormal_moments(mean, std):  # JCSS Probabilistic Model Code, Part 1 (from memory)
        s = np.sqrt(np.log1p((std / mean) ** 2))
        return stats.lognorm(s=s, scale=np.exp(np.log(mean) - 0.5 * s**2))

    expected = {
        "a": stats.norm(loc=5.0 + q, scale=0.4),
        "b": stats.norm(loc=1.0, scale=0.05 * w),
        "c": lognormal_moments(w, 0.1 * w * q),
        "d": stats.lognorm(s=0.1 + 0.05 * q, scale=np.exp(2.0)),
    }
    expected["e"] = stats.norm(loc=x["a"] - x["b"], scale=0.5)
    expected["f"] = lognormal_moments(x["c"], 2.0)
    for name, frozen in expected.items():
        np.testing.assert_allclose(x[name], scipy_x(frozen, u[:, col[name]]), rtol=1e-12,
                                   atol=0, err_msg=name)
    assert list(x) == model.names  # the order the variables were added
    np.testing.assert_allclose(model.x_to_u(x), u, rtol=0, atol=1e-8)


def test_batched_children_of_one_point_and_of_none():
    model = children_model()
    one = model.u_to_x(np.zeros((1, model.dim)))
    assert all(v.shape == (1,) for v in one.values())
    # u = 0 is the median: normal a = 5 + median of q
    assert one["a"][0] == pytest.approx(5.0 + stats.gamma(a=4.0, scale=0.5).median(), rel=1e-12)
    none = model.u_to_x(np.zeros((0, model.dim)))
    assert all(v.shape == (0,) for v in none.values())


@pytest.mark.parametrize("params,message", [
    (lambda p: {"mean": p["q"] - 2.0, "std": 0.1}, "lognormal mean must be > 0"),
    (lambda p: {"mean": 3.0, "std": np.where(p["q"] > 2.0, 0.0, 0.3)}, "std must be > 0"),
    (lambda p: {"mu_ln": np.where(p["q"] > 2.0, np.inf, 1.0), "sigma_ln": 0.1}, "finite"),
    (lambda p: {"mean": "three", "std": 0.1}, "must be a number"),
    (lambda p: [p["q"], 0.1], "params must return a dict"),
])
def test_bad_parameter_in_a_batch_names_its_variable(params, message):
    # a good child of the same kind and layer sits beside the bad one in the batch
    model = ProbabilisticModel()
    model.add("q", make_distribution("gamma", shape=4.0, scale=0.5))
    model.add_conditional("good", "lognormal", ["q"], lambda p: {"mean": p["q"], "std": 0.1})
    model.add_conditional("bad", "lognormal", ["q"], params)
    u = np.column_stack([np.linspace(-3.0, 3.0, 9)] * 3)
    with pytest.raises(InputError, match=message) as raised:
        model.u_to_x(u)
    assert "'bad'" in str(raised.value)


def test_finite_difference_batch_same_values_as_one_point_at_a_time():
    # FORM's gradient batch: the base point, then one step per coordinate; the gamma
    # roots are inverted once for the points that repeat the base point's gamma values
    model = children_model()
    model.add("q2", make_distribution("gamma", shape=0.8, scale=3.0))
    base = np.array([-7.5, 0.3, 1.1, -0.4, 2.0, -1.7, 0.9, 7.5, 6.0])[: model.dim]
    points = np.vstack([base, base + np.diag(np.full(model.dim, 1e-4))])
    batch = model.u_to_x(points)
    for k, point in enumerate(points):
        alone = model.u_to_x(point[None, :])
        for name in model.names:
            assert batch[name][k] == alone[name][0], (name, k)
    col = {n: k for k, n in enumerate(model.random_names)}
    for name, frozen in (("q", stats.gamma(a=4.0, scale=0.5)),
                         ("q2", stats.gamma(a=0.8, scale=3.0))):
        np.testing.assert_allclose(batch[name], scipy_x(frozen, points[:, col[name]]),
                                   rtol=1e-10, atol=0, err_msg=name)
