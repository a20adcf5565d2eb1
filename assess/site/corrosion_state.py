"""Corrosion state where the damage is: per zone and face, today and in future.

Faces
-----
A bar layer lies near one face of the member (`assess.site.locations.FACES`).
Chloride profiles, half-cell surveys and break-outs are read on a face; a
reading that does not say which is taken, by default (`faceless_face`):

- in an "exposed deck" zone, as read from the deck top, the surface the
  de-icing salts arrive on (assumption: on an exposed deck the survey works from
  the running surface);
- elsewhere, on the tension face of the member it names, else on the soffit
  ("bottom"), the face reached from below.

`CorrosionStateSettings.faceless_face` fixes one face for all such readings.
The corrosion fit of a zone (`assess.site.corrosion`) describes the face its
evidence was read on. The other faces of an exposed deck are not reached by
salts from above: their bars take the prior of a sheltered soffit (carbonation
from the face, i_corr of "sheltered soffit"; `other_face_inputs`). Zones of the
other exposures share one description for all faces.

Present state and future, one spatial quantile
----------------------------------------------
The critical section of a member is taken at quantile q of the zone's spatial
scatter of initiation, the quantile at which break-outs are placed
(`assess.updating.corrosion.BREAKOUT_QUANTILE`, 0.1): its local initiation time
is t_i,q = t_i exp(s Phi^-1(q)) (`CorrosionInputs.local_factor`). The area ratio
of its bars at age t is

    r(t) = r0 U(t) Pi(t),

- U(t) = A_q(t) / A_q(t0) where break-outs on the face measured today's uniform
  loss (r0 is then the measured population, `SiteUpdate.after`), else U(t) =
  A_q(t) and r0 the manufacturing tolerance of the bar area (the design prior):
  the loss suffered before today comes from the corrosion model;
- A_q(t) = max(1 - 2 P(t) / D0, 0)^2, P(t) = 0.0116 i_corr max(t - t_i,q, 0)
  (Faraday's law; the uniform-loss form of Vu & Stewart 2000 with a constant
  rate; `assess.deterioration.corrosion`);
- Pi(t) = 1 without pitting, else the share of the uniformly corroded bar left
  after its deepest pit (depth R P below the original surface, Val & Melchers
  1997 pit geometry, rule "uniform_then_pit"), R from the Gumbel pitting factor
  updated with the face's measured pits (`assess.deterioration.pitting`).

Hence the projection at t0 equals the present state, and present and future use
the same t_i,q. Pitting is on (`pitting=None`, the default) in chloride-exposed
faces (the top of an exposed deck, zones with EN 206 XD or XS classes) and
wherever pits were measured; True puts it on everywhere, False nowhere.

References
----------
.. [1] D. V. Val and R. E. Melchers, *J. Struct. Eng.* 123(12), 1638-1644, 1997
   (from memory).
.. [2] M. G. Stewart, *Struct. Saf.* 26, 453-470, 2004 (from memory).
.. [3] K. A. T. Vu and M. G. Stewart, *Struct. Saf.* 22(4), 313-333, 2000 (from memory).
"""

from __future__ import annotations

import dataclasses
import json

import numpy as np

from assess.deterioration.corrosion import (
    penetration_depth,
    residual_area_ratio,
    time_since_initiation,
)
from assess.deterioration.pitting import GumbelPitting, measured_pitting_factors
from assess.errors import InputError
from assess.priors.normal_gamma import NormalGamma
from assess.site.corrosion import CorrosionInputs, age_at
from assess.site.locations import FACES
from assess.site.paths import has_ledger, ledger_path

EXPOSED = "exposed deck"
CHLORIDE_CLASSES = ("XD", "XS")


@dataclasses.dataclass(frozen=True)
class CorrosionStateSettings:
    """Modelling choices of the corrosion state.

    Attributes
    ----------
    faceless_face : str, optional
        Face of every reading that gives none; None (default): the deck top in
        exposed decks, else the named member's tension face, else the soffit.
    pitting : bool, optional
        None (default): pitting on chloride-exposed faces and where pits were
        measured; True: everywhere; False: nowhere.
    prior_pits : float
        Weight of the published Gumbel location in measured pits [-].
    state_samples : int
        Monte Carlo draws of the present area ratio of a face [-].
    """

    faceless_face: str | None = None
    pitting: bool | None = None
    prior_pits: float = 2.0
    state_samples: int = 4000

    def __post_init__(self):
        if self.faceless_face is not None and self.faceless_face not in FACES:
            raise InputError(
                f"faceless_face must be one of {', '.join(FACES)} or None, got "
                f"{self.faceless_face!r}",
                column="faceless_face",
            )


def chloride_exposed(zone) -> bool:
    """True for an "exposed deck" zone or one with an EN 206 XD / XS class."""
    classes = tuple(getattr(zone, "exposure_classes", ()) or ())
    return zone.exposure == EXPOSED or any(c.startswith(CHLORIDE_CLASSES) for c in classes)


def reading_face(site, zone_id, extra: dict, member_id=None, faceless_face=None) -> str:
    """The face a reading acts on (see the module text)."""
    face = extra.get("face") if extra else None
    if face in FACES:
        return face
    if faceless_face is not None:
        return faceless_face
    if site.zones[zone_id].exposure == EXPOSED:
        return "top"
    member = site.members.get(member_id) if member_id else None
    if member is not None and getattr(member, "tension_face", None) in FACES:
        return member.tension_face
    return "bottom"


def evidence_face(site, zone_id, settings: CorrosionStateSettings | None = None) -> str:
    """Face described by the zone's corrosion fit (faceless readings: see `reading_face`)."""
    settings = settings or CorrosionStateSettings()
    if settings.faceless_face is not None:
        return settings.faceless_face
    return "top" if site.zones[zone_id].exposure == EXPOSED else "bottom"


def breakout_readings(site, until_date=None, settings=None) -> list[dict]:
    """Break-out readings with their face: one dict per break-out row.

    Keys: zone, face, member, date, bar_diameter [mm], residual_diameter [mm] or
    None, max_pit_depth [mm] or None.
    """
    from inspection_io.ledger import Ledger
    from inspection_io.screening import usable_mask

    settings = settings or CorrosionStateSettings()
    if not has_ledger(site.folder):
        return []
    with Ledger(ledger_path(site.folder)) as ledger:
        frame = ledger.observations(kind="section_loss", until_date=until_date)
    frame = frame[frame["zone"].isin(list(site.zones))]
    if len(frame):
        frame = frame[usable_mask(frame["flags"])]
    rows: dict = {}
    for row in frame.itertuples():
        extra = json.loads(row.extra) if row.extra else {}
        key = (row.file_id, row.source_row)
        member = row.member if isinstance(row.member, str) and row.member else None
        entry = rows.setdefault(
            key,
            {
                "zone": row.zone,
                "face": reading_face(site, row.zone, extra, member, settings.faceless_face),
                "member": member,
                "date": row.date,
                "bar_diameter": extra.get("bar_diameter"),
                "residual_diameter": extra.get("residual_diameter"),
                "max_pit_depth": None,
            },
        )
        if row.quantity == "max_pit_depth":
            entry["max_pit_depth"] = float(row.value)
    return list(rows.values())


def other_face_inputs(site, zone_id, *, n=20_000, seed=0) -> CorrosionInputs:
    """t_i and i_corr of a face of an exposed deck that salts from above do not reach.

    Carbonation from that face (t_i = (c / k)^2, k from the "sheltered soffit"
    `CARBONATION_RATE_PRIOR`, cover from the zone's design prior) and i_corr of
    `CORROSION_RATE["sheltered soffit"]` (judgement: the soffit of an open deck
    is a sheltered surface).
    """
    from assess.deterioration import carbonation as carbonation_forward
    from assess.reliability.crude import resolve_seed
    from assess.site.knowledge import design_knowledge
    from assess.updating.carbonation import CARBONATION_RATE_PRIOR
    from assess.updating.corrosion import ZoneCorrosionPrior

    rng, _ = resolve_seed(seed, "other_face_inputs")
    cover = design_knowledge(site)[zone_id]["cover"].predictive().rvs(size=n, random_state=rng)
    cover = np.maximum(cover, 5.0)
    rate = CARBONATION_RATE_PRIOR["sheltered soffit"]
    k = rate["median"] * np.exp(rate["log_sd"] * rng.standard_normal(n))
    t_i = carbonation_forward.initiation_time(cover, k)
    prior = ZoneCorrosionPrior.from_initiation_draws("sheltered soffit", t_i)
    inputs = CorrosionInputs.from_prior(zone_id, prior)
    return dataclasses.replace(
        inputs,
        source="face not reached by salts from above: carbonation and i_corr of a "
        "sheltered soffit (judgement), fib 34 defaults",
    )


def local_area_ratio(initiation_time, corrosion_rate, age_years, bar_diameter_mm, local_factor):
    """A_q(age): uniform-loss area ratio at the critical section's initiation time [-].

    A_q = max(1 - 2 P / D0, 0)^2, P = 0.0116 i_corr max(age - t_i f_q, 0) with f_q the
    local factor exp(s Phi^-1(q)) (Faraday's law; Vu & Stewart 2000 with a constant rate).
    """
    t_local = np.asarray(initiation_time, dtype=float) * float(local_factor)
    penetration = penetration_depth(corrosion_rate, time_since_initiation(age_years, t_local))
    return residual_area_ratio(bar_diameter_mm, penetration, rule="uniform"), penetration


def pit_share(penetration_mm, bar_diameter_mm, pitting_factor):
    """Pi: share of the uniformly corroded bar left after the deepest pit [-].

    (rule "uniform_then_pit") / (rule "uniform") of `residual_area_ratio`; 0 where
    nothing is left.
    """
    r = np.maximum(np.asarray(pitting_factor, dtype=float), 1.0)
    uniform = residual_area_ratio(bar_diameter_mm, penetration_mm, rule="uniform")
    pitted = residual_area_ratio(bar_diameter_mm, penetration_mm, r, rule="uniform_then_pit")
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(uniform > 0.0, pitted / np.where(uniform > 0.0, uniform, 1.0), 0.0)


def area_path(
    initiation_time,
    corrosion_rate,
    age_years,
    age_now_years,
    bar_diameter_mm,
    local_factor,
    pitting_factor=None,
):
    """A_q(t) Pi(t) / (A_q(t0) Pi(t0)): the factor on today's area ratio at age t [-].

    Parameters
    ----------
    initiation_time, corrosion_rate : array_like
        Zone-median t_i [yr] and i_corr [uA/cm2].
    age_years, age_now_years : float
        Age t and age at the assessment date t0 [yr].
    bar_diameter_mm : float
        D0 [mm].
    local_factor : float
        t_i,q / t_i [-].
    pitting_factor : array_like, optional
        R [-]; None: no pitting.

    Returns
    -------
    ndarray
        Exactly 1 at t = t0; 0 where nothing is left at t0.
    """

    def level(age):
        area, penetration = local_area_ratio(
            initiation_time, corrosion_rate, age, bar_diameter_mm, local_factor
        )
        if pitting_factor is not None:
            area = area * pit_share(penetration, bar_diameter_mm, pitting_factor)
        return area

    if age_years == age_now_years:
        return np.ones(np.shape(initiation_time))
    now, later = level(age_now_years), level(age_years)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(now > 0.0, later / np.where(now > 0.0, now, 1.0), 0.0)


@dataclasses.dataclass(frozen=True)
class FaceCorrosion:
    """Corrosion of the bars near one face of a zone.

    Attributes
    ----------
    zone, face : str
    inputs : CorrosionInputs
        t_i, i_corr (zone median) and the critical section's local factor.
    measured : bool
        Break-outs on this face measured today's uniform loss.
    breakouts : int
        Break-out residual diameters on this face [-].
    pitting : GumbelPitting or None
        Pitting factor (None: pitting off here).
    pit_factors : tuple of float
        Measured pitting factors p_max / P [-].
    """

    zone: str
    face: str
    inputs: CorrosionInputs
    measured: bool
    breakouts: int
    pitting: GumbelPitting | None
    pit_factors: tuple = ()

    def to_dict(self) -> dict:
        return {
            "zone": self.zone,
            "face": self.face,
            "corrosion": self.inputs.to_dict(),
            "present_state_from": "break-outs" if self.measured else "corrosion model",
            "breakouts": self.breakouts,
            "pitting": None if self.pitting is None else self.pitting.to_dict(),
            "measured_pitting_factors": list(self.pit_factors),
        }


def site_corrosion_state(
    site,
    inputs: dict,
    *,
    until_date=None,
    settings: CorrosionStateSettings | None = None,
    seed: int = 0,
    readings: list | None = None,
) -> dict:
    """`FaceCorrosion` of every zone and face: (zone, face) -> FaceCorrosion.

    Parameters
    ----------
    site : inspection_io.site.Site
    inputs : dict
        Zone -> `CorrosionInputs` of the zone's evidence face
        (`assess.site.corrosion.zone_corrosion_inputs`).
    until_date : date, optional
        Only break-outs up to this day.
    settings : CorrosionStateSettings, optional
    seed : int
        Seed of the other-face priors.
    readings : list, optional
        Break-out readings (`breakout_readings`); ``[]`` for the state known
        before any test.
    """
    settings = settings or CorrosionStateSettings()
    if readings is None:
        readings = breakout_readings(site, until_date, settings)
    state = {}
    for zone_id, zone in site.zones.items():
        home = evidence_face(site, zone_id, settings)
        for face in FACES:
            own = [r for r in readings if r["zone"] == zone_id and r["face"] == face]
            if face == home or zone.exposure != EXPOSED:
                face_inputs = inputs[zone_id]
            else:
                face_inputs = other_face_inputs(site, zone_id, seed=seed)
            with_residual = [r for r in own if r["residual_diameter"] is not None]
            pits = [
                r for r in with_residual if r["max_pit_depth"] is not None and r["bar_diameter"]
            ]
            factors = measured_pitting_factors(
                [r["max_pit_depth"] for r in pits],
                [float(r["bar_diameter"]) for r in pits],
                [float(r["residual_diameter"]) for r in pits],
            )
            exposed = chloride_exposed(zone) and (zone.exposure != EXPOSED or face == "top")
            on = settings.pitting
            if on is None:
                on = exposed or factors.size > 0
            pitting = GumbelPitting.published(settings.prior_pits).update(factors) if on else None
            state[(zone_id, face)] = FaceCorrosion(
                zone=zone_id,
                face=face,
                inputs=face_inputs,
                measured=bool(with_residual),
                breakouts=len(with_residual),
                pitting=pitting,
                pit_factors=tuple(float(v) for v in factors),
            )
    return state


PITTING_NAME = "pitting_factor"


def present_factor_draws(site, member, face_state: FaceCorrosion, *, n=4000, seed=0) -> dict:
    """Draws of today's corrosion factor on r0 at a member's critical section [-].

    ``{"uniform": A_q(t0) (1 where break-outs measured today's uniform loss),
    "share": Pi(t0) (1 without pitting), "factor": their product}``.
    """
    from assess.reliability.crude import resolve_seed

    rng, _ = resolve_seed(seed, "present_factor_draws")
    age_now = age_at(site, site.site.assessment_date)
    draws = face_state.inputs.sample(n, seed=rng)
    uniform, penetration = local_area_ratio(
        draws["initiation_time"],
        draws["corrosion_rate"],
        age_now,
        float(member.bar_diameter),
        face_state.inputs.local_factor,
    )
    share = np.ones(n)
    if face_state.pitting is not None:
        share = pit_share(
            penetration,
            float(member.bar_diameter),
            face_state.pitting.sample(n, rng, critical_length_mm(member)),
        )
    if face_state.measured:
        uniform = np.ones(n)
    return {"uniform": uniform, "share": share, "factor": uniform * share}


def critical_length_mm(member) -> float:
    """Bar length over which the deepest pit of the critical section is sought [mm].

    Judgement: the central third of the span in flexure (where the moment is within
    about 90 % of its maximum), the bar length crossing the control perimeter for
    punching (4 effective depths, about 2 x 2d across the column face); at least the
    reference length of the Gumbel factor.
    """
    from assess.deterioration.defaults import PITTING_REFERENCE_LENGTH_MM

    span = getattr(member, "span", None)
    if span:
        length = 1000.0 * float(span) / 3.0
    else:
        length = 4.0 * float(member.depth)
    return max(length, PITTING_REFERENCE_LENGTH_MM)


def present_population(
    site,
    member,
    face_state: FaceCorrosion,
    base: NormalGamma,
    *,
    n: int = 4000,
    seed=0,
) -> NormalGamma:
    """`NormalGamma` of today's area ratio at a member's critical section [-].

    Draws of the population ``base`` (mu_k, sigma_k) are combined with draws of
    today's corrosion factor c_k: mu_k c_k, sigma_k (the family is then fitted,
    `NormalGamma.fit_draws`; it matches the mean and spread of r0 c, not its skew).

    - No break-out on the face: ``base`` is the manufacturing tolerance and
      c = A_q(t0) Pi(t0) from the corrosion model (`present_factor_draws`).
    - Break-outs on the face: ``base`` is the measured population of the uniform
      loss; c = Pi(t0), the deepest pit, with the uniform penetration of each
      draw P_k = D0 (1 - sqrt(mu_k)) / 2 (the measured loss, not the model's).
    """
    from assess.reliability.crude import resolve_seed

    rng, _ = resolve_seed(seed, "present_population")
    precision = rng.gamma(base.shape, 1.0 / base.rate, n)
    sigma = 1.0 / np.sqrt(precision)
    mu = base.center + rng.normal(base.z_mean, base.z_std, n) * sigma
    d0 = float(member.bar_diameter)
    if face_state.measured:
        factor = np.ones(n)
        if face_state.pitting is not None:
            penetration = 0.5 * d0 * (1.0 - np.sqrt(np.clip(mu, 0.0, 1.0)))
            r = face_state.pitting.sample(n, rng, critical_length_mm(member))
            factor = pit_share(penetration, d0, r)
        what = "measured uniform loss (break-outs) times the deepest pit"
    else:
        factor = present_factor_draws(site, member, face_state, n=n, seed=rng)["factor"]
        what = "manufacturing tolerance times the corrosion model's loss since initiation"
    return NormalGamma.fit_draws(
        mu * factor,
        sigma,
        source=f"present area ratio, zone {face_state.zone}, {face_state.face} face: {what} "
        "at the critical section (Faraday; spatial quantile of the break-outs"
        + ("; Gumbel pitting factor)" if face_state.pitting is not None else ")"),
        log_scale=False,
    )


def face_members(site, zone_id, face) -> list:
    """Members of a zone whose tension bars lie near ``face``."""
    return [
        m
        for m in site.members.values()
        if m.zone == zone_id and getattr(m, "tension_face", "bottom") == face
    ]


def with_present_state(site, update, state: dict, *, n=4000, seed=0, which="after"):
    """A copy of ``update`` whose ``after_local`` (or ``before_local``) holds today's
    area ratio per face.

    For every zone and face: no break-out on the face -> the manufacturing
    tolerance (``before``) times A_q(t0) Pi(t0) from the corrosion model;
    break-outs with pitting -> the measured population times Pi(t0); break-outs
    without pitting -> nothing added (the measured population holds). The face
    entry ``(None, face)`` uses the bar diameter of the first member of the zone
    with its tension bars on that face (else of the zone's first member); a member
    on that face with another diameter gets its own ``(member_id, face)`` entry.
    """
    from assess.site.locations import knowledge_at

    known = getattr(update, which)
    old_local = getattr(update, f"{which}_local") or {}
    local = {z: {k: dict(v) for k, v in d.items()} for z, d in old_local.items()}
    for (zone_id, face), face_state in state.items():
        if face_state.measured and face_state.pitting is None:
            continue
        zone_members = [m for m in site.members.values() if m.zone == zone_id]
        on_face = face_members(site, zone_id, face)
        if not zone_members:
            continue
        representative = (on_face or zone_members)[0]
        entries = [(None, representative)] + [
            (m.member_id, m)
            for m in on_face
            if float(m.bar_diameter) != float(representative.bar_diameter)
        ]
        for key, member in entries:
            base: NormalGamma
            if face_state.measured:
                base = knowledge_at(  # type: ignore[assignment]
                    known[zone_id], old_local.get(zone_id), member.member_id, face
                )["area_ratio"]
            else:
                base = update.before[zone_id]["area_ratio"]
            population = present_population(site, member, face_state, base, n=n, seed=seed)
            local.setdefault(zone_id, {}).setdefault((key, face), {})["area_ratio"] = population
    after = update.after
    if after is update.before:  # no test data: "after" must become its own dict
        after = {z: dict(q) for z, q in update.before.items()}
    return dataclasses.replace(update, after=after, **{f"{which}_local": local})


def present_state(
    site,
    update,
    corrosion: dict | None = None,
    *,
    pitting: bool | None = None,
    seed: int = 0,
    until_date=None,
    settings: CorrosionStateSettings | None = None,
):
    """(update with today's area ratio per face, (zone, face) -> `FaceCorrosion`).

    ``before_local`` gets the state known without tests (corrosion priors, no
    break-out, no measured pit), ``after_local`` the state from ``corrosion`` and the
    site's break-outs, so that "before" and "after" differ only by the evidence.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
    corrosion : dict, optional
        Zone -> `CorrosionInputs`; default the priors of `zone_corrosion_inputs`.
    pitting : bool, optional
        Overrides ``settings.pitting`` when given.
    seed : int
    until_date : date, optional
        Only break-outs up to this day.
    settings : CorrosionStateSettings, optional
    """
    from assess.site.corrosion import zone_corrosion_inputs

    settings = settings or CorrosionStateSettings()
    if pitting is not None:
        settings = dataclasses.replace(settings, pitting=bool(pitting))
    prior_inputs = zone_corrosion_inputs(site, seed=seed)
    if corrosion is None:
        corrosion = prior_inputs
    # before: the corrosion priors, no break-out and no measured pit
    known_before = site_corrosion_state(
        site, prior_inputs, settings=settings, seed=seed, readings=[]
    )
    update = with_present_state(
        site, update, known_before, n=settings.state_samples, seed=seed, which="before"
    )
    state = site_corrosion_state(
        site, corrosion, until_date=until_date, settings=settings, seed=seed
    )
    return with_present_state(site, update, state, n=settings.state_samples, seed=seed), state


def pitting_note(
    site, member, face_state: FaceCorrosion, horizon_years: float, *, n=4000, seed=0
) -> dict:
    """Whether pitting or uniform loss governs the member's section loss [-].

    Compares the mean area lost to uniform corrosion, 1 - E[A_q], with the mean
    area lost to the deepest pit, E[A_q (1 - Pi)], at the critical section, today
    and at the end of the horizon.
    """
    if face_state.pitting is None:
        return {"pitting": False, "text": "pitting not modelled on this face"}
    from assess.reliability.crude import resolve_seed

    rng, _ = resolve_seed(seed, "pitting_note")
    age_now = age_at(site, site.site.assessment_date)
    draws = face_state.inputs.sample(n, seed=rng)
    r = face_state.pitting.sample(n, rng, critical_length_mm(member))
    out: dict = {"pitting": True, "measured_pits": len(face_state.pit_factors)}
    for label, age in (("now", age_now), ("horizon", age_now + horizon_years)):
        uniform, penetration = local_area_ratio(
            draws["initiation_time"],
            draws["corrosion_rate"],
            age,
            float(member.bar_diameter),
            face_state.inputs.local_factor,
        )
        pit_loss = float(np.mean(uniform * (1.0 - pit_share(penetration, member.bar_diameter, r))))
        uniform_loss = float(np.mean(1.0 - uniform))
        out[f"uniform_loss_{label}"] = uniform_loss
        out[f"pit_loss_{label}"] = pit_loss
        out[f"pitting_governs_{label}"] = bool(pit_loss > uniform_loss)
    now = "pitting governs" if out["pitting_governs_now"] else "uniform loss governs"
    later = "pitting governs" if out["pitting_governs_horizon"] else "uniform loss governs"
    out["text"] = (
        f"section loss today: {now} (mean area lost {100 * out['uniform_loss_now']:.1f} % "
        f"uniform, {100 * out['pit_loss_now']:.1f} % to the deepest pit); "
        f"in {horizon_years:g} yr: {later}"
    )
    return out


__all__ = [
    "CorrosionStateSettings",
    "FaceCorrosion",
    "PITTING_NAME",
    "area_path",
    "breakout_readings",
    "chloride_exposed",
    "critical_length_mm",
    "evidence_face",
    "local_area_ratio",
    "other_face_inputs",
    "pit_share",
    "pitting_note",
    "present_state",
    "face_members",
    "present_factor_draws",
    "present_population",
    "reading_face",
    "site_corrosion_state",
    "with_present_state",
]
