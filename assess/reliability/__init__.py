"""Reliability methods in standard normal space, one result type.

Every method takes a problem object with
- ``dim``: number of standard normal variables,
- ``g(u)``: vectorised limit state, ``u`` of shape (n, dim) -> array (n,) where
  g <= 0 is failure (a series system returns the minimum over its modes),
- optionally ``to_physical(u)`` -> dict of arrays and ``names`` (variable names),
and returns a `ReliabilityResult`.

Methods: `auto` (let the tool choose and cross-check), `form` (improved HL-RF,
several design points), `sorm` (curvatures; Breitung, Hohenbichler-Rackwitz, Tvedt),
`importance_sampling` (mixture around the design points), `cross_entropy` (adaptive
importance sampling, Gaussian or Gaussian-mixture density), `subset_simulation`
(aCS or modified Metropolis), `crude_monte_carlo`; `run_method` dispatches by name.
"""

from assess.reliability.auto import auto
from assess.reliability.cross_entropy_sampling import cross_entropy
from assess.reliability.crude import crude_monte_carlo
from assess.reliability.dispatch import METHODS, run_method
from assess.reliability.form import form
from assess.reliability.importance import importance_sampling
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf, pf_from_beta
from assess.reliability.sorm import sorm
from assess.reliability.subset import subset_simulation

__all__ = [
           "METHODS",
           "ReliabilityResult",
           "StandardNormalProblem",
           "auto",
           "beta_from_pf",
           "cross_entropy",
           "crude_monte_carlo",
           "form",
           "importance_sampling",
           "pf_from_beta",
           "run_method",
           "sorm",
           "subset_simulation",
]
