"""Remaining life of every member of a site: computation and its summary.

Shared by ``assess life`` and the main job (`assess.main_job`).
"""

from __future__ import annotations

import dataclasses

EXPLANATION = ("beta(t) is the annual reliability index of year t: the annual maximum load "
               "against the resistance of year t, with the bars corroding after the assessment "
               "date by Faraday's law from the zone's corrosion initiation time and rate "
               "(updated with break-outs and half-cell surveys). It is compared with the annual "
               "target. The band is +/- 2 standard errors of the sampling estimate only.")

QUICK_SAMPLES = 2000


@dataclasses.dataclass
class SiteLife:
    """Corrosion inputs per zone, the curves per member and mode, and their summary."""

    corrosion: dict
    curves: list
    main: list
    horizon_years: float
    explanation: str = EXPLANATION

    @property
    def target(self):
        return self.main[0].target

    def table_rows(self) -> list[dict]:
        return [{"member": c.member, "governing mode": c.governing_mode,
                 "beta now": c.beta_now, "beta at horizon": float(c.beta[-1]),
                 "remaining life": c.remaining_life.text(), "reference": "annual"}
                for c in self.main]

    def figure(self):
        from assess.report.plots import plot_beta_over_time

        return plot_beta_over_time(
            self.main[0].years_from_assessment, {c.member: c.beta for c in self.main},
            self.target.beta, bands={c.member: (c.beta_lower, c.beta_upper) for c in self.main},
            time_label="Years after the assessment (annual beta)")

    def to_dict(self) -> dict:
        return {"reference": "annual", "horizon_years": self.horizon_years,
                "target": {"beta": self.target.beta, "source": self.target.source,
                           "reference_period_years": 1.0},
                "corrosion": {z: c.to_dict() for z, c in self.corrosion.items()},
                "curves": [c.to_dict() for c in self.curves], "explanation": self.explanation}


def compute_site_life(site, update, *, horizon_years: float = 50.0, seed: int = 20261202,
                      quick: bool = False, samples: int | None = None, members=None,
                      progress=None, pitting: bool = False) -> SiteLife:
    """Update corrosion (MCMC, gated and cached), then project every member."""
    from assess.life.corrosion_inputs import update_corrosion, zone_corrosion_inputs
    from assess.life.projection import DEFAULT_SAMPLES, governing_curves, project_site

    fit = update_corrosion(site, seed=seed, draws=1000, tune=500 if quick else 1000)
    corrosion = zone_corrosion_inputs(site, fit, seed=seed)
    n_samples = samples or (QUICK_SAMPLES if quick else DEFAULT_SAMPLES)
    curves = project_site(site, update, corrosion=corrosion, members=members,
                          horizon_years=horizon_years, n_samples=n_samples, seed=seed,
                          progress=progress, pitting=pitting)
    return SiteLife(corrosion, curves, governing_curves(curves), horizon_years)


def site_life_summary(site, update, *, horizon_years: float = 50.0, seed: int = 20261202,
                      quick: bool = False) -> SiteLife:
    """The main job's step."""
    return compute_site_life(site, update, horizon_years=horizon_years, seed=seed, quick=quick)
