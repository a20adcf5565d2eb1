"""Reliability model of one member: basic variables and its failure modes.

Modes by member kind (mean-value EN 1992-1-1 capacities, `assess.limit_states`):

- one-way slab (per width b) and beam: ``"flexure"`` (sagging in the span, the
  main bars), ``"hogging"`` over a continuous support (the top bars, exposed to
  the deck's chlorides; continuous members only) and ``"shear"`` at the support
  (members without shear reinforcement only; shear with stirrups is not
  modelled: checked separately). At a continuous support the shear takes the top
  bars as its tension steel (EN 1992-1-1 6.2.2(1): A_sl is the tension steel);
- flat-slab column connection: ``"punching"`` at the basic control perimeter.

Each bar layer has its own variables: the main (``tension_face``) layer ``cover``
and ``area_ratio``; the top layer of a continuous member ``cover_top`` and
``area_ratio_top``; f_c and f_y are shared. Each layer takes the most specific
population known (`assess.site.locations.knowledge_at`: member and face > face >
zone). A top layer on the zone's cover population keeps its own nominal cover
(the zone value shifted by top_cover - cover).

Load effects: g = theta_R R(x) - theta_E (w C + s1 Q) with

- w the permanent line load (slabs, beams) [kN/m] or area load (punching)
  [kN/m2] and C its coefficient: simply supported L^2/8 at midspan and L/2 at
  the support; continuous members the elastic coefficients of equal spans under
  uniform load on every span (three-moment equation,
  `assess.limit_states.influence`; they reproduce Hicks, *Civil Engineering
  Formulas*, Table 2.1 "Uniformly loaded continuous beams over equal spans":
  two spans 1/8 over the support, three spans 1/10, 0.080 and 0.025 in the
  spans); punching the tributary area;
- Q the maximum vehicle weight over the reference period (``"imposed"`` [kN],
  `assess.priors.actions.vehicle_weight_maximum_prior`) and s1 the sum of the
  influence coefficients of the occupied bay centres [m or -]
  (`assess.limit_states.point_loads`, JCSS PMC Part 2 car parks). The modes of a
  member share Q; its spread is that of the member's most variable effect (safe
  side for the others). "imposed" multiplies every vehicle effect, so a load
  restriction scales it.

The member system is the series system of its modes.
"""

from __future__ import annotations

import dataclasses
from typing import Callable

import numpy as np

from assess.distributions import make_distribution
from assess.errors import InputError
from assess.limit_states.flexure import flexural_capacity
from assess.limit_states.influence import (
    moment_influence,
    shear_influence,
    uniform_moment,
    uniform_shear,
)
from assess.limit_states.load_effects import (
    TRIBUTARY_SHARE,
    load_effect_model_uncertainty,
)
from assess.limit_states.point_loads import VehicleEffect, column_effect, line_effect
from assess.limit_states.punching import punching_capacity
from assess.limit_states.shear import shear_capacity
from assess.model import ProbabilisticModel
from assess.priors import (
    resistance_model_uncertainty,
    self_weight_prior,
    superimposed_dead_prior,
)
from assess.priors.actions import (
    CAR_PARK_VEHICLES,
    car_park_state_count,
    normal_extremes_constants,
    vehicle_weight_maximum_prior,
)
from assess.site.locations import knowledge_at
from assess.updating.to_model import add_uncertain_quantity

SLAB, BEAM, CONNECTION = "one-way slab", "beam", "flat-slab column connection"
_TINY = 1e-9

#: Where the coefficients of continuous members come from.
CONTINUITY_SOURCE = (
    "elastic equal-span continuous beam by the three-moment equation "
    "(assess.limit_states.influence); uniform-load coefficients as Hicks, Civil Engineering "
    "Formulas, Table 2.1 'Uniformly loaded continuous beams over equal spans'; vehicles on the "
    "bays of positive influence only (pattern loading)"
)


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
    faces : dict
        Mode name -> face of the bar layer whose steel it depends on.
    layers : dict
        Face -> (cover variable, area-ratio variable) of that bar layer.
    """

    model: ProbabilisticModel
    modes: dict
    sources: dict
    notes: list
    faces: dict = dataclasses.field(default_factory=dict)
    layers: dict = dataclasses.field(default_factory=dict)

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


def _layer(knowledge, local, member_id: str, face: str) -> tuple[dict, set]:
    """Populations of one bar layer, and the names that came from a local population."""
    merged = knowledge_at(knowledge, local, member_id, face)
    from_local: set = set()
    if local:
        for key in ((None, face), (member_id, face)):
            from_local.update(local.get(key, {}))
    return merged, from_local


@dataclasses.dataclass(frozen=True)
class LoadEffect:
    """Coefficients of one load effect of a member.

    Attributes
    ----------
    permanent : float
        Effect of a unit permanent load: per kN/m (slabs, beams: [m2] for moments,
        [m] for shears) or per kN/m2 (punching: [m2]).
    vehicles : VehicleEffect
        Influence sums of the most adverse bay layout (s1 per kN of vehicle weight).
    where : str
        The section in words.
    top_bars : bool
        True where the tension steel of the section is the top layer.
    """

    permanent: float
    vehicles: VehicleEffect
    where: str
    top_bars: bool = False


def one_way_effects(
    member, *, extreme_factor: float = 3.0, vehicle_cov: float = 0.25, loaded_width_m: float = 1.0
) -> dict:
    """Load-effect coefficients of the sections of a slab strip or beam.

    Simply supported: ``"flexure"`` at midspan, ``"shear"`` at the support.
    Continuous (``member.continuous``, ``span_count`` equal spans; an ``"end"``
    member is the first span, an ``"interior"`` member the middle span
    (n - 1) // 2 + 1 of the run): ``"flexure"`` at 0.4 L of an end span (the
    position of the largest span moment of Hicks Table 2.1) or midspan of an
    interior span, ``"hogging"`` over the span's continuous support with the
    larger uniform-load moment, ``"shear"`` at the support with the larger
    uniform-load shear.

    Permanent coefficients are taken at the support (shear) and at the section
    (moments); vehicles at the section, for shear at d from the support (loads
    nearer the support go to it directly, EN 1992-1-1 6.2.2(6) and 6.2.1(8)).
    """
    length = float(member.span)
    continuous = bool(getattr(member, "continuous", False))
    n = int(member.span_count) if continuous else 1
    end = (not continuous) or member.span_position == "end"
    k = 0 if end else (n - 1) // 2
    run = n * length

    def along(fn):
        return line_effect(
            fn, run, loaded_width_m, vehicle_cov=vehicle_cov, extreme_factor=extreme_factor
        )

    out = {}
    x_sag = 0.4 * length if (continuous and end) else 0.5 * length
    sag = (k, x_sag)
    out["flexure"] = LoadEffect(
        uniform_moment(n, length, sag),
        along(lambda p: moment_influence(n, length, sag, p)),
        f"span {k + 1} of {n} at {x_sag / length:.2f} L",
    )
    if continuous:
        supports = ([(k, 0.0)] if k > 0 else []) + ([(k, length)] if k < n - 1 else [])
        hog = max(supports, key=lambda sec: -uniform_moment(n, length, sec))
        out["hogging"] = LoadEffect(
            -uniform_moment(n, length, hog),
            along(lambda p: -moment_influence(n, length, hog, p)),
            f"{'right' if hog[1] else 'left'} support of span {k + 1} of {n}",
            top_bars=True,
        )
    candidates = []
    for near, at_support in (("left", (k, 0.0)), ("right", (k, length))):
        interior = (near == "left" and k > 0) or (near == "right" and k < n - 1)
        if interior:
            depth = member.depth - member.top_bar_cover - member.top_bar_diameter / 2.0
        else:
            depth = member.depth - member.cover - member.bar_diameter / 2.0
        d_m = min(depth / 1000.0, 0.5 * length)
        section = (k, d_m) if near == "left" else (k, length - d_m)
        candidates.append(
            (uniform_shear(n, length, at_support, near=near), near, section, interior)
        )
    permanent, near, section, interior = max(candidates, key=lambda c: c[0])
    out["shear"] = LoadEffect(
        permanent,
        along(lambda p: shear_influence(n, length, section, p, near=near)),
        f"{near} support of span {k + 1} of {n}"
        + (" (continuous: top bars in tension)" if interior else ""),
        top_bars=interior,
    )
    return out


def build_member_model(
    site,
    member,
    knowledge: dict,
    *,
    reference_period_years: float,
    car_park_use: str = "commercial",
    local=None,
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
    car_park_use : str
        Kind of car park for the vehicle model (keys of ``CAR_PARK_VEHICLES["use"]``).
    local : mapping, optional
        The zone's local populations ``{(member_id or None, face): {name: NormalGamma}}``
        (`assess.site.locations`); None: the zone's populations for every bar layer.
    """
    model = ProbabilisticModel()
    sources: dict[str, str] = {}
    notes: list[str] = []
    continuous = bool(getattr(member, "continuous", False)) and member.kind in (SLAB, BEAM)
    if continuous and getattr(member, "top_tension_steel_area", None) is None:
        raise InputError(
            f"member {member.member_id} is continuous but has no top bars; give "
            "top_bar_diameter with top_bar_spacing or top_steel_area"
        )
    main_face = getattr(member, "tension_face", None) or "bottom"
    main, _ = _layer(knowledge, local, member.member_id, main_face)
    for name, key, kind in (
        ("fc", "concrete", "lognormal"),
        ("fy", "steel", "normal"),
        ("cover", "cover", "normal"),
        ("area_ratio", "area_ratio", "normal"),
    ):
        add_uncertain_quantity(model, name, main[key], kind=kind)
        sources[name] = main[key].source
    layers = {main_face: ("cover", "area_ratio")}
    cover_shift = 0.0
    if continuous:
        top, top_local = _layer(knowledge, local, member.member_id, "top")
        for name, key in (("cover_top", "cover"), ("area_ratio_top", "area_ratio")):
            add_uncertain_quantity(model, name, top[key], kind="normal")
            sources[name] = f"{top[key].source} (top bars)"
        if "cover" not in top_local:
            cover_shift = member.top_bar_cover - member.cover
            if cover_shift:
                notes.append(
                    f"{member.member_id}: no top-face cover population; the top bars "
                    f"take the zone's cover shifted by {cover_shift:+g} mm "
                    "(top_cover - cover)"
                )
        layers["top"] = ("cover_top", "area_ratio_top")

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

    # vehicles: point loads at bay centres (JCSS PMC car parks), most adverse bay layout
    vehicle_cov = float(CAR_PARK_VEHICLES["vehicle_weight_cov"])  # type: ignore[arg-type]
    extreme, _ = normal_extremes_constants(
        car_park_state_count(reference_period_years, car_park_use)
    )

    b = member.width
    h = member.depth
    phi = member.bar_diameter
    area_nominal = member.tension_steel_area

    def permanent_area_load(x):
        return x["self_weight"] + x["superimposed_dead"]

    # Far out in the tails (FORM iterations, subset levels) a normal variable can
    # take non-physical values; clip them to a tiny positive value so that the
    # capacity tends to zero instead of being undefined.
    def steel_area(x, area, ratio):
        return area * np.clip(x[ratio], _TINY, None)

    def yield_strength(x):
        return np.clip(x["fy"], _TINY, None)

    def effective_depth(x, layers=1):
        # one layer: d = h - c - phi/2; two orthogonal layers (flat slabs): mean d = h - c - phi
        return h - x["cover"] - phi * (0.5 if layers == 1 else 1.0)

    def top_effective_depth(x):
        return h - (x["cover_top"] + cover_shift) - member.top_bar_diameter / 2.0

    modes: dict[str, Callable] = {}
    faces: dict[str, str] = {}
    if member.kind in (SLAB, BEAM):
        effect_member = "beam" if member.kind == BEAM else "one_way_slab"
        # width of deck whose area loads the member carries [m]
        width_m = _beam_tributary_width(member) if member.kind == BEAM else b / 1000.0
        effects = one_way_effects(
            member, extreme_factor=extreme, vehicle_cov=vehicle_cov, loaded_width_m=width_m
        )
        if member.shear_reinforcement:
            effects.pop("shear")
        spread = max(e.vehicles.spread for e in effects.values())
        _add_prior(
            model,
            sources,
            "imposed",
            vehicle_weight_maximum_prior(spread, reference_period_years, use=car_park_use),
        )
        theta_m = load_effect_model_uncertainty(effect_member, "moment")
        _add_prior(model, sources, "theta_E_moment", theta_m)
        _add_prior(model, sources, "theta_flexure", resistance_model_uncertainty("flexure"))
        if continuous:
            sources["continuity"] = CONTINUITY_SOURCE
            notes.append(
                f"{member.member_id}: continuous, {member.span_position} span of "
                f"{member.span_count} equal spans; hogging at the "
                f"{effects['hogging'].where}"
            )

        def line_permanent(x):
            return permanent_area_load(x) * width_m + web_line_load

        top_area = member.top_tension_steel_area if continuous else None

        def bars(effect):
            """(steel area [mm2], area-ratio variable, effective depth) of the tension layer."""
            if effect.top_bars:
                return top_area, "area_ratio_top", top_effective_depth
            return area_nominal, "area_ratio", effective_depth

        def make_flexure(effect):
            area, ratio, depth = bars(effect)

            def limit_state(x):
                moment = x["theta_E_moment"] * (
                    line_permanent(x) * effect.permanent + effect.vehicles.s1 * x["imposed"]
                )
                capacity = flexural_capacity(
                    steel_area(x, area, ratio),
                    yield_strength(x),
                    x["fc"],
                    b,
                    np.clip(depth(x), 1.0, None),
                )
                return x["theta_flexure"] * capacity - moment

            return limit_state

        for name in ("flexure", "hogging"):
            if name in effects:
                modes[name] = make_flexure(effects[name])
                faces[name] = "top" if effects[name].top_bars else main_face
        if "shear" in effects:
            theta_v = load_effect_model_uncertainty(effect_member, "shear")
            _add_prior(model, sources, "theta_E_shear", theta_v)
            _add_prior(model, sources, "theta_shear", resistance_model_uncertainty("shear", "mean"))
            shear_effect = effects["shear"]
            shear_area, shear_ratio, shear_depth = bars(shear_effect)
            faces["shear"] = "top" if shear_effect.top_bars else main_face

            def shear(x):
                force = x["theta_E_shear"] * (
                    line_permanent(x) * shear_effect.permanent
                    + shear_effect.vehicles.s1 * x["imposed"]
                )
                capacity = shear_capacity(
                    steel_area(x, shear_area, shear_ratio),
                    x["fc"],
                    b,
                    np.clip(shear_depth(x), 1.0, None),
                )
                return x["theta_shear"] * capacity - force

            modes["shear"] = shear
        else:
            notes.append(
                f"{member.member_id}: has shear reinforcement; shear with stirrups "
                "(EN 1992-1-1 6.2.3) is not modelled and must be checked separately"
            )
        for name in modes:
            notes.append(
                f"{member.member_id} {name} ({effects[name].where}): vehicles on "
                f"{effects[name].vehicles.layout}"
            )
        if member.kind == BEAM and not member.tributary_width:
            notes.append(
                f"{member.member_id}: no tributary_width given; the beam carries only "
                f"its own width ({b:g} mm) of deck load"
            )
    elif member.kind == CONNECTION:
        vehicles = column_effect(
            member.span_x,
            member.span_y,
            member.position,
            vehicle_cov=vehicle_cov,
            extreme_factor=extreme,
        )
        _add_prior(
            model,
            sources,
            "imposed",
            vehicle_weight_maximum_prior(vehicles.spread, reference_period_years, use=car_park_use),
        )
        theta_e = load_effect_model_uncertainty("flat_slab", "reaction")
        _add_prior(model, sources, "theta_E_reaction", theta_e)
        _add_prior(
            model, sources, "theta_punching", resistance_model_uncertainty("punching", "mean")
        )
        c1, c2 = member.column_size
        area_per_m = area_nominal * 1000.0 / b
        tributary = TRIBUTARY_SHARE[member.position] * member.span_x * member.span_y

        def punching(x):
            d = np.clip(effective_depth(x, layers=2), 1.0, None)
            rho = area_per_m * np.clip(x["area_ratio"], _TINY, None) / (1000.0 * d)
            capacity = punching_capacity(
                rho, rho, x["fc"], d, column_c1_mm=c1, column_c2_mm=c2, position=member.position
            )
            reaction = permanent_area_load(x) * tributary + vehicles.s1 * x["imposed"]
            return x["theta_punching"] * capacity - x["theta_E_reaction"] * reaction

        modes["punching"] = punching
        faces["punching"] = main_face
        notes.append(f"{member.member_id} punching: vehicles on {vehicles.layout}")
    else:
        raise InputError(f"unknown member kind {member.kind!r}")
    return MemberModel(
        model=model, modes=modes, sources=sources, notes=notes, faces=faces, layers=layers
    )


def nominal_check(member_model: MemberModel) -> dict:
    """Limit-state values at the median point u = 0 (a quick sanity figure) [kN, kNm]."""
    u = np.zeros((1, member_model.model.dim))
    x = member_model.model.u_to_x(u)
    return {name: float(f(x)[0]) for name, f in member_model.modes.items()}


__all__ = [
    "CONTINUITY_SOURCE",
    "LoadEffect",
    "MemberModel",
    "build_member_model",
    "loaded_area",
    "nominal_check",
    "one_way_effects",
]
