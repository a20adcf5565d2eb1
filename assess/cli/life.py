"""``assess life``: annual beta(t) of every member and its remaining life against the target."""

from __future__ import annotations

import math
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.members import (JsonFlag, SeedOption, SiteFolder, _fmt_beta,
                                load_checked_site, run_update)
from assess.errors import InputError
from assess.life.site_summary import QUICK_SAMPLES

@app.command("life")
@guard
def life_command(
        folder: SiteFolder,
        horizon: Annotated[float, typer.Option(
            "--horizon", help="Years projected from the assessment date [yr].")] = 50.0,
        member: Annotated[Optional[list[str]], typer.Option(
            "--member", help="Only this member (repeat for several).")] = None,
        seed: SeedOption = 20261202,
        quick: Annotated[bool, typer.Option(
            "--quick", help="Smaller runs for a first look: 500 MCMC tuning steps for the "
                            f"materials, {QUICK_SAMPLES} importance samples.")] = False,
        samples: Annotated[Optional[int], typer.Option(
            "--samples", help="Importance samples shared by all years of a member.")] = None,
        pitting: Annotated[bool, typer.Option(
            "--pitting", help="Also take each bar's deepest pit (pitting factor, Gumbel) at "
                              "the critical section; on the safe side.")] = False,
        plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                            help="Write a PNG of the curves to results/plots/.")] = True,
        json_output: JsonFlag = False):
    """Annual reliability index over time of every member and its remaining life.

    The bars keep corroding after the assessment date (Faraday's law, with the
    zone's corrosion initiation time and rate updated from break-outs and
    half-cell surveys). beta(t) is the ANNUAL reliability index of year t (annual
    maximum load, resistance of year t), compared with the annual target. The
    remaining life is the first year with beta below the target; its band comes
    from the sampling error of the estimate only. Results are appended to the ledger.
    """
    from assess.life.projection import DEFAULT_SAMPLES
    from assess.life.site_summary import compute_site_life
    from assess.report.files import save_figure
    from inspection_io.ledger import Ledger

    if not (horizon > 0 and math.isfinite(horizon)) or horizon > 200:
        raise InputError(f"--horizon must be a number of years in (0, 200], got {horizon!r}",
                         column="--horizon")
    if samples is not None and samples < 100:
        raise InputError(f"--samples must be at least 100, got {samples}", column="--samples")
    site = load_checked_site(folder)
    if member:
        unknown = [m for m in member if m not in site.members]
        if unknown:
            raise InputError(f"member(s) {', '.join(unknown)} not in the site file; members are "
                             f"{', '.join(site.members)}", column="--member")
    update = run_update(site, seed=seed, draws=1000, quick=quick)
    from rich.progress import Progress

    chosen = list(member) if member else list(site.members)
    with Progress(console=err_console, transient=True) as progress:
        task = progress.add_task("Corrosion update (MCMC) and remaining life", total=len(chosen))
        life = compute_site_life(site, update, horizon_years=horizon, seed=seed, quick=quick,
                                 samples=samples, members=chosen, pitting=pitting,
                                 progress=lambda _m: progress.advance(task))
    corrosion, curves, main = life.corrosion, life.curves, life.main
    n_samples = samples or (QUICK_SAMPLES if quick else DEFAULT_SAMPLES)
    target = main[0].target
    figure_paths = []
    if plots:
        figure = life.figure()
        figure_paths.append(save_figure(figure, site.folder / "results" / "plots",
                                        "remaining-life"))
    settings = {"horizon_years": horizon, "n_samples": n_samples, "quick": quick,
                "pitting": pitting,
                "posterior_hash": update.data_hash, "reference": "annual"}
    with Ledger(site.folder / "ledger.sqlite") as ledger:
        for curve in curves:
            ledger.append_result("remaining_life", curve.to_dict(), member=curve.member,
                                 mode=curve.mode, seed=curve.seed, settings=settings)
    if json_output:
        payload = life.to_dict()
        payload["plots"] = [str(p) for p in figure_paths]
        emit_json(payload)
        return
    table = Table(title=f"Remaining life: annual beta(t) against the annual target "
                        f"{target.beta:.1f}, horizon {horizon:g} years")
    for col in ("member", "governing mode", "beta now", "beta at horizon", "remaining life (band)",
                "reference"):
        table.add_column(col, justify="right" if col.startswith("beta") else "left")
    for c in main:
        table.add_row(c.member, c.governing_mode, _fmt_beta(c.beta_now), _fmt_beta(float(c.beta[-1])),
                      c.remaining_life.text(), "annual")
    out_console.print(table)
    err_console.print(f"Target: {target.beta:.2f} per year ({target.source}).", highlight=False)
    err_console.print("beta(t) is an annual reliability index (annual maximum load, resistance "
                      "of year t); the band is +/- 2 standard errors of the sampling estimate, "
                      "not the uncertainty of the models.", highlight=False)
    for zone, c in corrosion.items():
        err_console.print(f"Zone {zone}: t_i median {c.initiation_median:.1f} yr, i_corr median "
                          f"{c.rate_median:.3g} uA/cm2 ({c.origin}).", highlight=False)
    for path in figure_paths:
        err_console.print(f"Plot: {path}", highlight=False)
    print_caution()
