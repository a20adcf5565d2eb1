"""Carry an uncertain normal population into a reliability model.

Decision 4 of the design notes: the posterior (or prior) enters the
reliability analysis through its parameters, not through a histogram of
draws. For a quantity X with Y = ln X (lognormal) or Y = X (normal) normal
with uncertain (mu, sigma) described by a `NormalGamma`, three basic
variables are added to a `ProbabilisticModel`:

- ``<name>.precision``  q = 1/sigma^2, gamma distributed (root);
- ``<name>.location``   z = (mu - center)/sigma, normal given q through the
  Gaussian copula with normal-space correlation rho (Rosenblatt order):
  z | q ~ N(z_mean + z_std rho Phi^-1(F_q(q)), z_std^2 (1 - rho^2));
- ``<name>``            the physical value, normal (or lognormal) with mean
  center + z sigma and standard deviation sigma given (q, z).

With rho = 0 and z_mean = 0 the marginal of Y is exactly the Student-t
predictive of the normal-gamma model (JCSS Probabilistic Model Code, Part 3.0,
Annex A), so the far tail that decides a pf of 1e-5 comes from a formula.
"""

from __future__ import annotations

import numpy as np

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.model import ProbabilisticModel
from assess.priors.normal_gamma import NormalGamma

PHYSICAL_KINDS = ("lognormal", "normal")


def add_uncertain_quantity(model: ProbabilisticModel, name: str, population: NormalGamma,
                           kind: str = "lognormal") -> None:
    """Add ``<name>.precision``, ``<name>.location`` and ``<name>`` to ``model``.

    Parameters
    ----------
    model : ProbabilisticModel
        The model to extend.
    name : str
        Name of the physical variable (e.g. ``"fc"``) [its units].
    population : NormalGamma
        Uncertain mean and standard deviation of Y (Y = ln X for lognormal).
    kind : {"lognormal", "normal"}
        Distribution of the physical variable given (mu, sigma).
    """
    if kind not in PHYSICAL_KINDS:
        raise InputError(f"kind must be one of {PHYSICAL_KINDS}, got {kind!r}")
    q_name, z_name = f"{name}.precision", f"{name}.location"
    precision = make_distribution("gamma", shape=population.shape, scale=1.0 / population.rate,
                                  name=q_name)
    model.add(q_name, precision)
    rho = float(population.rho)
    if abs(rho) < 1e-12:
        model.add(z_name, make_distribution("normal", mean=population.z_mean,
                                            std=population.z_std, name=z_name))
    else:
        z_std_cond = population.z_std * np.sqrt(1.0 - rho**2)

        def location_params(values, _q=precision, _p=population, _rho=rho, _s=z_std_cond):
            score = _q.u_from_x(values[q_name])
            return {"mean": _p.z_mean + _p.z_std * _rho * score, "std": _s}

        model.add_conditional(z_name, "normal", [q_name], location_params)

    center = float(population.center)

    def physical_params(values, _c=center):
        sigma = 1.0 / np.sqrt(values[q_name])
        mean = _c + values[z_name] * sigma
        if kind == "lognormal":
            return {"mu_ln": mean, "sigma_ln": sigma}
        return {"mean": mean, "std": sigma}

    model.add_conditional(name, kind, [q_name, z_name], physical_params)


def predictive_probability_below(population: NormalGamma, threshold: float,
                                 kind: str = "lognormal") -> float:
    """Closed-form P(X < threshold) from the Student-t predictive (rho = 0 only) [-]."""
    y = np.log(threshold) if kind == "lognormal" else threshold
    return float(population.predictive().cdf(y))
