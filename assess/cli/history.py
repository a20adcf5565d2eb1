"""``assess history``: reliability of every member as known after each campaign."""

from __future__ import annotations

import math
from typing import Annotated

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import (DrawsOption, JsonFlag, QuickFlag, SeedOption, SiteFolder,
                                load_checked_site)
from assess.reliability.result import format_beta


@app.command("history")
@guard
def history_command(folder: SiteFolder, seed: SeedOption = 20261202, draws: DrawsOption = 1000,
                    quick: QuickFlag = False,
                    plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                                        help="Write a PNG to results/plots/.")] = True,
                    json_output: JsonFlag = False):
    """Re-assess the site as of each inspection campaign, using only the data known then.

    Prints beta after updating [-] of each member system per campaign against the
    target, appends every re-assessment to the ledger, and plots beta against
    the campaign date.
    """
    from assess.assessment.history import governing_rows, reassess_history
    from assess.assessment.site_update import UpdateSettings
    from assess.report.files import save_figure
    from assess.report.plots import plot_beta_history

    site = load_checked_site(folder)
    settings = UpdateSettings(draws=draws, tune=500 if quick else 1000, seed=seed)
    options = {"n_per_level": 500 if quick else 1000}
    with err_console.status("Re-assessing the site campaign by campaign (MCMC per campaign) ..."):
        history = reassess_history(site, settings=settings, seed=seed, options=options)
    if not history:
        err_console.print("No campaign has been imported yet: run 'assess site import' first.")
        raise typer.Exit(code=2)
    series = governing_rows(history)
    target = history[-1].assessment.target
    plot_path = None
    if plots:
        fig = plot_beta_history([h.date for h in history], series, target.beta)
        plot_path = save_figure(fig, site.folder / "results" / "plots", "beta-history")
    if json_output:
        emit_json({"campaigns": [{"campaign": h.campaign, "date": h.date.isoformat(),
                                              "data_until": h.data_until.isoformat(),
                                              "counts": h.counts} for h in history],
                               "rows": [row for h in history for row in h.rows()],
                               "target": target.beta, "plot": str(plot_path) if plot_path else None})
        return
    table = Table(title=f"Beta after updating per campaign (member system, "
                        f"{target.reference_period_years:g}-year), target {target.beta:.1f}")
    table.add_column("member")
    for h in history:
        table.add_column(f"{h.campaign}\n{h.date.isoformat()}", justify="right")
    for member, values in series.items():
        table.add_row(member, *[_fmt(v, target.beta) for v in values])
    out_console.print(table)
    if plot_path:
        err_console.print(f"Plot: {plot_path}", highlight=False)
    print_caution()


def _fmt(beta: float, target: float) -> str:
    text = format_beta(beta)
    return text if math.isnan(beta) or math.isinf(beta) or beta >= target else text + " *"
