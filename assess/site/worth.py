"""Value of information for one member of a site: computation and its summary.

The step behind ``assess worth`` and the main job; the figure is drawn by the report
layer (`assess.report.figures.worth_figure`).
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from typing import Any

import numpy as np

from assess.site.record import LedgerRow
from assess.site.settings import RunSettings

#: Posterior draws used as theta (the MCMC draws are thinned to this) [-].
THETA_DRAWS = 3000
#: FORM design points per alternative for the beta surrogate [-].
DESIGN_POINTS = 48


def result_summary(result) -> dict:
    """A programme's WorthResult without the per-outcome arrays (their quantiles instead)."""
    data = result.to_dict()
    beta = np.asarray(result.posterior_beta, dtype=float)
    finite = beta[np.isfinite(beta)]
    data.pop("posterior_beta")
    data.pop("effective_sample_size")
    data["posterior_beta_quantiles"] = (
        {str(q): float(np.quantile(finite, q)) for q in (0.05, 0.25, 0.5, 0.75, 0.95)}
        if finite.size
        else None
    )
    data["min_effective_sample_size"] = float(np.min(result.effective_sample_size))
    return data


@dataclasses.dataclass
class SiteWorth:
    """Decision problem of one member, the ranking of the programmes and its summary."""

    decision: Any
    ranking: Any
    setup: Any
    outcomes: int
    posterior_hash: str = ""
    decision_file: str = ""
    population_shares: dict = dataclasses.field(default_factory=dict)
    """Which population's uncertainty moves the member's beta
    (`assess.site.drivers.population_shares`)."""

    @property
    def recommendation(self) -> str:
        return self.ranking.recommendation

    def summaries(self) -> list[dict]:
        return [result_summary(r) for r in self.ranking.results]

    def table_rows(self) -> list[dict]:
        currency = self.decision.problem.currency
        return [
            {
                "programme": r.description,
                f"cost [{currency}]": r.programme_cost,
                f"value of information [{currency}]": r.evsi,
                f"MC std. error [{currency}]": r.evsi_standard_error,
                f"net value [{currency}]": r.net_value,
                "P(beta >= target)": r.probability_adequate,
            }
            for r in self.ranking.results
        ]

    def to_dict(self) -> dict:
        decision, problem = self.decision, self.decision.problem
        first = self.ranking.results[0]
        return {
            "member": decision.member,
            "zone": decision.zone,
            "currency": problem.currency,
            "horizon_years": decision.horizon_years,
            "discount_rate": self.setup.discount_rate,
            "failure_cost": problem.failure_cost,
            "target": {
                "annual_beta": decision.target.beta,
                "horizon_beta": decision.horizon_target_beta,
                "source": decision.target.source,
            },
            "alternatives": [
                {
                    "name": a.name,
                    "cost": a.cost,
                    "effect": a.description,
                    "expected_cost": first.prior_expected_costs[a.name],
                }
                for a in problem.alternatives
            ],
            "annual_pf_follows_life_curve": decision.uses_life_curve,
            "keep_annual_pf_by_year": (
                None
                if decision.annual_pf_by_year is None
                else decision.annual_pf_by_year[:, problem.keep_index, :].mean(axis=0).tolist()
            ),
            "keep_annual_pf_cap_loss_by_year": (
                None
                if decision.keep_cap_loss_by_year is None
                else decision.keep_cap_loss_by_year.tolist()
            ),
            "keep_horizon_pf": float(problem.horizon_pf[:, problem.keep_index].mean()),
            "prior_decision": first.prior_decision,
            "evpi": first.evpi,
            "evpi_standard_error": first.evpi_standard_error,
            "ranking": self.summaries(),
            "recommendation": self.recommendation,
            "surrogate_leave_one_out_error": decision.surrogate_errors(),
            "surrogate_member_beta_error": decision.member_surrogate_errors(),
            "form_calls": decision.form_calls,
            "notes": decision.notes,
            "outcomes": self.outcomes,
            "theta_draws": problem.n_draws,
            "design_points": DESIGN_POINTS,
            "beta_spread_by_population": self.population_shares,
        }

    def ledger_rows(self) -> list[LedgerRow]:
        """One ``"worth"`` row per test programme."""
        decision, problem = self.decision, self.decision.problem
        settings = {
            "outcomes": self.outcomes,
            "theta_draws": problem.n_draws,
            "design_points": DESIGN_POINTS,
            "posterior_hash": self.posterior_hash,
            "horizon_years": decision.horizon_years,
            "discount_rate": self.setup.discount_rate,
            "decision_file": str(self.decision_file),
        }
        return [
            LedgerRow(
                "worth",
                summary,
                member=decision.member,
                mode=summary["programme"],
                seed=summary["seed"],
                settings=settings,
            )
            for summary in self.summaries()
        ]

    def largest_surrogate_error(self) -> float:
        """Largest leave-one-out error of a mode's own beta surrogate [-]."""
        errors = self.decision.surrogate_errors()
        return max((v for modes in errors.values() for v in modes.values()), default=math.nan)

    def largest_member_error(self) -> float:
        """Largest leave-one-out error of the member's beta owed to one mode's surrogate,
        the figure the surrogate is judged by [-]."""
        errors = self.decision.member_surrogate_errors()
        return max((v for modes in errors.values() for v in modes.values()), default=math.nan)


def compute_site_worth(
    site,
    update,
    setup,
    *,
    member=None,
    settings: RunSettings | None = None,
    decision_file="",
    progress=None,
    life=None,
) -> SiteWorth:
    """Build the member's decision problem and rank the setup's test programmes.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
    setup : DecisionSetup
        From `assess.worth.decision_file.read_decision_setup`.
    member : str, optional
        Default the decision file's member, else the member with the lowest beta.
    settings : RunSettings, optional
        Seed and the number of simulated outcomes per programme.
    life : SiteLife, optional
        Remaining-life curves of the same run: the member's annual pf then follows
        its governing curve year by year (`worth_decision.time_dependent_annual_pf`),
        so the value of information and the remaining life rest on one beta(t).
    """
    from assess.site.worth_decision import build_site_decision
    from assess.worth import rank_programmes

    settings = settings or RunSettings()
    outcomes = settings.worth_outcome_count
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # carried in the notes and recommendation
        if progress:
            progress("Conditional reliability of each alternative (FORM design, surrogate)")
        decision = build_site_decision(
            site,
            update,
            setup,
            member=member,
            n_draws=THETA_DRAWS,
            n_design=DESIGN_POINTS,
            seed=settings.seed,
            life_curves=None if life is None else {c.member: c for c in life.main},
        )
        if progress:
            progress("Preposterior analysis of the test programmes")
        ranking = rank_programmes(
            decision.problem,
            decision.programmes,
            n_outcomes=outcomes,
            seed=settings.seed,
            target_beta=decision.horizon_target_beta,
        )
    from assess.site.drivers import population_shares

    return SiteWorth(
        decision,
        ranking,
        setup,
        outcomes,
        update.data_hash,
        str(decision_file),
        population_shares(decision),
    )


__all__ = ["DESIGN_POINTS", "SiteWorth", "THETA_DRAWS", "compute_site_worth", "result_summary"]
