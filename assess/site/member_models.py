"""Reliability model of one member: basic variables and its failure modes.

Modes by member kind (mean-value EN 1992-1-1 capacities, `assess.limit_states`):

- one-way slab (per width b): flexure at midspan, one-way shear at the support
  (only without shear reinforcement);
- beam: flexure, and one-way shear when it has no shear reinforcement (shear with
  stirrups is not modelled: checked separately);
- flat-slab column connection: punching at the basic control perimeter.

Each mode is g = theta_R R(x) - theta_E E(x) with model uncertainties theta
(`assess.priors`); the member system is the series system of its modes.
Loads: self-weight from the section, superimposed dead load, and the maximum car
load over the reference period (`car_park_vehicle_load_prior`, JCSS car-park model).
"""

from __future__ import annotations

import dataclasses
from typing import Callable

import numpy as np

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.limit_states.flexure import flexural_capacity
from assess.limit_states.load_effects import (
    TRIBUTARY_SHARE,
    load_effect_model_uncertainty,
)
from assess.limit_states.punching import punching_capacity
from assess.limit_states.shear import shear_capacity
from assess.model import ProbabilisticModel
from assess.priors import (
    resistance_model_uncertainty,
    self_weight_prior,
    superimposed_dead_prior,
)
from assess.priors.actions import car_park_vehicle_load_prior
from assess.updating.to_model import add_uncertain_quantity

SLAB, BEAM, CONNECTION = "one-way slab", "beam", "flat-slab column connection"
_TINY = 1e-9


@dataclasses.dataclass
class MemberModel:
    """Basic variables and limit states of one member.

    Attributes
    ----------
    model : ProbabilisticModel
    modes : dict
        Mode name -> limit-state function of the physical values (dict of arrays)
        returning g [kN or kNm].
    sources : dict
        Variable name -> published source of its model.
    notes : list of str
        Assumptions and modes left out.
    """

    model: ProbabilisticModel
    modes: dict
    sources: dict
    notes: list

    def problem(self, modes: list[str] | None = None):
        """`StandardNormalProblem` of the chosen modes (all: the series system)."""
        chosen = list(self.modes) if modes is None else list(modes)
        funcs = [self.modes[m] for m in chosen]

        def g(x):
            return np.column_stack([f(x) for f in funcs])

        return self.model.problem(g, mode_names=chosen)


def _add_prior(model, sources, name, prior):
    model.add(name, make_distribution(prior.kind, mean=prior.mean, std=prior.std, name=name))
    sources[name] = prior.source


def loaded_area(member) -> float:
    """Influence area of the member's governing load effect [m2] (common practice).

    One-way slab: span x span; beam: span x tributary width (its own width when
    not given); column connection: tributary share of span_x x span_y.
    """
    if member.kind == CONNECTION:
        return TRIBUTARY_SHARE[member.position] * member.span_x * member.span_y
    if member.kind == BEAM:
        return member.span * _beam_tributary_width(member)
    return member.span * member.span


def _beam_tributary_width(member) -> float:
    return member.tributary_width if member.tributary_width else member.width / 1000.0


def build_member_model(
    site,
    member,
    knowledge: dict,
    *,
    reference_period_years: float,
    car_park_use: str = "commercial",
) -> MemberModel:
    """Build the basic variables and limit states of ``member``.

    Parameters
    ----------
    site : inspection_io.site.Site
    member : inspection_io.site.Member
    knowledge : dict
        ``{"concrete", "steel", "cover", "area_ratio"}`` -> `NormalGamma` for the
        member's zone (design priors or posteriors).
    reference_period_years : float
        Period of the load maximum [years] (that of the target).
    """
    model = ProbabilisticModel()
    sources: dict[str, str] = {}
    notes: list[str] = []
    for name, kind in (
        ("fc", "lognormal"),
        ("fy", "normal"),
        ("cover", "lognormal"),  # on ln c (JCSS PMC 3.10: cover > 0)
        ("area_ratio", "normal"),
    ):
        key = {"fc": "concrete", "fy": "steel"}.get(name, name)
        add_uncertain_quantity(model, name, knowledge[key], kind=kind)
        sources[name] = knowledge[key].source

    unit_weight = site.loads.concrete_unit_weight
    slab_depth = member.depth
    web_line_load = 0.0  # [kN/m] beam web below the slab, deterministic
    if member.kind == BEAM and member.slab_depth:
        slab_depth = member.slab_depth
        web_line_load = unit_weight * member.width / 1000.0 * (member.depth - slab_depth) / 1000.0
    _add_prior(model, sources, "self_weight", self_weight_prior(slab_depth, unit_weight))
    _add_prior(
        model, sources, "superimposed_dead", superimposed_dead_prior(site.loads.superimposed_dead)
    )
    _add_prior(
        model,
        sources,
        "imposed",
        car_park_vehicle_load_prior(loaded_area(member), reference_period_years, use=car_park_use),
    )

    b = member.width
    h = member.depth
    phi = member.bar_diameter
    area_nominal = member.tension_steel_area

    def total_area_load(x):
        return x["self_weight"] + x["superimposed_dead"] + x["imposed"]

    # Far out in the tails (FORM iterations, subset levels) a normal variable can
    # take non-physical values; clip them to a tiny positive value so that the
    # capacity tends to zero instead of being undefined.
    def steel_area(x):
        return area_nominal * np.clip(x["area_ratio"], _TINY, None)

    def yield_strength(x):
        return np.clip(x["fy"], _TINY, None)

    def effective_depth(x, layers=1):
        # one layer: d = h - c - phi/2; two orthogonal layers (flat slabs): mean d = h - c - phi
        return h - x["cover"] - phi * (0.5 if layers == 1 else 1.0)

    modes: dict[str, Callable] = {}
    if member.kind in (SLAB, BEAM):
        span = member.span
        effect_member = "beam" if member.kind == BEAM else "one_way_slab"
        # width of deck whose area loads the member carries [m]
        width_m = _beam_tributary_width(member) if member.kind == BEAM else b / 1000.0
        theta_m = load_effect_model_uncertainty(effect_member, "moment")
        _add_prior(model, sources, "theta_E_moment", theta_m)
        _add_prior(model, sources, "theta_flexure", resistance_model_uncertainty("flexure"))

        def flexure(x):
            line = total_area_load(x) * width_m + web_line_load
            moment = x["theta_E_moment"] * line * span**2 / 8.0
            capacity = flexural_capacity(
                steel_area(x), yield_strength(x), x["fc"], b, np.clip(effective_depth(x), 1.0, None)
            )
            return x["theta_flexure"] * capacity - moment

        modes["flexure"] = flexure
        if not member.shear_reinforcement:
            theta_v = load_effect_model_uncertainty(effect_member, "shear")
            _add_prior(model, sources, "theta_E_shear", theta_v)
            _add_prior(model, sources, "theta_shear", resistance_model_uncertainty("shear", "mean"))

            def shear(x):
                force = (
                    x["theta_E_shear"] * (total_area_load(x) * width_m + web_line_load) * span / 2.0
                )
                capacity = shear_capacity(
                    steel_area(x), x["fc"], b, np.clip(effective_depth(x), 1.0, None)
                )
                return x["theta_shear"] * capacity - force

            modes["shear"] = shear
        else:
            notes.append(
                f"{member.member_id}: has shear reinforcement; shear with stirrups "
                "(EN 1992-1-1 6.2.3) is not modelled and must be checked separately"
            )
        if member.kind == BEAM and not member.tributary_width:
            notes.append(
                f"{member.member_id}: no tributary_width given; the beam carries only "
                f"its own width ({b:g} mm) of deck load"
            )
    elif member.kind == CONNECTION:
        theta_e = load_effect_model_uncertainty("flat_slab", "reaction")
        _add_prior(model, sources, "theta_E_reaction", theta_e)
        _add_prior(
            model, sources, "theta_punching", resistance_model_uncertainty("punching", "mean")
        )
        c1, c2 = member.column_size
        area_per_m = area_nominal * 1000.0 / b

        def punching(x):
            d = np.clip(effective_depth(x, layers=2), 1.0, None)
            rho = area_per_m * np.clip(x["area_ratio"], _TINY, None) / (1000.0 * d)
            capacity = punching_capacity(
                rho, rho, x["fc"], d, column_c1_mm=c1, column_c2_mm=c2, position=member.position
            )
            reaction = TRIBUTARY_SHARE[member.position] * member.span_x * member.span_y
            return (
                x["theta_punching"] * capacity
                - x["theta_E_reaction"] * total_area_load(x) * reaction
            )

        modes["punching"] = punching
    else:
        raise InputError(f"unknown member kind {member.kind!r}")
    return MemberModel(model=model, modes=modes, sources=sources, notes=notes)


def nominal_check(member_model: MemberModel) -> dict:
    """Limit-state values at the median point u = 0 (a quick sanity figure) [kN, kNm]."""
    u = np.zeros((1, member_model.model.dim))
    x = member_model.model.u_to_x(u)
    return {name: float(f(x)[0]) for name, f in member_model.modes.items()}


__all__ = ["MemberModel", "build_member_model", "loaded_area", "nominal_check"]
