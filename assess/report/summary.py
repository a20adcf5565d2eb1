"""The first page of the site report: what was found, for every member, in one place.

Reads only what the steps of a `SiteRun` produced (members, remaining life, value of
information, history) and the run's warnings; computes nothing new except the
plain-words wording, the delta-method range of beta when the members step gives no
interval, and the change since the previous campaign.
"""

from __future__ import annotations

import math

from scipy import stats

from assess.report.document import Tag

VERDICT_TONES = {"meets target": "good", "below target": "bad", "undecided": "unsure"}
"""Verdict word -> tone of its tag (`assess.report.document.TONES`); others are "none"."""

MEMBER, VERDICT, ACTION, TESTING = "Member", "Verdict", "Recommended action", "Further testing"


def _period(years: float) -> str:
    return f"{years:g}-year"


def beta_text(beta) -> str:
    """Beta with two decimals everywhere in the report; "> 8" when no failed sample."""
    if beta is None or (isinstance(beta, float) and math.isnan(beta)):
        return "\u2013"
    if math.isinf(beta):
        return "> 8" if beta > 0 else "\u2212\u221e"
    return f"{beta:.2f}"


def probability_text(p) -> str:
    """A probability the same way everywhere (report, terminal, recommendation): "12.5%"."""
    if p is None or (isinstance(p, float) and math.isnan(p)):
        return "\u2013"
    return f"{float(p):.1%}"


def governing(results: list) -> dict:
    """Member -> the to_dict() of its system result (or its only mode), in input order."""
    out: dict = {}
    for r in results:
        if r.mode == "system" or r.member not in out:
            out[r.member] = r.to_dict()
    return out


def beta_interval(row: dict) -> tuple[float, float] | None:
    """Interval of beta after updating [-].

    The members step's own interval (``interval_after``, the one its verdict reads,
    `assess.reliability.interval`) when it gives one; otherwise beta +/- 2 standard
    errors of the sampling estimate by the delta method, se_beta = CoV pf / phi(beta)
    (as for the life curves).
    """
    given = row.get("interval_after") or row.get("beta_after_interval")
    if given is not None and None not in given:
        low, high = given
        return float(low), float(high)
    beta, pf, cov = row.get("beta_after"), row.get("pf_after"), row.get("cov_after")
    if beta is None or pf is None or cov is None:
        return None
    if not (math.isfinite(beta) and math.isfinite(cov) and pf > 0):
        return None
    se = cov * pf / stats.norm.pdf(beta)
    return beta - 2.0 * se, beta + 2.0 * se


def interval_text(interval) -> str:
    if interval is None:
        return "\u2013"
    low, high = interval
    if math.isinf(high) and high > 0:  # no failed sample: only a lower bound
        return f"at least {beta_text(low)}"
    if math.isinf(low) and low < 0:
        return f"at most {beta_text(high)}"
    return f"{beta_text(low)} to {beta_text(high)}"


def recommended_action(verdict: str, life_curve=None, worth=None, flagged: bool = False) -> str:
    """Plain-words action for one member from its verdict, remaining life and costs.

    Parameters
    ----------
    verdict : str
        "meets target", "below target", "undecided" or "no result".
    life_curve : LifeCurve, optional
        Its governing remaining-life curve (annual).
    worth : dict, optional
        ``{"decision", "horizon_years"}`` of the value-of-information analysis when
        it was made for this member.
    flagged : bool
        The design-check screen pointed the member out.
    """
    if flagged:
        return ("Check the member's data in the site file first: its design resistance is far "
                "below its design load (see cautions).")
    life = life_curve.remaining_life if life_curve is not None else None
    if verdict == "no result":
        return "No reliability result: check the member's input."
    if verdict == "below target":
        text = "Below target: limit the load or strengthen, or refine with more tests."
    elif verdict == "undecided":
        text = "Undecided: the range of beta spans the target; refine before deciding."
    elif life is not None and math.isfinite(life.years) and life.status == "crosses target":
        text = (f"Meets target now; below it after about {life.years:.0f} years: "
                f"re-assess before then.")
    else:
        text = "Meets target: keep as is; re-inspect at the usual interval."
    if worth:
        text += (f" Expected cost over {worth['horizon_years']} years favours "
                 f"'{worth['decision']}'.")
        if (worth["decision"] == "keep as is" and life is not None
                and math.isfinite(life.years) and life.years < worth["horizon_years"]):
            text += (f" 'Keep as is' counts the falling beta (remaining-life curve): it is the "
                     f"cheapest on expected cost even though beta falls below the target after "
                     f"about {life.years:.0f} years; re-assess before then.")
    return text


def testing_text(worth, member: str) -> str:
    """What further testing is worth for one member (plain words)."""
    if worth is None:
        return "not analysed (no decision set-up file)"
    if worth.decision.member != member:
        return f"analysed for {worth.decision.member} only"
    currency = worth.decision.problem.currency
    results = worth.ranking.results
    first = results[0]
    if first.net_value > 0:
        return (f"worth it: {first.description} (value {currency} {first.evsi:,.0f} against "
                f"cost {currency} {first.programme_cost:,.0f})")
    best = max(results, key=lambda r: r.evsi)
    return (f"not worth its cost: best is {best.description} (value {currency} "
            f"{best.evsi:,.0f} against cost {currency} {best.programme_cost:,.0f})")


def _largest_shift(previous, current, zone: str) -> str:
    """The updated population of ``zone`` whose predictive mean moved most (in prior sds)."""
    from assess.site.knowledge import LABELS, QUANTITIES, predictive_draws

    if previous is None or current is None or zone not in previous or zone not in current:
        return ""
    best, text = 0.0, ""
    for name, spec in QUANTITIES.items():
        before = predictive_draws(previous[zone][name], spec.log)
        after = predictive_draws(current[zone][name], spec.log)
        spread = float(before.std())
        if spread <= 0:
            continue
        shift = abs(float(after.mean() - before.mean())) / spread
        if shift > best:
            label, unit = LABELS[name]
            best = shift
            text = (f"{label.lower()}, zone {zone}: mean {before.mean():.3g} -> "
                    f"{after.mean():.3g} {unit} ({shift:.2f} standard deviations)")
    return text


def changes_since_previous(history, zones: dict) -> tuple[dict, str]:
    """Member -> {"delta", "verdict_before", "moved_by"} between the last two campaigns.

    The previous assessment is the site re-assessed with the data up to the
    previous campaign (`assess.site.history`); the change is beta after now minus
    beta after then. For a member whose verdict changed, ``moved_by`` names the
    updated population of its zone with the largest shift of its predictive mean.

    Returns
    -------
    changes : dict
    label : str
        Which campaign the change is measured from ("" when there is none).
    """
    if history is None or len(history) < 2:
        return {}, ""
    previous, latest = history[-2], history[-1]
    before = governing(previous.assessment.results)
    now = governing(latest.assessment.results)
    changes = {}
    for member, row in now.items():
        old = before.get(member)
        if old is None:
            continue
        delta = row["beta_after"] - old["beta_after"]
        entry = {"delta": delta if math.isfinite(delta) else None,
                 "verdict_before": old["verdict"], "moved_by": ""}
        if old["verdict"] != row["verdict"]:
            entry["moved_by"] = _largest_shift(previous.knowledge, latest.knowledge,
                                               zones.get(member, row.get("zone", "")))
        changes[member] = entry
    return changes, f"{previous.campaign} ({previous.date.isoformat()})"


def add_first_page(doc, run, notes: list[str]) -> dict:
    """Add the first section, "Findings at a glance"; returns its numbers for the JSON."""
    from assess.site.design_check import design_check_site

    site = run.site
    members = run.result("members")
    life = run.result("life")
    worth = run.result("worth")
    history = run.result("history")
    update = run.result("materials")

    sec = doc.add_section("Findings at a glance")
    page: dict = {"rows": [], "cautions": []}
    data_used = _data_used(run, update)
    key_values = {"Site": site.site.name,
                  "Structure": f"{site.site.structure or 'structure'}, built {site.site.year_built}",
                  "Assessment date": site.site.assessment_date.isoformat(),
                  "Data used": data_used}
    if members is not None:
        period = members.reference_period_years
        key_values["Target reliability index"] = (
            f"{members.target.beta:.2f} over a {_period(period)} reference period "
            f"({members.target.source})")
    sec.add_key_values(key_values, caption="Site, date and data")
    page.update({k.lower(): v for k, v in key_values.items()})

    if members is None:
        sec.add_notice(["The members step did not run: no verdicts (see 'not available')."],
                       title="No member results", kind="warning")
    else:
        period = _period(members.reference_period_years)
        flagged = {c.member for c in design_check_site(site) if c.far_below}
        curves = {c.member: c for c in life.main} if life is not None else {}
        worth_info = None
        if worth is not None:
            worth_info = {"member": worth.decision.member,
                          "decision": worth.ranking.results[0].prior_decision,
                          "horizon_years": worth.decision.horizon_years}
        changes, since = changes_since_previous(
            history.entries if history is not None else None,
            {m: v.zone for m, v in site.members.items()})
        change_col = f"Change of beta since {since} [-]" if since else None
        rows, marked = [], []
        for member, row in governing(members.results).items():
            verdict = row["verdict"]
            curve = curves.get(member)
            interval = beta_interval(row)
            action = recommended_action(
                verdict, curve,
                worth_info if worth_info and worth_info["member"] == member else None,
                member in flagged)
            table_row = {
                MEMBER: member,
                VERDICT: Tag(verdict, VERDICT_TONES.get(verdict, "none")),
                f"Beta before tests, {period} [-]": beta_text(row["beta_before"]),
                f"Beta after tests, {period} [-]": beta_text(row["beta_after"]),
                "Range of beta after [-]": interval_text(interval),
                f"Target beta, {period} [-]": beta_text(row["target"]),
            }
            change = changes.get(member)
            if change_col:
                delta = None if change is None else change["delta"]
                table_row[change_col] = ("\u2013" if delta is None else f"{delta:+.2f}")
            table_row["Remaining life (annual beta against annual target)"] = (
                curve.remaining_life.text() if curve is not None else "not computed")
            table_row[ACTION] = action
            table_row[TESTING] = testing_text(worth, member)
            rows.append(table_row)
            marked.append(verdict == "below target")
            page["rows"].append({
                "member": member, "verdict": verdict, "beta_before": row["beta_before"],
                "beta_after": row["beta_after"], "beta_after_interval": interval,
                "target": row["target"], "reference_period_years": members.reference_period_years,
                "remaining_life": None if curve is None else curve.remaining_life.to_dict(),
                "action": action, "further_testing": table_row[TESTING],
                "change": change})
        sec.add_table(rows, caption=f"Every member: verdict, reliability index beta "
                                    f"({period} reference period), remaining life and what "
                                    f"to do", marked=marked)
        below = sum(marked)
        sec.add_paragraph(
            f"{below} of {len(rows)} member(s) below the target. The range of beta is +/- 2 "
            f"standard errors of the sampling estimate unless the members section gives its "
            f"own interval. Remaining life is counted from the assessment date with the annual "
            f"reliability index; it starts from the same beta as the members table.")
        moved = [f"{m}: verdict was '{c['verdict_before']}'; moved by {c['moved_by']}"
                 for m, c in changes.items() if c["moved_by"]]
        if moved:
            sec.add_notice(moved, title=f"Verdicts changed since {since}", kind="warning")
        if worth is not None:
            sec.add_paragraph(_worth_summary(worth))
    cautions = list(run.warnings) + [n for n in notes if n not in run.warnings]
    page["cautions"] = cautions
    if cautions:
        sec.add_notice(cautions, title="Cautions: points to check before using these results",
                       kind="warning")
    return page


def _worth_summary(worth) -> str:
    decision = worth.decision
    first = worth.ranking.results[0]
    life_word = ("with the annual failure probability of its remaining-life curve"
                 if decision.uses_life_curve else "with a constant annual failure probability")
    return (f"Further testing (value of information, member {decision.member}, "
            f"{decision.horizon_years}-year horizon {life_word}): on present knowledge "
            f"'{first.prior_decision}' has the lowest expected cost; "
            + testing_text(worth, decision.member) + ".")


def _data_used(run, update) -> str:
    if update is None or not update.has_data:
        return "design information only (no test data imported)"
    counts = {}
    for kind, table in run.data_summaries.items():
        if table is None or not len(table) or "n" not in table:
            continue
        if "quantity" in table:  # one row per quantity and zone: count the first quantity
            table = table[table["quantity"] == table["quantity"].iloc[0]]
        counts[kind] = int(table["n"].sum())
    words = {"cores": "cores", "tensile": "tensile test results", "cover": "cover readings",
             "carbonation": "carbonation depths", "chloride": "chloride results",
             "halfcell": "half-cell readings", "section_loss": "break-out results"}
    parts = [f"{n} {words.get(k, k)}" for k, n in counts.items() if n]
    campaigns = _campaigns(run)
    head = f"{len(campaigns)} campaign(s): {', '.join(campaigns)}; " if campaigns else ""
    return head + (", ".join(parts) if parts else "test data")


def _campaigns(run) -> list[str]:
    from assess.site.paths import has_ledger, ledger_path
    from inspection_io.ledger import Ledger

    if not has_ledger(run.site.folder):
        return []
    with Ledger(ledger_path(run.site.folder)) as ledger:
        return [f"{c.name} ({c.date.isoformat()})"
                for c in sorted(ledger.campaigns(), key=lambda c: (c.date, c.id))]


__all__ = ["VERDICT_TONES", "add_first_page", "beta_interval", "beta_text",
           "changes_since_previous", "probability_text", "recommended_action", "testing_text"]
