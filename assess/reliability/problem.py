"""The reliability problem as every method sees it: a limit state in standard normal space."""

from __future__ import annotations

from typing import Callable, Sequence

import numpy as np

from assess.errors import AnalysisError


class StandardNormalProblem:
    """Limit state(s) expressed in independent standard normal variables u.

    Parameters
    ----------
    g_u : callable
        ``g_u(u)`` with ``u`` of shape (n, dim) returns an array of shape (n,)
        for one limit state or (n, m) for m failure modes. g <= 0 is failure.
    dim : int
        Number of standard normal variables [-].
    names : sequence of str, optional
        Names of the physical variables behind each u coordinate (for design
        points and importance factors). Defaults to ``u1 .. u<dim>``.
    to_physical : callable, optional
        ``to_physical(u)`` -> dict name -> array (n,), the physical values [units
        of each variable]. Used to report design points in x.
    mode_names : sequence of str, optional
        Names of the failure modes when ``g_u`` returns several columns.

    Notes
    -----
    A series system fails when any mode fails, so its limit state is the
    minimum over the modes' limit states. `g` returns that minimum; `g_modes`
    returns all columns. Every point evaluated counts once in `n_calls`,
    whatever the number of modes.
    """

    def __init__(self, g_u: Callable[[np.ndarray], np.ndarray], dim: int,
                 names: Sequence[str] | None = None,
                 to_physical: Callable[[np.ndarray], dict] | None = None,
                 mode_names: Sequence[str] | None = None):
        if int(dim) < 1:
            raise ValueError(f"dim must be a positive integer, got {dim!r}")
        self._g_u = g_u
        self.dim = int(dim)
        self.names = list(names) if names is not None else [f"u{i + 1}" for i in range(self.dim)]
        if len(self.names) != self.dim:
            raise ValueError(f"{len(self.names)} names given for {self.dim} variables")
        self.to_physical = to_physical
        self.mode_names = list(mode_names) if mode_names is not None else None
        self.n_calls = 0

    def g_modes(self, u: np.ndarray) -> np.ndarray:
        """Limit-state values of every mode, shape (n, m) [units of g]."""
        u = np.atleast_2d(np.asarray(u, dtype=float))
        if u.shape[1] != self.dim:
            raise ValueError(f"u has {u.shape[1]} columns, the problem has {self.dim} variables")
        values = np.asarray(self._g_u(u), dtype=float)
        if values.ndim == 1:
            values = values[:, None]
        if values.shape[0] != u.shape[0]:
            raise AnalysisError(
                f"the limit state returned {values.shape[0]} values for {u.shape[0]} points; "
                "it must be vectorised over rows of u")
        self.n_calls += u.shape[0]
        bad = ~np.isfinite(values)
        if bad.any():
            row = int(np.argwhere(bad)[0][0])
            col = int(np.argwhere(bad)[0][1])
            mode = self.mode_names[col] if self.mode_names else f"#{col + 1}"
            point = ""
            if self.to_physical is not None:
                x = self.to_physical(u[row:row + 1])
                point = ", ".join(f"{k}={float(np.ravel(v)[0]):.6g}" for k, v in x.items())
            raise AnalysisError(
                f"limit state {mode} returned {values[row, col]} (not a finite number) "
                f"at {point or 'u=' + np.array2string(u[row], precision=4)}; "
                "check the expression for division by zero, log or sqrt of a negative value")
        return values

    def g(self, u: np.ndarray) -> np.ndarray:
        """Series-system limit state: minimum over modes, shape (n,) [units of g]."""
        return self.g_modes(u).min(axis=1)
