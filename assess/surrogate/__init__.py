"""Polynomial chaos surrogates of limit states: orthonormal bases matched to the inputs,
least-squares or sparse fits with leave-one-out error, Sobol indices from the
coefficients, and reliability on the surrogate checked at the failure boundary.

Modules: `polynomials` (families, Wiener-Askey scheme), `chaos` (expansion, fit,
Sobol indices), `reliability` (`chaos_reliability`), `sensitivity` (which uncertainty
drives the risk: importance factors and Sobol indices side by side).
"""

from assess.surrogate.chaos import PolynomialChaos, chaos_for_problem, fit_chaos
from assess.surrogate.reliability import chaos_reliability

__all__ = ["PolynomialChaos", "chaos_for_problem", "chaos_reliability", "fit_chaos"]
