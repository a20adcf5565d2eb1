"""Candidate test programmes: simulate their outcomes and evaluate their likelihood.

A programme has a name, a cost and two vectorised functions:

- ``simulate(theta, rng)``: theta of shape (M, p) -> one simulated outcome per row,
  shape (M, d) (d = number of summary numbers that describe an outcome);
- ``log_likelihood(outcomes, theta)``: outcomes of shape (J, d) (or one outcome of
  shape (d,)) and draws theta of shape (N, p) -> log-likelihood of shape (J, N)
  (or (N,)), up to a constant that does not depend on theta.

Outcomes are stored as sufficient statistics, so the likelihood of a whole
campaign costs one array expression (Fisher-Neyman factorisation).

Programmes refer to columns of theta by name or by position; the engine calls
``resolve(parameter_names)`` to turn names into positions before use.
"""

from __future__ import annotations

import abc
import dataclasses
import math
from typing import Callable, Sequence

import numpy as np
from scipy.special import xlog1py, xlogy

from assess.errors import InputError
from assess.updating.measurement_error import measurement_sd as _stated_sd
from assess.worth.decision import resolve_column

Column = int | str


def _check_cost(name, cost):
    if not (isinstance(name, str) and name.strip()):
        raise InputError(f"a test programme needs a non-empty name, got {name!r}")
    if not (isinstance(cost, (int, float, np.integer, np.floating)) and math.isfinite(cost)
            and cost >= 0):
        raise InputError(f"programme '{name}': cost must be a finite number >= 0 [currency], "
                         f"got {cost!r}")


def _check_count(name, key, value):
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise InputError(f"programme '{name}': {key} must be a whole number >= 1, got {value!r}")


def _check_sd(name, key, value):
    if not (isinstance(value, (int, float, np.integer, np.floating)) and math.isfinite(value)
            and value >= 0):
        raise InputError(f"programme '{name}': {key} must be a finite number >= 0, got "
                         f"{value!r}")


def _as_outcomes(outcomes, width: int) -> tuple[np.ndarray, bool]:
    """Outcomes as a (J, width) array and whether a single outcome was given."""
    z = np.asarray(outcomes, dtype=float)
    single = z.ndim == 1 and (width > 1 or z.size == 1)
    if single:
        z = z.reshape(1, -1)
    elif z.ndim == 1:
        z = z[:, None]
    if z.ndim != 2 or z.shape[1] != width:
        raise InputError(f"outcomes must have shape (J, {width}) or ({width},), got "
                         f"{np.shape(outcomes)}")
    return z, single


def _column(theta: np.ndarray, column: Column, owner: str) -> np.ndarray:
    if not isinstance(column, (int, np.integer)):
        raise InputError(f"{owner}: column {column!r} is a name; call resolve(parameter_names) "
                         f"first or give the column position")
    return np.asarray(theta, dtype=float)[:, int(column)]


class Programme(abc.ABC):
    """Base of every candidate test programme (see the module docstring)."""

    name: str
    cost: float
    description: str

    @property
    def label(self) -> str:
        """Plain-language description used in recommendations."""
        return self.description or self.default_description()

    def default_description(self) -> str:
        """Description used when none is given."""
        return f"the programme '{self.name}'"

    def resolve(self, parameter_names: Sequence[str]) -> "Programme":
        """Copy with theta columns given by position (names looked up)."""
        return self

    @abc.abstractmethod
    def simulate(self, theta: np.ndarray, rng: np.random.Generator) -> np.ndarray:
        """One simulated outcome per row of theta (M, p) -> (M, d)."""

    @abc.abstractmethod
    def log_likelihood(self, outcomes, theta: np.ndarray) -> np.ndarray:
        """Log-likelihood of outcomes (J, d) for draws theta (N, p) -> (J, N)."""


def _normal_sample_simulate(mean, total_sd, n, rng):
    """Sufficient statistics (sample mean, sum of squared deviations) of n normal values."""
    sample_mean = mean + total_sd / math.sqrt(n) * rng.standard_normal(mean.shape)
    if n > 1:
        sum_squares = total_sd ** 2 * rng.chisquare(n - 1, size=mean.shape)
    else:
        sum_squares = np.zeros_like(mean)
    return np.column_stack([sample_mean, sum_squares])


def _normal_sample_log_likelihood(z, mean, total_sd, n):
    """ln of prod_i phi((x_i - mean)/sd)/sd from (x_bar, S), constant 2 pi dropped.

    sum_i (x_i - mean)^2 = S + n (x_bar - mean)^2 (decomposition of the sum of squares).
    """
    x_bar, sum_squares = z[:, :1], z[:, 1:2]
    variance = total_sd[None, :] ** 2
    return (-n * np.log(total_sd)[None, :]
            - (sum_squares + n * (x_bar - mean[None, :]) ** 2) / (2.0 * variance))


def summarise_readings(values) -> np.ndarray:
    """Outcome row (sample mean, sum of squared deviations) of measured values.

    Use it to feed real test results (e.g. ln of core strengths [ln MPa], or
    measured residual area ratios [-]) to `CoreSampling` or `BreakoutSurvey`.
    """
    x = np.asarray(values, dtype=float).ravel()
    if x.size == 0 or not np.all(np.isfinite(x)):
        raise InputError("readings must be one or more finite numbers")
    return np.array([x.mean(), float(((x - x.mean()) ** 2).sum())])


def _resolve_normal_sample(programme, parameter_names):
    owner = f"programme '{programme.name}'"
    return dataclasses.replace(
        programme, mean_column=resolve_column(parameter_names, programme.mean_column, owner),
        sd_column=resolve_column(parameter_names, programme.sd_column, owner))


def _mean_and_total_sd(programme, theta):
    owner = f"programme '{programme.name}'"
    mean = _column(theta, programme.mean_column, owner)
    sd = _column(theta, programme.sd_column, owner)
    if np.any(sd < 0):
        raise InputError(f"{owner}: the standard-deviation column holds negative values")
    total_sd = np.sqrt(sd ** 2 + programme.measurement_sd ** 2)
    if np.any(total_sd <= 0):
        raise InputError(f"{owner}: the spread of the readings is zero for some draws; give a "
                         f"measurement_sd > 0 or positive standard deviations")
    return mean, total_sd


class NormalSampleProgramme(Programme):
    """n readings of a normal population with a measurement error (shared behaviour).

    Reading i: y_i = mu + sigma eps_i + e_i, eps_i ~ N(0, 1), e_i ~ N(0,
    measurement_sd^2). Outcome: (sample mean, sum of squared deviations).
    Subclasses are dataclasses with ``mean_column``, ``sd_column``,
    ``measurement_sd`` and a count field named by ``COUNT_FIELD``.
    """

    COUNT_FIELD = "count"

    @property
    def sample_size(self) -> int:
        return getattr(self, self.COUNT_FIELD)

    def __post_init__(self):
        _check_cost(self.name, self.cost)
        _check_count(self.name, self.COUNT_FIELD, self.sample_size)
        _check_sd(self.name, "measurement_sd", self.measurement_sd)

    def resolve(self, parameter_names):
        return _resolve_normal_sample(self, parameter_names)

    def simulate(self, theta, rng):
        mean, total_sd = _mean_and_total_sd(self, theta)
        return _normal_sample_simulate(mean, total_sd, self.sample_size, rng)

    def log_likelihood(self, outcomes, theta):
        z, single = _as_outcomes(outcomes, 2)
        mean, total_sd = _mean_and_total_sd(self, theta)
        out = _normal_sample_log_likelihood(z, mean, total_sd, self.sample_size)
        return out[0] if single else out


@dataclasses.dataclass(frozen=True)
class CoreSampling(NormalSampleProgramme):
    """Drill n cores in one zone and measure their compressive strength.

    Model per core i (JCSS PMC Part 3.1 form of the in-situ strength, on logs):
    ln f_i = mu + sigma eps_i + e_i, eps_i ~ N(0, 1), e_i ~ N(0, measurement_sd^2)
    (testing and conversion error on the log scale). The outcome is
    (mean of ln f_i, sum of squared deviations) [ln MPa, (ln MPa)^2].

    Attributes
    ----------
    name : str
        Short label of the programme.
    cost : float
        Cost of drilling, testing and reporting [currency].
    n_cores : int
        Number of cores n [-].
    mean_column, sd_column : int or str
        Theta columns of mu [ln MPa] and sigma [ln MPa] of ln f in the zone.
    measurement_sd : float
        Standard deviation of the measurement error on ln f [ln MPa]; default
        the value the site update uses (``MEASUREMENT_ERRORS["cores"]``, 0.05).
    description : str
        Plain words for reports, e.g. ``"drilling 6 more cores in zone L2"``.
    """

    name: str
    cost: float
    n_cores: int
    mean_column: Column
    sd_column: Column
    measurement_sd: float = _stated_sd("cores")
    description: str = ""

    COUNT_FIELD = "n_cores"

    def default_description(self) -> str:
        return f"drilling {self.n_cores} cores ('{self.name}')"


@dataclasses.dataclass(frozen=True)
class BreakoutSurvey(NormalSampleProgramme):
    """Open m break-outs and measure the residual bar area ratio at each.

    Model per break-out i: r_i = mu_r + sigma_r eps_i + e_i, eps_i ~ N(0, 1),
    e_i ~ N(0, measurement_sd^2) (calliper / section-loss reading error). The
    normal model may give ratios outside [0, 1] in its tails; keep sigma_r small
    against the distance of mu_r from 0 and 1. Outcome: (mean ratio, sum of
    squared deviations) [-, -].

    Attributes
    ----------
    name : str
        Short label of the programme.
    cost : float
        Cost of the break-outs, measurements and reinstatement [currency].
    n_breakouts : int
        Number of break-outs m [-].
    mean_column, sd_column : int or str
        Theta columns of mu_r [-] and sigma_r [-] of the residual area ratio.
    measurement_sd : float
        Standard deviation of the reading error of one ratio [-]; default the
        value the site update uses (``MEASUREMENT_ERRORS["section_loss"]``).
    description : str
        Plain words for reports.
    """

    name: str
    cost: float
    n_breakouts: int
    mean_column: Column
    sd_column: Column
    measurement_sd: float = _stated_sd("section_loss")
    description: str = ""

    COUNT_FIELD = "n_breakouts"

    def default_description(self) -> str:
        return f"opening {self.n_breakouts} break-outs ('{self.name}')"


@dataclasses.dataclass(frozen=True)
class DirectMeasurement(Programme):
    """Measure one parameter directly, n_repeats times, with normal error.

    Reading i: x_i = theta_c + e_i, e_i ~ N(0, error_sd^2), independent. The
    outcome is the mean of the readings (sufficient for theta_c), which is
    N(theta_c, error_sd^2 / n_repeats) [unit of the parameter].

    Attributes
    ----------
    name : str
        Short label of the programme.
    cost : float
        Cost of the measurements [currency].
    column : int or str
        Theta column that is measured.
    error_sd : float
        Standard deviation of one reading's error, > 0 [unit of the parameter].
    n_repeats : int
        Number of independent readings [-].
    description : str
        Plain words for reports.
    """

    name: str
    cost: float
    column: Column
    error_sd: float
    n_repeats: int = 1
    description: str = ""

    def __post_init__(self):
        _check_cost(self.name, self.cost)
        _check_count(self.name, "n_repeats", self.n_repeats)
        _check_sd(self.name, "error_sd", self.error_sd)
        if self.error_sd <= 0:
            raise InputError(f"programme '{self.name}': error_sd must be > 0 (a perfect "
                             f"measurement is the value of perfect information), got "
                             f"{self.error_sd!r}")

    def default_description(self) -> str:
        return f"measuring {self.column} ('{self.name}')"

    def resolve(self, parameter_names):
        owner = f"programme '{self.name}'"
        return dataclasses.replace(self,
                                   column=resolve_column(parameter_names, self.column, owner))

    @property
    def _mean_sd(self) -> float:
        return self.error_sd / math.sqrt(self.n_repeats)

    def simulate(self, theta, rng):
        value = _column(theta, self.column, f"programme '{self.name}'")
        return (value + self._mean_sd * rng.standard_normal(value.shape))[:, None]

    def log_likelihood(self, outcomes, theta):
        z, single = _as_outcomes(outcomes, 1)
        value = _column(theta, self.column, f"programme '{self.name}'")
        out = z - value[None, :]
        out *= out
        out *= -0.5 / self._mean_sd ** 2
        return out[0] if single else out


@dataclasses.dataclass(frozen=True)
class HalfCellSurvey(Programme):
    """Half-cell potential survey of k grid points read as binary indications.

    Each point is active with probability P(active | theta), independently given
    theta (spatial correlation of the corrosion state is neglected, which
    overstates the information of a dense grid). A point indicates corrosion
    (potential below the chosen threshold) with probability PoD if active and
    PFA if passive, so the number of indications Y is binomial(k, q) with
    q = PoD P(active) + PFA (1 - P(active)) (indicator use after Faber & Sorensen
    2002, Struct. Saf. 24:377-396, from memory). Outcome: Y [-].

    Attributes
    ----------
    name : str
        Short label of the programme.
    cost : float
        Cost of the survey [currency].
    n_readings : int
        Number of grid points k [-].
    active_probability : int, str or callable
        Theta column holding P(active) [-], or a function theta (M, p) -> (M,)
        mapping the draws to P(active) (e.g. the probability of corrosion
        initiation from a chloride model).
    probability_of_detection : float
        PoD = P(indication | active) [-].
    probability_of_false_alarm : float
        PFA = P(indication | passive) [-]. PoD = PFA makes the survey worthless.
    description : str
        Plain words for reports.
    """

    name: str
    cost: float
    n_readings: int
    active_probability: Column | Callable[[np.ndarray], np.ndarray]
    probability_of_detection: float
    probability_of_false_alarm: float
    description: str = ""

    def __post_init__(self):
        _check_cost(self.name, self.cost)
        _check_count(self.name, "n_readings", self.n_readings)
        for key in ("probability_of_detection", "probability_of_false_alarm"):
            value = getattr(self, key)
            if not (isinstance(value, (int, float, np.integer, np.floating))
                    and 0.0 <= value <= 1.0):
                raise InputError(f"programme '{self.name}': {key} must be in [0, 1], got "
                                 f"{value!r}")

    def default_description(self) -> str:
        return f"a half-cell survey of {self.n_readings} points ('{self.name}')"

    def resolve(self, parameter_names):
        if callable(self.active_probability):
            return self
        owner = f"programme '{self.name}'"
        return dataclasses.replace(self, active_probability=resolve_column(
            parameter_names, self.active_probability, owner))

    def _indication_probability(self, theta):
        owner = f"programme '{self.name}'"
        if callable(self.active_probability):
            p_active = np.asarray(self.active_probability(np.asarray(theta, dtype=float)),
                                  dtype=float)
        else:
            p_active = _column(theta, self.active_probability, owner)
        if p_active.shape != (np.shape(theta)[0],):
            raise InputError(f"{owner}: P(active) must have one value per draw, got shape "
                             f"{p_active.shape}")
        if not np.all((p_active >= 0) & (p_active <= 1)):
            raise InputError(f"{owner}: P(active) must lie in [0, 1] for every draw")
        pod, pfa = self.probability_of_detection, self.probability_of_false_alarm
        return pod * p_active + pfa * (1.0 - p_active)

    def simulate(self, theta, rng):
        q = self._indication_probability(theta)
        return rng.binomial(self.n_readings, q).astype(float)[:, None]

    def log_likelihood(self, outcomes, theta):
        z, single = _as_outcomes(outcomes, 1)
        if np.any((z < 0) | (z > self.n_readings) | (z != np.round(z))):
            raise InputError(f"programme '{self.name}': the number of indications must be a "
                             f"whole number from 0 to {self.n_readings}")
        q = self._indication_probability(theta)[None, :]
        out = xlogy(z, q) + xlog1py(self.n_readings - z, -q)
        return out[0] if single else out


@dataclasses.dataclass(frozen=True)
class CustomProgramme(Programme):
    """A programme defined by the caller's own two vectorised functions.

    Attributes
    ----------
    name : str
        Short label of the programme.
    cost : float
        Cost of the programme [currency].
    simulate_outcomes : callable
        ``(theta (M, p), rng) -> outcomes (M, d)``.
    outcome_log_likelihood : callable
        ``(outcomes (J, d), theta (N, p)) -> (J, N)`` log-likelihood, up to a
        constant that does not depend on theta.
    description : str
        Plain words for reports.
    """

    name: str
    cost: float
    simulate_outcomes: Callable[[np.ndarray, np.random.Generator], np.ndarray]
    outcome_log_likelihood: Callable[[np.ndarray, np.ndarray], np.ndarray]
    description: str = ""

    def __post_init__(self):
        _check_cost(self.name, self.cost)
        if not (callable(self.simulate_outcomes) and callable(self.outcome_log_likelihood)):
            raise InputError(f"programme '{self.name}': simulate_outcomes and "
                             f"outcome_log_likelihood must be functions")

    def simulate(self, theta, rng):
        out = np.asarray(self.simulate_outcomes(theta, rng), dtype=float)
        return out[:, None] if out.ndim == 1 else out

    def log_likelihood(self, outcomes, theta):
        return np.asarray(self.outcome_log_likelihood(outcomes, theta), dtype=float)
