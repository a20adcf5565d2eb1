"""Assemble the assessment report (HTML + JSON of all numbers) from the results of a run.

Headings and layout are our own. Every number shown is also in the JSON; the
JSON additionally holds the full member results, diagnostics and sources.
"""

from __future__ import annotations

import dataclasses
import math

import assess
from assess.beta_text import interval_text
from assess.reliability.result import format_beta
from assess.report.document import ReportDocument, Tag
from assess.report.figure_cache import Drawing, png_of
from assess.report.figures import (
    before_after_drawing,
    drivers_drawing,
    life_drawing,
    prior_posterior_drawings,
    worth_drawing,
)
from assess.report.summary import (
    VERDICT_TONES,
    add_first_page,
    beta_text,
    probability_text,
)
from assess.site.knowledge import LABELS, knowledge_rows
from assess.site.run import DONE, SKIPPED

KIND_TITLES = {"cores": "Cores (in-situ strength)", "tensile": "Rebar tensile tests",
               "cover": "Cover survey", "carbonation": "Carbonation depths",
               "chloride": "Chloride profiles", "halfcell": "Half-cell potentials",
               "section_loss": "Section loss at break-outs"}

#: Quantities whose prior and posterior densities are drawn in the report.
REPORT_DENSITIES = ("concrete", "area_ratio")
#: Resolution of the report's figures [dots per inch].
FIGURE_DPI = 110


def _add_drawing(sec, run, drawing: Drawing, *, caption: str) -> None:
    """Embed a figure, read from the site's figure store when it was drawn before with the
    same inputs (`assess.report.figure_cache`)."""
    folder = getattr(getattr(run, "site", None), "folder", None)
    sec.add_png(png_of(drawing, dpi=FIGURE_DPI, site_folder=folder), caption=caption)


NO_TEST_DATA = ("No test data has been used yet: every result in this report rests on the design "
                "information and the published priors alone ('before' and 'after' are the same). "
                "Import the site's inspection campaigns (assess site import) to update them.")


def _fmt_beta(beta) -> str:
    return format_beta(beta, minus_infinity="-")


def _fmt_interval(interval) -> str:
    return interval_text(interval, beta=_fmt_beta)


VARIABLE_WORDS = {
    "fc": "concrete strength", "fy": "steel yield strength", "cover": "concrete cover",
    "area_ratio": "residual bar area", "imposed": "vehicle load", "self_weight": "self-weight",
    "superimposed_dead": "superimposed dead load",
    "theta_E_moment": "load-effect model, moment", "theta_E_shear": "load-effect model, shear",
    "theta_E_reaction": "load-effect model, column reaction",
    "theta_flexure": "bending resistance model", "theta_shear": "shear resistance model",
    "theta_punching": "punching resistance model", "initiation_time": "corrosion start",
    "corrosion_rate": "corrosion rate", "pitting_factor": "pitting factor",
    "cover_top": "concrete cover, top bars", "area_ratio_top": "residual bar area, top bars",
}
"""Plain words for the basic variables of the member models (report text only)."""

SUMMARY_COLUMNS = {
    "zone": "Zone", "quantity": "Quantity", "unit": "Unit", "n_total": "Results in file",
    "n_flagged": "Flagged", "n_excluded": "Left out", "n": "Results used", "mean": "Mean",
    "std": "Standard deviation", "cov": "Coefficient of variation [-]", "min": "Smallest",
    "max": "Largest", "k_n_v_unknown": "EN 1990 Annex D factor k_n, scatter unknown [-]",
    "characteristic_v_unknown": "Characteristic strength, scatter unknown [MPa]",
    "k_n_v_known": "EN 1990 Annex D factor k_n, scatter known [-]",
    "characteristic_v_known": "Characteristic strength, scatter known [MPa]",
    "v_known": "Coefficient of variation taken as known [-]",
}
"""Plain-words names of the per-zone summary columns (`inspection_io.summary`)."""

QUANTITY_WORDS = {
    "yield_strength": "yield strength", "tensile_strength": "tensile strength",
    "elongation": "elongation", "cover": "cover", "carbonation_depth": "carbonation depth",
    "chloride": "chloride content", "potential": "half-cell potential",
    "residual_area_ratio": "residual bar area ratio", "max_pit_depth": "deepest pit",
}


def _summary_table(kind: str, table):
    """A per-zone summary with plain column names; no CoV for a signed quantity (mean <= 0)."""
    frame = table.copy()
    if "cov" in frame and "mean" in frame:
        frame["cov"] = frame["cov"].where(frame["mean"] > 0)
    if "quantity" in frame:
        frame["quantity"] = frame["quantity"].map(lambda q: QUANTITY_WORDS.get(q, q))
    names = dict(SUMMARY_COLUMNS)
    if kind == "cores":
        names.update({"mean": "Mean [MPa]", "std": "Standard deviation [MPa]",
                      "min": "Smallest [MPa]", "max": "Largest [MPa]"})
    return frame.rename(columns={c: names.get(c, c.replace("_", " ")) for c in frame.columns})


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
    update = run.result("materials")
    has_data = update is not None and update.has_data
    numbers: dict = {"site": _site_numbers(site), "settings": settings,
                     "warnings": list(run.warnings), "test_data_used": bool(has_data),
                     "steps": {name: r.to_dict() for name, r in run.records.items()}}

    life = run.result("life")
    notes = ([] if has_data else [NO_TEST_DATA]) + (list(life.notes) if life is not None else [])
    numbers["first_page"] = add_first_page(doc, run, notes)
    _section_structure(doc, site, target)
    numbers["data"] = _section_data(doc, run)
    sections = (("materials", "knowledge", _section_knowledge),
                ("members", "members", _section_members),
                ("life", "remaining_life", _section_life),
                ("worth", "value_of_information", _section_worth),
                ("members", "risk_drivers", _section_drivers),
                ("history", "history", _section_history))
    for step, key, write in sections:
        record = run.records.get(step)
        if record is None:
            continue
        if record.status == DONE:
            numbers[key] = write(doc, run)
        elif key != "risk_drivers" and not (record.status == SKIPPED and step == "worth"):
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
    sec.add_table([{"Step": r["step"], "Outcome": r["outcome"], "Time [s]": r["time [s]"],
                    "Reason": r["reason"]} for r in rows], caption="Steps of the run, in order")
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
                        "Target reliability index [-]": f"{target.beta:.2f} "
                                                        f"({target.reference_period_years:g}-year "
                                                        f"reference period)",
                        "Reference period [years]": target.reference_period_years,
                        "Source of the target": target.source,
                        "Concrete as specified": f"{site.materials.concrete_class} "
                                                 f"({site.materials.production})",
                        "Reinforcement as specified": site.materials.steel_grade},
                       caption="Settings that decide the target")
    sec.add_table([{"Member": m.member_id, "Zone": m.zone, "Kind": m.kind,
                    "Span [m]": m.span if m.span else f"{m.span_x} x {m.span_y}",
                    "Depth [mm]": m.depth, "Cover [mm]": m.cover,
                    "Bars": f"{m.bar_diameter:g} mm" + (f" at {m.bar_spacing:g} mm"
                                                        if m.bar_spacing
                                                        else f", {m.steel_area:g} mm2")}
                   for m in site.members.values()], caption="Members assessed")
    sec.add_table([{"Zone": z.zone_id, "Exposure": z.exposure, "Description": z.description}
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
        sec.add_table(_summary_table(kind, table), caption=KIND_TITLES.get(kind, kind))
        out[kind] = table.to_dict("records") if hasattr(table, "to_dict") else table
    if run.flagged:
        sec.add_notice([f"{f['file']} row {f['row']}: {f['item']} flagged ({f['flags']})"
                        for f in run.flagged],
                       title="Flagged results (kept in the ledger; outliers are used in the "
                             "update, rows with other flags are not)")
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
    shown = [{"Zone": r["zone"], "Quantity": r["quantity"], "Unit": r["unit"],
              "Tests used": r["tests"], "Mean, design information": r["prior mean"],
              "Standard deviation, design information": r["prior std"],
              "Mean after tests": r["posterior mean"],
              "Standard deviation after tests": r["posterior std"]} for r in rows]
    sec.add_table(shown, caption="Predictive mean and standard deviation, design prior and "
                                 "after tests (units in the Unit column)",
                  formats={"Mean, design information": ".4g",
                           "Standard deviation, design information": ".3g",
                           "Mean after tests": ".4g", "Standard deviation after tests": ".3g"})
    gate = update.gate.to_dict() if update.gate else None
    if gate:
        sec.add_key_values({"max R-hat": gate["max_rhat"], "min bulk ESS": gate["min_ess_bulk"],
                            "min tail ESS": gate["min_ess_tail"], "divergences": gate["divergences"],
                            "chains x draws": f"{gate['chains']} x {gate['draws']}",
                            "posterior file": str(update.posterior_path)},
                           caption="Convergence diagnostics (gate passed)")
    else:
        sec.add_notice([NO_TEST_DATA], title="Design information only")
    notes = update.notes() if hasattr(update, "notes") else []
    if notes:
        sec.add_notice(notes, title="Flagged tests used and tests excluded by the engineer")
    # Only these quantities are drawn in the report (the others are in the table above).
    for (name, zone), drawing in prior_posterior_drawings(update, REPORT_DENSITIES).items():
        _add_drawing(sec, run, drawing,
                     caption=f"{LABELS[name][0]}, zone {zone}: design prior and posterior "
                             "predictive, with the test results as ticks")
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
        f"A member system fails when any of its modes fails. The range of beta after is "
        f"the range from the sampling error of the estimate alone (95 %, shared over the "
        f"repeated looks when it is sampled again; JSON: interval_level); the verdict is "
        f"'undecided' when it straddles the target after sampling again up to "
        f"{a.max_calls if a.max_calls is not None else 'no further'} limit-state calls; a "
        f"change within the noise of both estimates reads 'no significant change'.")
    period = f"{a.reference_period_years:g}-year"
    rows = []
    for r in a.results:
        rows.append({"Member": r.member,
                     "Failure mode": "member (all modes)" if r.mode == "system" else r.mode,
                     f"Beta before tests, {period} [-]": beta_text(r.before.beta),
                     f"Beta after tests, {period} [-]": beta_text(r.after.beta),
                     "Range of beta after (sampling error) [-]": _fmt_interval(r.interval_after),
                     "Change": r.change,
                     "Coefficient of variation of the pf estimate after [-]":
                         r.after.cov if math.isfinite(r.after.cov) else None,
                     f"Target beta, {period} [-]": beta_text(r.target),
                     "Verdict": Tag(r.verdict, VERDICT_TONES.get(r.verdict, "none")),
                     "Main drivers (share of alpha squared) [-]": ", ".join(
                         f"{VARIABLE_WORDS.get(n, n.replace('_', ' '))} ({v:.2f})"
                         for n, v in r.drivers())})
    sec.add_table(rows, caption=f"Reliability index per member and mode, "
                                f"{period} reference period",
                  formats={"Coefficient of variation of the pf estimate after [-]": ".2f"},
                  marked=[r.verdict == "below target" for r in a.results])
    _add_drawing(sec, run, before_after_drawing(a),
                 caption=f"Beta before and after updating, with the target ({period} "
                         "reference period)")
    if a.notes:
        sec.add_notice(a.notes, title="Modes not covered and assumptions")
    return [r.to_dict() for r in a.results]


def _section_life(doc, run) -> object:
    life = run.result("life")
    sec = doc.add_section("How long the members last")
    sec.add_paragraph(life.explanation)
    rows = [{"Member": r["member"],
             "Governing failure mode": "member (all modes)" if r["governing mode"] == "system"
             else r["governing mode"],
             "Beta at the assessment date, 1-year [-]": beta_text(r["beta now"]),
             f"Beta after {life.horizon_years:g} years, 1-year [-]": beta_text(r["beta at horizon"]),
             "Target beta, 1-year [-]": beta_text(life.target.beta),
             "Remaining life": r["remaining life"]}
            for r in life.table_rows()]
    if rows:
        sec.add_table(rows, caption="Remaining life per member (first year the annual beta falls "
                                    "below the annual target)",
                      marked=[c.remaining_life.status == "already below target"
                              for c in life.main])
        _add_drawing(sec, run, life_drawing(life),
                     caption="Annual beta per year against the annual target (1-year reference "
                             "period); shaded: the parameter band (5-95 % over the posterior "
                             "parameters); dashed: the sampling band of the estimate")
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
    decision = worth.decision
    horizon = decision.horizon_years
    sec = doc.add_section("Is more testing worth it")
    sec.add_paragraph(
        f"Member {decision.member}, over a {horizon}-year horizon. 'Keep as is' is costed "
        + ("with the annual failure probability of the member's remaining-life curve, year by "
           "year (the same beta(t) as the remaining-life section)"
           if decision.uses_life_curve else
           "with a constant annual failure probability (no remaining-life curve in this run)")
        + f". The annual target {decision.target.beta:.2f} (1-year reference period) is "
        f"{decision.horizon_target_beta:.2f} over the {horizon}-year horizon; the betas of "
        f"this section are {horizon}-year values.")
    currency = decision.problem.currency
    adequate = f"Probability the tests show beta over {horizon} years >= target"
    rows = [{"Test programme": r.description,
             f"Cost [{currency}]": r.programme_cost,
             f"Value of information [{currency}]": r.evsi,
             f"Monte Carlo standard error [{currency}]": r.evsi_standard_error,
             f"Net value [{currency}]": r.net_value,
             adequate: probability_text(r.probability_adequate)}
            for r in worth.ranking.results]
    if rows:
        sec.add_table(rows, caption="Candidate test programmes ranked by net value",
                      formats={k: ",.0f" for k in rows[0] if k.endswith(f"[{currency}]")})
        _add_drawing(sec, run, worth_drawing(worth),
                     caption=f"Beta over the {horizon}-year horizon each programme could "
                             f"lead to, against the {horizon}-year target")
    if worth.recommendation:
        sec.add_paragraph(worth.recommendation)
    _population_shares(sec, getattr(worth, "population_shares", None))
    return worth.to_dict()


def _population_shares(sec, found) -> None:
    """Which population's uncertainty moves the member's beta (worth step's surrogate)."""
    if not found or not found.get("shares"):
        return
    sec.add_paragraph(
        f"Which uncertainty drives the risk here: the share of the spread of beta "
        f"({found['mode']}, '{found['alternative']}') over what is still unknown about each "
        f"material population. Tests of a population with a large share can move beta; a "
        f"population with a small share is not worth testing for this member, whatever the "
        f"test costs.")
    rows = [{"Population": LABELS.get(q, (q.replace("_", " "),))[0],
             "Share of the spread of beta (Sobol index) [-]": v}
            for q, v in found["shares"].items()]
    caption = "Sobol indices of beta over the posterior of each population (mean and spread)"
    if found.get("largest_correlation", 0.0) > 0.3:
        caption += (f"; populations correlated up to {found['largest_correlation']:.2f}: "
                    f"approximate")
    sec.add_table(rows, caption=caption,
                  formats={"Share of the spread of beta (Sobol index) [-]": ".2f"})


def variable_words(name: str) -> str:
    """Plain words for a model variable (`VARIABLE_WORDS`, else its name without
    underscores)."""
    return VARIABLE_WORDS.get(name, name.replace("_", " "))


def drivers_rows(drivers) -> list[dict]:
    """Table rows of `assess.site.drivers.MemberDrivers`, plain names, largest share first."""
    rows = []
    for d in drivers:
        for name in d.variables():
            rows.append({"Member": d.member, "Governing failure mode": d.mode,
                         "Uncertain quantity": variable_words(name),
                         "Importance factor alpha squared [-]":
                             (d.importance or {}).get(name),
                         "Sobol index, first order [-]": (d.sobol_first or {}).get(name),
                         "Sobol index, total [-]": (d.sobol_total or {}).get(name)})
    return rows


DRIVERS_READING = (
    "How to read it: the importance factor is the share of the reliability index owed to "
    "each uncertain quantity at the most likely failure point (what pushes the member "
    "towards failure); the total Sobol index is its share of the spread of the safety "
    "margin (what makes it uncertain). A quantity high in both is the one whose testing "
    "most likely changes the verdict; testing a quantity low in both is seldom worth it.")


def _section_drivers(doc, run):
    """Which uncertainty drives the risk, per member's governing mode (none: no section)."""
    drivers = getattr(run.result("members"), "drivers", None) or []
    if not drivers:
        return []
    sec = doc.add_section("Which uncertainty drives the risk")
    sec.add_paragraph(DRIVERS_READING)
    top = 4
    rows = []
    for d in drivers:
        rows.extend(drivers_rows([d])[:top])
    sec.add_table(rows, caption=f"The {top} largest shares of each member's governing mode "
                                "(lowest beta after updating); importance factors from "
                                "the FORM design point (or the failure samples of subset "
                                "simulation), Sobol indices of the safety margin from a "
                                "polynomial-chaos expansion",
                  formats={k: ".2f" for k in rows[0] if k.endswith("[-]")} if rows else None)
    _add_drawing(sec, run, drivers_drawing(drivers, variable_words, top=top),
                 caption="Importance factor and total Sobol index of the largest "
                         "shares, per member (governing mode)")
    notes = [f"{d.member} {d.mode}: {d.note}" for d in drivers if d.note]
    notes += [f"{d.member} {d.mode}: importance factors from the {d.importance_source}"
              for d in drivers if d.importance_source
              and d.importance_source != "FORM design point"]
    if notes:
        sec.add_notice(notes, title="Shares not shown or found another way")
    return [{**d.to_dict(), "variable_words": {n: variable_words(n) for n in d.variables()}}
            for d in drivers]


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
    period = f"{history[-1].assessment.reference_period_years:g}-year"
    sec.add_table(rows, caption=f"Beta after updating per campaign ({period} reference period)")
    target = history[-1].assessment.target.beta
    _add_drawing(sec, run, Drawing(plot_beta_history, ([h.date for h in history], series,
                                                        target), dict(period=period)),
                 caption=f"Beta per member at each campaign, with the target ({period})")
    return [row for h in history for row in h.rows()]


def _section_sources(doc, run, target) -> dict:
    from assess.site.knowledge import design_knowledge
    from assess.site.member_models import build_member_model
    from assess.targets import BRITTLE_BASIS, DUCTILE_BASIS

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
    sources["target per mode"] = f"{DUCTILE_BASIS}; {BRITTLE_BASIS}"
    sources["convergence gate"] = ("Vehtari et al. 2021, Bayesian Analysis 16(2): rank-normalised "
                                   "R-hat <= 1.01, ESS >= 400; no divergences")
    sources["posterior into reliability"] = (
        "posterior draws fitted by a gamma precision and normal standardised location with a "
        "Gaussian copula; physical values keep their analytic conditional distribution")
    sec.add_table([{"Item": VARIABLE_WORDS.get(k, k.replace("_", " ")), "Model and source": v}
                   for k, v in sources.items()],
                  caption="Every model and default value with its published source")
    return sources
