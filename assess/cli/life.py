"""``assess life``: annual beta(t) of every member and its remaining life against the target."""

from __future__ import annotations

import math
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import _fmt_beta, new_run, run_with_status
from assess.cli.options import (
    DrawsOption,
    JsonFlag,
    SamplerOption,
    SamplingOption,
    SeedOption,
    SiteFolder,
    TargetAcceptOption,
    TuneOption,
    check_samples,
)
from assess.errors import InputError
from assess.site.settings import DEFAULT_SEED, QUICK_LIFE_SAMPLES


@app.command("life")
@guard
def life_command(
        folder: SiteFolder,
        horizon: Annotated[float, typer.Option(
            "--horizon", help="Years projected from the assessment date [yr].")] = 50.0,
        member: Annotated[Optional[list[str]], typer.Option(
            "--member", help="Only this member (repeat for several).")] = None,
        seed: SeedOption = DEFAULT_SEED, draws: DrawsOption = None, tune: TuneOption = None,
        target_accept: TargetAcceptOption = None, sampler: SamplerOption = None,
        sampling: SamplingOption = None,
        quick: Annotated[bool, typer.Option(
            "--quick", help="Smaller runs for a first look: 500 MCMC tuning steps, "
                            f"{QUICK_LIFE_SAMPLES} importance samples.")] = False,
        samples: Annotated[Optional[int], typer.Option(
            "--samples", help="Importance samples shared by all years of a member.")] = None,
        pitting: Annotated[Optional[bool], typer.Option(
            "--pitting/--no-pitting",
            help="Each bar's deepest pit (pitting factor, Gumbel, updated with measured pits) "
                 "at the critical section: everywhere / nowhere. Default: on chloride-exposed "
                 "faces and where pits were measured.")] = None,
        plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                            help="Write a PNG of the curves to results/plots/.")] = True,
        json_output: JsonFlag = False):
    """Annual reliability index over time of every member and its remaining life.

    The bars keep corroding after the assessment date (Faraday's law, with the
    zone's corrosion initiation time and rate updated from break-outs and
    half-cell surveys). beta(t) is the ANNUAL reliability index of year t (annual
    maximum load, resistance of year t), compared with the annual target. The
    remaining life is the first year with beta below the target, with two bands: the
    spread over the posterior of the population and corrosion parameters, and the
    sampling error of the estimate. Results are appended to the ledger.
    """
    from assess.report.figures import life_figure
    from assess.report.files import save_figure
    from assess.site.paths import plots_folder

    if not (horizon > 0 and math.isfinite(horizon)) or horizon > 200:
        raise InputError(f"--horizon must be a number of years in (0, 200], got {horizon!r}",
                         column="--horizon")
    check_samples(samples, high=1_000_000)
    run = new_run(folder, seed=seed, quick=quick, draws=draws, tune=tune,
                  target_accept=target_accept, sampler=sampler, sampling=sampling,
                  horizon_years=horizon, life_samples=samples, pitting=pitting,
                  members=member)
    if member:
        unknown = [m for m in member if m not in run.site.members]
        if unknown:
            raise InputError(f"member(s) {', '.join(unknown)} not in the site file; members are "
                             f"{', '.join(run.site.members)}", column="--member")
    life = run_with_status(run, "life")
    figure_paths = []
    if plots and life.main:
        figure_paths.append(save_figure(life_figure(life), plots_folder(run.site.folder),
                                        "remaining-life"))
    if json_output:
        payload = life.to_dict()
        payload["plots"] = [str(p) for p in figure_paths]
        emit_json(payload)
        return
    target = life.target
    table = Table(title=f"Remaining life: annual beta(t) against the annual target "
                        f"{target.beta:.1f}, horizon {horizon:g} years")
    for col in ("member", "mode", "beta now", "beta at horizon", "remaining life",
                "parameters 5-95 %", "sampling"):
        table.add_column(col, justify="right" if col.startswith("beta") else "left")
    for c in life.main:
        table.add_row(c.member, c.governing_mode, _fmt_beta(c.beta_now),
                      _fmt_beta(float(c.beta[-1])), c.remaining_life.text().split(" (")[0],
                      c.remaining_life.parameter_text(), c.remaining_life.sampling_text())
    out_console.print(table)
    err_console.print(f"Target: {target.beta:.2f} per year ({target.source}).", highlight=False,
                      markup=False)
    err_console.print("beta(t) is an annual reliability index (annual maximum load, resistance "
                      "of year t). Parameter band: 5 % to 95 % of the remaining life over what "
                      "the tests leave uncertain about the populations and the corrosion "
                      "parameters. Sampling band: +/- 2 standard errors of the estimate of the "
                      "curve, only how precisely it was computed.", highlight=False,
                      markup=False)
    for zone, c in life.corrosion.items():
        err_console.print(f"Zone {zone}: t_i median {c.initiation_median:.1f} yr, i_corr median "
                          f"{c.rate_median:.3g} uA/cm2 ({c.origin}).", highlight=False,
                          markup=False)
    from assess.site.life import section_loss_text

    for c in life.main:
        if c.section_loss:
            err_console.print(f"{c.member}: {section_loss_text(c.section_loss)}.",
                              highlight=False, markup=False)
    for path in figure_paths:
        err_console.print(f"Plot: {path}", highlight=False, markup=False)
    print_caution()
