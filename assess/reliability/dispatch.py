"""Run a reliability method chosen by name."""

from __future__ import annotations

import inspect

from assess.errors import InputError
from assess.method_names import METHOD_NAMES
from assess.reliability.auto import auto
from assess.reliability.cross_entropy_sampling import cross_entropy
from assess.reliability.crude import crude_monte_carlo
from assess.reliability.form import form
from assess.reliability.importance import importance_sampling
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult
from assess.reliability.sorm import sorm
from assess.reliability.subset import subset_simulation


def polynomial_chaos(problem: StandardNormalProblem, *, seed=None, n_samples: int = 200,
                     max_samples: int = 1000, tolerance: float = 0.1,
                     check_points: int = 100, max_degree: int = 5, n_per_level: int = 2000,
                     max_loo: float = 1e-2) -> ReliabilityResult:
    """Reliability on a polynomial-chaos surrogate checked at its failure boundary
    (`assess.surrogate.reliability.chaos_reliability`, imported on first use)."""
    from assess.surrogate.reliability import chaos_reliability

    return chaos_reliability(problem, seed=seed, n_samples=n_samples, max_samples=max_samples,
                             tolerance=tolerance, check_points=check_points,
                             max_degree=max_degree, n_per_level=n_per_level, max_loo=max_loo)


METHODS = {
    "auto": auto,
    "form": form,
    "sorm": sorm,
    "importance_sampling": importance_sampling,
    "cross_entropy": cross_entropy,
    "subset_simulation": subset_simulation,
    "crude_monte_carlo": crude_monte_carlo,
    "polynomial_chaos": polynomial_chaos,
}
"""Reliability methods by name; the keys are the valid ``method`` values of `run_method`."""

if tuple(METHODS) != METHOD_NAMES:  # the light list the command line reads must follow
    raise ImportError("assess.method_names.METHOD_NAMES does not match METHODS")

CHECKED_DEFAULTS = {"check": True, "design_points": 4}
"""Options `run_method` gives FORM, SORM and importance sampling unless the caller sets
them: an independent subset-simulation check, and a search for up to 4 design points
per failure mode (cross-entropy takes the check only). A direct call of `form` keeps the plain defaults (one design point,
no check), which inner loops (value of information, remaining life) rely on for speed."""

_CHECKED = ("form", "sorm", "importance_sampling", "cross_entropy")


def run_method(problem: StandardNormalProblem, method: str, *, seed=None,
               **options) -> ReliabilityResult:
    """Run the reliability method named ``method`` on ``problem``.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure.
    method : str
        One of ``"auto"``, ``"form"``, ``"sorm"``, ``"importance_sampling"``,
        ``"cross_entropy"``, ``"subset_simulation"``, ``"crude_monte_carlo"``,
        ``"polynomial_chaos"`` (see `METHODS`).
    seed : int, numpy.random.Generator or None
        Seed of the sampling methods and of the checks; FORM and SORM themselves
        are deterministic.
    **options
        Keyword options of the chosen method (e.g. ``n_per_level=1000``).
        FORM, SORM, importance sampling and cross-entropy get `CHECKED_DEFAULTS`
        (those they take) unless given.

    Returns
    -------
    ReliabilityResult

    Raises
    ------
    InputError
        Unknown method name, or an option the method does not take.
    """
    if method not in METHODS:
        raise InputError(f"{method!r} is not a reliability method; valid names are "
                         f"{', '.join(repr(name) for name in METHODS)}")
    function = METHODS[method]
    accepted = [name for name in inspect.signature(function).parameters if name != "problem"]
    unknown = sorted(set(options) - set(accepted))
    if unknown:
        raise InputError(f"{method} does not take the option(s) {', '.join(unknown)}; "
                         f"its options are {', '.join(accepted)}")
    if method in _CHECKED:
        defaults = {key: value for key, value in CHECKED_DEFAULTS.items() if key in accepted}
        options = {**defaults, **options}
    if "seed" in accepted:
        options["seed"] = seed
    return function(problem, **options)
