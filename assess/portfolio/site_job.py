"""The one adapter between the portfolio and the single-site main job.

Everything the portfolio knows about a site run goes through `run_one_site`:
it takes a site folder and a plain settings dict, runs the main job there
(the site keeps its own ledger, posteriors and report under ``results/``) and
returns a plain dict of summary numbers. Nothing else in `assess.portfolio`
imports the main job, so repointing the portfolio to a renamed pipeline is a
change to this module alone.

Contract of the returned dict (plain Python types; floats may be +-inf or NaN,
e.g. beta = +inf when no sample failed):

``site``            site name from site.toml
``assessment_date`` ISO date of the assessment
``last_campaign``   ISO date of the latest campaign with imported files, or None
``campaigns``       number of campaigns with imported files
``target``          {"beta", "reference_period_years"} of the member results
``members``         one dict per member: ``member, zone, kind, governing_mode,
                    beta_before, beta_now, target, verdict`` (member system, or
                    its only mode, after updating), and from the remaining-life
                    curves (None when that step did not run) ``annual_beta_now,
                    annual_target, life_status, remaining_life_years`` (0 when
                    already below, None beyond the horizon) ``, life_text,
                    horizon_years``
``worth``           None, or for the member of the decision set-up: ``member,
                    currency, recommended_action, expected_costs`` (per
                    alternative), ``expected_cost_keep`` and the best test
                    programme ``best_programme, best_programme_cost, evsi,
                    evsi_standard_error, net_value, recommendation``
``report_html``, ``report_json``  paths of the site's report, relative to the folder
``settings``        the settings used (dict)
"""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path

from assess.errors import InputError

#: Settings a portfolio may give the main job (the keys of the settings dict).
SETTING_KEYS = ("seed", "quick", "draws", "history", "life", "worth", "horizon_years")


def job_settings(settings: dict | None, site=None):
    """`RunSettings` of the main job from a plain dict (and the site file's [sampling]).

    Unknown keys are an `InputError`; ``draws`` applies to every MCMC fit.
    """
    from assess.site.settings import build_settings

    settings = dict(settings or {})
    unknown = sorted(set(settings) - set(SETTING_KEYS))
    if unknown:
        raise InputError(f"unknown run setting(s) {', '.join(unknown)}; known: "
                         f"{', '.join(SETTING_KEYS)}", column="run")
    draws = settings.pop("draws", None)
    return build_settings(site_sampling=getattr(site, "sampling", None),
                          site_verdict_calls=getattr(site, "verdict_calls", None),
                          overrides={"draws": draws}, **settings)


def run_one_site(folder: str | Path, settings: dict | None = None,
                 step: Callable[[str], None] | None = None) -> dict:
    """Run the main job on one site folder and return its summary numbers (see module doc).

    Raises whatever the main job raises (`InputError` for bad input,
    `AnalysisError` for an analysis that failed); the portfolio task turns
    those into a failed site.
    """
    from assess.pipeline import exit_code
    from assess.report.job import run_and_report
    from inspection_io.site import load_site

    folder = Path(folder)
    chosen = job_settings(settings, load_site(folder))
    run, html_path, json_path = run_and_report(folder, chosen, say=step)
    summary = summarise_run(run, folder)
    summary["report_html"] = _relative(html_path, folder)
    summary["report_json"] = _relative(json_path, folder)
    summary["settings"] = chosen.to_dict()
    summary["failed_steps"] = {r.name: r.reason for r in run.failed}
    summary["exit_code"] = exit_code(run)
    return summary


def _relative(path: Path, folder: Path) -> str:
    try:
        return str(Path(path).resolve().relative_to(folder.resolve()))
    except ValueError:
        return str(path)


def summarise_run(run, folder: Path) -> dict:
    """Plain summary numbers of one main-job run (results object of the main job)."""
    site = run.site
    assessment = run.step("members")  # a site whose member betas failed fails as a whole
    life = run.result("life")
    life_by_member = {c.member: c for c in life.main} if life is not None else {}
    members = []
    for member_id in site.members:
        rows = [r for r in assessment.results if r.member == member_id]
        if not rows:
            continue
        members.append(_member_row(member_id, rows, life_by_member.get(member_id)))
    last, count = _campaigns(folder)
    return {
        "site": site.site.name,
        "assessment_date": site.site.assessment_date.isoformat(),
        "last_campaign": last,
        "campaigns": count,
        "target": {"beta": float(assessment.target.beta),
                   "reference_period_years": float(assessment.reference_period_years)},
        "members": members,
        "worth": _worth(run.result("worth")),
    }


def _member_row(member_id: str, rows: list, curve) -> dict:
    system = next((r for r in rows if r.mode == "system"), rows[0])
    singles = [r for r in rows if r.mode != "system"] or rows
    governing = min(singles, key=lambda r: _sort_beta(r.after.beta))
    row = {"member": member_id, "zone": system.zone, "kind": system.kind,
           "governing_mode": governing.mode, "beta_before": float(system.before.beta),
           "beta_now": float(system.after.beta), "target": float(system.target),
           "verdict": system.verdict, "annual_beta_now": None, "annual_target": None,
           "life_status": None, "remaining_life_years": None, "life_text": None,
           "horizon_years": None}
    if curve is not None:
        life = curve.remaining_life
        row.update(annual_beta_now=float(curve.beta_now), annual_target=float(curve.target.beta),
                   life_status=life.status,
                   remaining_life_years=float(life.years) if math.isfinite(life.years) else None,
                   life_text=life.text(), horizon_years=float(life.horizon_years))
    return row


def _sort_beta(beta: float) -> float:
    return math.inf if math.isnan(beta) else float(beta)


def _worth(worth) -> dict | None:
    if worth is None:
        return None
    first = worth.ranking.results[0]
    problem = worth.decision.problem
    costs = {str(k): float(v) for k, v in first.prior_expected_costs.items()}
    return {"member": worth.decision.member, "currency": problem.currency,
            "recommended_action": first.prior_decision, "expected_costs": costs,
            "expected_cost_keep": costs.get(problem.keep),
            "best_programme": first.programme, "best_programme_description": first.description,
            "best_programme_cost": float(first.programme_cost), "evsi": float(first.evsi),
            "evsi_standard_error": float(first.evsi_standard_error),
            "net_value": float(first.net_value), "recommendation": worth.recommendation}


def _campaigns(folder: Path) -> tuple[str | None, int]:
    from assess.site.paths import has_ledger, ledger_path
    from inspection_io.ledger import Ledger

    if not has_ledger(folder):
        return None, 0
    with Ledger(ledger_path(folder)) as ledger:
        used = {f.campaign_id for f in ledger.files()}
        dates = [c.date for c in ledger.campaigns() if c.id in used]
    return (max(dates).isoformat() if dates else None), len(dates)
