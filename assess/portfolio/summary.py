"""The portfolio summary: ranked site rows, member rows and failed sites, as plain data."""

from __future__ import annotations

import math

from assess.portfolio import ranking


def _money(value, currency: str) -> str:
    return "-" if value is None else f"{currency} {value:,.0f}"


def recommended_action(summary: dict, member: dict | None) -> str:
    """What to do, in words: the value-of-information step's choice, else from the verdict."""
    worth = summary.get("worth")
    if worth:
        return f"{worth['recommended_action']} ({worth['member']})"
    if member is None:
        return "no members assessed"
    group = ranking.member_group(member)
    if group == ranking.BELOW:
        return "act: below target (compare actions in a decisions.toml)"
    if group == ranking.NO_RESULT:
        return "check: no reliability result"
    if member.get("verdict") == "undecided":
        return "check: undecided against the target (sample further: --verdict-calls)"
    return "keep as is (meets target)"


def further_testing(summary: dict) -> str:
    """The test programme worth most, if any pays for itself."""
    worth = summary.get("worth")
    if not worth:
        return "- (no decisions.toml)"
    net = worth.get("net_value")
    if net is None or not math.isfinite(net) or net <= 0:
        return "none pays for itself"
    return (f"{worth['best_programme']} (worth {_money(worth['evsi'], worth['currency'])}, "
            f"net {_money(net, worth['currency'])})")


def site_rows(outcomes: dict[str, dict]) -> list[dict]:
    """One row per successful site, most urgent first.

    ``outcomes`` maps the site key to its latest outcome (``status``,
    ``summary``, ``hash``...); failed sites are left out (see `failed_rows`).
    """
    done = {k: o["summary"] for k, o in outcomes.items() if o.get("status") == "done"}
    rows = []
    for rank, key in enumerate(ranking.rank_sites(done), start=1):
        summary = done[key]
        member = ranking.governing_member(summary)
        worth = summary.get("worth") or {}
        rows.append({
            "rank": rank, "site": key, "name": summary.get("site"),
            "urgency": ranking.GROUP_NAMES[ranking.member_group(member)] if member else "no result",
            "governing member": member["member"] if member else None,
            "governing mode": member["governing_mode"] if member else None,
            "beta now": member["beta_now"] if member else None,
            "target": member["target"] if member else None,
            "margin": ranking.margin(member) if member else None,
            "remaining life": (member.get("life_text") or "-") if member else "-",
            "years to crossing": min((ranking.years_to_crossing(m) for m in summary["members"]),
                                     default=math.inf),
            "life curves": any(m.get("life_status") is not None for m in summary["members"]),
            "recommended action": recommended_action(summary, member),
            "further testing": further_testing(summary),
            "expected cost of keeping as is": worth.get("expected_cost_keep"),
            "currency": worth.get("currency"),
            "last campaign": summary.get("last_campaign") or "none",
            "report": summary.get("report_html"),
        })
    return rows


def member_rows(outcomes: dict[str, dict]) -> list[dict]:
    """One row per site and member (member system, or its only mode), sites in rank order."""
    done = {k: o["summary"] for k, o in outcomes.items() if o.get("status") == "done"}
    rows = []
    for key in ranking.rank_sites(done):
        governing = ranking.governing_member(done[key])
        for m in sorted(done[key]["members"], key=ranking.member_key):
            rows.append({"site": key, "member": m["member"], "zone": m["zone"], "kind": m["kind"],
                         "governing mode": m["governing_mode"], "beta before": m["beta_before"],
                         "beta now": m["beta_now"], "target": m["target"],
                         "verdict": m["verdict"], "remaining life": m.get("life_text") or "-",
                         "years to crossing": ranking.years_to_crossing(m),
                         "governs site": m is governing})
    return rows


def failed_rows(outcomes: dict[str, dict]) -> list[dict]:
    """One row per failed site with its reason."""
    return [{"site": k, "failure": o.get("error_kind"), "reason": o.get("message"),
             "worker": o.get("worker")}
            for k, o in outcomes.items() if o.get("status") != "done"]


def warning_rows(outcomes: dict[str, dict]) -> list[dict]:
    """One row per site and distinct warning of its last run."""
    return [{"site": k, "warning": text} for k, o in outcomes.items()
            for text in o.get("warnings") or []]
