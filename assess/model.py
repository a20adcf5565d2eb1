"""Probabilistic model: basic variables in a directed acyclic graph, mapped to standard normal.

Root variables have fixed marginals and may be correlated through a Gaussian copula
(Nataf model, Liu & Der Kiureghian 1986); a conditional variable takes its parameters
from the sampled values of variables added before it, and is mapped through its
conditional inverse CDF (Rosenblatt 1952). This is how posterior parameter uncertainty
(e.g. the mean and spread of log-strength) enters a reliability analysis.

Standard normal coordinates, in the order of `ProbabilisticModel.random_names`:

- correlated roots: z = L u_roots with R0 = L L^T (Nataf-corrected), x = F^-1(Phi(z));
- conditional children: x = F^-1(Phi(u_child) | parents' values);
- deterministic variables take no coordinate.

References
----------
M. Rosenblatt, "Remarks on a multivariate transformation", Annals of Mathematical
Statistics 23(3), 470-472, 1952, doi:10.1214/aoms/1177729394.
P.-L. Liu and A. Der Kiureghian, "Multivariate distribution models with prescribed
marginals and covariances", Probabilistic Engineering Mechanics 1(2), 105-112, 1986.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np
from scipy import linalg, special

from assess.distributions import (
    KINDS,
    Distribution,
    conditional_x_from_u,
    make_distribution,
    weibull_x_from_u,
)
from assess.errors import InputError
from assess.nataf import corrected_correlation_matrix
from assess.reliability.problem import StandardNormalProblem


@dataclass(frozen=True)
class _Root:
    distribution: Distribution


@dataclass(frozen=True)
class _Conditional:
    kind: str
    parents: tuple
    params: Callable[[dict], dict]


_ROOT, _CONSTANT, _GROUPED = "root", "constant", "grouped"
_GROUPED_KINDS = {
    "normal": ("mu", "sigma"),
    "lognormal": ("mu_ln", "sigma_ln"),
    "gumbel": ("loc", "scale"),
    "weibull": ("shape", "scale"),
    "gamma": ("shape", "scale"),
}
"""Root kinds mapped together, one numpy call for all roots of a kind (the same closed forms
as `assess.distributions.Distribution.x_from_u`, element by element)."""


def _gamma_inverse(shape: np.ndarray, zt: np.ndarray) -> np.ndarray:
    """Standard gamma quantiles at Phi(zt) [-], shape (k, 1) against zt (k, n): the lower
    and upper tails through their own inverses (the nearer tail probability)."""
    values = np.empty(zt.shape)
    shape = np.broadcast_to(shape, zt.shape)
    low = zt < 0.0
    high = ~low
    values[low] = special.gammaincinv(shape[low], special.ndtr(zt[low]))
    values[high] = special.gammainccinv(shape[high], special.ndtr(-zt[high]))
    return values


def _standard_gamma_values(shape: np.ndarray, zt: np.ndarray, look_for_repeats: bool
                           ) -> np.ndarray:
    """`_gamma_inverse`; with ``look_for_repeats`` (a batch of dim + 1 points, the size of
    a finite-difference gradient batch: the base point first, then one step per
    coordinate) the points whose gamma coordinates all equal those of the first point take
    the first point's values instead of new inversions (the incomplete-gamma inverses
    iterate and cost about 0.5-1 us a value)."""
    if not look_for_repeats or zt.shape[1] < 3:
        return _gamma_inverse(shape, zt)
    repeat = (zt[:, 1:] == zt[:, :1]).all(axis=0)
    if not repeat.any():
        return _gamma_inverse(shape, zt)
    own = np.concatenate(([True], ~repeat))
    values = np.empty(zt.shape)
    values[:, own] = _gamma_inverse(shape, zt[:, own])
    values[:, 1:][:, repeat] = values[:, :1]
    return values


def _grouped_roots(groups: list, z: np.ndarray, gradient_sized: bool = False
                   ) -> dict[str, np.ndarray]:
    """Physical values of the grouped roots from their normal-space values z [units]
    (``gradient_sized``: the batch has dim + 1 points, see `_standard_gamma_values`)."""
    out: dict[str, np.ndarray] = {}
    for kind, names, indices, p in groups:
        zt = np.ascontiguousarray(z[:, indices].T)  # one row per variable
        if kind == "normal":
            values = p["mu"] + p["sigma"] * zt
        elif kind == "lognormal":
            values = np.exp(p["mu_ln"] + p["sigma_ln"] * zt)
        elif kind == "gumbel":
            values = p["loc"] - p["scale"] * np.log(-special.log_ndtr(zt))
        elif kind == "weibull":
            values = weibull_x_from_u(p["shape"], p["scale"], zt)
        else:
            values = p["scale"] * _standard_gamma_values(p["shape"], zt, gradient_sized)
        for row, name in enumerate(names):
            out[name] = values[row]
    return out


_BATCHED_KINDS = ("normal", "lognormal")
"""Conditional kinds mapped together, one numpy call per kind and parameter form for all
children whose parents are known (the same arithmetic as `conditional_x_from_u`)."""


def _batch_form(kind: str, values) -> str | None:
    """"moments" (mean, std) or "native" parameters of a batched kind, else None."""
    if not isinstance(values, dict) or len(values) != 2:
        return None
    if "mean" in values and "std" in values:
        return "moments"
    native = _GROUPED_KINDS[kind]
    if native[0] in values and native[1] in values:
        return "native"
    return None


def _batched_children(kind: str, form: str, entries: list, u: np.ndarray,
                      n_points: int) -> np.ndarray | None:
    """Values (k, n) of k conditional children of one kind and parameter form.

    Element by element the arithmetic of `assess.distributions.conditional_x_from_u`
    (normal: location + spread u; lognormal: exp(location + spread u), with the
    lognormal's (mu_ln, sigma_ln) from mean and std as `make_distribution` computes them).
    Returns None when a parameter is not a number of the right shape or fails a check:
    the caller then maps each child on its own, which raises the usual message.
    """
    keys = ("mean", "std") if form == "moments" else _GROUPED_KINDS[kind]
    first = np.empty((len(entries), n_points))
    second = np.empty((len(entries), n_points))
    try:
        for row, (_, _, values) in enumerate(entries):
            first[row] = values[keys[0]]
            second[row] = values[keys[1]]
    except (TypeError, ValueError):
        return None
    # NaN fails "> 0" and an infinite term makes the sum infinite (as in conditional_x_from_u)
    if not ((second > 0).all() and np.isfinite(first + second).all()):
        return None
    if form == "moments" and kind == "lognormal":
        if not (first > 0).all():
            return None
        spread = np.sqrt(np.log1p((second / first) ** 2))
        location = np.log(first) - 0.5 * spread**2
    else:
        location, spread = first, second
    coordinates = u[:, [column for _, column, _ in entries]].T
    if kind == "normal":
        return location + spread * coordinates
    return np.exp(location + spread * coordinates)


def _as_points(value, n_points: int) -> np.ndarray:
    """``value`` as a float array of shape (n_points,)."""
    value = np.asarray(value, dtype=float)
    if value.shape != (n_points,):
        value = np.broadcast_to(value, (n_points,)).astype(float)
    return value


@dataclass(frozen=True)
class _Plan:
    """What `ProbabilisticModel.u_to_x` does, worked out once: the u columns of the roots,
    whether they are correlated, one step per root or constant in the order added, and
    the conditional children in layers (a child's parents all lie in earlier layers or
    are roots), each layer a list of (name, variable, u column)."""

    names: list
    random_names: list
    dim: int
    root_columns: list
    identity: bool
    steps: list
    groups: list
    layers: list


class ProbabilisticModel:
    """Basic variables of a reliability problem, in the order they were added.

    Examples
    --------
    >>> model = ProbabilisticModel()
    >>> model.add("mu_ln_fc", make_distribution("normal", mean=3.4, std=0.05))
    >>> model.add_conditional("fc", "lognormal", ["mu_ln_fc"],
    ...                       lambda p: {"mu_ln": p["mu_ln_fc"], "sigma_ln": 0.15})
    >>> model.dim
    2
    """

    def __init__(self):
        self._variables: dict[str, _Root | _Conditional] = {}
        self._correlations: dict[tuple[str, str], float] = {}
        self._transform = None
        self._plan: _Plan | None = None

    # -- building ---------------------------------------------------------------
    def _check_new_name(self, name) -> None:
        if not isinstance(name, str) or not name.strip():
            raise InputError(f"variable name must be a non-empty text, got {name!r}")
        if name in self._variables:
            raise InputError(f"variable '{name}' is already defined")

    def add(self, name: str, distribution: Distribution) -> None:
        """Add a root variable with fixed parameters.

        Parameters
        ----------
        name : str
            Variable name, unique in the model.
        distribution : Distribution
            Its marginal, from `make_distribution` with scalar parameters.
        """
        self._check_new_name(name)
        if not isinstance(distribution, Distribution):
            raise InputError(f"variable '{name}': expected a Distribution (from "
                             f"make_distribution), got {type(distribution).__name__}")
        if not distribution.is_scalar:
            raise InputError(f"variable '{name}': a root variable needs fixed (scalar) "
                             "parameters; use add_conditional for parameters that vary")
        self._variables[name] = _Root(distribution.renamed(name))
        self._transform = None

    def add_conditional(self, name: str, kind: str, parents: Sequence[str],
                        params: Callable[[dict[str, np.ndarray]], dict]) -> None:
        """Add a variable whose distribution parameters depend on earlier variables.

        Parameters
        ----------
        name : str
            Variable name, unique in the model.
        kind : str
            Distribution kind, one of `assess.distributions.KINDS`.
        parents : list of str
            Names of variables already in the model (Rosenblatt order).
        params : callable
            ``params({parent: array (n,)}) -> dict`` of keyword arguments for
            `make_distribution` (``mean``/``std`` or native ones), vectorised
            over the n samples.
        """
        self._check_new_name(name)
        if kind not in KINDS:
            raise InputError(f"variable '{name}': unknown distribution kind {kind!r}; "
                             f"valid kinds are: {', '.join(KINDS)}")
        if isinstance(parents, str):
            parents = [parents]
        for parent in parents:
            if parent not in self._variables:
                raise InputError(
                    f"variable '{name}': parent '{parent}' is not defined yet; add every "
                    "parent before the variables that depend on it "
                    f"(defined so far: {', '.join(self._variables) or 'none'})")
        if not callable(params):
            raise InputError(f"variable '{name}': params must be a function of the parents' "
                             "values returning a dict of distribution parameters")
        self._variables[name] = _Conditional(kind, tuple(parents), params)
        self._transform = None

    def set_correlation(self, a: str, b: str, rho: float) -> None:
        """Set the Pearson correlation [-] between two random root variables.

        The Nataf correction is applied when the transform is first needed.
        """
        for label in (a, b):
            variable = self._variables.get(label)
            if variable is None:
                raise InputError(f"correlation: variable '{label}' is not defined")
            if isinstance(variable, _Conditional):
                raise InputError(f"correlation: variable '{label}' is conditional on other "
                                 "variables; only root variables can be correlated")
            if not variable.distribution.is_random:
                raise InputError(f"correlation: variable '{label}' is deterministic and "
                                 "cannot be correlated")
        if a == b:
            raise InputError(f"correlation: a variable ('{a}') cannot be correlated with itself")
        rho = float(rho)
        if not -1.0 < rho < 1.0:
            raise InputError(f"correlation between '{a}' and '{b}' must lie strictly between "
                             f"-1 and 1, got {rho:.6g}")
        key = (a, b) if list(self._variables).index(a) < list(self._variables).index(b) else (b, a)
        self._correlations[key] = rho
        self._transform = None

    # -- structure --------------------------------------------------------------
    @property
    def names(self) -> list[str]:
        """All variable names, in the order added."""
        return list(self._variables)

    def _is_random(self, name: str) -> bool:
        variable = self._variables[name]
        if isinstance(variable, _Root):
            return variable.distribution.is_random
        return variable.kind != "deterministic"

    @property
    def random_names(self) -> list[str]:
        """Names of the variables that own a standard normal coordinate, in u-column order."""
        return [n for n in self._variables if self._is_random(n)]

    @property
    def dim(self) -> int:
        """Number of standard normal coordinates [-]."""
        return len(self.random_names)

    def parents(self, name: str) -> tuple[str, ...]:
        """Parents of a variable (empty for a root)."""
        variable = self._variable(name)
        return variable.parents if isinstance(variable, _Conditional) else ()

    def marginal(self, name: str) -> Distribution:
        """Distribution of a root variable."""
        variable = self._variable(name)
        if isinstance(variable, _Conditional):
            raise InputError(f"variable '{name}' is conditional; its distribution depends on "
                             f"{', '.join(variable.parents)}")
        return variable.distribution

    def correlation_matrix(self) -> tuple[list[str], np.ndarray, np.ndarray]:
        """Random roots, their target correlation R and the Nataf-corrected R0 [-]."""
        roots, R, R0, _ = self._build()
        return list(roots), R.copy(), R0.copy()

    def _variable(self, name: str):
        if name not in self._variables:
            raise InputError(f"variable '{name}' is not defined")
        return self._variables[name]

    def _build(self):
        if self._transform is None:
            roots = [n for n, v in self._variables.items()
                     if isinstance(v, _Root) and v.distribution.is_random]
            index = {n: k for k, n in enumerate(roots)}
            R = np.eye(len(roots))
            for (a, b), rho in self._correlations.items():
                R[index[a], index[b]] = R[index[b], index[a]] = rho
            if self._correlations:
                R0 = corrected_correlation_matrix(
                    [self._variables[n].distribution for n in roots], R, names=roots)
            else:
                R0 = R.copy()
            self._transform = (roots, R, R0, np.linalg.cholesky(R0))
            self._plan = self._make_plan(roots)
        return self._transform

    def _make_plan(self, roots: list[str]) -> _Plan:
        """The steps of `u_to_x`, fixed once per model (until a variable is added)."""
        random_names = self.random_names
        column = {n: k for k, n in enumerate(random_names)}
        steps: list[tuple] = []
        members: dict[str, list] = {}
        depth: dict[str, int] = {}
        layers: list[list] = []
        for name, variable in self._variables.items():
            if isinstance(variable, _Root):
                dist = variable.distribution
                if dist.is_random and dist.kind in _GROUPED_KINDS:
                    members.setdefault(dist.kind, []).append((name, dist, roots.index(name)))
                    steps.append((name, _GROUPED, None, None))
                elif dist.is_random:
                    steps.append((name, _ROOT, dist.x_from_u, roots.index(name)))
                else:
                    steps.append((name, _CONSTANT, float(dist.params["value"]), None))
            else:
                depth[name] = 1 + max(depth.get(p, -1) for p in variable.parents)
                if depth[name] == len(layers):
                    layers.append([])
                layers[depth[name]].append((name, variable, column.get(name)))
        root_columns = [column[n] for n in roots]
        identity = not self._correlations or root_columns == []
        groups = []
        for kind, entries in members.items():
            keys = _GROUPED_KINDS[kind]
            params = {k: np.array([[float(d.params[k])] for _, d, _ in entries]) for k in keys}
            groups.append((kind, [n for n, _, _ in entries], [i for _, _, i in entries], params))
        return _Plan(list(self._variables), random_names, len(random_names), root_columns,
                     identity, steps, groups, layers)

    def _conditional_distribution(self, name: str, x: dict) -> Distribution:
        variable = self._variables[name]
        values = variable.params({p: x[p] for p in variable.parents})
        if not isinstance(values, dict):
            raise InputError(f"variable '{name}': params must return a dict of distribution "
                             f"parameters, got {type(values).__name__}")
        return make_distribution(variable.kind, name=name, **values)

    # -- transforms -------------------------------------------------------------
    def u_to_x(self, u) -> dict[str, np.ndarray]:
        """Physical values from standard normal points.

        Parameters
        ----------
        u : array_like, shape (n, dim)
            Independent standard normal coordinates, columns in `random_names` order [-].

        Returns
        -------
        dict
            name -> ndarray (n,) [variable units], for every variable in `names`.
        """
        u = np.atleast_2d(np.asarray(u, dtype=float))
        _, _, _, L = self._build()
        plan = self._plan
        if u.ndim != 2 or u.shape[1] != plan.dim:
            raise InputError(f"u must have shape (n, {plan.dim}), got {u.shape}")
        n_points = u.shape[0]
        if plan.identity:  # no correlation: z = u (a product with I would turn inf into NaN)
            z = u[:, plan.root_columns]
        else:
            z = u[:, plan.root_columns] @ L.T
        grouped = _grouped_roots(plan.groups, z, n_points == plan.dim + 1)
        x: dict[str, np.ndarray] = dict.fromkeys(plan.names)  # the order of `names`
        for name, step, data, where in plan.steps:
            if step is _GROUPED:
                x[name] = grouped[name]
            elif step is _ROOT:
                x[name] = _as_points(data(z[:, where]), n_points)
            else:
                x[name] = np.full(n_points, data)
        for layer in plan.layers:
            batches: dict[tuple, list] = {}
            for name, variable, column in layer:
                values = variable.params({p: x[p] for p in variable.parents})
                form = _batch_form(variable.kind, values) if variable.kind in _BATCHED_KINDS \
                    else None
                if form is None:
                    x[name] = _as_points(
                        self._child_values(name, variable, values, u, column, n_points), n_points)
                else:
                    batches.setdefault((variable.kind, form), []).append((name, column, values))
            for (kind, form), entries in batches.items():
                rows = _batched_children(kind, form, entries, u, n_points)
                for k, (name, column, values) in enumerate(entries):
                    x[name] = rows[k] if rows is not None else _as_points(self._child_values(
                        name, self._variables[name], values, u, column, n_points), n_points)
        return x

    def _child_values(self, name: str, variable: _Conditional, values, u: np.ndarray,
                      column: int | None, n_points: int) -> np.ndarray:
        """Values of a conditional variable from its parameters ``values`` (what its
        ``params`` returned for the parents' values)."""
        if not isinstance(values, dict):
            raise InputError(f"variable '{name}': params must return a dict of distribution "
                             f"parameters, got {type(values).__name__}")
        if variable.kind == "deterministic":
            dist = make_distribution(variable.kind, name=name, **values)
            return dist.x_from_u(np.zeros(n_points))
        return conditional_x_from_u(variable.kind, values, u[:, column], name)

    def x_to_u(self, x: dict) -> np.ndarray:
        """Standard normal coordinates from physical values (inverse of `u_to_x`).

        Parameters
        ----------
        x : dict
            name -> array (n,) for every variable in `names` [variable units].

        Returns
        -------
        ndarray, shape (n, dim) [-]
        """
        missing = [n for n in self._variables if n not in x]
        if missing:
            raise InputError(f"values missing for variable(s): {', '.join(missing)}")
        x = {n: np.atleast_1d(np.asarray(x[n], dtype=float)) for n in self._variables}
        n_points = max(v.shape[0] for v in x.values()) if x else 0
        x = {n: np.broadcast_to(v, (n_points,)) for n, v in x.items()}
        roots, _, _, L = self._build()
        u_of: dict[str, np.ndarray] = {}
        for name, variable in self._variables.items():
            if isinstance(variable, _Root):
                if variable.distribution.is_random:
                    u_of[name] = variable.distribution.u_from_x(x[name])
            else:
                dist = self._conditional_distribution(name, x)
                if dist.is_random:
                    u_of[name] = dist.u_from_x(x[name])
        if roots:
            z = np.column_stack([u_of[n] for n in roots])
            u_roots = linalg.solve_triangular(L, z.T, lower=True).T
            for k, n in enumerate(roots):
                u_of[n] = u_roots[:, k]
        return np.column_stack([u_of[n] for n in self.random_names]) if self.dim else \
            np.zeros((n_points, 0))

    def sample(self, n: int, seed=None) -> dict[str, np.ndarray]:
        """Draw n joint samples [variable units].

        Parameters
        ----------
        n : int
            Number of samples.
        seed : int or numpy.random.Generator, optional
            Pass an int for reproducible output across calls.
        """
        if int(n) < 1:
            raise InputError(f"number of samples must be a positive integer, got {n!r}")
        rng = np.random.default_rng(seed)
        return self.u_to_x(rng.standard_normal((int(n), self.dim)))

    def problem(self, limit_state: Callable[[dict], np.ndarray],
                mode_names: Sequence[str] | None = None) -> StandardNormalProblem:
        """Reliability problem in standard normal space for a vectorised limit state.

        Parameters
        ----------
        limit_state : callable
            ``limit_state(x)`` with x a dict name -> array (n,), returns g of shape
            (n,) or (n, m) for m modes; g <= 0 is failure [units of g].
        mode_names : sequence of str, optional
            Names of the failure modes when g has several columns.
        """
        if self.dim == 0:
            raise InputError("the model has no random variable; add at least one before "
                             "building a reliability problem")
        self._build()
        return StandardNormalProblem(
            g_u=lambda u: limit_state(self.u_to_x(u)), dim=self.dim, names=self.random_names,
            to_physical=self.u_to_x, mode_names=mode_names)


__all__ = ["ProbabilisticModel"]
