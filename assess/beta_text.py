"""Reliability index as text for tables, with no numerical library behind it (the command
line imports it at start-up)."""

from __future__ import annotations

import math


def format_beta(beta, *, no_failure: str = "> 8", minus_infinity: str = "-inf") -> str:
    """Beta for tables: two decimals; ``no_failure`` for +inf (no failed sample), "-" for
    NaN or None, ``minus_infinity`` for -inf (pf = 1)."""
    if beta is None or math.isnan(beta):
        return "-"
    if math.isinf(beta):
        return no_failure if beta > 0 else minus_infinity
    return f"{beta:.2f}"


__all__ = ["format_beta"]
