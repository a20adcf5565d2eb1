"""Age of a structure at a date."""

from __future__ import annotations

import datetime as dt

DAYS_PER_YEAR = 365.25
"""Julian year [days]."""


def construction_date(site) -> dt.date:
    """Start of exposure: 1 July of the year of construction (common practice)."""
    return dt.date(int(site.site.year_built), 7, 1)


def age_at(site, date) -> float:
    """Age of the structure at a date [yr] (Julian years from `construction_date`)."""
    if isinstance(date, str):
        date = dt.date.fromisoformat(date)
    return (date - construction_date(site)).days / DAYS_PER_YEAR


__all__ = ["DAYS_PER_YEAR", "age_at", "construction_date"]
