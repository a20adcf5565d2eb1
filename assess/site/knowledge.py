"""What is known about each zone's materials: design-stage priors and updated posteriors.

Four uncertain populations per zone, each a `NormalGamma` on a quantity Y:

============  ==========================  ================  ========================
name          Y                           physical value    observations (ledger)
============  ==========================  ================  ========================
concrete      ln f_c  [ln MPa]            lognormal f_c     cores: insitu_strength
steel         f_y     [MPa]               normal            tensile: yield_strength
cover         ln c    [ln mm]             lognormal c       cover: cover
area_ratio    A_res/A_0 [-]               normal            section_loss: residual_area_ratio
============  ==========================  ================  ========================
"""

from __future__ import annotations

import dataclasses
import math
import warnings

import numpy as np

from assess.errors import InputError
from assess.priors import (
    CHARACTERISTIC_VALUES,
    bar_area_prior,
    concrete_prior,
    cover_prior,
    looks_characteristic,
    steel_yield_prior,
)
from assess.priors.insitu import age_days, insitu_strength_prior
from assess.priors.normal_gamma import NormalGamma


@dataclasses.dataclass(frozen=True)
class QuantitySpec:
    """How one population is observed and modelled."""

    name: str
    record_kind: str
    observed_quantity: str
    log: bool
    physical_kind: str
    pooling: str
    unit: str
    latest_campaign_only: bool = False
    description: str = ""


QUANTITIES = {
    "concrete": QuantitySpec(
        "concrete",
        "cores",
        "insitu_strength",
        True,
        "lognormal",
        "partial",
        "MPa",
        description="in-situ compressive strength f_c",
    ),
    "steel": QuantitySpec(
        "steel",
        "tensile",
        "yield_strength",
        False,
        "normal",
        "complete",
        "MPa",
        description="reinforcement yield strength f_y",
    ),
    # Cover on ln c: a cover cannot be negative (JCSS PMC Part 3.10 advises against
    # the normal model for cover).
    "cover": QuantitySpec(
        "cover",
        "cover",
        "cover",
        True,
        "lognormal",
        "none",
        "mm",
        description="concrete cover to the main bars",
    ),
    # Section loss is a state that changes with time: only the most recent
    # break-outs describe the present state (the time path is the job of the
    # deterioration models).
    "area_ratio": QuantitySpec(
        "area_ratio",
        "section_loss",
        "residual_area_ratio",
        False,
        "normal",
        "none",
        "-",
        latest_campaign_only=True,
        description="residual / original bar area",
    ),
}


LABELS = {
    "concrete": ("In-situ concrete compressive strength", "MPa"),
    "steel": ("Reinforcement yield strength", "MPa"),
    "cover": ("Concrete cover", "mm"),
    "area_ratio": ("Residual bar area ratio", "-"),
}
"""Plain-words label and unit of each population."""


def predictive_draws(population, log: bool, n: int = 4000, seed: int = 0) -> np.ndarray:
    """Draws of the physical value from a population's Student-t predictive [units]."""
    rng = np.random.default_rng(seed)
    precision = rng.gamma(population.shape, 1.0 / population.rate, n)
    sigma = 1.0 / np.sqrt(precision)
    z = rng.normal(population.z_mean, population.z_std, n)
    y = population.center + z * sigma + sigma * rng.standard_normal(n)
    return np.exp(y) if log else y


def knowledge_rows(site, update) -> list[dict]:
    """Per zone and quantity: tests used, predictive mean and sd before and after [units]."""
    rows = []
    for zone in site.zones:
        for name, spec in QUANTITIES.items():
            frame = update.data[name]
            n = 0 if frame.empty else int((frame["zone"] == zone).sum())
            prior = predictive_draws(update.before[zone][name], spec.log)
            post = predictive_draws(update.after[zone][name], spec.log)
            rows.append(
                {
                    "zone": zone,
                    "quantity": name,
                    "label": LABELS[name][0],
                    "unit": spec.unit,
                    "tests": n,
                    "prior_mean": float(prior.mean()),
                    "prior_std": float(prior.std()),
                    "posterior_mean": float(post.mean()),
                    "posterior_std": float(post.std()),
                }
            )
    return rows


_WARNED_CONCRETE: set = set()
"""(site folder, class, production) whose concrete-table warning was already given."""


def _concrete_prior_once(site):
    """`concrete_prior` of the site's class; its table warning (interpolated or nearest
    class) is given once per site and process, not by every step that needs the prior."""
    materials = site.materials
    key = (str(getattr(site, "folder", "")), materials.concrete_class, materials.production)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        prior = concrete_prior(materials.concrete_class, materials.production)
    if key not in _WARNED_CONCRETE:
        for item in caught:
            _WARNED_CONCRETE.add(key)
            warnings.warn_explicit(item.message, item.category, item.filename, item.lineno)
    return prior


def weak_normal_gamma(
    mean: float, predictive_std: float, n: float, nu: float, source: str
) -> NormalGamma:
    """Normal-gamma prior whose Student-t predictive has the given mean and std.

    The published models give one distribution (mean, std) of the physical
    quantity; a normal-gamma prior splits it into an uncertain mean (equivalent
    sample size ``n``) and an uncertain scatter (degrees of freedom ``nu``). The
    scale s is chosen so that the predictive standard deviation
    s sqrt(1 + 1/n) sqrt(nu / (nu - 2)) equals ``predictive_std``.
    """
    if nu <= 2:
        raise InputError("nu must exceed 2 for a finite predictive variance")
    s = predictive_std / (math.sqrt(1.0 + 1.0 / n) * math.sqrt(nu / (nu - 2.0)))
    return NormalGamma.from_jcss(mean, n, s, nu, source=source)


def weak_lognormal_gamma(mean: float, std: float, n: float, nu: float, source: str) -> NormalGamma:
    """Normal-gamma prior of ln X for a positive X with the given mean and std [units of X].

    The lognormal with the same mean and standard deviation has
    s_ln = sqrt(ln(1 + (std/mean)^2)) and median mean / sqrt(1 + (std/mean)^2); the
    prior on ln X is centred on ln(median) with Student-t predictive standard
    deviation s_ln (`weak_normal_gamma`).
    """
    if not (mean > 0 and std > 0):
        raise InputError(f"a lognormal population needs mean > 0 and std > 0, got {mean}, {std}")
    s_ln = math.sqrt(math.log1p((std / mean) ** 2))
    return weak_normal_gamma(math.log(mean) - 0.5 * s_ln * s_ln, s_ln, n, nu, source=source)


#: Corrosion-loss prior of the area ratio at break-outs (the prior of the update with
#: section-loss data): a vague mean (n' = 0.1) and a within-zone scatter s' = 0.05 with
#: nu' = 4 (judgement: caliper reading error and the scatter of loss between break-outs of
#: one zone, the scale of `assess.updating.corrosion.RATIO_SD_SCALE`).
CORROSION_LOSS_N, CORROSION_LOSS_S, CORROSION_LOSS_NU = 0.1, 0.05, 4.0


def corrosion_loss_prior() -> NormalGamma:
    """Prior of the area ratio A_res/A0 measured at break-outs of corroding bars [-].

    The manufacturing tolerance of the bar area (JCSS PMC Part 3.2, CoV 0.02 about 1)
    describes a new bar, not one that has corroded for decades: used as the prior
    of measured loss it pulls the loss back towards "no corrosion". At break-outs
    the mean is left to the data (n' = 0.1, i.e. a tenth of one break-out), and
    the scatter between break-outs of a zone has a weak prior s' = 0.05, nu' = 4
    (judgement; the half-normal scale of the measurement sd in the corrosion update,
    `RATIO_SD_SCALE`). The centre 1 only matters for zones without break-outs,
    which keep their design prior.
    """
    return NormalGamma.from_jcss(
        1.0,
        CORROSION_LOSS_N,
        CORROSION_LOSS_S,
        CORROSION_LOSS_NU,
        source="corrosion-loss prior of measured area ratios: vague mean (n' = 0.1), "
        "scatter s' = 0.05, nu' = 4 (judgement)",
        log_scale=False,
    )


def update_priors(before: dict) -> dict:
    """Priors of the materials update: the design priors, with `corrosion_loss_prior`
    in place of the manufacturing tolerance of the area ratio."""
    loss = corrosion_loss_prior()
    return {z: {**qs, "area_ratio": loss} for z, qs in before.items()}


#: Quantities whose "after" stays the design prior in zones without their data (the
#: update's prior for them describes measured damage, not the design state).
DESIGN_STATE_WITHOUT_DATA = ("area_ratio",)


OVERRIDE_SOURCE = "site file [priors] override"

#: Prior weight of an overridden concrete prior: the equivalent sample size n' and
#: degrees of freedom nu' of the JCSS PMC Part 3.1 table for ready-mixed concrete.
CONCRETE_OVERRIDE_N, CONCRETE_OVERRIDE_NU = 3.0, 10.0

#: Prior weight of the steel yield prior: the mill-to-mill standard deviation (19 MPa,
#: JCSS PMC Part 3.2) is the uncertainty of the job mean, so
#: n' = (sigma_within / 19)^2 with sigma_within = sqrt(22^2 + 8^2) MPa; nu' = 50.
STEEL_N, STEEL_NU = (math.hypot(22.0, 8.0) / 19.0) ** 2, 50.0

#: Prior weight of the cover prior (engineering judgement, see `design_knowledge`).
COVER_N, COVER_NU = 2.0, 20.0


def concrete_override(mean: float, cov: float) -> NormalGamma:
    """Normal-gamma prior of ln f_c from a mean [MPa] and CoV [-] given in the site file.

    Same prior weight as the JCSS PMC Part 3.1 table (n' = 3, nu' = 10), with
    s' = sqrt(ln(1 + CoV^2)) and m' = ln(mean) - s'^2 / 2, so that the lognormal
    with parameters (m', s') has the given mean and CoV.
    """
    s = math.sqrt(math.log1p(cov * cov))
    return NormalGamma.from_jcss(
        math.log(mean) - 0.5 * s * s,
        CONCRETE_OVERRIDE_N,
        s,
        CONCRETE_OVERRIDE_NU,
        source=f"{OVERRIDE_SOURCE}: concrete_mean {mean:g} MPa, "
        f"concrete_cov {cov:g}; n' = 3, nu' = 10 as JCSS PMC "
        "Part 3.1",
    )


def _warn_if_characteristic(value: float, kind: str, key: str) -> None:
    if looks_characteristic(value, kind):
        warnings.warn(
            f"site file [priors] {key} = {value:g} MPa equals a characteristic value "
            f"({CHARACTERISTIC_VALUES[kind][1]}); reliability needs mean values (design "
            "decision 6). Give the mean in-situ value from tests or records, or remove the key "
            "to use the published prior of the specified class or grade.",
            UserWarning,
            stacklevel=3,
        )


def _member_kind_for_cover(kind: str) -> str:
    return "beam" if kind == "beam" else "slab"


def nominal_cover(member, face: str) -> float:
    """Nominal cover [mm] of ``member``'s bars on ``face`` (site file).

    ``top_cover`` (optional) for the top bars, else ``cover`` (the main bars on the
    tension face; used for the other faces as well when the site file says no more).
    """
    top = getattr(member, "top_cover", None)
    if face == "top" and top is not None:
        return float(top)
    return float(member.cover)


def face_cover_prior(member, face: str):
    """JCSS PMC Part 3.10 cover prior [mm] of ``member``'s bars on ``face`` (`cover_prior`).

    Slabs have no "side" row in the JCSS table: slab edges take the bottom row.
    """
    kind = _member_kind_for_cover(member.kind)
    side = face
    if kind == "slab" and face == "side":
        side = "bottom"
    return cover_prior(nominal_cover(member, face), kind, side)


def _cover_override(site) -> NormalGamma | None:
    overrides = getattr(site, "priors", None)
    if overrides is None or overrides.cover_mean is None:
        return None
    return weak_lognormal_gamma(
        overrides.cover_mean,
        overrides.cover_std,
        COVER_N,
        COVER_NU,
        source=f"{OVERRIDE_SOURCE}: cover_mean {overrides.cover_mean:g} mm, cover_std "
        f"{overrides.cover_std:g} mm (lognormal)",
    )


def _no_member_cover(site) -> NormalGamma:
    override = _cover_override(site)
    if override is not None:
        return override
    return weak_lognormal_gamma(30.0, 10.0, 2.0, 6.0, source="no members in zone (lognormal)")


def _cover_population(site, layers) -> NormalGamma:
    """Normal-gamma prior of ln c for the bar layers ``[(member, face), ...]`` pooled.

    The mixture of the layers' JCSS PMC 3.10 priors (mean of the means; variance =
    mean variance + variance of the means) [mm], as a lognormal with that mean and
    standard deviation (`weak_lognormal_gamma`, n' = 2, nu' = 20).
    """
    override = _cover_override(site)
    if override is not None:
        return override
    covers = [face_cover_prior(m, f) for m, f in layers]
    mean = float(np.mean([c.mean for c in covers]))
    std = float(np.sqrt(np.mean([c.std**2 for c in covers]) + np.var([c.mean for c in covers])))
    faces = sorted({f for _, f in layers})
    return weak_lognormal_gamma(
        mean,
        std,
        COVER_N,
        COVER_NU,
        source=f"{covers[0].source}; lognormal, face {'/'.join(faces)}, {len(layers)} bar layer(s)",
    )


def cover_layer_priors(site, zone_id: str, extra=()) -> dict[tuple, NormalGamma]:
    """Design priors of ln c per bar layer of a zone: ``(member_id, face)`` and ``(None, face)``.

    Every member of the zone contributes its tension-face layer, and its top layer when
    the site file gives ``top_cover``; ``extra`` adds ``(member_id, face)`` layers that
    the data name (readings on a face the site file does not describe). ``(None, face)``
    pools the layers of one face (`_cover_population`).
    """
    members = {m_id: m for m_id, m in site.members.items() if m.zone == zone_id}
    keys = []
    for m_id, m in members.items():
        keys.append((m_id, m.tension_face))
        if getattr(m, "top_cover", None) is not None:
            keys.append((m_id, "top"))
    keys.extend(k for k in extra if k[0] in members)
    keys = list(dict.fromkeys(keys))
    out: dict[tuple, NormalGamma] = {}
    for m_id, face in keys:
        out[(m_id, face)] = _cover_population(site, [(members[m_id], face)])
    faces = dict.fromkeys([f for _, f in keys] + [f for m_id, f in extra if m_id is None])
    for face in faces:
        layers = [(members[m_id], f) for m_id, f in keys if f == face]
        if not layers:  # a face no member of the zone is known on: all members' layers
            layers = [(m, face) for m in members.values()]
        out[(None, face)] = _cover_population(site, layers) if layers else _no_member_cover(site)
    return out


def design_knowledge(site) -> dict[str, dict[str, NormalGamma]]:
    """Design-stage priors per zone, from the site file's materials and members.

    Sources
    -------
    - concrete: JCSS PMC Part 3.1 normal-gamma prior of ln f_co (standard cylinders,
      28 days) by class and production (`assess.priors.concrete_prior`), carried to the
      in-situ strength f_c = alpha(t, tau) f_co^lambda Y1 that cores measure
      (`assess.priors.insitu.insitu_strength_prior`), so that before and after describe
      the same quantity;
    - steel: JCSS PMC Part 3.2, f_y normal with mean nominal + 2 sigma and sigma
      30 MPa; the mill-to-mill part (19 MPa) is the uncertainty of the job mean, so
      n' = (sigma_within / 19)^2 with sigma_within = sqrt(22^2 + 8^2) MPa, nu' = 50
      (the JCSS scatter of controlled production is well established, so the
      predictive stays close to the published normal model in the far tail);
    - cover: on ln c (lognormal: cover cannot be negative, JCSS PMC Part 3.10);
      JCSS PMC Part 3.10 deviations for the tension-face bar layers of the zone's
      members (mixture of their nominal covers), n' = 2, nu' = 20 (engineering
      judgement: the scatter of cover is well described by JCSS, its mean is not);
      per member and face: `cover_layer_priors`;
    - area_ratio: JCSS PMC Part 3.2 bar area, mean 1 (no section loss known at
      design), CoV 0.02, n' = 0.5: the manufacturing tolerance of a new bar. The
      materials update of measured section loss uses `corrosion_loss_prior` instead;
      today's loss where no break-out was opened comes from the corrosion model
      (`assess.site.corrosion_state`).

    Overrides: the site file's optional ``[priors]`` table (`inspection_io.site.Priors`)
    replaces the concrete prior (`concrete_override`), the steel prior (same n', nu'
    with the given mean and standard deviation [MPa]) and the cover prior of every
    zone and bar layer (same n', nu', lognormal with the given mean and standard
    deviation [mm]); their source
    names the "site file [priors] override". A ``concrete_mean`` or ``steel_mean``
    equal to a characteristic class or grade value warns (`UserWarning`): reliability
    needs mean values (design decision 6).
    """
    overrides = getattr(site, "priors", None)
    if overrides is not None and overrides.concrete_mean is not None:
        _warn_if_characteristic(overrides.concrete_mean, "concrete_strength", "concrete_mean")
        concrete = concrete_override(overrides.concrete_mean, overrides.concrete_cov)
    else:
        concrete = insitu_strength_prior(
            _concrete_prior_once(site),
            age_days(site.site.year_built, site.site.assessment_date),
        )
    if overrides is not None and overrides.steel_mean is not None:
        _warn_if_characteristic(overrides.steel_mean, "steel_yield", "steel_mean")
        steel = weak_normal_gamma(
            overrides.steel_mean,
            overrides.steel_std,
            STEEL_N,
            STEEL_NU,
            source=f"{OVERRIDE_SOURCE}: steel_mean {overrides.steel_mean:g} "
            f"MPa, steel_std {overrides.steel_std:g} MPa; prior "
            "weight as JCSS PMC Part 3.2",
        )
    else:
        steel_model = steel_yield_prior(site.materials.steel_grade)
        steel = weak_normal_gamma(
            steel_model.mean,
            steel_model.std,
            STEEL_N,
            STEEL_NU,
            source=steel_model.source + "; mill-to-mill 19 MPa as uncertainty of the job mean",
        )
    area = bar_area_prior()
    area_ratio = weak_normal_gamma(area.mean, area.std, 0.5, 10.0, source=area.source)
    knowledge = {}
    for zone_id in site.zones:
        members = [m for m in site.members.values() if m.zone == zone_id]
        layers = [(m, m.tension_face) for m in members]
        cover = _cover_population(site, layers) if layers else _no_member_cover(site)
        knowledge[zone_id] = {
            "concrete": concrete,
            "steel": steel,
            "cover": cover,
            "area_ratio": area_ratio,
        }
    return knowledge
