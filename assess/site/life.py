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
    "(updated with break-outs and half-cell surveys), at the same spot (spatial "
    "quantile) as today's state; where no break-out was opened on a member's bar face, "
    "today's section loss is that of the corrosion model since initiation. Pitting "
    "(Gumbel pitting factor, updated with measured pits) acts on chloride-exposed faces "
    "and where pits were measured. It is compared with the annual "
    "target. Two bands, for two things: the parameter band is the 5 % to 95 % spread of "
    "beta(t) and of the remaining life over what the tests leave uncertain about the "
    "populations (means and spreads of concrete, steel, cover, bar area) and the zone's "
    "corrosion initiation time and rate; the sampling band (+/- 2 standard errors) only says "
    "how precisely the one curve was estimated. "
    "At the assessment date the curve takes the members' beta after updating (the "
    "same number as the members section) when that section uses a 1-year reference "
    "period; later years keep the curve's own change in beta."
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
                "remaining life": c.remaining_life.text().split(" (")[0],
                "parameter band (90 %)": c.remaining_life.parameter_text(),
                "sampling band": c.remaining_life.sampling_text(),
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


#: A difference in beta at the assessment date between the members' estimate and the
#: curve's own above which the report says so [-].
ANCHOR_NOTE_SHIFT = 0.5


def anchor_to_members(curves: list, assessment) -> list[str]:
    """Tie each curve at the assessment date to the members' "after" result (one number).

    The members step (`assess.site.before_after`) and the life curves
    (`assess.site.projection`, importance sampling with common random numbers) both
    estimate the annual beta of a member at the assessment date, with different
    samples. So that the report shows ONE number, each curve is shifted in beta:

        beta(t) = beta_curve(t) + (beta_members - beta_curve(0))

    The curve contributes only its change beta(t) - beta(0), which its common random
    numbers estimate well; beta(0) is the members' estimate. A shift in beta (rather
    than a ratio of pf) stays bounded when pf(0) lies far in the tail and is poorly
    resolved. The band keeps its width, shifted alike; at t = 0 it is the members'
    band (+/- 2 standard errors, delta method). pf(t) = Phi(-beta(t)). Done only where
    the members use a 1-year reference period and both betas are finite; a shift
    above `ANCHOR_NOTE_SHIFT` is reported.

    Parameters
    ----------
    curves : list of LifeCurve
        Changed in place (pf, beta, band, remaining life, ``anchor``).
    assessment : Assessment
        From `assess.site.before_after.assess_members` (same run) or
        `members_from_ledger`.

    Returns
    -------
    list of str
        Notes for the report.
    """
    from assess.site.projection import beta_band, remaining_life

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
    notes: list[str] = []
    results = {(r.member, r.mode): r for r in assessment.results}
    for curve in curves:
        result = results.get((curve.member, curve.mode))
        if result is None:
            continue
        beta_members = float(result.after.beta)
        own = float(curve.beta[0])
        if not math.isfinite(beta_members):
            continue  # no failed sample in the members' estimate: both are shown as "> 8"
        if not math.isfinite(own):
            notes.append(
                f"{curve.member} ({curve.mode}): the curve could not be tied to the members' "
                f"beta after at the assessment date (no failed sample); its own value is shown"
            )
            continue
        shift = beta_members - own
        with np.errstate(invalid="ignore"):
            curve.beta = np.asarray(curve.beta, dtype=float) + shift
            curve.beta_lower = np.asarray(curve.beta_lower, dtype=float) + shift
            curve.beta_upper = np.asarray(curve.beta_upper, dtype=float) + shift
            if getattr(curve, "parameter_lower", None) is not None:
                curve.parameter_lower = np.asarray(curve.parameter_lower, dtype=float) + shift
                curve.parameter_upper = np.asarray(curve.parameter_upper, dtype=float) + shift
        old_life = curve.remaining_life
        curve.beta[0] = beta_members
        cov0 = float(result.after.cov)
        _, low0, high0 = beta_band([float(result.after.pf)], [cov0 if math.isfinite(cov0) else 0.0])
        curve.beta_lower[0], curve.beta_upper[0] = float(low0[0]), float(high0[0])
        curve.pf = stats.norm.sf(curve.beta)
        curve.cov = np.asarray(curve.cov, dtype=float).copy()
        curve.cov[0] = cov0
        curve.remaining_life = remaining_life(
            curve.years_from_assessment,
            curve.beta,
            curve.beta_lower,
            curve.beta_upper,
            curve.target.beta,
            # the parameter band's life quantiles come from the draws' own crossings
            (old_life.parameter_low, old_life.parameter_high),
        )
        curve.anchor = {
            "beta_members_after": beta_members,
            "beta_curve_own": own,
            "shift": shift,
            "method_members": str(result.after.method),
            "rule": "beta(t) = beta_curve(t) + (beta_members_after - beta_curve(0))",
        }
        if abs(shift) > ANCHOR_NOTE_SHIFT:
            notes.append(
                f"{curve.member} ({curve.mode}): at the assessment date the members' beta "
                f"after ({beta_members:.2f}) and the remaining-life curve's own estimate "
                f"({own:.2f}) differ by {abs(shift):.2f}; the curve is shifted to the members' "
                f"value. More samples in both would narrow the difference."
            )
    return notes


def members_from_ledger(site, update, seed: int):
    """The latest members' before/after rows on the same data, read back from the ledger.

    So that ``assess life`` after ``assess members`` ties its curves to the same numbers
    as the main job does: rows of kind ``"reliability"`` with the same posterior hash,
    site-file hash and seed; the latest row per member and mode. None when there is none.

    Returns
    -------
    SimpleNamespace or None
        ``reference_period_years`` and ``results`` (member, mode, after: beta, pf, cov,
        method), the parts `anchor_to_members` reads.
    """
    import types

    from assess.site.paths import has_ledger, ledger_path
    from assess.site.record import site_file_hash
    from inspection_io.ledger import Ledger

    if not has_ledger(site.folder):
        return None
    file_hash = site_file_hash(site)
    wanted = {getattr(update, "data_hash", "") or ""}
    if not getattr(update, "has_data", True):
        wanted.add("")  # design information only: rows may carry no posterior hash
    latest: dict = {}
    with Ledger(ledger_path(site.folder)) as ledger:
        for row in ledger.results(kind="reliability"):
            settings = row.settings or {}
            if (
                (settings.get("posterior_hash") or "") not in wanted
                or settings.get("site_file_sha256") != file_hash
                or row.seed is None
                or (settings.get("run") or {}).get("seed") != seed
            ):
                continue
            latest[(row.member, row.mode)] = row.payload
    if not latest:
        return None
    results = []
    for (member, mode), payload in latest.items():
        after = types.SimpleNamespace(
            beta=float("inf") if payload.get("beta_after") is None else payload["beta_after"],
            pf=payload.get("pf_after") or 0.0,
            cov=float("nan") if payload.get("cov_after") is None else payload["cov_after"],
            method=payload.get("method", ""),
        )
        results.append(types.SimpleNamespace(member=member, mode=mode, after=after))
    return types.SimpleNamespace(
        reference_period_years=float(site.target.reference_period), results=results
    )


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


__all__ = [
    "EXPLANATION",
    "SiteLife",
    "anchor_to_members",
    "compute_site_life",
    "members_from_ledger",
    "section_loss_text",
]
