"""Corrosion initiation time as a random variable: sampling and probability of initiation.

The parameters of the chloride or carbonation model are given as a dictionary
that maps each model argument to a number (fixed), a `DistributionSpec` or a
frozen scipy.stats distribution. Each sample of the parameters gives one
initiation time through the closed-form inverse of the model; the probability
of initiation by age t is P(t_i <= t), estimated with its binomial standard
error. `first_crossing_time` solves the same depassivation condition by
vectorised bisection for models without a closed-form inverse.

Chloride variables (arguments of `chloride.initiation_time`):
``cover_mm`` [mm], ``critical_chloride`` and ``surface_chloride``
[% by mass of binder], ``d_app_ref_mm2_per_year`` [mm2/yr], ``age_ref_years`` [yr],
``ageing_exponent`` [-] (required); ``initial_chloride`` [% binder],
``delta_x_mm`` [mm], and either ``temperature_factor`` [-] or both
``temperature_coefficient_k`` [K] and ``annual_mean_temperature_k`` [K] (optional).

Carbonation variables: ``cover_mm`` [mm], ``rate_mm_per_sqrt_year``
[mm/sqrt(yr)] (required); ``weather_exponent`` [-], ``age_ref_years`` [yr]
(optional).

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B, full-probabilistic depassivation limit states (from memory).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from assess.deterioration import carbonation, chloride
from assess.deterioration.defaults import DistributionSpec
from assess.errors import InputError
from assess.reliability.crude import check_int, resolve_seed

_REQUIRED = {
    "chloride": ("cover_mm", "critical_chloride", "surface_chloride",
                 "d_app_ref_mm2_per_year", "age_ref_years", "ageing_exponent"),
    "carbonation": ("cover_mm", "rate_mm_per_sqrt_year"),
}
_OPTIONAL = {
    "chloride": ("initial_chloride", "delta_x_mm", "temperature_factor",
                 "temperature_coefficient_k", "annual_mean_temperature_k"),
    "carbonation": ("weather_exponent", "age_ref_years"),
}
MODELS = tuple(_REQUIRED)


@dataclasses.dataclass(frozen=True)
class InitiationProbability:
    """Probability of corrosion initiation by given ages, from Monte Carlo.

    Attributes
    ----------
    age_years : ndarray
        Ages at which the probability is evaluated [yr].
    probability : ndarray
        P(t_i <= age) [-], same shape as ``age_years``.
    standard_error : ndarray
        Binomial standard error sqrt(p (1 - p) / n) of each estimate [-].
    n_samples : int
        Number of parameter samples [-].
    seed : int or None
        Seed that reproduces the run.
    model : str
        ``"chloride"`` or ``"carbonation"``.
    """

    age_years: np.ndarray
    probability: np.ndarray
    standard_error: np.ndarray
    n_samples: int
    seed: int | None
    model: str


def _check_distributions(distributions, model):
    if model not in MODELS:
        raise InputError(f"The 'model' parameter must be one of {MODELS}. Got {model!r} "
                         "instead.")
    if not isinstance(distributions, dict):
        raise InputError("The 'distributions' parameter must be a dict mapping variable "
                         f"names to numbers or distributions. Got {type(distributions).__name__}.")
    allowed = _REQUIRED[model] + _OPTIONAL[model]
    for key, value in distributions.items():
        if key not in allowed:
            raise InputError(f"Unknown variable {key!r} for the {model} model. Valid names: "
                             f"{list(allowed)}.", column=f"distributions.{key}")
        is_number = isinstance(value, (int, float, np.integer, np.floating)) \
            and not isinstance(value, bool)
        if not (is_number or isinstance(value, DistributionSpec) or hasattr(value, "rvs")):
            raise InputError(f"Variable {key!r} must be a number, a DistributionSpec or a "
                             f"frozen scipy.stats distribution. Got {type(value).__name__}.",
                             column=f"distributions.{key}")
    missing = [k for k in _REQUIRED[model] if k not in distributions]
    if missing:
        raise InputError(f"The {model} model needs the variable(s) {missing}.",
                         column="distributions")
    if model == "chloride":
        pair = {"temperature_coefficient_k", "annual_mean_temperature_k"}
        given = pair & set(distributions)
        if given and (given != pair or "temperature_factor" in distributions):
            raise InputError("Give either 'temperature_factor' or both "
                             "'temperature_coefficient_k' and 'annual_mean_temperature_k'.",
                             column="distributions")
    return [k for k in allowed if k in distributions]


def _draw(value, size, rng):
    if isinstance(value, DistributionSpec):
        return value.sample(size, rng)
    if hasattr(value, "rvs"):
        return np.asarray(value.rvs(size=size, random_state=rng), dtype=float)
    return np.full(size, float(value))


def _initiation_times(samples, model, diffusion_convention):
    if model == "carbonation":
        return carbonation.fib34_initiation_time(**samples)
    samples = dict(samples)
    if "temperature_coefficient_k" in samples:
        samples["temperature_factor"] = chloride.temperature_factor(
            samples.pop("temperature_coefficient_k"), samples.pop("annual_mean_temperature_k"))
    return chloride.initiation_time(**samples, diffusion_convention=diffusion_convention)


def sample_initiation_times(distributions, n, seed, model="chloride",
                            diffusion_convention="average"):
    """Random corrosion initiation times from random model parameters [yr].

    Parameters
    ----------
    distributions : dict
        Variable name -> number, `DistributionSpec` or frozen scipy distribution
        (names in the module notes). Variables are drawn independently, in the
        fixed order of the module notes.
    n : int
        Number of samples [-].
    seed : int or numpy.random.Generator
        Pass an int for reproducible output across calls.
    model : {"chloride", "carbonation"}
    diffusion_convention : {"average", "instantaneous"}
        See `assess.deterioration.chloride` (chloride model only).

    Returns
    -------
    ndarray of shape (n,)
        Initiation times since first exposure [yr]; +inf where never reached.
    """
    names = _check_distributions(distributions, model)
    n = check_int(n, "n", "sample_initiation_times", 1)
    rng, _ = resolve_seed(seed, "sample_initiation_times")
    samples = {k: _draw(distributions[k], n, rng) for k in names}
    return _initiation_times(samples, model, diffusion_convention)


def initiation_probability(age_years, distributions, n=10**6, seed=None, model="chloride",
                           diffusion_convention="average", chunk=10**6):
    """Probability that corrosion has initiated by each age, P(t_i <= t) [-].

    Parameters
    ----------
    age_years : array_like
        Age(s) since first exposure [yr]; the same samples serve every age.
    distributions : dict
        See `sample_initiation_times`.
    n : int, default 10**6
        Number of samples [-].
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    model : {"chloride", "carbonation"}
    diffusion_convention : {"average", "instantaneous"}
    chunk : int, default 10**6
        Samples per batch, bounding memory use [-].

    Returns
    -------
    InitiationProbability
    """
    caller = "initiation_probability"
    names = _check_distributions(distributions, model)
    n = check_int(n, "n", caller, 1)
    chunk = check_int(chunk, "chunk", caller, 1)
    rng, recorded = resolve_seed(seed, caller)
    ages = np.asarray(age_years, dtype=float)
    flat_ages = ages.ravel()
    counts = np.zeros(flat_ages.shape, dtype=np.int64)
    done = 0
    while done < n:
        size = min(chunk, n - done)
        samples = {k: _draw(distributions[k], size, rng) for k in names}
        times = np.sort(_initiation_times(samples, model, diffusion_convention))
        counts += np.searchsorted(times, flat_ages, side="right")
        done += size
    p = (counts / n).reshape(ages.shape)
    return InitiationProbability(age_years=ages, probability=p,
                                 standard_error=np.sqrt(p * (1.0 - p) / n),
                                 n_samples=n, seed=recorded, model=model)


def first_crossing_time(content_at_age, threshold, max_age_years, tolerance_years=1e-6):
    """Earliest age at which a non-decreasing quantity reaches a threshold [yr].

    Vectorised bisection: every sample is bracketed in [0, max_age_years] and
    halved together, so the cost is ~log2(max_age/tolerance) calls of
    ``content_at_age`` on the full sample array.

    Parameters
    ----------
    content_at_age : callable
        ``f(age_years)`` -> array of the sample shape; must be non-decreasing in
        age for each sample (e.g. the chloride content at the cover).
    threshold : array_like
        Value to reach (e.g. C_crit), broadcastable to the sample shape.
    max_age_years : float
        End of the search interval [yr], > 0.
    tolerance_years : float, default 1e-6
        Width of the final bracket [yr].

    Returns
    -------
    ndarray
        Crossing age [yr]; 0 where reached at age 0, +inf where not reached by
        ``max_age_years``.
    """
    caller = "first_crossing_time"
    if not max_age_years > 0 or not tolerance_years > 0:
        raise InputError(f"{caller} needs max_age_years > 0 and tolerance_years > 0. Got "
                         f"{max_age_years!r} and {tolerance_years!r}.")
    threshold = np.asarray(threshold, dtype=float)
    at_end = np.asarray(content_at_age(np.float64(max_age_years)), dtype=float)
    shape = np.broadcast_shapes(at_end.shape, threshold.shape)
    low = np.zeros(shape)
    high = np.full(shape, float(max_age_years))
    n_steps = int(np.ceil(np.log2(max_age_years / tolerance_years)))
    for _ in range(n_steps):
        middle = 0.5 * (low + high)
        reached = np.asarray(content_at_age(middle), dtype=float) >= threshold
        high = np.where(reached, middle, high)
        low = np.where(reached, low, middle)
    at_start = np.asarray(content_at_age(np.zeros(shape)), dtype=float) >= threshold
    result = np.where(at_end >= threshold, high, np.inf)
    return np.where(at_start, 0.0, result)
