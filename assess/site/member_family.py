"""The posterior family checked at each member's own tail level.

The materials step checks the fitted family (gamma precision, normal location, Gaussian
copula) against the raw MCMC draws at fixed levels 1e-2 to 1e-4
(`assess.updating.family_check`). A member needs it at its own level: for a quantity
with FORM importance factor alpha^2 in a member of reliability index beta, the design
point lies at the predictive tail probability p = Phi(-beta sqrt(alpha^2))
(`assess.updating.family_check.member_tail_level`). This module runs that check for every
member and mode with a FORM result after updating, on the tail where the design point
lies, and words one warning for those beyond the stated factor.

Checked: the zone populations fitted to the zone's own draws (concrete strength, steel
yield strength and, where break-outs give it, the residual area ratio) when the member's
model uses exactly that population. Cover is left to the materials step's fixed levels:
a member's cover comes from its (zone, face) cell of the partially pooled cover model
(`assess.site.cover_layers`), whose draws are not the zone's.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from assess.site.locations import knowledge_at
from assess.updating.family_check import (
    FAMILY_CHECK_FACTOR,
    FamilyCheck,
    check_family_at_member,
    raw_tail,
)

CHECKED = (
    ("fc", "concrete", "lognormal"),
    ("fy", "steel", "normal"),
    ("area_ratio", "area_ratio", "normal"),
)
"""(member-model variable, materials quantity, kind of the physical value given its
population): Y = ln X for lognormal (`assess.updating.to_model`)."""

MAX_RESOLVED_COV = 0.3
"""Largest CoV of the raw draws' tail estimate at which the check can say anything [-]:
beyond it the allowance of `FamilyCheck.passed` (two CoVs) hides a factor of about 2,
so such a check is reported as not resolved rather than as passed (judgement)."""

MIN_IMPORTANCE = 0.01
"""Importance factors alpha^2 below this are not checked [-]: the quantity barely moves
the member's pf (common practice for a negligible variable)."""


@dataclasses.dataclass(frozen=True)
class MemberFamilyCheck:
    """One quantity of one member and mode, checked at the member's level."""

    member: str
    mode: str
    zone: str
    quantity: str
    beta: float
    alpha2: float
    check: FamilyCheck

    @property
    def resolved(self) -> bool:
        """Whether the raw draws resolve the member's tail level (CoV <= `MAX_RESOLVED_COV`)."""
        return self.check.cov[0] <= MAX_RESOLVED_COV

    def to_dict(self) -> dict:
        return {
            "resolved": self.resolved,
            "member": self.member,
            "mode": self.mode,
            "zone": self.zone,
            "quantity": self.quantity,
            "beta": self.beta,
            "alpha2": self.alpha2,
            **self.check.to_dict(),
        }


def _merged_importance(form) -> dict:
    merged: dict[str, float] = {}
    for name, value in (form.importance_factors or {}).items():
        base = name.split(".")[0]
        merged[base] = merged.get(base, 0.0) + float(value)
    return merged


def member_family_checks(site, update, results, draws=None) -> list[MemberFamilyCheck]:
    """Check the family at each member's level.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
        The update the members were assessed on (``after``, ``after_local``, ``idata``).
    results : iterable of MemberResult
        From `assess.site.before_after.assess_members` (those with ``form_after``).
    draws : callable, optional
        (zone, quantity) -> (mu, sigma) raw draws; default the materials posterior
        (`assess.updating.models.group_draws`).
    """
    if update is None or getattr(update, "idata", None) is None or update.after is update.before:
        return []
    if draws is None:
        from assess.updating.models import group_draws

        def draws(zone, quantity):
            return group_draws(update.idata, zone, name=quantity)

    fitted = {tuple(key.split("/")[:2]) for key in (getattr(update, "family_checks", {}) or {})}
    cache: dict = {}
    out = []
    for result in results:
        form = getattr(result, "form_after", None)
        if form is None or not form.importance_factors or not math.isfinite(form.beta):
            continue
        member = site.members[result.member]
        face = getattr(member, "tension_face", None) or "bottom"
        used = knowledge_at(
            update.after[result.zone],
            (update.after_local or {}).get(result.zone),
            result.member,
            face,
        )
        merged = _merged_importance(form)
        for name, quantity, kind in CHECKED:
            alpha2 = merged.get(name, 0.0)
            population = used.get(quantity)
            if (
                alpha2 < MIN_IMPORTANCE
                or population is None
                or population is not update.after[result.zone].get(quantity)
                or (result.zone, quantity) not in fitted
            ):
                continue
            key = (result.zone, quantity)
            if key not in cache:
                cache[key] = draws(*key)
            mu, sigma = cache[key]
            side = "lower"
            x = (form.design_point_x or {}).get(name)
            if x is not None and np.isfinite(x) and (kind == "normal" or x > 0):
                y = math.log(x) if kind == "lognormal" else x
                side = "lower" if raw_tail(y, mu, sigma, "lower")[0] <= 0.5 else "upper"
            check = check_family_at_member(
                population, mu, sigma, beta=form.beta, alpha2=alpha2, side=side
            )
            out.append(
                MemberFamilyCheck(
                    result.member,
                    result.mode,
                    result.zone,
                    quantity,
                    float(form.beta),
                    float(alpha2),
                    check,
                )
            )
    return out


def member_family_warning(checks) -> str | None:
    """One warning text for the member checks that failed or that the draws cannot
    resolve, or None."""
    failed = [c for c in checks if not c.check.passed]
    unresolved = [c for c in checks if c.check.passed and not c.resolved]
    if not failed and not unresolved:
        return None

    def describe(c):
        return (
            f"{c.member} {c.mode}: {c.quantity} in zone {c.zone} ({c.check.side} tail at "
            f"p = {c.check.levels[0]:.2g}, family / draws = {c.check.ratios[0]:.2f}, "
            f"CoV of the draws {c.check.cov[0]:.2f})"
        )

    texts = []
    if failed:
        texts.append(
            "At the members' own design-point levels the fitted posterior family differs from "
            f"the raw posterior draws by more than a factor {FAMILY_CHECK_FACTOR:g}: "
            + "; ".join(describe(c) for c in failed)
            + ". These members' pf may be off by about that factor."
        )
    if unresolved:
        texts.append(
            "The raw posterior draws are too few to check the fitted family at these "
            "members' own design-point levels (more MCMC draws would): "
            + "; ".join(describe(c) for c in unresolved)
            + "."
        )
    return " ".join(texts)


__all__ = ["CHECKED", "MemberFamilyCheck", "member_family_checks", "member_family_warning"]
