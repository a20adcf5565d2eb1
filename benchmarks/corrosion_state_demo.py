"""Today's corrosion state of the demo site per zone and face, and the pitting notes.

Prints one table row per zone and face: where today's state comes from (break-outs on
that face or the corrosion model), the mean area ratio today from the member models'
population, the measured pitting factors and the updated Gumbel location, then one row
per member: whether pitting or uniform loss governs today and at the horizon. With
``--fit`` the corrosion inputs are the posterior of the site's fits (MCMC, minutes);
without, the corrosion priors (Monte Carlo only).

    python benchmarks/corrosion_state_demo.py [--fit] [--seed N]
"""

from __future__ import annotations

import argparse
import os
import shutil
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
DEMO = HERE.parent / "demo_sites" / "tanners-yard"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--fit", action="store_true", help="use the corrosion posterior")
    parser.add_argument("--seed", type=int, default=20261202)
    args = parser.parse_args()
    os.environ.setdefault("ASSESS_MCMC_CORES", "1")
    warnings.simplefilter("ignore")

    from assess.site.corrosion import update_corrosion, zone_corrosion_inputs
    from assess.site.corrosion_state import (
        face_members,
        pitting_note,
        present_state,
    )
    from assess.site.knowledge import predictive_draws
    from assess.site.locations import knowledge_at
    from assess.site.materials import update_site
    from assess.site.settings import RunSettings
    from inspection_io.importing import import_site
    from inspection_io.site import load_site

    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "tanners-yard"
        shutil.copytree(DEMO, folder)
        import_site(folder)
        site = load_site(folder)
        settings = RunSettings(seed=args.seed, quick=True)
        start = time.perf_counter()
        update = update_site(site, settings=settings)
        t_materials = time.perf_counter() - start
        fit = update_corrosion(site, settings=settings) if args.fit else None
        inputs = zone_corrosion_inputs(site, fit, seed=args.seed)
        start = time.perf_counter()
        present, state = present_state(site, update, inputs, seed=args.seed)
        t_state = time.perf_counter() - start

        print(f"materials update {t_materials:.1f} s; present state {t_state:.2f} s")
        print(f"corrosion inputs: {'posterior (--fit)' if fit else 'priors'}")
        print()
        header = (
            f"{'zone':4} {'face':6} {'today from':16} {'n bo':>4} {'A/A0 zone':>9} "
            f"{'A/A0 today':>10} {'R measured':>18} {'mu_R':>5} {'t_i,q/t_i':>9}"
        )
        print(header)
        print("-" * len(header))
        for (zone, face), fs in state.items():
            members = face_members(site, zone, face)
            if not members:
                continue
            m = members[0]
            zone_pop = update.after[zone]["area_ratio"]
            today = knowledge_at(
                update.after[zone], present.after_local.get(zone), m.member_id, face
            )["area_ratio"]
            factors = np.array(fs.pit_factors)
            r_text = f"{factors.mean():.2f} (n={factors.size})" if factors.size else "-"
            mu = f"{fs.pitting.location_mean:.2f}" if fs.pitting is not None else "off"
            print(
                f"{zone:4} {face:6} {'break-outs' if fs.measured else 'corrosion model':16} "
                f"{fs.breakouts:>4d} {predictive_draws(zone_pop, False).mean():>9.3f} "
                f"{predictive_draws(today, False).mean():>10.3f} {r_text:>18} {mu:>5} "
                f"{fs.inputs.local_factor:>9.3f}"
            )
        print()
        print(
            f"{'member':7} {'face':6} {'pitting':7} {'unif now':>8} {'pit now':>8} "
            f"{'unif 50y':>8} {'pit 50y':>8}  governs now / at 50 yr"
        )
        for member_id, member in site.members.items():
            face = getattr(member, "tension_face", "bottom")
            note = pitting_note(site, member, state[(member.zone, face)], 50.0, seed=args.seed)
            if not note["pitting"]:
                print(f"{member_id:7} {face:6} {'off':7}")
                continue
            print(
                f"{member_id:7} {face:6} {'on':7} {note['uniform_loss_now']:>8.3f} "
                f"{note['pit_loss_now']:>8.3f} {note['uniform_loss_horizon']:>8.3f} "
                f"{note['pit_loss_horizon']:>8.3f}  "
                f"{'pitting' if note['pitting_governs_now'] else 'uniform'} / "
                f"{'pitting' if note['pitting_governs_horizon'] else 'uniform'}"
            )


if __name__ == "__main__":
    main()
