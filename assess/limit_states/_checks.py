"""Input checks shared by the vectorised capacity and load-effect functions."""

from __future__ import annotations

import numpy as np

from assess.errors import InputError


def as_array(value, name: str, *, unit: str, allow_zero: bool = False) -> np.ndarray:
    """Float array of ``value``; every entry finite and > 0 (>= 0 with ``allow_zero``)."""
    array = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(array)):
        raise InputError(f"{name} must be finite numbers [{unit}]; found NaN or inf")
    bad = array < 0 if allow_zero else array <= 0
    if np.any(bad):
        first = float(array[bad].flat[0])
        need = ">= 0" if allow_zero else "> 0"
        raise InputError(f"{name} must be {need} [{unit}], found {first:g} "
                         f"({int(np.count_nonzero(bad))} value(s))")
    return array


def effective_depth_factor(effective_depth_mm: np.ndarray, keep_caps: bool) -> np.ndarray:
    """Size-effect factor k = 1 + sqrt(200/d) [-], capped at 2.0 (EN 1992-1-1 6.2.2(1))."""
    k = 1.0 + np.sqrt(200.0 / effective_depth_mm)
    return np.minimum(k, 2.0) if keep_caps else k


def choose_coefficient(coefficient, table: dict, what: str) -> float:
    """Numeric coefficient from a name in ``table`` or a positive number."""
    if isinstance(coefficient, str):
        if coefficient not in table:
            raise InputError(f"{what} coefficient must be one of {sorted(table)} or a positive "
                             f"number, got {coefficient!r}")
        return float(table[coefficient][0])
    value = float(coefficient)
    if not value > 0:
        raise InputError(f"{what} coefficient must be positive, got {coefficient!r}")
    return value
