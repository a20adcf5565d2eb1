"""Reliability methods in standard normal space, one result type.

Every method takes a problem object with
- ``dim``: number of standard normal variables,
- ``g(u)``: vectorised limit state, ``u`` of shape (n, dim) -> array (n,) where
  g <= 0 is failure (a series system returns the minimum over its modes),
- optionally ``to_physical(u)`` -> dict of arrays and ``names`` (variable names),
and returns a `ReliabilityResult`.

Methods: `auto` (let the tool choose and cross-check), `form` (improved HL-RF,
several design points), `sorm` (curvatures; Breitung, Hohenbichler-Rackwitz, Tvedt),
`importance_sampling` (mixture around the design points), `subset_simulation`
(aCS or modified Metropolis), `crude_monte_carlo`; `run_method` dispatches by name.
"""

import importlib

# Imported on first use (PEP 562): the command line reads method names and formats results
# without loading every method and scipy.stats.
_HOMES = {
    "auto": "assess.reliability.auto",
    "crude_monte_carlo": "assess.reliability.crude",
    "METHODS": "assess.reliability.dispatch",
    "run_method": "assess.reliability.dispatch",
    "form": "assess.reliability.form",
    "importance_sampling": "assess.reliability.importance",
    "StandardNormalProblem": "assess.reliability.problem",
    "ReliabilityResult": "assess.reliability.result",
    "beta_from_pf": "assess.reliability.result",
    "pf_from_beta": "assess.reliability.result",
    "sorm": "assess.reliability.sorm",
    "subset_simulation": "assess.reliability.subset",
}


def __getattr__(name: str):
    if name in _HOMES:
        value = getattr(importlib.import_module(_HOMES[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'assess.reliability' has no attribute {name!r}")


__all__ = [  # noqa: F822 (names resolved by __getattr__)
           "METHODS",
           "ReliabilityResult",
           "StandardNormalProblem",
           "auto",
           "beta_from_pf",
           "crude_monte_carlo",
           "form",
           "importance_sampling",
           "pf_from_beta",
           "run_method",
           "sorm",
           "subset_simulation",
]
