"""Remaining life of every member of a site: corrosion inputs, curves and their summary.

The step behind ``assess life`` and the main job. The figure is drawn by the
report layer (`assess.report.figures.life_figure`).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.site.record import LedgerRow
from assess.site.settings import RunSettings

EXPLANATION = (
    "beta(t) is the annual reliability index of year t: the annual maximum load "
    "against the resistance of year t, with the bars corroding after the assessment "
    "date by Faraday's law from the zone's corrosion initiation time and rate "
    "(updated with break-outs and half-cell surveys). It is compared with the annual "
    "target. The band is +/- 2 standard errors of the sampling estimate only. "
    "At the assessment date the curve takes the members' beta after updating (the "
    "same number as the members section) when that section uses a 1-year reference "
    "period; later years keep the curve's own growth pf(t)/pf(0)."
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
    notes: list = dataclasses.field(default_factory=list)

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
            "notes": list(self.notes),
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


def anchor_to_members(curves: list, assessment) -> list[str]:
    """Tie each curve at the assessment date to the members' "after" result (one number).

    The members step (`assess.site.before_after`) and the life curves
    (`assess.site.projection`, importance sampling with common random numbers) both
    estimate the annual pf of a member at the assessment date, with different
    samples. So that the report shows ONE number, each curve is rescaled:

        pf(t) = pf_members * pf_curve(t) / pf_curve(0)

    a ratio estimator: the curve contributes only the growth pf(t)/pf(0), which its
    common random numbers estimate well, and pf(0) is the members' estimate. The
    coefficient of variation of year t > 0 is taken as sqrt(CoV_members^2 +
    CoV_curve(t)^2) (the positive correlation of the two curve estimates is ignored,
    which overstates it); at t = 0 it is the members' CoV. Done only where the
    members use a 1-year reference period and both estimates are positive.

    Parameters
    ----------
    curves : list of LifeCurve
        Changed in place (pf, cov, beta, band, remaining life, ``anchor``).
    assessment : Assessment
        From `assess.site.before_after.assess_members`, same run.

    Returns
    -------
    list of str
        Notes on curves that could not be tied (for the report).
    """
    from assess.site.projection import beta_band, remaining_life

    notes: list[str] = []
    if assessment is None:
        return [
            "the members step did not run with this one: the curves' beta at the assessment "
            "date is their own estimate, not the members' beta after"
        ]
    if not math.isclose(float(assessment.reference_period_years), 1.0):
        return [
            f"the members section uses a {assessment.reference_period_years:g}-year "
            "reference period, the remaining-life curves a 1-year one: their betas at the "
            "assessment date are different quantities"
        ]
    results = {(r.member, r.mode): r for r in assessment.results}
    for curve in curves:
        result = results.get((curve.member, curve.mode))
        if result is None:
            continue
        pf_members = float(result.after.pf)
        cov_members = float(result.after.cov)
        pf0 = float(curve.pf[0])
        if pf_members <= 0.0:
            continue  # no failed sample in the members' estimate: both are shown as "> 8"
        if not (pf0 > 0.0 and math.isfinite(pf_members)):
            notes.append(
                f"{curve.member} ({curve.mode}): the curve could not be tied to the members' "
                f"beta after at the assessment date (a zero pf estimate); its own value is shown"
            )
            continue
        ratio = np.asarray(curve.pf, dtype=float) / pf0
        curve_cov = np.asarray(curve.cov, dtype=float)
        cov_m = cov_members if math.isfinite(cov_members) else 0.0
        cov = np.sqrt(cov_m**2 + np.where(np.isfinite(curve_cov), curve_cov, 0.0) ** 2)
        cov[0] = cov_members
        curve.pf = np.clip(pf_members * ratio, 0.0, 1.0)
        curve.cov = cov
        curve.beta, curve.beta_lower, curve.beta_upper = beta_band(curve.pf, np.nan_to_num(cov))
        curve.beta[0] = float(result.after.beta)
        curve.remaining_life = remaining_life(
            curve.years_from_assessment,
            curve.beta,
            curve.beta_lower,
            curve.beta_upper,
            curve.target.beta,
        )
        curve.anchor = {
            "beta_members_after": float(result.after.beta),
            "beta_curve_own": float(stats.norm.isf(pf0)),
            "pf_members_after": pf_members,
            "pf_curve_own": pf0,
            "method_members": str(result.after.method),
            "rule": "pf(t) = pf_members_after * pf_curve(t) / pf_curve(0)",
        }
    return notes


def compute_site_life(
    site,
    update,
    corrosion: dict,
    *,
    settings: RunSettings | None = None,
    members=None,
    progress=None,
    assessment=None,
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
    assessment : Assessment, optional
        The members' before/after result of the same run: each curve's value at the
        assessment date becomes the members' beta after (`anchor_to_members`).
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
    notes = anchor_to_members(curves, assessment)
    life = SiteLife(
        corrosion,
        curves,
        governing_curves(curves),
        settings.horizon_years,
        settings.life_sample_count,
        settings.pitting,
        update.data_hash,
    )
    life.notes = notes
    return life


__all__ = ["EXPLANATION", "SiteLife", "anchor_to_members", "compute_site_life"]
