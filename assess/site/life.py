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
    "(updated with break-outs and half-cell surveys), at the same spot (spatial "
    "quantile) as today's state; where no break-out was opened on a member's bar face, "
    "today's section loss is that of the corrosion model since initiation. Pitting "
    "(Gumbel pitting factor, updated with measured pits) acts on chloride-exposed faces "
    "and where pits were measured. It is compared with the annual "
    "target. The band is +/- 2 standard errors of the sampling estimate only."
)


def section_loss_text(note: dict) -> str:
    """Plain words: face, source of today's state and whether pitting governs."""
    if not note:
        return ""
    source = note.get("present_state_from", "")
    if not note.get("pitting"):
        return f"{note.get('face', '')} bars, today from {source}; uniform loss (no pitting)"
    now = "pitting governs" if note.get("pitting_governs_now") else "uniform loss governs"
    later = "pitting" if note.get("pitting_governs_horizon") else "uniform loss"
    return f"{note.get('face', '')} bars, today from {source}; {now} (at horizon: {later})"


@dataclasses.dataclass
class SiteLife:
    """Corrosion inputs per zone, the curves per member and mode, and their summary."""

    corrosion: dict
    curves: list
    main: list
    horizon_years: float
    n_samples: int
    pitting: bool | None
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
                "remaining life": c.remaining_life.text(),
                "section loss": section_loss_text(c.section_loss),
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
    from assess.site.corrosion_state import present_state
    from assess.site.projection import governing_curves, project_site

    settings = settings or RunSettings()
    update, state = present_state(
        site,
        update,
        corrosion,
        pitting=settings.pitting,
        seed=settings.seed,
        until_date=update.until_date,
    )
    curves = project_site(
        site,
        update,
        state=state,
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


__all__ = ["EXPLANATION", "SiteLife", "compute_site_life", "section_loss_text"]
