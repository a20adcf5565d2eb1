"""Warn when an input that should be a mean value looks like a characteristic value.

Reliability analysis needs mean values (design decision 6); nominal class or
grade values are characteristic (5 % fractiles) and bias the result to the safe
side by an unknown amount.
"""

from __future__ import annotations

import math
import warnings

from assess.errors import InputError

#: Typical characteristic values by kind of quantity.
CHARACTERISTIC_VALUES: dict[str, tuple[tuple[float, ...], str]] = {
    "concrete_strength": (
        (12, 15, 16, 20, 25, 28, 30, 35, 37, 40, 45, 50, 55, 60, 67, 70, 75, 80, 85, 90, 95, 105),
        "EN 206 strength classes, cylinder and cube f_ck [MPa]"),
    "steel_yield": ((235, 240, 275, 335, 355, 400, 410, 420, 460, 500, 550, 600),
                    "nominal yield strengths of common steel grades [MPa]"),
    "imposed_load": ((1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 7.5),
                     "EN 1991-1-1 Tables 6.2 and 6.8 characteristic loads q_k [kN/m2] "
                     "(from memory)"),
}


def looks_characteristic(value: float, kind: str, *, rel_tol: float = 1e-9) -> bool:
    """True when ``value`` equals a typical characteristic (nominal) value of ``kind``.

    Parameters
    ----------
    value : float
        The value given as a mean, in the unit of the kind ([MPa] or [kN/m2]).
    kind : str
        ``"concrete_strength"``, ``"steel_yield"`` or ``"imposed_load"``.
    """
    if kind not in CHARACTERISTIC_VALUES:
        raise InputError(f"kind must be one of {sorted(CHARACTERISTIC_VALUES)}, got {kind!r}")
    return any(math.isclose(float(value), v, rel_tol=rel_tol, abs_tol=1e-9)
               for v in CHARACTERISTIC_VALUES[kind][0])


def warn_if_characteristic(value: float, kind: str, name: str) -> bool:
    """Issue a `UserWarning` when `looks_characteristic` holds; return whether it did."""
    if looks_characteristic(value, kind):
        warnings.warn(
            f"{name} = {value:g} equals a characteristic value ({CHARACTERISTIC_VALUES[kind][1]}); "
            "reliability analysis needs the mean value. If this is a class or grade, use the "
            "priors in assess.priors instead.", stacklevel=2)
        return True
    return False
