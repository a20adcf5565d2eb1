"""``assess history``: reliability of every member as known after each campaign."""

from __future__ import annotations

import math
from typing import Annotated

import typer
from rich.table import Table

from assess.beta_text import format_beta
from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import new_run, run_with_status
from assess.cli.options import (
    DrawsOption,
    JsonFlag,
    QuickFlag,
    SamplerOption,
    SamplingOption,
    SeedOption,
    SiteFolder,
    TargetAcceptOption,
    TuneOption,
)
from assess.errors import InputError
from assess.site.settings import DEFAULT_SEED


@app.command("history")
@guard
def history_command(folder: SiteFolder, seed: SeedOption = DEFAULT_SEED,
                    draws: DrawsOption = None, tune: TuneOption = None,
                    target_accept: TargetAcceptOption = None, sampler: SamplerOption = None,
                    sampling: SamplingOption = None, quick: QuickFlag = False,
                    plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                                        help="Write a PNG to results/plots/.")] = True,
                    json_output: JsonFlag = False):
    """Re-assess the site as of each inspection campaign, using only the data known then.

    Prints beta after updating [-] of each member system per campaign against the
    target, appends every re-assessment to the ledger, and plots beta against
    the campaign date.
    """
    from assess.report.files import save_figure
    from assess.report.plots import plot_beta_history
    from assess.site.history import governing_rows
    from assess.site.paths import has_ledger, plots_folder

    run = new_run(folder, seed=seed, quick=quick, draws=draws, tune=tune,
                  target_accept=target_accept, sampler=sampler, sampling=sampling)
    if not has_ledger(run.site.folder):
        raise InputError("no campaign has been imported yet: run 'assess site import' first",
                         file=run.site.folder)
    history = run_with_status(run, "history").entries
    if not history:
        raise InputError("no campaign has been imported yet: run 'assess site import' first",
                         file=run.site.folder)
    series = governing_rows(history)
    target = history[-1].assessment.target
    plot_path = None
    if plots:
        fig = plot_beta_history([h.date for h in history], series, target.beta)
        plot_path = save_figure(fig, plots_folder(run.site.folder), "beta-history")
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
        err_console.print(f"Plot: {plot_path}", highlight=False, markup=False)
    print_caution()


def _fmt(beta: float, target: float) -> str:
    text = format_beta(beta)
    return text if math.isnan(beta) or math.isinf(beta) or beta >= target else text + " *"
