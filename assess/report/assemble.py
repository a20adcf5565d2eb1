"""Assemble the assessment report (HTML + JSON of all numbers) from the results of a run.

Headings and layout are our own. Every number shown is also in the JSON; the
JSON additionally holds the full member results, diagnostics and sources.
"""

from __future__ import annotations

import dataclasses
import math

import assess
from assess.reliability.result import format_beta
from assess.report.document import ReportDocument
from assess.report.figures import (
    before_after_figure,
    life_figure,
    prior_posterior_figures,
    worth_figure,
)
from assess.site.knowledge import LABELS, knowledge_rows
from assess.site.run import DONE, SKIPPED

KIND_TITLES = {"cores": "Cores (in-situ strength)", "tensile": "Rebar tensile tests",
               "cover": "Cover survey", "carbonation": "Carbonation depths",
               "chloride": "Chloride profiles", "halfcell": "Half-cell potentials",
               "section_loss": "Section loss at break-outs"}

NO_TEST_DATA = ("No test data has been used yet: every result in this report rests on the design "
                "information and the published priors alone ('before' and 'after' are the same). "
                "Import the site's inspection campaigns (assess site import) to update them.")


def _fmt_beta(beta) -> str:
    return format_beta(beta, minus_infinity="-")


def build_report(run) -> tuple[ReportDocument, dict]:
    """The report document and the dictionary of all its numbers, from a `SiteRun`.

    A step that failed or did not run gets a "not available" section saying why
    and what to do, in place of its results.
    """
    site = run.site
    from assess.targets import target_beta

    target = target_beta(site.target.consequence_class, float(site.target.reference_period),
                         site.target.cost_of_safety)
    settings = run.settings.to_dict()
    doc = ReportDocument(
        f"Reliability assessment: {site.site.name}",
        subtitle=f"{site.site.structure or 'structure'} built {site.site.year_built}, "
                 f"assessed {site.site.assessment_date.isoformat()}",
        metadata={"tool version": assess.__version__, "seed": settings["seed"],
                  "mode": "quick" if settings["quick"] else "full"})
    for warning in run.warnings:
        doc.add_warning(warning)
    update = run.result("materials")
    has_data = update is not None and update.has_data
    if not has_data:
        doc.add_warning(NO_TEST_DATA)
    numbers: dict = {"site": _site_numbers(site), "settings": settings,
                     "warnings": list(run.warnings), "test_data_used": bool(has_data),
                     "steps": {name: r.to_dict() for name, r in run.records.items()}}

    _section_structure(doc, site, target)
    numbers["data"] = _section_data(doc, run)
    sections = (("materials", "knowledge", _section_knowledge),
                ("members", "members", _section_members),
                ("life", "remaining_life", _section_life),
                ("worth", "value_of_information", _section_worth),
                ("history", "history", _section_history))
    for step, key, write in sections:
        record = run.records.get(step)
        if record is None:
            continue
        if record.status == DONE:
            numbers[key] = write(doc, run)
        elif not (record.status == SKIPPED and step == "worth"):
            _section_not_available(doc, record)
    numbers["steps_overview"] = _section_steps(doc, run)
    numbers["sources"] = _section_sources(doc, run, target)
    return doc, numbers


def _section_not_available(doc, record) -> None:
    sec = doc.add_section(f"{record.title}: not available")
    what = "failed" if record.status != SKIPPED else "did not run"
    sec.add_notice([f"This step {what}: {record.reason}"]
                   + ([f"What to do: {record.fix}"] if record.fix else []),
                   title="Not available", kind="warning")


def _section_steps(doc, run) -> list:
    sec = doc.add_section("How this run went")
    rows = [{"step": r.title, "outcome": r.status, "time [s]": round(r.seconds, 1),
             "reason": r.reason.splitlines()[0] if r.reason else ""}
            for r in run.records.values()]
    sec.add_table(rows, caption="Steps of the run, in order")
    return rows


def _site_numbers(site) -> dict:
    return {"name": site.site.name, "year_built": site.site.year_built,
            "assessment_date": site.site.assessment_date.isoformat(),
            "target_settings": dataclasses.asdict(site.target),
            "materials": dataclasses.asdict(site.materials), "loads": dataclasses.asdict(site.loads),
            "zones": {z: dataclasses.asdict(v) for z, v in site.zones.items()},
            "members": {m: dataclasses.asdict(v) for m, v in site.members.items()}}


def _section_structure(doc, site, target) -> None:
    sec = doc.add_section("The structure and the question asked")
    sec.add_paragraph(
        f"This report estimates, member by member, how reliable the {site.site.structure or 'structure'} "
        f"is believed to be from its design information alone, and how reliable the site's "
        f"test results now show it to be. Each reliability index beta is compared with a target "
        f"for an existing structure over a reference period of "
        f"{target.reference_period_years:g} year(s).")
    sec.add_key_values({"Consequence class": site.target.consequence_class,
                        "Relative cost of safety measures": site.target.cost_of_safety,
                        "Target reliability index": f"{target.beta:.2f}",
                        "Reference period [years]": target.reference_period_years,
                        "Source of the target": target.source,
                        "Concrete as specified": f"{site.materials.concrete_class} "
                                                 f"({site.materials.production})",
                        "Reinforcement as specified": site.materials.steel_grade},
                       caption="Settings that decide the target")
    sec.add_table([{"member": m.member_id, "zone": m.zone, "kind": m.kind,
                    "span [m]": m.span if m.span else f"{m.span_x} x {m.span_y}",
                    "depth [mm]": m.depth, "cover [mm]": m.cover,
                    "bars": f"{m.bar_diameter:g} mm" + (f" @ {m.bar_spacing:g}" if m.bar_spacing
                                                       else f", {m.steel_area:g} mm2")}
                   for m in site.members.values()], caption="Members assessed")
    sec.add_table([{"zone": z.zone_id, "exposure": z.exposure, "description": z.description}
                   for z in site.zones.values()], caption="Zones")


def _section_data(doc, run) -> dict:
    sec = doc.add_section("What the inspection campaigns measured")
    sec.add_paragraph("Test results per zone after unit conversion and, for cores, conversion "
                      "to in-situ strength. Flagged results are kept in the ledger but left out "
                      "of the updating unless included explicitly.")
    out = {}
    for kind, table in run.data_summaries.items():
        if table is None or len(table) == 0:
            continue
        sec.add_table(table, caption=KIND_TITLES.get(kind, kind))
        out[kind] = table.to_dict("records") if hasattr(table, "to_dict") else table
    if run.flagged:
        sec.add_notice([f"{f['file']} row {f['row']}: {f['item']} flagged ({f['flags']})"
                        for f in run.flagged], title="Flagged results (kept, not used)")
    out["flagged"] = run.flagged
    return out


def _section_knowledge(doc, run) -> dict:
    update = run.result("materials")
    sec = doc.add_section("From design information to site evidence")
    sec.add_paragraph(
        "Each zone's concrete strength, reinforcement yield strength, cover and residual bar "
        "area are uncertain populations. The design information gives their prior; the site's "
        "tests update them by Markov chain Monte Carlo (PyMC, NUTS). No result is reported from "
        "a run that fails the convergence gate (R-hat <= 1.01, bulk and tail effective sample "
        "size >= 400, no divergences).")
    rows = [{"zone": r["zone"], "quantity": r["label"], "unit": r["unit"], "tests": r["tests"],
             "prior mean": r["prior_mean"], "prior std": r["prior_std"],
             "posterior mean": r["posterior_mean"], "posterior std": r["posterior_std"]}
            for r in knowledge_rows(run.site, update)]
    sec.add_table(rows, caption="Predictive mean and standard deviation, design prior and after tests",
                  formats={"prior mean": ".4g", "prior std": ".3g", "posterior mean": ".4g",
                           "posterior std": ".3g"})
    gate = update.gate.to_dict() if update.gate else None
    if gate:
        sec.add_key_values({"max R-hat": gate["max_rhat"], "min bulk ESS": gate["min_ess_bulk"],
                            "min tail ESS": gate["min_ess_tail"], "divergences": gate["divergences"],
                            "chains x draws": f"{gate['chains']} x {gate['draws']}",
                            "posterior file": str(update.posterior_path)},
                           caption="Convergence diagnostics (gate passed)")
    else:
        sec.add_notice([NO_TEST_DATA], title="Design information only")
    for (name, zone), fig in prior_posterior_figures(update).items():
        if name in ("concrete", "area_ratio"):
            sec.add_figure(fig, caption=f"{LABELS[name][0]}, zone {zone}: design prior and "
                                        "posterior predictive, with the test results as ticks")
        else:
            import matplotlib.pyplot as plt

            plt.close(fig)
    from assess.updating.measurement_error import measurement_table

    errors = measurement_table()
    sec.add_table([{"test": e["kind"], "sd of one reading": e["sd"], "unit": e["unit"],
                    "source": e["source"]} for e in errors],
                  caption="Measurement error of each test method, taken out of the population "
                          "spread in the update and used again by the value-of-information "
                          "programmes")
    return {"rows": rows, "gate": gate, "hash": update.data_hash, "measurement_errors": errors,
            "family_checks": getattr(update, "family_checks", {})}


def _section_members(doc, run) -> list:
    a = run.result("members")
    sec = doc.add_section("Reliability of each member now")
    sec.add_paragraph(
        f"Beta before uses the design information only; beta after uses the site's evidence. "
        f"Both use the same loads, model uncertainties and random numbers. Method: "
        f"{a.method.replace('_', ' ')}; CoV is the coefficient of variation of the pf estimate. "
        f"A member system fails when any of its modes fails.")
    rows = []
    for r in a.results:
        rows.append({"member": r.member, "mode": r.mode, "beta before": _fmt_beta(r.before.beta),
                     "beta after": _fmt_beta(r.after.beta),
                     "CoV after": r.after.cov if math.isfinite(r.after.cov) else None,
                     "target": r.target, "verdict": r.verdict,
                     "main drivers": ", ".join(f"{n} ({v:.2f})" for n, v in r.drivers())})
    sec.add_table(rows, caption=f"Reliability index per member and mode, "
                                f"{a.reference_period_years:g}-year reference period",
                  formats={"CoV after": ".2f", "target": ".2f"})
    sec.add_figure(before_after_figure(a), caption="Beta before and after updating, with the target")
    if a.notes:
        sec.add_notice(a.notes, title="Modes not covered and assumptions")
    return [r.to_dict() for r in a.results]


def _section_life(doc, run) -> object:
    life = run.result("life")
    sec = doc.add_section("How long the members last")
    sec.add_paragraph(life.explanation)
    rows = life.table_rows()
    if rows:
        sec.add_table(rows, caption="Remaining life per member (first year beta falls below the target)")
        sec.add_figure(life_figure(life), caption="Beta per year against the target")
    _half_cell_effect_table(sec, life)
    return life.to_dict()


def _half_cell_effect_table(sec, life) -> None:
    """How much the half-cell readings moved each zone's initiation time (if any)."""
    rows = []
    for zone, inputs in getattr(life, "corrosion", {}).items():
        effect = getattr(inputs, "half_cell_effect", None)
        if not effect:
            continue
        rows.append({"zone": zone, "readings": effect["readings"],
                     "worth independent": effect["effective_readings"],
                     "t_i median without [yr]": effect["without_half_cell_years"]["median"],
                     "t_i median with [yr]": effect["with_half_cell_years"]["median"],
                     "90 % without [yr]": f"{effect['without_half_cell_years']['p05']:.0f}-"
                                          f"{effect['without_half_cell_years']['p95']:.0f}",
                     "90 % with [yr]": f"{effect['with_half_cell_years']['p05']:.0f}-"
                                       f"{effect['with_half_cell_years']['p95']:.0f}",
                     "site-calibrated": "yes" if effect["calibrated"] else "no (defaults)"})
    if rows:
        sec.add_table(rows, caption="Corrosion initiation time with and without the half-cell "
                                    "readings (neighbouring readings are correlated: each "
                                    "survey counts as its effective number of readings)",
                      formats={"worth independent": ".1f", "t_i median without [yr]": ".1f",
                               "t_i median with [yr]": ".1f"})


def _section_worth(doc, run) -> object:
    worth = run.result("worth")
    sec = doc.add_section("Is more testing worth it")
    rows = worth.table_rows()
    if rows:
        sec.add_table(rows, caption="Candidate test programmes ranked by net value")
        sec.add_figure(worth_figure(worth), caption="Posterior beta each programme could lead to")
    if worth.recommendation:
        sec.add_paragraph(worth.recommendation)
    return worth.to_dict()


def _section_history(doc, run) -> list:
    from assess.report.plots import plot_beta_history
    from assess.site.history import governing_rows

    history = run.result("history").entries
    sec = doc.add_section("Reliability campaign by campaign")
    if not history:
        sec.add_paragraph("No inspection campaign has been imported yet.")
        return []
    sec.add_paragraph("The site re-assessed as it was known after each campaign, using only the "
                      "data available then (member system, beta after updating).")
    series = governing_rows(history)
    rows = []
    for member, values in series.items():
        row = {"member": member}
        for entry, beta in zip(history, values):
            row[f"{entry.campaign} ({entry.date.isoformat()})"] = _fmt_beta(beta)
        rows.append(row)
    sec.add_table(rows, caption="Beta after updating per campaign")
    target = history[-1].assessment.target.beta
    sec.add_figure(plot_beta_history([h.date for h in history], series, target),
                   caption="Beta per member at each campaign, with the target")
    return [row for h in history for row in h.rows()]


def _section_sources(doc, run, target) -> dict:
    from assess.site.knowledge import design_knowledge
    from assess.site.member_models import build_member_model

    sec = doc.add_section("Models, assumptions and their sources")
    sources: dict[str, str] = {}
    site = run.site
    update = run.result("materials")
    before = update.before if update is not None else design_knowledge(site)
    for member in site.members.values():
        model = build_member_model(site, member, before[member.zone],
                                   reference_period_years=target.reference_period_years)
        for name, source in model.sources.items():
            sources.setdefault(name.split(".")[0], source)
    sources["target reliability"] = target.source
    sources["convergence gate"] = ("Vehtari et al. 2021, Bayesian Analysis 16(2): rank-normalised "
                                   "R-hat <= 1.01, ESS >= 400; no divergences")
    sources["posterior into reliability"] = (
        "posterior draws fitted by a gamma precision and normal standardised location with a "
        "Gaussian copula; physical values keep their analytic conditional distribution")
    sec.add_table([{"item": k, "model and source": v} for k, v in sources.items()],
                  caption="Every model and default value with its published source")
    return sources
