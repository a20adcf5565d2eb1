"""Error types of the assessment package.

- `InputError` (re-exported from `inspection_io.errors`): bad input, CLI exit code 2.
- `AnalysisError`: the analysis could not produce a trustworthy answer (a limit
  state returned NaN, FORM did not converge, MCMC failed its convergence gate);
  CLI exit code 1.
"""

from inspection_io.errors import InputError


class AnalysisError(RuntimeError):
    """The analysis failed; the message says what failed and what to try.

    ``fix`` holds the "what to try" part on its own, for reports that show it apart.
    """

    def __init__(self, message: str = "", *, fix: str | None = None):
        super().__init__(message)
        self.fix = fix


class ConvergenceError(AnalysisError):
    """An iterative method or an MCMC run did not pass its convergence check.

    ``fit`` names the kind of MCMC fit (``"materials"``, ``"corrosion"``, ...) when known.
    """

    def __init__(self, message: str = "", *, fix: str | None = None, fit: str | None = None):
        super().__init__(message, fix=fix)
        self.fit = fit


__all__ = ["InputError", "AnalysisError", "ConvergenceError"]
