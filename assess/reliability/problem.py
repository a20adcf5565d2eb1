"""The reliability problem as every method sees it: a limit state in standard normal space."""

from __future__ import annotations

from collections.abc import Callable, Sequence

import numpy as np

from assess.errors import AnalysisError

NONFINITE_POLICIES = ("failure", "error")
"""What a NaN limit-state value means: counted as failure (with a warning), or an error."""


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
    nonfinite : {"failure", "error"}, default "failure"
        A NaN value of g counts as a failed point and is reported by the methods
        as a warning with its count ("failure"), or raises `AnalysisError`
        ("error").

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
                 mode_names: Sequence[str] | None = None, nonfinite: str = "failure"):
        if int(dim) < 1:
            raise ValueError(f"dim must be a positive integer, got {dim!r}")
        if nonfinite not in NONFINITE_POLICIES:
            raise ValueError(f"nonfinite must be one of {NONFINITE_POLICIES}, got {nonfinite!r}")
        self._g_u = g_u
        self.dim = int(dim)
        self.names = list(names) if names is not None else [f"u{i + 1}" for i in range(self.dim)]
        if len(self.names) != self.dim:
            raise ValueError(f"{len(self.names)} names given for {self.dim} variables")
        self.to_physical = to_physical
        self.mode_names = list(mode_names) if mode_names is not None else None
        self.nonfinite = nonfinite
        self.n_calls = 0
        self.n_nan = 0
        self.n_inf = 0
        self._first_nonfinite: str | None = None
        self._mode_scales: np.ndarray | None = None

    def g_modes(self, u: np.ndarray) -> np.ndarray:
        """Limit-state values of every mode, shape (n, m) [units of g].

        A NaN value (an expression undefined at that point) is counted in `n_nan`
        and replaced by -inf, i.e. counted as failed (the conservative reading);
        +inf and -inf are kept (safe and failed) and counted in `n_inf`. With
        ``nonfinite="error"`` any non-finite value raises `AnalysisError` instead.
        """
        u = np.atleast_2d(np.asarray(u, dtype=float))
        if u.shape[1] != self.dim:
            raise ValueError(f"u has {u.shape[1]} columns, the problem has {self.dim} variables")
        # numpy's floating-point warnings are silenced here: non-finite values are counted
        # and reported once per analysis by the methods (`nonfinite_warnings`)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            values = np.asarray(self._g_u(u), dtype=float)
        if values.ndim == 1:
            values = values[:, None]
        if values.shape[0] != u.shape[0]:
            raise AnalysisError(
                f"the limit state returned {values.shape[0]} values for {u.shape[0]} points; "
                "it must be vectorised over rows of u")
        self.n_calls += u.shape[0]
        finite = np.isfinite(values)
        if not finite.all():
            bad_rows = ~finite.all(axis=1)
            row, col = (int(i) for i in np.argwhere(~finite)[0])
            where = self._describe_point(u[row:row + 1], col, values[row, col])
            if self.nonfinite == "error":
                raise AnalysisError(
                    f"{where}; check the expression for division by zero, log or sqrt of a "
                    "negative value")
            nan = np.isnan(values)
            self.n_nan += int(np.count_nonzero(nan.any(axis=1)))
            self.n_inf += int(np.count_nonzero(bad_rows & ~nan.any(axis=1)))
            if self._first_nonfinite is None:
                self._first_nonfinite = where
            values = np.where(nan, -np.inf, values)
        return values

    def _describe_point(self, u_row: np.ndarray, col: int, value: float) -> str:
        mode = self.mode_names[col] if self.mode_names else f"#{col + 1}"
        point = ""
        if self.to_physical is not None:
            try:
                with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                    x = self.to_physical(u_row)
                point = ", ".join(f"{k}={float(np.ravel(v)[0]):.6g}" for k, v in x.items())
            except (ValueError, TypeError, ArithmeticError, KeyError):  # keep the value
                point = ""
        return (f"limit state {mode} returned {value} (not a finite number) at "
                f"{point or 'u=' + np.array2string(u_row[0], precision=4)}")

    def g(self, u: np.ndarray) -> np.ndarray:
        """Series-system limit state: minimum over modes, shape (n,).

        One mode: g itself [units of g]. Several modes: each mode divided by its
        margin at the median point u = 0 (`mode_scales`) before the minimum, so that
        modes in different units (kNm, kN) are compared on one footing by the
        intermediate thresholds of subset simulation; dividing by a positive number
        leaves each failure domain, and so the system pf, unchanged [-].
        """
        values = self.g_modes(u)
        if values.shape[1] == 1:
            return values[:, 0]
        return (values / self.mode_scales(values.shape[1])).min(axis=1)

    def mode_scales(self, m: int) -> np.ndarray:
        """|g_i(u = 0)| of each mode, 1 where not finite or zero (not counted in n_calls)."""
        if getattr(self, "_mode_scales", None) is None or self._mode_scales.size != m:
            with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                at_median = np.asarray(self._g_u(np.zeros((1, self.dim))), dtype=float)
            at_median = np.abs(np.reshape(at_median, (-1,)))
            if at_median.size != m:
                at_median = np.ones(m)
            usable = np.isfinite(at_median) & (at_median > 0)
            self._mode_scales = np.where(usable, at_median, 1.0)
        return self._mode_scales

    def counters(self) -> tuple[int, int, int]:
        """(n_calls, n_nan, n_inf) now, to pass to `nonfinite_warnings` after a run."""
        return self.n_calls, self.n_nan, self.n_inf

    def nonfinite_warnings(self, since: tuple[int, int, int]) -> list[str]:
        """Warnings about NaN and infinite limit-state values since `counters()` gave `since`.

        Returns an empty list when every value was finite.
        """
        calls = self.n_calls - since[0]
        nan = self.n_nan - since[1]
        inf = self.n_inf - since[2]
        out = []
        if nan:
            out.append(
                f"the limit state was undefined (NaN) at {nan} of {calls} evaluated points, "
                f"first: {self._first_nonfinite}; those points were counted as failed "
                "(conservative). If the expression is undefined only where the structure is "
                "safe (e.g. log(S - 10) for S <= 10), guard it (e.g. log(max(S - 10, 1e-9)))")
        if inf:
            out.append(
                f"the limit state was infinite at {inf} of {calls} evaluated points "
                "(+inf counted as safe, -inf as failed); check for a division by zero")
        return out
