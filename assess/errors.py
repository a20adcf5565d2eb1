"""Error types of the assessment package.

- `InputError` (re-exported from `inspection_io.errors`): bad input, CLI exit code 2.
- `AnalysisError`: the analysis could not produce a trustworthy answer (a limit
  state returned NaN, FORM did not converge, MCMC failed its convergence gate);
  CLI exit code 1.
"""

from inspection_io.errors import InputError


class AnalysisError(RuntimeError):
    """The analysis failed; the message says what failed and what to try."""


class ConvergenceError(AnalysisError):
    """An iterative method or an MCMC run did not pass its convergence check."""


__all__ = ["InputError", "AnalysisError", "ConvergenceError"]
