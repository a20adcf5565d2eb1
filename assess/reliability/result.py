"""One result type for every reliability method."""

from __future__ import annotations

import dataclasses
import math
from typing import TYPE_CHECKING, Any

from assess.beta_text import format_beta  # noqa: F401 (its home before; still imported from here)

if TYPE_CHECKING:  # the command line imports this module for format_beta: no numpy there
    import numpy as np


def beta_from_pf(pf: float) -> float:
    """Reliability index from a probability of failure, beta = -Phi^-1(pf) [-].

    Uses the inverse survival function so that tiny pf keep full precision
    (never ``ppf(1 - pf)``). pf = 0 gives +inf, pf = 1 gives -inf.
    """
    from scipy import special  # on first use: the command line imports this module

    return float(-special.ndtri(pf))  # = scipy.stats.norm.isf(pf)


def pf_from_beta(beta: float) -> float:
    """Probability of failure from a reliability index, pf = Phi(-beta) [-]."""
    from scipy import special

    return float(special.ndtr(-beta))  # = scipy.stats.norm.sf(beta)


@dataclasses.dataclass(frozen=True)
class ReliabilityResult:
    """Outcome of one reliability analysis.

    Attributes
    ----------
    method : str
        ``"form"``, ``"importance_sampling"``, ``"subset_simulation"`` or
        ``"crude_monte_carlo"``.
    pf : float
        Probability of failure [-].
    beta : float
        Reliability index, -Phi^-1(pf) [-]. For FORM this is the distance to the
        design point (signed) and ``pf = Phi(-beta)``.
    cov : float
        Coefficient of variation of the pf estimate [-]; NaN for FORM (not a
        sampling estimate).
    n_calls : int
        Number of points at which the limit state was evaluated [-].
    seed : int or None
        Seed that reproduces the run (None for a deterministic method).
    settings : dict
        Method settings (sample sizes, tolerances, ...).
    converged : bool
        Whether the method met its own convergence criterion.
    warnings : tuple of str
        Plain-language warnings about the run.
    design_point_u : ndarray or None
        Design point in standard normal space [-].
    design_point_x : dict or None
        Design point in physical space, by variable name [variable units].
    importance_factors : dict or None
        Squared FORM direction cosines alpha_i^2 by variable name [-]; sum to 1.
    alpha : ndarray or None
        Signed FORM direction cosines alpha = -grad G / |grad G| at u* [-].
    details : dict
        Method-specific extras (e.g. subset levels, iteration history).
    """

    method: str
    pf: float
    beta: float
    cov: float
    n_calls: int
    seed: int | None = None
    settings: dict = dataclasses.field(default_factory=dict)
    converged: bool = True
    warnings: tuple = ()
    design_point_u: np.ndarray | None = None
    design_point_x: dict | None = None
    importance_factors: dict | None = None
    alpha: np.ndarray | None = None
    details: dict = dataclasses.field(default_factory=dict)

    @property
    def log10_pf(self) -> float:
        """Base-10 logarithm of pf [-] (-inf when pf = 0)."""
        return math.log10(self.pf) if self.pf > 0 else -math.inf

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready dictionary (`assess.json_values.to_json_native`: arrays become
        lists, inf/NaN become None)."""
        from assess.json_values import to_json_native

        out = {f.name: to_json_native(getattr(self, f.name), f"result.{f.name}")
               for f in dataclasses.fields(self)}
        out["log10_pf"] = to_json_native(self.log10_pf)
        return out
