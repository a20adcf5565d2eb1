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


def interval_text(
    interval,
    *,
    beta=format_beta,
    between: str = "{low}-{high}",
    at_least: str = ">= {low}",
    at_most: str = "<= {high}",
) -> str:
    """An interval of beta as text: ``between`` both ends; ``at_least`` when the upper end is
    +inf (no failed sample), ``at_most`` when the lower end is -inf (pf may reach 1); "-"
    when an end is missing or NaN (FORM, SORM). ``beta`` formats each end."""
    low, high = interval
    if low is None or high is None or math.isnan(low) or math.isnan(high):
        return "-"
    if math.isinf(high) and high > 0:
        return at_least.format(low=beta(low))
    if math.isinf(low) and low < 0:
        return at_most.format(high=beta(high))
    return between.format(low=beta(low), high=beta(high))


__all__ = ["format_beta", "interval_text"]
