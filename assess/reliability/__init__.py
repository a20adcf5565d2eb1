"""Reliability methods in standard normal space, one result type.

Every method takes a problem object with
- ``dim``: number of standard normal variables,
- ``g(u)``: vectorised limit state, ``u`` of shape (n, dim) -> array (n,) where
  g <= 0 is failure (a series system returns the minimum over its modes),
- optionally ``to_physical(u)`` -> dict of arrays and ``names`` (variable names),
and returns a `ReliabilityResult`.
"""

from assess.reliability.result import ReliabilityResult, beta_from_pf, pf_from_beta

__all__ = ["ReliabilityResult", "beta_from_pf", "pf_from_beta"]
