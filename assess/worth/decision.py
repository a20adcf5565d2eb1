"""Decision alternatives and their expected cost given the failure probability.

The caller describes what can be done with a member (keep it as it is, repair,
strengthen, restrict the load, replace it ...), the cost of each alternative and,
for every current-posterior draw theta_k of the uncertain parameters, the
conditional failure probability of each alternative. Everything downstream
(prior decision, preposterior analysis) works on the matrix of expected cost per
draw, so the reliability engine runs once, before the value-of-information loop.

Source of the framework: Raiffa & Schlaifer (1961) *Applied Statistical Decision
Theory*, Harvard University; Benjamin & Cornell (1970) *Probability, Statistics
and Decision for Civil Engineers*, McGraw-Hill, ch. 5-6 (both from memory).
"""

from __future__ import annotations

import dataclasses
import math
from typing import Sequence

import numpy as np

from assess.errors import InputError


@dataclasses.dataclass(frozen=True)
class Alternative:
    """One thing the owner can do with the member.

    Attributes
    ----------
    name : str
        Short label, e.g. ``"keep as is"``, ``"strengthen"``, ``"replace"``.
    cost : float
        Cost of carrying the alternative out, at decision time [currency].
        Its effect on reliability enters through the failure probability the
        caller gives for this alternative (column of ``DecisionProblem.pf``).
    description : str
        Free text for reports (what is done, assumed effect).
    """

    name: str
    cost: float
    description: str = ""

    def __post_init__(self):
        if not isinstance(self.name, str) or not self.name.strip():
            raise InputError(f"an alternative needs a non-empty name, got {self.name!r}")
        if not (isinstance(self.cost, (int, float, np.floating, np.integer))
                and math.isfinite(self.cost) and self.cost >= 0):
            raise InputError(f"the cost of alternative '{self.name}' must be a finite number "
                             f">= 0 [currency], got {self.cost!r}")


def discount_factors(rate: float, years: int) -> np.ndarray:
    """Present-value factors (1 + r)^-t for t = 1 .. years [-].

    Parameters
    ----------
    rate : float
        Annual discount rate r [1/yr], e.g. 0.02; r = 0 gives ones.
    years : int
        Number of years T of the decision horizon [yr].

    Returns
    -------
    ndarray of shape (years,)
        Factor for a cost falling at the end of year t [-].
    """
    if not (math.isfinite(rate) and rate > -1.0):
        raise InputError(f"the discount rate must be a finite number > -1 [1/yr], got {rate!r}")
    t = np.arange(1, int(years) + 1, dtype=float)
    return (1.0 + rate) ** -t


def expected_cost(action_cost, failure_cost, pf):
    """Expected total cost C_a + C_F * pf of an alternative [currency].

    Parameters
    ----------
    action_cost : array_like
        Cost of the alternative [currency].
    failure_cost : array_like
        Cost of failure C_F, all consequences included [currency].
    pf : array_like
        Failure probability over the decision horizon (or the discounted sum of
        annual failure probabilities) [-].
    """
    return np.asarray(action_cost, dtype=float) + np.asarray(failure_cost, dtype=float) * pf


def _check_probabilities(values: np.ndarray, key: str) -> None:
    if not np.all(np.isfinite(values)):
        raise InputError("failure probabilities must be finite numbers, found NaN or inf",
                         column=key)
    if values.min() < 0.0 or values.max() > 1.0:
        raise InputError(f"failure probabilities must lie in [0, 1], found values from "
                         f"{values.min():.3g} to {values.max():.3g}", column=key)


@dataclasses.dataclass(frozen=True, eq=False)
class DecisionProblem:
    """Alternatives, costs and per-draw failure probabilities on current knowledge.

    Give exactly one of ``pf`` (horizon form) or ``annual_pf`` (annual form).

    Attributes
    ----------
    alternatives : sequence of Alternative
        The A alternatives; names must be unique.
    failure_cost : float
        Cost of failure C_F (repair or rebuilding, injuries, loss of use, ...),
        at decision time [currency].
    theta : ndarray of shape (N, p)
        Equally weighted draws of the uncertain parameters from the current
        posterior (or prior) [parameter units].
    parameter_names : sequence of str
        Names of the p columns of ``theta``; test programmes refer to them.
    pf : ndarray of shape (N, A), optional
        Horizon form: pf[k, a] = probability of failure of alternative a over
        the decision horizon given theta_k [-]. Failure cost is not discounted.
    annual_pf : ndarray of shape (N, A, T), optional
        Annual form: annual_pf[k, a, t] = probability that alternative a fails in
        year t + 1 of the horizon given theta_k (the increment of the cumulative
        failure probability, so that the sum over t is the horizon pf) [-].
    discount_rate : float
        Annual discount rate r of the annual form [1/yr]; a failure in year t
        costs C_F (1 + r)^-t at decision time. Must stay 0 with the horizon form.
    keep : str, optional
        Name of the "keep as is" alternative whose reliability index decides
        whether the structure is adequate; default the first alternative.
    currency : str
        Currency label for reports, e.g. ``"EUR"``.

    Notes
    -----
    Expected cost of alternative a for knowledge expressed by weights w over
    the draws (sum w = 1):

    .. math::
        E[C_a] = C_a + C_F \\sum_k w_k \\, \\tilde p_{k,a}, \\qquad
        \\tilde p_{k,a} = pf_{k,a} \\;\\text{(horizon)}, \\quad
        \\tilde p_{k,a} = \\sum_{t=1}^{T} (1+r)^{-t} \\, p_{k,a,t} \\;\\text{(annual)}.

    With r = 0 the annual form gives the same cost as the horizon form with
    pf = sum over t. Action costs are taken as paid at decision time.
    """

    alternatives: Sequence[Alternative]
    failure_cost: float
    theta: np.ndarray
    parameter_names: Sequence[str]
    pf: np.ndarray | None = None
    annual_pf: np.ndarray | None = None
    discount_rate: float = 0.0
    keep: str | None = None
    currency: str = "EUR"

    def __post_init__(self):
        alternatives = tuple(self.alternatives)
        if len(alternatives) < 2:
            raise InputError(f"a decision needs at least two alternatives, got "
                             f"{len(alternatives)}", column="alternatives")
        for item in alternatives:
            if not isinstance(item, Alternative):
                raise InputError(f"alternatives must be Alternative objects, got {item!r}",
                                 column="alternatives")
        names = [a.name for a in alternatives]
        if len(set(names)) != len(names):
            raise InputError(f"alternative names must be unique, got {names}",
                             column="alternatives")
        if not (math.isfinite(self.failure_cost) and self.failure_cost > 0):
            raise InputError(f"the failure cost must be a finite number > 0 [currency], got "
                             f"{self.failure_cost!r}", column="failure_cost")

        theta = np.asarray(self.theta, dtype=float)
        if theta.ndim == 1:
            theta = theta[:, None]
        if theta.ndim != 2 or theta.shape[0] < 2:
            raise InputError(f"theta must be an array of shape (N, p) with N >= 2 draws, got "
                             f"shape {np.shape(self.theta)}", column="theta")
        if not np.all(np.isfinite(theta)):
            raise InputError("theta draws must be finite numbers, found NaN or inf",
                             column="theta")
        parameter_names = tuple(str(n) for n in self.parameter_names)
        if len(parameter_names) != theta.shape[1] or len(set(parameter_names)) != len(
                parameter_names):
            raise InputError(f"parameter_names must give {theta.shape[1]} unique names, one per "
                             f"column of theta, got {list(parameter_names)}",
                             column="parameter_names")
        n_draws, n_alt = theta.shape[0], len(alternatives)

        if (self.pf is None) == (self.annual_pf is None):
            raise InputError("give exactly one of pf (horizon form, shape (N, A)) or annual_pf "
                             "(annual form, shape (N, A, T))", column="pf")
        if self.pf is not None:
            pf = np.asarray(self.pf, dtype=float)
            if pf.shape != (n_draws, n_alt):
                raise InputError(f"pf must have shape (N, A) = ({n_draws}, {n_alt}), one row per "
                                 f"draw and one column per alternative, got {pf.shape}",
                                 column="pf")
            _check_probabilities(pf, "pf")
            if self.discount_rate != 0.0:
                raise InputError("discounting needs the annual form: give annual_pf of shape "
                                 "(N, A, T) instead of pf, or set discount_rate = 0",
                                 column="discount_rate")
            horizon_pf = pf
            failure_weight = pf
            annual = None
        else:
            annual = np.asarray(self.annual_pf, dtype=float)
            if annual.ndim != 3 or annual.shape[:2] != (n_draws, n_alt) or annual.shape[2] < 1:
                raise InputError(f"annual_pf must have shape (N, A, T) = ({n_draws}, {n_alt}, T), "
                                 f"got {annual.shape}", column="annual_pf")
            _check_probabilities(annual, "annual_pf")
            horizon_pf = annual.sum(axis=2)
            if horizon_pf.max() > 1.0 + 1e-9:
                raise InputError("annual_pf must be the yearly increments of the cumulative "
                                 "failure probability; their sum over the years exceeds 1 for "
                                 "some draw", column="annual_pf")
            failure_weight = annual @ discount_factors(self.discount_rate, annual.shape[2])
        keep = alternatives[0].name if self.keep is None else self.keep
        if keep not in names:
            raise InputError(f"keep must name one of the alternatives {names}, got {keep!r}",
                             column="keep")

        costs = np.array([a.cost for a in alternatives], dtype=float)
        object.__setattr__(self, "alternatives", alternatives)
        object.__setattr__(self, "theta", theta)
        object.__setattr__(self, "parameter_names", parameter_names)
        object.__setattr__(self, "pf", None if self.pf is None else horizon_pf)
        object.__setattr__(self, "annual_pf", annual)
        object.__setattr__(self, "keep", keep)
        object.__setattr__(self, "_horizon_pf", horizon_pf)
        object.__setattr__(self, "_cost_per_draw",
                           expected_cost(costs[None, :], self.failure_cost, failure_weight))

    @property
    def names(self) -> tuple[str, ...]:
        """Names of the alternatives, in column order."""
        return tuple(a.name for a in self.alternatives)

    @property
    def n_draws(self) -> int:
        """Number N of current-posterior draws [-]."""
        return self.theta.shape[0]

    @property
    def keep_index(self) -> int:
        """Column of the "keep as is" alternative."""
        return self.names.index(self.keep)

    @property
    def horizon_pf(self) -> np.ndarray:
        """Failure probability over the horizon per draw and alternative, shape (N, A) [-]."""
        return self._horizon_pf

    @property
    def cost_per_draw(self) -> np.ndarray:
        """Expected cost of each alternative given theta_k, shape (N, A) [currency]."""
        return self._cost_per_draw

    def expected_costs(self, weights=None) -> np.ndarray:
        """Expected cost of each alternative for knowledge given by weights [currency].

        Parameters
        ----------
        weights : array_like of shape (N,) or (J, N), optional
            Normalised weights over the draws (rows sum to 1); default equal weights
            (current knowledge).

        Returns
        -------
        ndarray of shape (A,) or (J, A)
        """
        if weights is None:
            return self._cost_per_draw.mean(axis=0)
        return np.asarray(weights, dtype=float) @ self._cost_per_draw

    def column_index(self, column: int | str, owner: str = "programme") -> int:
        """Index of a theta column given by name or position."""
        return resolve_column(self.parameter_names, column, owner)


def resolve_column(parameter_names: Sequence[str], column: int | str, owner: str) -> int:
    """Index of a theta column given by name or by position.

    Raises InputError naming ``owner`` and the available names when not found.
    """
    if isinstance(column, (int, np.integer)) and not isinstance(column, bool):
        if not 0 <= int(column) < len(parameter_names):
            raise InputError(f"{owner}: column index {column} is outside theta's "
                             f"{len(parameter_names)} columns {list(parameter_names)}")
        return int(column)
    if column not in parameter_names:
        raise InputError(f"{owner}: no parameter named {column!r}; theta has the columns "
                         f"{list(parameter_names)}")
    return list(parameter_names).index(column)
