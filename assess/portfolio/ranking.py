"""Where to act and test first: the urgency rule of a portfolio.

Rule (the same words are printed in the portfolio page):

1. Sites with a member below its target reliability now (beta after updating
   with the site's tests < target) come first, worst first: by the lowest
   margin beta - target of their members [-] (margins, not betas, because
   sites may have different targets).
2. Then sites with a member whose reliability could not be computed (no
   result), which need a look before anything else is said about them.
3. Then every other site, by the years to the first target crossing of any
   of its members on the remaining-life curves [yr], soonest first; a site
   whose curves stay above the target over the horizon, or that has no
   curves, comes after every site with a crossing.
4. Ties are broken by the expected cost of keeping the structure as it is
   (value-of-information step, when the site has a ``decisions.toml``),
   highest first, a site without one counting as zero; then by the lowest
   margin, then by the site's key, so the order is total and repeatable.

The governing member of a site is the member that is first by the same rule
inside the site (rules 1-3, then the lowest margin).
"""

from __future__ import annotations

import math

RULE = (
    "Sites with a member below its target now come first, worst margin (beta - target) first; "
    "then sites with a member without a result; then the others by the years to the first "
    "target crossing on the remaining-life curves, soonest first (no crossing within the "
    "horizon last). Ties: highest expected cost of keeping as is (value of information, "
    "when the site has a decisions.toml), then lowest margin, then site name.")

BELOW, NO_RESULT, OTHER = 0, 1, 2
GROUP_NAMES = {BELOW: "below target now", NO_RESULT: "no result", OTHER: "meets target now"}


def _number(value) -> float:
    """A float, with None as NaN."""
    return math.nan if value is None else float(value)


def margin(member: dict) -> float:
    """beta now - target of a member row [-] (NaN when beta is NaN or missing)."""
    return _number(member.get("beta_now")) - _number(member.get("target"))


def member_group(member: dict) -> int:
    m = margin(member)
    if math.isnan(m):
        return NO_RESULT
    return BELOW if m < 0 else OTHER


def years_to_crossing(member: dict) -> float:
    """Years to the annual target crossing [yr]; inf when none within the horizon or no curve."""
    years = member.get("remaining_life_years")
    if years is None or (isinstance(years, float) and math.isnan(years)):
        return math.inf
    return float(years)


def _finite_or(value: float, default: float) -> float:
    return default if math.isnan(value) else value


def member_key(member: dict) -> tuple:
    """Sort key of a member inside its site (rules 1-3, then the lowest margin)."""
    group = member_group(member)
    m = _finite_or(margin(member), math.inf)
    if group == BELOW:
        return (group, m, years_to_crossing(member), member["member"])
    return (group, years_to_crossing(member), m, member["member"])


def governing_member(summary: dict) -> dict | None:
    """The member of a site summary that decides its place in the ranking."""
    members = summary.get("members") or []
    return min(members, key=member_key) if members else None


def keep_cost(summary: dict) -> float:
    """Expected cost of keeping as is [currency]; 0 without a value-of-information step."""
    worth = summary.get("worth") or {}
    cost = worth.get("expected_cost_keep")
    return 0.0 if cost is None or math.isnan(float(cost)) else float(cost)


def site_key(key: str, summary: dict) -> tuple:
    """Sort key of a site (smaller is more urgent) from its summary numbers."""
    member = governing_member(summary)
    if member is None:
        return (NO_RESULT, math.inf, 0.0, math.inf, key)
    group = member_group(member)
    low = min((_finite_or(margin(m), math.inf) for m in summary["members"]), default=math.inf)
    soonest = min(years_to_crossing(m) for m in summary["members"])
    primary = low if group == BELOW else (0.0 if group == NO_RESULT else soonest)
    return (group, primary, -keep_cost(summary), low, key)


def rank_sites(summaries: dict[str, dict]) -> list[str]:
    """Site keys, most urgent first (`site_key`)."""
    return sorted(summaries, key=lambda k: site_key(k, summaries[k]))
