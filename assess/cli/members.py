"""``assess update`` and ``assess members``: the site's evidence and the before/after betas."""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.errors import InputError
from assess.reliability.result import format_beta

SiteFolder = Annotated[Path, typer.Argument(help="The site folder (holding site.toml).")]
JsonFlag = Annotated[bool, typer.Option("--json", help="Print only JSON on stdout.")]
SeedOption = Annotated[int, typer.Option("--seed", help="Seed of MCMC and reliability runs.")]
DrawsOption = Annotated[int, typer.Option("--draws", help="MCMC draws per chain (4 chains).")]
QuickFlag = Annotated[bool, typer.Option("--quick", help="Smaller runs for a first look: "
                                         "500 tuning steps per chain, 500 samples per subset "
                                         "level (the convergence gate still applies).")]


METHOD_NAMES = ("subset_simulation", "form", "importance_sampling", "crude_monte_carlo")


def load_checked_site(folder: Path):
    from inspection_io.site import load_site

    if not folder.is_dir():
        raise InputError("site folder not found (expected a folder holding site.toml)", file=folder)
    return load_site(folder)


def run_update(site, *, seed: int, draws: int, quick: bool, until_date=None, record=True):
    """Update the site with a progress message; returns a SiteUpdate."""
    from assess.assessment.site_update import UpdateSettings, update_site

    settings = UpdateSettings(draws=draws, tune=500 if quick else 1000, seed=seed)
    with err_console.status("Updating zone knowledge with the site's tests (MCMC) ..."):
        return update_site(site, settings=settings, until_date=until_date, record=record)


def _fmt_beta(value: float) -> str:
    return format_beta(value, no_failure="> 8 (no failure found)")


def _fmt_cov(value: float) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value:.2f}"


@app.command("update")
@guard
def update_command(folder: SiteFolder, seed: SeedOption = 20261202, draws: DrawsOption = 1000,
                   quick: QuickFlag = False, json_output: JsonFlag = False):
    """Update each zone's materials with the site's tests (PyMC, convergence-gated).

    Prints, per zone and quantity, the design prior and the posterior predictive
    mean and standard deviation of the physical value ([MPa], [mm], [-]) and the
    convergence diagnostics. The posterior is stored in results/posteriors/.
    """
    from assess.assessment.figures import predictive_draws
    from assess.assessment.knowledge import QUANTITIES

    site = load_checked_site(folder)
    update = run_update(site, seed=seed, draws=draws, quick=quick)
    rows = []
    for zone in site.zones:
        for name, spec in QUANTITIES.items():
            n = int((update.data[name]["zone"] == zone).sum()) if not update.data[name].empty else 0
            prior = predictive_draws(update.before[zone][name], spec.log)
            post = predictive_draws(update.after[zone][name], spec.log)
            rows.append({"zone": zone, "quantity": name, "unit": spec.unit, "tests": n,
                         "prior_mean": float(prior.mean()), "prior_std": float(prior.std()),
                         "posterior_mean": float(post.mean()), "posterior_std": float(post.std())})
    gate = update.gate.to_dict() if update.gate else None
    if json_output:
        emit_json({"zones": rows, "gate": gate, "hash": update.data_hash,
                               "posterior": str(update.posterior_path) if update.posterior_path
                               else None, "reused": update.reused})
        return
    table = Table(title="Zone knowledge: design prior -> after site tests (predictive mean / std)")
    for col in ("zone", "quantity", "unit", "tests", "prior", "posterior"):
        table.add_column(col, justify="right" if col in ("tests", "prior", "posterior") else "left")
    for r in rows:
        table.add_row(r["zone"], r["quantity"], r["unit"], str(r["tests"]),
                      f"{r['prior_mean']:.4g} / {r['prior_std']:.3g}",
                      f"{r['posterior_mean']:.4g} / {r['posterior_std']:.3g}")
    out_console.print(table)
    if gate:
        err_console.print(f"Convergence gate passed: max R-hat {gate['max_rhat']:.3f}, min bulk ESS "
                          f"{gate['min_ess_bulk']:.0f}, min tail ESS {gate['min_ess_tail']:.0f}, "
                          f"{gate['divergences']} divergences, {gate['chains']} chains.")
    if update.posterior_path:
        err_console.print(f"Posterior {'reused from' if update.reused else 'stored in'} "
                          f"{update.posterior_path}")
    print_caution()


@app.command("members")
@guard
def members_command(
        folder: SiteFolder,
        method: Annotated[str, typer.Option("--method", help="Reliability method: "
                                            + ", ".join(METHOD_NAMES) + ".")] = "subset_simulation",
        seed: SeedOption = 20261202, draws: DrawsOption = 1000, quick: QuickFlag = False,
        samples: Annotated[Optional[int], typer.Option(
            "--samples", help="Samples per subset level (or total for MC / IS).")] = None,
        plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                            help="Write PNG plots to results/plots/.")] = True,
        json_output: JsonFlag = False):
    """Reliability index of every member, mode and member system, before and after the tests.

    Beta before uses the design information only; beta after uses the posterior
    from the site's tests. Both are compared with the target for an existing
    structure over the same reference period; results are appended to the ledger.
    """
    from assess.assessment.before_after import assess_members
    from assess.assessment.figures import before_after_figure, prior_posterior_figures
    from assess.report.files import save_figure
    from inspection_io.ledger import Ledger

    if method not in METHOD_NAMES:
        raise InputError(f"unknown method {method!r}; choose one of {', '.join(METHOD_NAMES)}",
                         column="--method")
    site = load_checked_site(folder)
    update = run_update(site, seed=seed, draws=draws, quick=quick)
    options = {}
    if method == "subset_simulation":
        options["n_per_level"] = samples or (500 if quick else 1000)
    elif method in ("importance_sampling", "crude_monte_carlo") and samples:
        options["n"] = samples
    from rich.progress import Progress

    with Progress(console=err_console, transient=True) as progress:
        task = progress.add_task("Member reliability", total=len(site.members))
        assessment = assess_members(site, update, method=method, seed=seed, options=options,
                                    progress=lambda _m: progress.advance(task))
    figure_paths = []
    if plots:
        plot_folder = site.folder / "results" / "plots"
        figure_paths.append(save_figure(before_after_figure(assessment), plot_folder, "beta-before-after"))
        for (name, zone), fig in prior_posterior_figures(update).items():
            figure_paths.append(save_figure(fig, plot_folder, f"prior-posterior-{name}-{zone}"))
    settings = {"method": method, "options": options, "posterior_hash": update.data_hash,
                "quick": quick}
    with Ledger(site.folder / "ledger.sqlite") as ledger:
        for r in assessment.results:
            ledger.append_result("reliability", r.to_dict(), member=r.member, mode=r.mode,
                                 seed=r.after.seed, settings=settings)
    payload = assessment.to_dict()
    payload["plots"] = [str(p) for p in figure_paths]
    payload["posterior"] = {"hash": update.data_hash, "reused": update.reused,
                            "gate": update.gate.to_dict() if update.gate else None}
    if json_output:
        emit_json(payload)
        return
    target = assessment.target
    table = Table(title=f"Reliability index beta per member ({target.reference_period_years:g}-year "
                        f"reference period) against the target {target.beta:.1f}")
    for col in ("member", "mode", "beta before", "CoV", "beta after", "CoV ", "verdict",
                "main drivers (alpha^2)"):
        table.add_column(col, justify="right" if col.startswith(("beta", "CoV")) else "left")
    for r in assessment.results:
        drivers = ", ".join(f"{n} {a:.2f}" for n, a in r.drivers())
        table.add_row(r.member, r.mode, _fmt_beta(r.before.beta), _fmt_cov(r.before.cov),
                      _fmt_beta(r.after.beta), _fmt_cov(r.after.cov), r.verdict, drivers)
    out_console.print(table)
    err_console.print(f"Target: {target.beta:.2f} ({target.source}; {target.note})", highlight=False)
    for note in assessment.notes:
        err_console.print(f"Note: {note}", highlight=False)
    for path in figure_paths:
        err_console.print(f"Plot: {path}", highlight=False)
    print_caution()


def _json_default(value):
    if dataclasses.is_dataclass(value):
        return dataclasses.asdict(value)
    if hasattr(value, "tolist"):
        return value.tolist()
    return str(value)
