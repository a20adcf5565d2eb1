"""Options shared by the site commands, and the one place that turns them into a run.

Every number is checked before any work starts (exit 2 on a bad value).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from assess.errors import InputError
from assess.site.settings import DEFAULT_SEED, FIT_KINDS

SiteFolder = Annotated[Path, typer.Argument(help="The site folder (holding site.toml).")]
JsonFlag = Annotated[bool, typer.Option("--json", help="Print only JSON on stdout.")]
SeedOption = Annotated[int, typer.Option("--seed", help="Seed of every MCMC and sampling run.")]
DrawsOption = Annotated[Optional[int], typer.Option(
    "--draws", help="MCMC draws per chain for every fit (default 1000).")]
TuneOption = Annotated[Optional[int], typer.Option(
    "--tune", help="MCMC tuning steps per chain for every fit (default 1000; 500 with --quick).")]
TargetAcceptOption = Annotated[Optional[float], typer.Option(
    "--target-accept", help="NUTS target acceptance for every fit (default 0.95; raise towards "
                            "0.99 against divergences).")]
SamplerOption = Annotated[Optional[str], typer.Option(
    "--sampler", help="MCMC sampler for every fit: pymc or nutpie.")]
SamplingOption = Annotated[Optional[list[str]], typer.Option(
    "--sampling", help="Sampler setting of one fit, FIT.KEY=VALUE (repeatable), with FIT one of "
                       + ", ".join(FIT_KINDS) + " and KEY one of draws, tune, chains, "
                       "target_accept, sampler; e.g. --sampling corrosion.draws=3000.")]
QuickFlag = Annotated[bool, typer.Option("--quick", help="Smaller runs for a first look: "
                                         "500 tuning steps per chain, 500 samples per subset "
                                         "level (the convergence gate still applies).")]
SamplesOption = Annotated[Optional[int], typer.Option(
    "--samples", help="Samples per subset-simulation level for the member betas.")]
VerdictCallsOption = Annotated[Optional[int], typer.Option(
    "--verdict-calls", help="Budget of limit-state calls per member verdict: while the 95 % "
                            "interval of beta straddles the target, the estimate is sampled "
                            "again with new random numbers until decided or this is spent "
                            "(default: the site file's [sampling] verdict_calls, else 60000; "
                            "20000 with --quick; 0 = one run, never repeated).")]

MAX_SUBSET_SAMPLES = 1_000_000


def load_checked_site(folder: Path):
    """The site file of ``folder`` (an `InputError` when there is none)."""
    from inspection_io.site import load_site

    if not folder.is_dir():
        raise InputError("site folder not found (expected a folder holding site.toml)", file=folder)
    return load_site(folder)


def check_samples(samples: int | None, *, low: int = 100, high: int = MAX_SUBSET_SAMPLES,
                  option: str = "--samples") -> None:
    if samples is not None and not low <= samples <= high:
        raise InputError(f"{option} must be a whole number from {low} to {high}, got {samples}",
                         column=option)


def make_settings(site, *, seed: int = DEFAULT_SEED, quick: bool = False,
                  draws: int | None = None, tune: int | None = None,
                  target_accept: float | None = None, sampler: str | None = None,
                  sampling: list[str] | None = None, **options):
    """`RunSettings` from the site file's ``[sampling]`` tables and the command line."""
    from assess.site.settings import build_settings, parse_fit_assignments

    if options.get("reliability_samples") is not None:
        check_samples(options["reliability_samples"])
    overrides = {"draws": draws, "tune": tune, "target_accept": target_accept, "sampler": sampler}
    per_fit = parse_fit_assignments(sampling)
    return build_settings(site_sampling=getattr(site, "sampling", None), overrides=overrides,
                          site_verdict_calls=getattr(site, "verdict_calls", None),
                          per_fit=per_fit, seed=seed, quick=quick, **options)


__all__ = ["DrawsOption", "JsonFlag", "QuickFlag", "SamplerOption", "SamplesOption",
           "SamplingOption", "SeedOption", "SiteFolder", "TargetAcceptOption", "TuneOption",
           "VerdictCallsOption", "check_samples", "load_checked_site", "make_settings"]
