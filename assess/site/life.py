"""Remaining life of every member of a site: corrosion inputs, curves and their summary.

The step behind ``assess life`` and the main job. The figure is drawn by the
report layer (`assess.report.figures.life_figure`).
"""

from __future__ import annotations

import dataclasses

from assess.site.record import LedgerRow
from assess.site.settings import RunSettings

EXPLANATION = (
    "beta(t) is the annual reliability index of year t: the annual maximum load "
    "against the resistance of year t, with the bars corroding after the assessment "
    "date by Faraday's law from the zone's corrosion initiation time and rate "
    "(updated with break-outs and half-cell surveys). It is compared with the annual "
    "target. Two bands, for two things: the parameter band is the 5 % to 95 % spread of "
    "beta(t) and of the remaining life over what the tests leave uncertain about the "
    "populations (means and spreads of concrete, steel, cover, bar area) and the zone's "
    "corrosion initiation time and rate; the sampling band (+/- 2 standard errors) only says "
    "how precisely the one curve was estimated."
)


@dataclasses.dataclass
class SiteLife:
    """Corrosion inputs per zone, the curves per member and mode, and their summary."""

    corrosion: dict
    curves: list
    main: list
    horizon_years: float
    n_samples: int
    pitting: bool
    posterior_hash: str
    explanation: str = EXPLANATION

    @property
    def target(self):
        return self.main[0].target

    def table_rows(self) -> list[dict]:
        return [
            {
                "member": c.member,
                "governing mode": c.governing_mode,
                "beta now": c.beta_now,
                "beta at horizon": float(c.beta[-1]),
                "remaining life": c.remaining_life.text().split(" (")[0],
                "parameter band (90 %)": c.remaining_life.parameter_text(),
                "sampling band": c.remaining_life.sampling_text(),
                "reference": "annual",
            }
            for c in self.main
        ]

    def to_dict(self) -> dict:
        return {
            "reference": "annual",
            "horizon_years": self.horizon_years,
            "target": {
                "beta": self.target.beta,
                "source": self.target.source,
                "reference_period_years": 1.0,
            },
            "corrosion": {z: c.to_dict() for z, c in self.corrosion.items()},
            "curves": [c.to_dict() for c in self.curves],
            "explanation": self.explanation,
        }

    def ledger_rows(self) -> list[LedgerRow]:
        """One ``"remaining_life"`` row per curve (member and mode)."""
        settings = {
            "horizon_years": self.horizon_years,
            "n_samples": self.n_samples,
            "pitting": self.pitting,
            "posterior_hash": self.posterior_hash,
            "reference": "annual",
        }
        return [
            LedgerRow(
                "remaining_life",
                curve.to_dict(),
                member=curve.member,
                mode=curve.mode,
                seed=curve.seed,
                settings=settings,
            )
            for curve in self.curves
        ]


def compute_site_life(
    site,
    update,
    corrosion: dict,
    *,
    settings: RunSettings | None = None,
    members=None,
    progress=None,
) -> SiteLife:
    """Project every member (or those given) with the zones' corrosion inputs.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
        Materials knowledge after the site's tests (state at the assessment date).
    corrosion : dict
        Zone -> `CorrosionInputs` (`assess.site.corrosion.zone_corrosion_inputs`).
    settings : RunSettings, optional
        Seed, horizon [yr], importance samples, pitting.
    """
    from assess.site.projection import governing_curves, project_site

    settings = settings or RunSettings()
    curves = project_site(
        site,
        update,
        corrosion=corrosion,
        members=members,
        horizon_years=settings.horizon_years,
        n_samples=settings.life_sample_count,
        seed=settings.seed,
        progress=progress,
        pitting=settings.pitting,
    )
    return SiteLife(
        corrosion,
        curves,
        governing_curves(curves),
        settings.horizon_years,
        settings.life_sample_count,
        settings.pitting,
        update.data_hash,
    )


__all__ = ["EXPLANATION", "SiteLife", "compute_site_life"]
