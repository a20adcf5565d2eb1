"""Member mechanics on the demo site's design knowledge: modes, load coefficients, betas, targets.

Run: ``python benchmarks/member_mechanics.py [--site PATH] [--continuous]``

For every member of the site (design priors, no test data, annual reference
period) the table gives each mode with its permanent-load coefficient, the
vehicle influence sum s1 of the most adverse bay layout and its spread
k = sqrt(s2)/s1, the median-point margin, the FORM beta (one design point) and the
mode's target (`assess.targets.mode_target`), with the time to build the member
model (the bay-layout search) and the time of the FORMs. ``--continuous`` also
runs every slab and beam as the end span of three equal continuous spans with
top bars equal to its bottom bars (invented variant, to see the hogging mode).
"""

from __future__ import annotations

import argparse
import dataclasses
import sys
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.priors.actions import (  # noqa: E402
    CAR_PARK_VEHICLES,
    car_park_state_count,
    normal_extremes_constants,  # noqa: E402
)
from assess.reliability.form import form  # noqa: E402
from assess.site.knowledge import design_knowledge  # noqa: E402
from assess.site.member_models import (  # noqa: E402
    build_member_model,
    nominal_check,
    one_way_effects,
)
from assess.targets import mode_target, target_beta  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def _variants(site, continuous: bool):
    for member in site.members.values():
        yield member
        if continuous and member.kind in ("one-way slab", "beam"):
            yield dataclasses.replace(
                member, member_id=f"{member.member_id}*", continuous=True, span_count=3,
                span_position="end", top_bar_diameter=member.bar_diameter,
                top_bar_spacing=member.bar_spacing, top_steel_area=member.steel_area)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--site", type=Path, default=DEMO)
    parser.add_argument("--continuous", action="store_true")
    args = parser.parse_args()
    site = load_site(args.site)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        knowledge = design_knowledge(site)
    target = target_beta(site.target.consequence_class, 1.0, site.target.cost_of_safety)
    extreme, _ = normal_extremes_constants(car_park_state_count(1.0))
    print(f"{'member':10s} {'mode':9s} {'C perm':>8s} {'s1':>7s} {'k':>5s} {'margin':>9s} "
          f"{'beta':>6s} {'target':>6s} {'build s':>8s} {'FORM s':>7s}")
    for member in _variants(site, args.continuous):
        start = time.perf_counter()
        model = build_member_model(site, member, knowledge[member.zone],
                                   reference_period_years=1.0)
        built = time.perf_counter() - start
        effects = {}
        if member.kind in ("one-way slab", "beam"):
            width = (member.tributary_width or member.width / 1000.0) if member.kind == "beam" \
                else member.width / 1000.0
            effects = one_way_effects(member, extreme_factor=extreme,
                                      vehicle_cov=CAR_PARK_VEHICLES["vehicle_weight_cov"],
                                      loaded_width_m=width)
        margins = nominal_check(model)
        for mode in model.modes:
            start = time.perf_counter()
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                beta = form(model.problem([mode])).beta
            spent = time.perf_counter() - start
            effect = effects.get(mode)
            perm = f"{effect.permanent:8.3f}" if effect else f"{'-':>8s}"
            s1 = f"{effect.vehicles.s1:7.3f}" if effect else f"{'-':>7s}"
            k = f"{effect.vehicles.spread:5.2f}" if effect else f"{'-':>5s}"
            print(f"{member.member_id:10s} {mode:9s} {perm} {s1} {k} {margins[mode]:9.1f} "
                  f"{beta:6.2f} {mode_target(mode, target).beta:6.2f} {built:8.2f} {spent:7.2f}")


if __name__ == "__main__":
    main()
