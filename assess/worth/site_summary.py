"""Value of information for one member of a site: computation and its summary.

Shared by ``assess worth`` and the main job (`assess.main_job`).
"""

from __future__ import annotations

import dataclasses
import math
import warnings

import numpy as np

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
        if finite.size else None)
    data["min_effective_sample_size"] = float(np.min(result.effective_sample_size))
    return data


@dataclasses.dataclass
class SiteWorth:
    """Decision problem of one member, the ranking of the programmes and its summary."""

    decision: object
    ranking: object
    setup: object
    outcomes: int

    @property
    def recommendation(self) -> str:
        return self.ranking.recommendation

    def summaries(self) -> list[dict]:
        return [result_summary(r) for r in self.ranking.results]

    def table_rows(self) -> list[dict]:
        currency = self.decision.problem.currency
        return [{"programme": r.description, f"cost [{currency}]": r.programme_cost,
                 f"value of information [{currency}]": r.evsi,
                 f"MC std. error [{currency}]": r.evsi_standard_error,
                 f"net value [{currency}]": r.net_value,
                 "P(beta >= target)": r.probability_adequate}
                for r in self.ranking.results]

    def figure(self):
        from assess.report.plots import plot_preposterior_beta

        first = self.ranking.results[0]
        return plot_preposterior_beta({r.programme: r.posterior_beta for r in self.ranking.results},
                                      self.decision.horizon_target_beta,
                                      current_beta=first.prior_beta)

    def to_dict(self) -> dict:
        decision, problem = self.decision, self.decision.problem
        first = self.ranking.results[0]
        return {
            "member": decision.member, "zone": decision.zone, "currency": problem.currency,
            "horizon_years": decision.horizon_years, "discount_rate": self.setup.discount_rate,
            "failure_cost": problem.failure_cost,
            "target": {"annual_beta": decision.target.beta,
                       "horizon_beta": decision.horizon_target_beta,
                       "source": decision.target.source},
            "alternatives": [{"name": a.name, "cost": a.cost, "effect": a.description,
                              "expected_cost": first.prior_expected_costs[a.name]}
                             for a in problem.alternatives],
            "prior_decision": first.prior_decision, "evpi": first.evpi,
            "evpi_standard_error": first.evpi_standard_error,
            "ranking": self.summaries(), "recommendation": self.recommendation,
            "surrogate_leave_one_out_error": decision.surrogate_errors(),
            "form_calls": decision.form_calls, "notes": decision.notes,
            "outcomes": self.outcomes, "theta_draws": problem.n_draws,
            "design_points": DESIGN_POINTS,
        }

    def largest_surrogate_error(self) -> float:
        errors = self.decision.surrogate_errors()
        return max((v for modes in errors.values() for v in modes.values()), default=math.nan)


def compute_site_worth(site, update, setup, *, member=None, outcomes: int = 500,
                       seed: int = 20261202, progress=None) -> SiteWorth:
    """Build the member's decision problem and rank the setup's test programmes."""
    from assess.worth import rank_programmes
    from assess.worth.site import build_site_decision

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # carried in the notes and recommendation
        if progress:
            progress("Conditional reliability of each alternative (FORM design, surrogate)")
        decision = build_site_decision(site, update, setup, member=member, n_draws=THETA_DRAWS,
                                       n_design=DESIGN_POINTS, seed=seed)
        if progress:
            progress("Preposterior analysis of the test programmes")
        ranking = rank_programmes(decision.problem, decision.programmes, n_outcomes=outcomes,
                                  seed=seed, target_beta=decision.horizon_target_beta)
    return SiteWorth(decision, ranking, setup, outcomes)


def site_worth_summary(site, update, *, seed: int = 20261202, quick: bool = False) -> SiteWorth:
    """The main job's step: the site folder's decisions.toml, default member."""
    from assess.worth.decision_file import DEFAULT_FILE_NAME, read_decision_setup

    setup = read_decision_setup(site.folder / DEFAULT_FILE_NAME)
    return compute_site_worth(site, update, setup, outcomes=200 if quick else 500, seed=seed)
