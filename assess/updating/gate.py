"""Convergence gate: no beta is reported from an MCMC run that fails it.

Thresholds follow Vehtari, Gelman, Simpson, Carpenter & Buerkner (2021),
"Rank-normalization, folding, and localization: an improved R-hat for
assessing convergence of MCMC", Bayesian Analysis 16(2):667-718
(doi:10.1214/20-BA1221): rank-normalised split R-hat <= 1.01 and bulk and
tail effective sample size >= 400 (100 per chain for 4 chains); plus no
divergent transitions after tuning (Betancourt 2017, arXiv:1701.02434).
"""

from __future__ import annotations

import dataclasses

import arviz as az
import numpy as np

from assess.errors import ConvergenceError

RHAT_MAX = 1.01
ESS_MIN = 400
MIN_CHAINS = 4


@dataclasses.dataclass(frozen=True)
class GateReport:
    """Diagnostics of one MCMC run against the gate.

    Attributes
    ----------
    passed : bool
        True when every check passed.
    max_rhat : float
        Largest rank-normalised split R-hat over all scalar parameters [-].
    min_ess_bulk, min_ess_tail : float
        Smallest bulk and tail effective sample sizes [-].
    divergences : int
        Divergent transitions after tuning [-].
    chains, draws : int
        Chains and draws per chain [-].
    problems : tuple of str
        Plain-language description of every failed check.
    table : dict
        Per-variable diagnostics {name: {"r_hat":..., "ess_bulk":..., "ess_tail":...}}.
    """

    passed: bool
    max_rhat: float
    min_ess_bulk: float
    min_ess_tail: float
    divergences: int
    chains: int
    draws: int
    problems: tuple
    table: dict

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


def check_convergence(idata, var_names=None, *, rhat_max: float = RHAT_MAX,
                      ess_min: float = ESS_MIN, min_chains: int = MIN_CHAINS) -> GateReport:
    """Compute the diagnostics of ``idata`` and compare them with the gate.

    Parameters
    ----------
    idata : arviz.InferenceData
        Result of ``pymc.sample`` with ``posterior`` and ``sample_stats`` groups.
    var_names : list of str, optional
        Free parameters to check (default: all posterior variables).
    """
    posterior = idata.posterior
    names = list(var_names) if var_names is not None else list(posterior.data_vars)
    chains = int(posterior.sizes["chain"])
    draws = int(posterior.sizes["draw"])
    summary = az.summary(idata, var_names=names, kind="diagnostics")
    table = {str(idx): {"r_hat": float(row["r_hat"]), "ess_bulk": float(row["ess_bulk"]),
                        "ess_tail": float(row["ess_tail"])}
             for idx, row in summary.iterrows()}
    divergences = 0
    if "sample_stats" in idata.groups() and "diverging" in idata.sample_stats:
        divergences = int(np.asarray(idata.sample_stats["diverging"]).sum())

    problems = []
    if chains < min_chains:
        problems.append(f"only {chains} chains were run; at least {min_chains} are needed to judge mixing")
    for name, diag in table.items():
        if not np.isfinite(diag["r_hat"]) or diag["r_hat"] > rhat_max:
            problems.append(f"{name}: R-hat {diag['r_hat']:.3f} > {rhat_max} (chains disagree); "
                            "run longer (more tune and draws) or give a more informative prior")
        if not np.isfinite(diag["ess_bulk"]) or diag["ess_bulk"] < ess_min:
            problems.append(f"{name}: bulk ESS {diag['ess_bulk']:.0f} < {ess_min}; draw more samples")
        if not np.isfinite(diag["ess_tail"]) or diag["ess_tail"] < ess_min:
            problems.append(f"{name}: tail ESS {diag['ess_tail']:.0f} < {ess_min}; draw more samples")
    if divergences:
        problems.append(f"{divergences} divergent transitions after tuning; raise target_accept "
                        "(e.g. 0.99) or give the between-zone spread a tighter prior")

    def finite_extreme(key, fn):
        vals = [d[key] for d in table.values() if np.isfinite(d[key])]
        return float(fn(vals)) if vals else float("nan")

    return GateReport(
        passed=not problems,
        max_rhat=finite_extreme("r_hat", max),
        min_ess_bulk=finite_extreme("ess_bulk", min),
        min_ess_tail=finite_extreme("ess_tail", min),
        divergences=divergences, chains=chains, draws=draws,
        problems=tuple(problems), table=table)


def how_to_fix(fit: str | None) -> str:
    """What the user can change when the fit ``fit`` fails the gate (plain words)."""
    if not fit:
        return ("Run longer (more draws and tuning steps) or raise the target acceptance "
                "(e.g. 0.99).")
    return (f"Give this fit more draws or tuning steps, or a higher target acceptance against "
            f"divergences: on the command line '--sampling {fit}.draws=3000', "
            f"'--sampling {fit}.tune=2000' or '--sampling {fit}.target_accept=0.99'; or in "
            f"site.toml a table [sampling.{fit}] with draws, tune, target_accept, chains or "
            f"sampler. If it still fails, check the data flagged in 'assess site summary': "
            f"too few or conflicting results cannot pin the model down.")


def require_convergence(idata, var_names=None, *, what: str = "posterior",
                        fit: str | None = None, **thresholds) -> GateReport:
    """Like `check_convergence`, but raise `ConvergenceError` when the gate fails.

    ``fit`` names the kind of fit (``"materials"``, ``"corrosion"``, ...) so that
    the message says which settings to change (`how_to_fix`).
    """
    report = check_convergence(idata, var_names, **thresholds)
    if not report.passed:
        listing = "\n  - ".join(report.problems)
        fix = how_to_fix(fit)
        raise ConvergenceError(
            f"the MCMC run for the {what} failed the convergence gate, so no reliability "
            f"is reported from it:\n  - {listing}\n{fix}", fix=fix, fit=fit)
    return report
