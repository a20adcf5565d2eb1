"""Beta of every demo member with the zone's cover and with the cover of its own bar layer.

Run:  ASSESS_MCMC_CORES=1 python benchmarks/cover_layers_demo.py [--quick]

Works on a temporary copy of demo_sites/tanners-yard. For each member and mode, FORM
betas before (design priors) and after (site update) with the cover population of the
member's zone (what the member models read so far) and with that of the member's
tension-face bar layer (`assess.site.locations.knowledge_at` on
``SiteUpdate.before_local`` / ``after_local``). Prints a table and the time of the update.
"""

from __future__ import annotations

import math
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main(quick: bool) -> None:
    from assess.reliability import run_method
    from assess.site.locations import knowledge_at
    from assess.site.materials import update_site
    from assess.site.member_models import build_member_model
    from assess.site.settings import RunSettings
    from inspection_io.importing import import_site
    from inspection_io.site import load_site

    warnings.simplefilter("ignore")
    with tempfile.TemporaryDirectory() as root:
        folder = Path(root) / "tanners-yard"
        shutil.copytree(DEMO, folder)
        import_site(folder)
        site = load_site(folder)
        start = time.perf_counter()
        update = update_site(site, settings=RunSettings(quick=quick))
        seconds = time.perf_counter() - start
        period = float(site.target.reference_period)
        print(f"materials update ({'quick' if quick else 'default'} settings): {seconds:.1f} s, "
              f"gate passed: {update.gate.passed if update.gate else None}")
        header = ("member", "mode", "face", "cover zone/layer before [mm]",
                  "beta before zone", "beta before layer", "beta after zone", "beta after layer")
        print(" | ".join(header))
        for member_id, member in site.members.items():
            face = member.tension_face
            rows = {}
            covers = []
            for state, zone_k, local in (("before", update.before, update.before_local),
                                         ("after", update.after, update.after_local)):
                zone = zone_k[member.zone]
                layer = knowledge_at(zone, local.get(member.zone), member_id, face)
                covers.append((math.exp(zone["cover"].m), math.exp(layer["cover"].m)))
                for which, knowledge in (("zone", zone), ("layer", layer)):
                    model = build_member_model(site, member, knowledge,
                                               reference_period_years=period)
                    for mode in model.modes:
                        result = run_method(model.problem([mode]), "form")
                        rows.setdefault(mode, {})[(state, which)] = result.beta
            for mode, betas in rows.items():
                print(" | ".join([
                    member_id, mode, face, f"{covers[0][0]:.1f}/{covers[0][1]:.1f}",
                    *(f"{betas[(s, w)]:.2f}" for s in ("before", "after")
                      for w in ("zone", "layer")),
                ]))


if __name__ == "__main__":
    main("--quick" in sys.argv)
