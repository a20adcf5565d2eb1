"""The portfolio page: ranking table, member table, failed sites and an overview plot.

Written by the client (never by a worker) to ``<portfolio>/results/reports/``
as ``portfolio-<YYYY-MM-DDTHHMM>-NNN.html`` and the ``.json`` of all its
numbers, new files every time (`assess.report.writer.write_report`).
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np

from assess.portfolio import ranking
from assess.reliability.result import format_beta


def overview_figure(rows: list[dict]):
    """Margin beta - target of each site's governing member against the years to the crossing.

    A map-free overview: one point per site, labelled with its rank; sites
    without a crossing within the horizon (arrow marker) or without remaining-life
    curves (cross) sit at the right edge.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from assess.report.plots import PALETTE, TARGET_COLOUR

    fig = Figure(figsize=(7.5, 4.4), layout="constrained")
    FigureCanvasAgg(fig)
    ax = fig.subplots()
    ax.grid(True, color="#dcdfe3", linewidth=0.6)
    ax.set_axisbelow(True)
    years = np.array([r["years to crossing"] for r in rows], dtype=float)
    margins = np.array([np.nan if r["margin"] is None else r["margin"] for r in rows], dtype=float)
    finite = years[np.isfinite(years)]
    edge = max(10.0, (finite.max() if finite.size else 0.0) * 1.15 + 2.0)
    plotted = np.where(np.isfinite(years), years, edge)
    shown = np.clip(np.where(np.isfinite(margins), margins, 0.0), -3.0, 3.0)
    curves = np.array([bool(r.get("life curves", True)) for r in rows])
    beyond = ~np.isfinite(years) & curves
    crossing = np.isfinite(years) & curves
    kinds = ((crossing, {"color": PALETTE[0], "s": 36}, "crosses the target within the horizon"),
             (beyond, {"color": PALETTE[1], "marker": ">", "s": 42}, "no crossing within the horizon"),
             (~curves, {"color": PALETTE[3], "marker": "x", "s": 42},
              "no remaining-life curves (placed at the right)"))
    for mask, style, label in kinds:
        if mask.any():
            ax.scatter(plotted[mask], shown[mask], zorder=3, label=label, **style)
    for r, x, y in zip(rows, plotted, shown):
        ax.annotate(str(r["rank"]), (x, y), textcoords="offset points", xytext=(4, 4), fontsize=8)
    ax.axhline(0.0, color=TARGET_COLOUR, linestyle="--", linewidth=1.4, label="target (margin 0)")
    ax.set_xlabel("Years to the first target crossing [years]")
    ax.set_ylabel("Margin \u03b2 now - target [-] (clipped to \u00b13)")
    ax.set_xlim(-1.0, edge + 2.0)
    ax.legend(fontsize=8, loc="best")
    return fig


def _text(value, digits: int = 2) -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        if math.isinf(value):
            return "none" if value > 0 else "-inf"
        return f"{value:.{digits}f}"
    return str(value)


def table_rows(rows: list[dict], report_link: Path | None = None) -> list[dict]:
    """Site rows formatted for a table (betas as in every table of the tool)."""
    out = []
    for r in rows:
        cost = r["expected cost of keeping as is"]
        out.append({"rank": r["rank"], "site": r["site"], "urgency": r["urgency"],
                    "governing member": f"{r['governing member']} ({r['governing mode']})",
                    "beta now": format_beta(r["beta now"], minus_infinity="-"),
                    "target": _text(r["target"]), "remaining life": r["remaining life"],
                    "recommended action": r["recommended action"],
                    "further testing": r["further testing"],
                    "cost of keeping as is": "-" if cost is None else f"{r['currency']} {cost:,.0f}",
                    "last campaign": r["last campaign"]})
    return out


def write_portfolio_report(folder: Path, *, name: str, rows: list[dict], members: list[dict],
                           failed: list[dict], run_info: dict, site_folders: dict,
                           warnings: list[dict] | None = None) -> tuple[Path, Path]:
    """Write the portfolio page and its JSON; returns their paths."""
    from assess.report.document import ReportDocument
    from assess.report.writer import report_paths, write_report

    reports = Path(folder) / "results" / "reports"
    reports.mkdir(parents=True, exist_ok=True)
    doc = ReportDocument(f"Portfolio: {name}",
                         subtitle=f"{len(rows)} site(s) ranked, {len(failed)} failed",
                         metadata={"sites run now": len(run_info["ran"]),
                                   "sites unchanged (not run)": len(run_info["skipped"]),
                                   "ran on": run_info["executor"]})
    for f in failed:
        doc.add_warning(f"site {f['site']} failed ({f['failure']}): {f['reason']}")
    sec = doc.add_section("Where to act and test first")
    sec.add_paragraph("Urgency rule: " + ranking.RULE)
    sec.add_table(table_rows(rows), caption="Sites ranked by urgency (governing member of each)")
    if rows:
        sec.add_figure(overview_figure(rows),
                       caption="Each site's governing member: margin to the target now against "
                               "the years to the first target crossing (labels: rank)")
    sec = doc.add_section("Every member of every site")
    sec.add_table([{"site": m["site"], "member": m["member"], "zone": m["zone"],
                    "kind": m["kind"], "governing mode": m["governing mode"],
                    "beta before": format_beta(m["beta before"], minus_infinity="-"),
                    "beta now": format_beta(m["beta now"], minus_infinity="-"),
                    "target": _text(m["target"]), "verdict": m["verdict"],
                    "remaining life": m["remaining life"],
                    "governs the site": "yes" if m["governs site"] else ""} for m in members],
                  caption="Member systems after updating, per site (sites in rank order)")
    if failed:
        sec = doc.add_section("Sites that failed")
        sec.add_table([{"site": f["site"], "failure": f["failure"], "reason": f["reason"]}
                       for f in failed], caption="Reasons (the other sites were run)")
    if warnings:
        sec = doc.add_section("Points to check per site")
        sec.add_table(warnings, caption="Warnings of each site's last run (details in its report)")
    sec = doc.add_section("Site reports")
    links = []
    for r in rows:
        if r.get("report"):
            target = Path(site_folders[r["site"]]) / r["report"]
            links.append({"site": r["site"], "report": os.path.relpath(target, reports)})
    sec.add_table(links, caption="Each site's own report, in its folder (path from this page)")
    html_path, json_path = report_paths(reports, prefix="portfolio")
    numbers = {"name": name, "rule": ranking.RULE, "sites": rows, "members": members,
               "failed": failed, "warnings": warnings or [], "run": run_info,
               "site_folders": {k: str(v) for k, v in site_folders.items()}}
    return write_report(html_path, json_path, doc, numbers)
