"""What is known about each zone's materials: design-stage priors and updated posteriors.

Four uncertain populations per zone, each a `NormalGamma` on a quantity Y:

============  ==========================  ================  ========================
name          Y                           physical value    observations (ledger)
============  ==========================  ================  ========================
concrete      ln f_c  [ln MPa]            lognormal f_c     cores: insitu_strength
steel         f_y     [MPa]               normal            tensile: yield_strength
cover         c       [mm]                normal            cover: cover
area_ratio    A_res/A_0 [-]               normal            section_loss: residual_area_ratio
============  ==========================  ================  ========================
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from assess.priors import bar_area_prior, concrete_prior, cover_prior, steel_yield_prior
from assess.updating.normal_gamma import NormalGamma


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
    "concrete": QuantitySpec("concrete", "cores", "insitu_strength", True, "lognormal", "partial",
                             "MPa", description="in-situ compressive strength f_c"),
    "steel": QuantitySpec("steel", "tensile", "yield_strength", False, "normal", "complete",
                          "MPa", description="reinforcement yield strength f_y"),
    "cover": QuantitySpec("cover", "cover", "cover", False, "normal", "none", "mm",
                          description="concrete cover to the main bars"),
    # Section loss is a state that changes with time: only the most recent
    # break-outs describe the present state (the time path is the job of the
    # deterioration models).
    "area_ratio": QuantitySpec("area_ratio", "section_loss", "residual_area_ratio", False,
                               "normal", "none", "-", latest_campaign_only=True,
                               description="residual / original bar area"),
}


def weak_normal_gamma(mean: float, predictive_std: float, n: float, nu: float,
                      source: str) -> NormalGamma:
    """Normal-gamma prior whose Student-t predictive has the given mean and std.

    The published models give one distribution (mean, std) of the physical
    quantity; a normal-gamma prior splits it into an uncertain mean (equivalent
    sample size ``n``) and an uncertain scatter (degrees of freedom ``nu``). The
    scale s is chosen so that the predictive standard deviation
    s sqrt(1 + 1/n) sqrt(nu / (nu - 2)) equals ``predictive_std``.
    """
    if nu <= 2:
        raise ValueError("nu must exceed 2 for a finite predictive variance")
    s = predictive_std / (math.sqrt(1.0 + 1.0 / n) * math.sqrt(nu / (nu - 2.0)))
    return NormalGamma.from_jcss(mean, n, s, nu, source=source)


def _member_kind_for_cover(kind: str) -> str:
    return "beam" if kind == "beam" else "slab"


def design_knowledge(site) -> dict[str, dict[str, NormalGamma]]:
    """Design-stage priors per zone, from the site file's materials and members.

    Sources
    -------
    - concrete: JCSS PMC Part 3.1 normal-gamma prior of ln f_c by class and
      production (`assess.priors.concrete_prior`);
    - steel: JCSS PMC Part 3.2, f_y normal with mean nominal + 2 sigma and sigma
      30 MPa; the mill-to-mill part (19 MPa) is the uncertainty of the job mean, so
      n' = (sigma_within / 19)^2 with sigma_within = sqrt(22^2 + 8^2) MPa, nu' = 50
      (the JCSS scatter of controlled production is well established, so the
      predictive stays close to the published normal model in the far tail);
    - cover: JCSS PMC Part 3.10 deviations for the zone's members (mean of their
      nominal covers), n' = 2, nu' = 20 (engineering judgement: the scatter of
      cover is well described by JCSS, its mean is not);
    - area_ratio: JCSS PMC Part 3.2 bar area, mean 1 (no section loss known at
      design), CoV 0.02, with a weak mean (n' = 0.5) so measured loss governs.
    """
    concrete = NormalGamma.from_prior(concrete_prior(site.materials.concrete_class,
                                                     site.materials.production))
    steel_model = steel_yield_prior(site.materials.steel_grade)
    sigma_within = math.hypot(22.0, 8.0)
    steel = weak_normal_gamma(steel_model.mean, steel_model.std, (sigma_within / 19.0) ** 2, 50.0,
                              source=steel_model.source + "; mill-to-mill 19 MPa as uncertainty "
                                     "of the job mean")
    area = bar_area_prior()
    area_ratio = weak_normal_gamma(area.mean, area.std, 0.5, 10.0, source=area.source)
    knowledge = {}
    for zone_id in site.zones:
        members = [m for m in site.members.values() if m.zone == zone_id]
        if members:
            covers = [cover_prior(m.cover, _member_kind_for_cover(m.kind), m.tension_face)
                      for m in members]
            mean = float(np.mean([c.mean for c in covers]))
            std = float(np.sqrt(np.mean([c.std ** 2 for c in covers])
                                + np.var([c.mean for c in covers])))
            cover = weak_normal_gamma(mean, std, 2.0, 20.0, source=covers[0].source)
        else:
            cover = weak_normal_gamma(30.0, 10.0, 2.0, 6.0, source="no members in zone")
        knowledge[zone_id] = {"concrete": concrete, "steel": steel, "cover": cover,
                              "area_ratio": area_ratio}
    return knowledge
