"""Design check of the invented demo members to the code of their time (1974).

The demo car park is taken as designed in 1974 to the limit-state rules of the
British code of that time, CP 110:1972, in simplified form. Every rule below is
stated from memory (the code text was not at hand), so each carries its source
and "(from memory)"; where CP 110's own table could not be stated reliably, the
closed form of its successor BS 8110-1 is used and named.

Actions (CP 110:1972 Table 1 partial safety factors for the ultimate limit state,
from memory): design load = gamma_f,g g_k + gamma_f,q q_k with gamma_f,g = 1.4
(dead) and gamma_f,q = 1.6 (imposed). Characteristic loads are those of the
site file: self-weight at 25 kN/m3, superimposed dead 1.2 kN/m2 and the car-park
imposed load 2.5 kN/m2 (CP 3 Chapter V Part 1 for cars of at most 2.5 t, from
memory; the same 2.5 kN/m2 as EN 1991-1-1 category F).

Materials (CP 110:1972 3.3.5 and Table 2, from memory): gamma_m = 1.5 for
concrete in flexure, 1.15 for the reinforcement (0.87 f_y). Concrete class C30
of the site file is taken as C30/37, i.e. characteristic cube strength
f_cu = 37 MPa; high-yield bars f_y = 410 MPa (the S410 of the site file); mild
steel links f_yv = 250 MPa.

Load effects
    Simply supported: M = F L / 8, V = F / 2 (F = w L, the design load on a span).
    Continuous, equal spans, q_k <= g_k (true here): the moment and shear
    coefficients of BS 8110-1:1997 Table 3.5 (beams) and Table 3.12 (one-way
    slabs), which continue those of CP 110:1972 (from memory):

    - end support: shear 0.45 F (beams), 0.4 F (slabs);
    - near middle of end span: +0.09 F L (beams), +0.086 F L (slabs);
    - first interior support: -0.11 F L and 0.6 F (beams), -0.086 F L and 0.6 F (slabs);
    - middle of interior spans: +0.07 F L (beams), +0.063 F L (slabs);
    - interior supports: -0.08 F L and 0.55 F (beams), -0.063 F L and 0.5 F (slabs).

    An "end" span is checked at its end and first interior supports; an
    "interior" span at its supports, taken as first interior supports when the
    run has fewer than five spans (every interior span then touches one).
    Over the supports the top bars are designed without redistribution (crack
    control on a salted deck top): the hogging moment is the larger of the table
    value and the elastic support moment with every span carrying the full design
    load (CP 110:1972 3.2.1.2.2 load arrangement (a), from memory), from
    Clapeyron's three-moment equation for equal spans,
    M_(i-1) + 4 M_i + M_(i+1) = -w L^2 / 2, M_0 = M_n = 0
    (3 spans: -0.100 w L^2, 4 spans: -0.107 w L^2 at the first interior support).

Flexure (CP 110:1972 3.3.5.3, simplified rectangular stress block, from memory)
    z = d (1 - 1.1 f_y A_s / (f_cu b d)) <= 0.95 d,
    M_u = min(0.87 f_y A_s z, 0.15 f_cu b d^2).
    Beams are checked on their web width (the flange is left out: conservative
    in sagging, exact in hogging).

Shear without shear reinforcement
    v = V / (b d) <= v_c with the design concrete shear stress of BS 8110-1:1997
    Table 3.8 in closed form (from memory; CP 110:1972 Table 5 tabulates the
    same kind of values, which could not be stated reliably):
    v_c = 0.79 (100 A_s / (b d))^(1/3) (400 / d)^(1/4) / 1.25 * (f_cu / 25)^(1/3),
    100 A_s / (b d) <= 3, 400 / d >= 1, f_cu <= 40 MPa. A_s is the tension steel
    at that support (bottom bars at a simple support, top bars over a
    continuous support).

Shear with links (beams): v <= v_c + A_sv 0.87 f_yv / (b s_v) (CP 110:1972
    3.3.6.1 and BS 8110-1 3.4.5.3, from memory).

Punching (CP 110:1972 3.4.5, from memory): critical perimeter at 1.5 h from the
    column faces (rectangular), u = 2 (c1 + c2) + 8 (1.5 h) for an interior and
    (c2 + 2 a) + 2 (c1 + a), a = 1.5 h, for an edge column (c1 normal to the
    edge); the column reaction V = w * share * l_x * l_y (share 1 interior,
    0.5 edge) is raised for moment transfer to 1.15 V (interior) and 1.25 V
    (edge) (BS 8110-1:1997 3.7.6.2-3, from memory); v = V_eff / (u d) <= v_c with
    d the mean effective depth of the two top layers and A_s the top steel.

Utilisation = design effect / design resistance [-]; at most 1 means the member
satisfies the code of its time. The module uses the standard library only.
"""

from __future__ import annotations

import math

#: CP 110:1972 partial factors on loads at the ultimate limit state (from memory) [-].
GAMMA_F_DEAD = 1.4
GAMMA_F_IMPOSED = 1.6
#: CP 110:1972 partial factors on materials (from memory) [-] (enter the formulas below as
#: 0.87 = 1 / 1.15 on steel; the 0.45 f_cu stress block = 0.67 f_cu / 1.5).
GAMMA_M_CONCRETE = 1.5
GAMMA_M_STEEL = 1.15
#: Characteristic cube strength of C30/37 [MPa], high-yield and mild steel [MPa].
F_CU = 37.0
F_Y = 410.0
F_YV = 250.0
#: BS 8110-1 Table 3.8 expression (from memory): gamma_m of the shear stress [-].
GAMMA_M_SHEAR = 1.25

#: Moment (+ sagging, - hogging) and shear coefficients of F L and F (BS 8110-1:1997
#: Tables 3.5 and 3.12, continuing CP 110:1972; from memory).
COEFFICIENTS = {
    "beam": {"end_support_shear": 0.45, "end_span": 0.09, "first_interior": -0.11,
             "first_interior_shear": 0.6, "interior_span": 0.07, "interior": -0.08,
             "interior_shear": 0.55},
    "one-way slab": {"end_support_shear": 0.4, "end_span": 0.086, "first_interior": -0.086,
                     "first_interior_shear": 0.6, "interior_span": 0.063, "interior": -0.063,
                     "interior_shear": 0.5},
}
#: Raise of a column reaction for moment transfer (BS 8110-1:1997 3.7.6.2-3, from memory).
PUNCHING_ENHANCEMENT = {"interior": 1.15, "edge": 1.25, "corner": 1.25}
#: Share of the bay span_x x span_y carried by a column [-] (the library's TRIBUTARY_SHARE).
TRIBUTARY_SHARE = {"interior": 1.0, "edge": 0.5, "corner": 0.25}


def bar_area(diameter: float) -> float:
    """Area of one bar [mm2] from its diameter [mm]."""
    return math.pi * diameter ** 2 / 4.0


def flexural_resistance(steel_area: float, width: float, depth: float,
                        f_cu: float = F_CU, f_y: float = F_Y) -> float:
    """Design moment of resistance M_u [kNm] (CP 110:1972 3.3.5.3, from memory).

    steel_area [mm2], width b [mm], effective depth d [mm], f_cu, f_y [MPa].
    """
    z = min(depth * (1.0 - 1.1 * f_y * steel_area / (f_cu * width * depth)), 0.95 * depth)
    steel = 0.87 * f_y * steel_area * z
    concrete = 0.15 * f_cu * width * depth ** 2
    return min(steel, concrete) / 1.0e6


def concrete_shear_stress(steel_area: float, width: float, depth: float,
                          f_cu: float = F_CU) -> float:
    """Design shear stress of concrete v_c [MPa] (BS 8110-1:1997 Table 3.8, from memory)."""
    ratio = min(100.0 * steel_area / (width * depth), 3.0)
    size = max(400.0 / depth, 1.0) ** 0.25
    return 0.79 * ratio ** (1.0 / 3.0) * size / GAMMA_M_SHEAR * (min(f_cu, 40.0) / 25.0) ** (1 / 3)


def characteristic_loads(spec: dict, loads: dict) -> tuple[float, float]:
    """Dead g_k and imposed q_k on a member [kN/m] (slabs per metre width, beams per beam)."""
    unit_weight, finishes, imposed = (loads["concrete_unit_weight"], loads["superimposed_dead"],
                                      loads["imposed_characteristic"])
    if spec["kind"] == "beam":
        slab = spec.get("slab_depth", spec["depth"])
        width = spec.get("tributary_width", spec["width"] / 1000.0)
        web = unit_weight * spec["width"] / 1000.0 * (spec["depth"] - slab) / 1000.0
        return (unit_weight * slab / 1000.0 + finishes) * width + web, imposed * width
    width = spec.get("width", 1000.0) / 1000.0
    return (unit_weight * spec["depth"] / 1000.0 + finishes) * width, imposed * width


def design_load(spec: dict, loads: dict) -> float:
    """Design load w = 1.4 g_k + 1.6 q_k [kN/m] (kN/m2 for column connections)."""
    if spec["kind"] == "flat-slab column connection":
        spec = dict(spec, width=1000.0)
    g, q = characteristic_loads(spec, loads)
    return GAMMA_F_DEAD * g + GAMMA_F_IMPOSED * q


def elastic_support_moments(span_count: int) -> list[float]:
    """Support moments of ``span_count`` equal spans under a UDL, in units of w L^2 [-].

    Clapeyron's three-moment equation M_(i-1) + 4 M_i + M_(i+1) = -1/2 at the inner
    supports, M_0 = M_n = 0 (hogging negative); returns M_1 ... M_(n-1).
    """
    n = span_count - 1
    # tridiagonal solve (Thomas algorithm) of [1 4 1] M = -1/2
    diagonal, rhs = [4.0] * n, [-0.5] * n
    for i in range(1, n):
        factor = 1.0 / diagonal[i - 1]
        diagonal[i] -= factor
        rhs[i] -= factor * rhs[i - 1]
    moments = [0.0] * n
    for i in range(n - 1, -1, -1):
        moments[i] = (rhs[i] - (moments[i + 1] if i + 1 < n else 0.0)) / diagonal[i]
    return moments


def _effects(spec: dict, w: float) -> dict:
    """Design sagging and hogging moments [kNm] and support shears [kN] of a slab or beam."""
    span = spec["span"]
    total = w * span
    if not spec.get("continuous", False):
        return {"sagging": total * span / 8.0, "hogging": 0.0,
                "shear_bottom": total / 2.0, "shear_top": 0.0}
    c = COEFFICIENTS[spec["kind"]]
    # no redistribution over the supports: at least the elastic moment, all spans loaded
    elastic = -min(elastic_support_moments(spec["span_count"])) * w * span ** 2
    if spec["span_position"] == "end":
        return {"sagging": c["end_span"] * total * span,
                "hogging": max(-c["first_interior"] * total * span, elastic),
                "shear_bottom": c["end_support_shear"] * total,
                "shear_top": c["first_interior_shear"] * total}
    first = spec["span_count"] < 5
    return {"sagging": c["interior_span"] * total * span,
            "hogging": max(-c["first_interior" if first else "interior"] * total * span,
                           elastic),
            "shear_bottom": 0.0,
            "shear_top": c["first_interior_shear" if first else "interior_shear"] * total}


def _bottom_steel(spec: dict) -> float:
    if "steel_area" in spec:
        return spec["steel_area"]
    return bar_area(spec["bar_diameter"]) * spec.get("width", 1000.0) / spec["bar_spacing"]


def _top_steel(spec: dict) -> float:
    if "top_steel_area" in spec:
        return spec["top_steel_area"]
    return bar_area(spec["top_bar_diameter"]) * spec.get("width", 1000.0) / spec["top_bar_spacing"]


def _row(effect: float, resistance: float, unit: str) -> dict:
    return {"effect": round(effect, 1), "resistance": round(resistance, 1), "unit": unit,
            "utilisation": round(effect / resistance, 3)}


def check_member(spec: dict, loads: dict, links: dict | None = None) -> dict:
    """Design check of one member: mode -> effect, resistance and utilisation.

    Parameters
    ----------
    spec : dict
        The member's site-file keys (lengths [mm], spans [m], steel areas [mm2]).
    loads : dict
        The site file's ``[loads]`` table (kN/m2, kN/m3).
    links : dict, optional
        Beams with shear reinforcement: ``legs``, ``diameter`` [mm], ``spacing`` [mm].

    Returns
    -------
    dict
        Mode ("flexure sagging", "flexure hogging", "shear", "punching") ->
        ``{"effect", "resistance", "unit", "utilisation"}``.
    """
    w = design_load(spec, loads)
    if spec["kind"] == "flat-slab column connection":
        h, c1, c2 = spec["depth"], *spec["column_size"]
        d = h - spec["cover"] - spec["bar_diameter"]           # mean of the two top layers
        a = 1.5 * h
        if spec["position"] == "interior":
            perimeter = 2.0 * (c1 + c2) + 8.0 * a
        else:
            perimeter = (c2 + 2.0 * a) + 2.0 * (c1 + a)
        reaction = w * TRIBUTARY_SHARE[spec["position"]] * spec["span_x"] * spec["span_y"]
        v_eff = PUNCHING_ENHANCEMENT[spec["position"]] * reaction
        steel = _bottom_steel(spec)                            # the top bars of this member
        resistance = concrete_shear_stress(steel, 1000.0, d) * perimeter * d / 1000.0
        return {"punching": _row(v_eff, resistance, "kN")}

    b, h = spec["width"], spec["depth"]
    d_bottom = h - spec["cover"] - spec["bar_diameter"] / 2.0
    effects = _effects(spec, w)
    out = {"flexure sagging": _row(effects["sagging"],
                                   flexural_resistance(_bottom_steel(spec), b, d_bottom), "kNm")}
    shear_rows = []
    if effects["shear_bottom"] > 0.0:
        shear_rows.append((effects["shear_bottom"], _bottom_steel(spec), d_bottom))
    if spec.get("continuous", False):
        d_top = h - spec["top_cover"] - spec["top_bar_diameter"] / 2.0
        out["flexure hogging"] = _row(effects["hogging"],
                                      flexural_resistance(_top_steel(spec), b, d_top), "kNm")
        shear_rows.append((effects["shear_top"], _top_steel(spec), d_top))
    worst = None
    for shear, steel, d in shear_rows:
        stress = concrete_shear_stress(steel, b, d)
        if links is not None:
            stress += (links["legs"] * bar_area(links["diameter"]) * 0.87 * F_YV
                       / (b * links["spacing"]))
        row = _row(shear, stress * b * d / 1000.0, "kN")
        if worst is None or row["utilisation"] > worst["utilisation"]:
            worst = row
    out["shear with links" if links is not None else "shear"] = worst
    return out


def check_all(members: dict, loads: dict, links: dict | None = None) -> dict:
    """`check_member` for every member: member id -> mode -> row."""
    links = links or {}
    return {m: check_member(spec, loads, links.get(m)) for m, spec in members.items()}


def utilisation_table(results: dict) -> str:
    """Plain-text table: member, mode, design effect, resistance, utilisation."""
    lines = [f"{'member':8s} {'mode':18s} {'effect':>9s} {'resistance':>11s} {'unit':4s} "
             f"{'utilisation':>11s}"]
    for member, modes in results.items():
        for mode, row in modes.items():
            lines.append(f"{member:8s} {mode:18s} {row['effect']:9.1f} {row['resistance']:11.1f} "
                         f"{row['unit']:4s} {row['utilisation']:11.3f}")
    return "\n".join(lines)


__all__ = ["F_CU", "F_Y", "F_YV", "GAMMA_F_DEAD", "GAMMA_F_IMPOSED", "bar_area", "check_all",
           "check_member", "concrete_shear_stress", "design_load", "flexural_resistance",
           "utilisation_table"]
