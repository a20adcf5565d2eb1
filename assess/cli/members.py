"""``assess update`` and ``assess members``: the site's evidence and the before/after betas."""

from __future__ import annotations

import math
from typing import Annotated

import typer
from rich.table import Table

from assess.beta_text import format_beta, interval_text
from assess.cli.app import app, emit_json, err_console, guard, out_console, print_caution
from assess.cli.options import (
    DrawsOption,
    JsonFlag,
    QuickFlag,
    SamplerOption,
    SamplesOption,
    SamplingOption,
    SeedOption,
    SiteFolder,
    TargetAcceptOption,
    TuneOption,
    VerdictCallsOption,
    load_checked_site,
    make_settings,
)
from assess.method_names import METHOD_NAMES
from assess.site.settings import DEFAULT_METHOD, DEFAULT_SEED


def _fmt_beta(value: float) -> str:
    return format_beta(value, no_failure="> 8 (no failure found)")


def fmt_interval(interval) -> str:
    """"(4.05 - 4.38)" for a 95 % interval of beta; "-" when there is none (FORM, SORM)."""
    return interval_text(
        interval, between="({low} - {high})", at_least="(>= {low})", at_most="(<= {high})"
    )


def _fmt_cov(value: float) -> str:
    return "-" if value is None or not math.isfinite(value) else f"{value:.2f}"


def new_run(folder, **options):
    """A `SiteRun` for a single command: the checked site and its settings."""
    from assess.site.run import SiteRun

    site = load_checked_site(folder)
    run_options = {k: options.pop(k) for k in ("members", "worth_member", "decisions_file")
                   if k in options}
    return SiteRun(site, make_settings(site, **options), **run_options)


def run_with_status(run, name: str):
    """Run one step (and what it needs) under the site lock, with a status line on stderr."""
    from assess.report.job import LOCK_WAIT_SECONDS
    from assess.site.run import run_step
    from inspection_io.locking import site_lock

    with site_lock(run.site.folder, wait_seconds=LOCK_WAIT_SECONDS):
        with err_console.status("Working ...") as status:
            run.say = lambda text: status.update(text.replace("[", r"\[") + " ...")
            return run_step(run, name)


@app.command("update")
@guard
def update_command(folder: SiteFolder, seed: SeedOption = DEFAULT_SEED,
                   draws: DrawsOption = None, tune: TuneOption = None,
                   target_accept: TargetAcceptOption = None, sampler: SamplerOption = None,
                   sampling: SamplingOption = None, quick: QuickFlag = False,
                   json_output: JsonFlag = False):
    """Update each zone's materials with the site's tests (PyMC, convergence-gated).

    Prints, per zone and quantity, the design prior and the posterior predictive
    mean and standard deviation of the physical value ([MPa], [mm], [-]) and the
    convergence diagnostics. The posterior is stored in results/posteriors/.
    """
    from assess.site.knowledge import knowledge_rows

    run = new_run(folder, seed=seed, quick=quick, draws=draws, tune=tune,
                  target_accept=target_accept, sampler=sampler, sampling=sampling)
    update = run_with_status(run, "materials")
    rows = knowledge_rows(run.site, update)
    gate = update.gate.to_dict() if update.gate else None
    if json_output:
        emit_json({"zones": rows, "gate": gate, "hash": update.data_hash,
                   "posterior": str(update.posterior_path) if update.posterior_path else None,
                   "reused": update.reused, "test_data_used": update.has_data})
        return
    table = Table(title="Zone knowledge: design prior -> after site tests (predictive mean / std)")
    for col in ("zone", "quantity", "unit", "tests", "prior", "posterior"):
        table.add_column(col, justify="right" if col in ("tests", "prior", "posterior") else "left")
    for r in rows:
        table.add_row(r["zone"], r["quantity"], r["unit"], str(r["tests"]),
                      f"{r['prior_mean']:.4g} / {r['prior_std']:.3g}",
                      f"{r['posterior_mean']:.4g} / {r['posterior_std']:.3g}")
    out_console.print(table)
    if not update.has_data:
        err_console.print("No test data has been imported yet: the posterior is the design "
                          "prior. Import campaign files with 'assess site import'.",
                          highlight=False, markup=False)
    if gate:
        err_console.print(f"Convergence gate passed: max R-hat {gate['max_rhat']:.3f}, min bulk ESS "
                          f"{gate['min_ess_bulk']:.0f}, min tail ESS {gate['min_ess_tail']:.0f}, "
                          f"{gate['divergences']} divergences, {gate['chains']} chains.",
                          highlight=False, markup=False)
    if update.posterior_path:
        err_console.print(f"Posterior {'reused from' if update.reused else 'stored in'} "
                          f"{update.posterior_path}", highlight=False, markup=False)
    print_caution()


@app.command("members")
@guard
def members_command(
        folder: SiteFolder, seed: SeedOption = DEFAULT_SEED, draws: DrawsOption = None,
        tune: TuneOption = None, target_accept: TargetAcceptOption = None,
        sampler: SamplerOption = None, sampling: SamplingOption = None,
        quick: QuickFlag = False, samples: SamplesOption = None,
        verdict_calls: VerdictCallsOption = None,
        method: Annotated[str, typer.Option("--method", help="Reliability method: "
                                            + ", ".join(METHOD_NAMES) + ".")] = DEFAULT_METHOD,
        plots: Annotated[bool, typer.Option("--plots/--no-plots",
                                            help="Write PNG plots to results/plots/.")] = True,
        json_output: JsonFlag = False):
    """Reliability index of every member, mode and member system, before and after the tests.

    Beta before uses the design information only; beta after uses the posterior
    from the site's tests. Both are compared with the target for an existing
    structure over the same reference period; results are appended to the ledger.
    """
    from assess.report.figures import before_after_figure, prior_posterior_figures
    from assess.report.files import save_figure
    from assess.site.paths import plots_folder

    run = new_run(folder, seed=seed, quick=quick, draws=draws, tune=tune,
                  target_accept=target_accept, sampler=sampler, sampling=sampling,
                  reliability_samples=samples, method=method, verdict_calls=verdict_calls)
    assessment = run_with_status(run, "members")
    update = run.result("materials")
    figure_paths = []
    if plots:
        folder_out = plots_folder(run.site.folder)
        figure_paths.append(save_figure(before_after_figure(assessment), folder_out,
                                        "beta-before-after"))
        for (name, zone), fig in prior_posterior_figures(update).items():
            figure_paths.append(save_figure(fig, folder_out,
                                            f"prior-posterior-{name}-{zone}"))
    payload = assessment.to_dict()
    payload["plots"] = [str(p) for p in figure_paths]
    payload["test_data_used"] = update.has_data
    payload["posterior"] = {"hash": update.data_hash, "reused": update.reused,
                            "gate": update.gate.to_dict() if update.gate else None}
    if json_output:
        emit_json(payload)
        return
    target = assessment.target
    table = Table(title=f"Reliability index beta per member ({target.reference_period_years:g}-year "
                        f"reference period) against the target of each mode (site "
                        f"{target.beta:.1f}; brittle modes stricter)")
    for col in ("member", "mode", "beta before", "beta after", "change", "target", "verdict",
                "main drivers (alpha^2)"):
        table.add_column(col, justify="right" if col.startswith(("beta", "change", "target"))
                         else "left", overflow="fold" if col.startswith("beta") else "ellipsis")
    for r in assessment.results:
        drivers = ", ".join(f"{n} {a:.2f}" for n, a in r.drivers())
        table.add_row(r.member, r.mode,
                      f"{_fmt_beta(r.before.beta)}\n{fmt_interval(r.interval_before)}",
                      f"{_fmt_beta(r.after.beta)}\n{fmt_interval(r.interval_after)}",
                      r.change, f"{r.target:.2f}", r.verdict, drivers)
    out_console.print(table)
    levels = sorted({r.interval_level for r in assessment.results})
    err_console.print("Under each beta, its interval: the range from the sampling error of the "
                      "estimate (not the uncertainty of the structure), 95 % before; after at "
                      "the level its verdict used (95 %, shared over the repeated looks the "
                      f"budget allows: up to {max(levels, default=0.95):.2%}). 'undecided' when the interval "
                      "straddles the target; a change within the noise of both estimates shows "
                      "as 'no significant change'.", highlight=False, markup=False)
    if assessment.undecided:
        err_console.print("Still undecided: " + ", ".join(f"{r.member} {r.mode}"
                                                           for r in assessment.undecided)
                          + " (raise --verdict-calls to sample further).", highlight=False,
                          markup=False)
    if not update.has_data:
        err_console.print("No test data has been used yet: 'after' equals 'before'. Import "
                          "campaign files with 'assess site import'.", highlight=False,
                          markup=False)
    err_console.print(f"Target: {target.beta:.2f} ({target.source}; {target.note})",
                      highlight=False, markup=False)
    for note in assessment.notes:
        err_console.print(f"Note: {note}", highlight=False, markup=False)
    for path in figure_paths:
        err_console.print(f"Plot: {path}", highlight=False, markup=False)
    print_caution()
