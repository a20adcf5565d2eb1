"""Design-check screen of the site file: is each member's design resistance near its load?

A member whose design resistance is far below its design load effect in the site file
is more likely an input error (a steel area in the wrong unit, a missing bar layer, a
span in mm) than a real structure standing for decades; its beta is then not worth
updating until the input is checked. The screen is a plain partial-factor check:

- design load effect (EN 1990:2002 eq. 6.10, Table A1.2(B), recommended values):
  M_Ed = (gamma_G g_k b_t + gamma_G w_web + gamma_Q q_k b_t) L^2 / 8,
  gamma_G = 1.35, gamma_Q = 1.5, with g_k = concrete unit weight x slab depth +
  superimposed dead load [kN/m2], q_k the imposed load of the site file [kN/m2],
  b_t the width of deck the member carries [m] and L the span [m] (simply supported);
- design resistance (EN 1992-1-1:2004 3.1.7(3) rectangular stress block, lambda = 0.8,
  eta = 1; material factors gamma_c = 1.5, gamma_s = 1.15 of Table 2.1N; alpha_cc = 1):
  x = A_s f_yd / (0.8 b f_cd), z = d - 0.4 x, M_Rd = A_s f_yd z, d = h - c - phi / 2.

Only flexure of one-way slabs and beams is screened; flat-slab column connections
(punching) are not. A ratio M_Rd / M_Ed below `RATIO_LIMIT` is pointed out.
"""

from __future__ import annotations

import dataclasses
import math

from assess.priors.concrete import parse_concrete_class
from assess.priors.steel import parse_steel_grade
from assess.site.member_models import BEAM, SLAB

GAMMA_G, GAMMA_Q = 1.35, 1.5
"""Partial factors for permanent and variable actions, EN 1990 Table A1.2(B) [-]."""
GAMMA_C, GAMMA_S = 1.5, 1.15
"""Partial factors for concrete and reinforcing steel, EN 1992-1-1 Table 2.1N [-]."""
RATIO_LIMIT = 0.7
"""M_Rd / M_Ed below this is pointed out as "far below" (our choice: 30 % short) [-]."""


@dataclasses.dataclass(frozen=True)
class DesignCheck:
    """Design flexural check of one member.

    Attributes
    ----------
    member : str
    moment_design_load [kNm], moment_design_resistance [kNm], ratio [-]
    """

    member: str
    moment_design_load: float
    moment_design_resistance: float
    ratio: float

    @property
    def far_below(self) -> bool:
        return self.ratio < RATIO_LIMIT

    def message(self) -> str:
        return (
            f"member {self.member}: design bending resistance M_Rd = "
            f"{self.moment_design_resistance:.0f} kNm is only {self.ratio:.0%} of the design "
            f"moment M_Ed = {self.moment_design_load:.0f} kNm (EN 1990 eq. 6.10 with 1.35 / "
            f"1.5); check its steel area, bar spacing, depth and span in the site file "
            f"before relying on its reliability index"
        )


def flexure_design_check(site, member) -> DesignCheck | None:
    """`DesignCheck` of a one-way slab or beam (None for other kinds)."""
    if member.kind not in (SLAB, BEAM) or not member.span:
        return None
    unit_weight = site.loads.concrete_unit_weight
    slab_depth = member.slab_depth if (member.kind == BEAM and member.slab_depth) else member.depth
    web = 0.0
    if member.kind == BEAM and member.slab_depth:
        web = unit_weight * member.width / 1000.0 * (member.depth - member.slab_depth) / 1000.0
    if member.kind == BEAM:
        carried = member.tributary_width if member.tributary_width else member.width / 1000.0
    else:
        carried = member.width / 1000.0
    permanent = unit_weight * slab_depth / 1000.0 + site.loads.superimposed_dead
    imposed = site.loads.imposed_characteristic
    line = GAMMA_G * (permanent * carried + web) + GAMMA_Q * imposed * carried
    moment_ed = line * member.span**2 / 8.0
    fcd = parse_concrete_class(site.materials.concrete_class) / GAMMA_C
    fyd = parse_steel_grade(site.materials.steel_grade) / GAMMA_S
    area = member.tension_steel_area
    d = member.depth - member.cover - member.bar_diameter / 2.0
    x = area * fyd / (0.8 * member.width * fcd)
    moment_rd = max(area * fyd * (d - 0.4 * x), 0.0) / 1e6
    ratio = moment_rd / moment_ed if moment_ed > 0 else math.inf
    return DesignCheck(member.member_id, moment_ed, moment_rd, ratio)


def design_check_site(site) -> list[DesignCheck]:
    """`flexure_design_check` of every member that has one, in site-file order."""
    checks = (flexure_design_check(site, m) for m in site.members.values())
    return [c for c in checks if c is not None]


def design_check_warnings(site) -> list[str]:
    """Messages for the members whose design resistance is far below their design load."""
    return [c.message() for c in design_check_site(site) if c.far_below]


__all__ = [
    "DesignCheck",
    "RATIO_LIMIT",
    "design_check_site",
    "design_check_warnings",
    "flexure_design_check",
]
