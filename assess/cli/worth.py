"""``assess worth``: is more testing worth its cost for one member?"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console
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


def _money(currency: str, value: float) -> str:
    return f"{currency} {value:,.0f}"


def _share(value: float) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value:.1%}"


@app.command("worth")
@guard
def worth_command(
        folder: SiteFolder,
        member: Annotated[Optional[str], typer.Option(
            "--member", help="Member id; default the decision file's member, else the member "
                             "with the lowest system beta after updating.")] = None,
        decisions: Annotated[Optional[Path], typer.Option(
            "--decisions", help="Decision set-up file (TOML); default decisions.toml in the "
                                "site folder.")] = None,
        outcomes: Annotated[int, typer.Option(
            "--outcomes", help="Simulated test outcomes per programme [-].")] = 500,
        seed: SeedOption = DEFAULT_SEED, draws: DrawsOption = None, tune: TuneOption = None,
        target_accept: TargetAcceptOption = None, sampler: SamplerOption = None,
        sampling: SamplingOption = None, quick: QuickFlag = False,
        plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                            help="Write a PNG plot to results/plots/.")] = True,
        json_output: JsonFlag = False):
    """Is more testing worth it? Value of information of candidate test programmes.

    For one member, compares the expected cost of each alternative (keep, repair,
    strengthen, restrict load, replace) on present knowledge with the expected
    cost after each candidate test programme, using the decision set-up file
    (costs [currency], horizon [years], discount rate [-], programmes). Prints the
    expected value of the test information, its Monte Carlo error, the net value
    and the chance that the test shows the member adequate; rows are appended to
    the ledger.
    """
    from assess.report.figures import worth_figure
    from assess.report.files import save_figure
    from assess.site.paths import plots_folder
    from assess.site.worth import DESIGN_POINTS

    if not 2 <= outcomes <= 100_000:
        raise InputError(f"--outcomes must be a whole number from 2 to 100000, got {outcomes}",
                         column="--outcomes")
    run = new_run(folder, seed=seed, quick=quick, draws=draws, tune=tune,
                  target_accept=target_accept, sampler=sampler, sampling=sampling,
                  worth_outcomes=outcomes, worth_member=member, decisions_file=decisions)
    decision_path = decisions if decisions is not None else run.site.folder / "decisions.toml"
    if not decision_path.is_file():
        raise InputError("decision file not found; write one (see docs/decision-file.md) or "
                         "give it with --decisions", file=decision_path)
    if member is not None and member not in run.site.members:
        raise InputError(f"member {member!r} is not in the site file; members are "
                         f"{', '.join(run.site.members)}", column="--member")
    worth = run_with_status(run, "worth")
    update = run.result("materials")
    decision, ranking = worth.decision, worth.ranking
    ranking_warnings = [w for r in ranking.results for w in r.warnings]

    plot_path = None
    if plots:
        import matplotlib.pyplot as plt

        figure = worth_figure(worth)
        plot_path = save_figure(figure, plots_folder(run.site.folder),
                                f"worth-{decision.member}")
        plt.close(figure)

    problem = decision.problem
    first = ranking.results[0]
    payload = worth.to_dict()
    payload["plot"] = str(plot_path) if plot_path else None
    payload["posterior"] = {"hash": update.data_hash, "reused": update.reused}
    if json_output:
        emit_json(payload)
        return

    money = lambda value: _money(problem.currency, value)  # noqa: E731
    alt_table = Table(title=f"Member {decision.member} (zone {decision.zone}): alternatives "
                            f"over {decision.horizon_years} years on present knowledge")
    for col in ("alternative", "cost", "assumed effect", "expected total cost"):
        alt_table.add_column(col, justify="right" if "cost" in col else "left")
    for a in problem.alternatives:
        alt_table.add_row(a.name, money(a.cost), a.description,
                          money(first.prior_expected_costs[a.name]))
    out_console.print(alt_table)
    table = Table(title="Is more testing worth it? (expected values over simulated outcomes)")
    for col in ("programme", "cost", "value of information", "MC std. error", "net value",
                "P(beta >= target)"):
        table.add_column(col, justify="left" if col == "programme" else "right")
    for r in ranking.results:
        table.add_row(r.description, money(r.programme_cost), money(r.evsi),
                      money(r.evsi_standard_error), money(r.net_value),
                      _share(r.probability_adequate))
    out_console.print(table)
    out_console.print(f"Upper bound (value of perfect information): {money(first.evpi)} "
                      f"(MC std. error {money(first.evpi_standard_error)}). Best alternative "
                      f"on present knowledge: '{first.prior_decision}'.", highlight=False)
    out_console.print(ranking.recommendation, highlight=False, soft_wrap=True, markup=False)
    err_console.print(f"Target over the horizon: {decision.horizon_target_beta:.2f} (annual "
                      f"{decision.target.beta:g}; {decision.target.source})", highlight=False)
    worst = worth.largest_surrogate_error()
    err_console.print(f"Beta surrogate: {DESIGN_POINTS} FORM design points per alternative "
                      f"(more where needed), largest leave-one-out error {worst:.3f} in the "
                      f"beta of a mode, {worth.largest_member_error():.3f} in the member's "
                      f"beta.", highlight=False)
    for note in decision.notes:
        if note not in ranking_warnings:
            err_console.print(f"Note: {note}", highlight=False, soft_wrap=True, markup=False)
    if plot_path:
        err_console.print(f"Plot: {plot_path}", highlight=False, markup=False)
