"""Remaining-life curves of every member of the demo car park, with wall times.

Run: ``python benchmarks/life_demo.py [--horizon 50] [--samples 6000] [--seed 20261202]
[--site PATH]``

The demo site is copied to a temporary folder and imported; the materials and the
corrosion initiation time and rate are updated with --quick-sized MCMC (stored
posteriors are reused on a second run with ``--site`` pointing at a prepared copy).
The table gives, per member, the governing mode, the annual beta now and at the
horizon, the remaining life against the annual target with its band, and the
largest CoV of the yearly estimates. The wall time of the projection alone (the
part this benchmark measures; target <= 60 s warm on 2 cores) is printed apart
from the MCMC time. A subset-simulation cross-check of the system beta of the
first member at the assessment date and at the horizon closes the run.
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def prepare(site_folder: Path | None) -> Path:
    from inspection_io.importing import import_site

    if site_folder is not None:
        return site_folder
    folder = Path(tempfile.mkdtemp(prefix="life-demo-")) / "tanners-yard"
    shutil.copytree(DEMO, folder)
    import_site(folder)
    return folder


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--horizon", type=float, default=50.0)
    parser.add_argument("--samples", type=int, default=6000)
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--site", type=Path, default=None,
                        help="An imported copy of the demo site (reuses its posteriors).")
    args = parser.parse_args()
    warnings.filterwarnings("ignore")

    from assess.site.corrosion import update_corrosion, zone_corrosion_inputs
    from assess.site.materials import update_site
    from assess.site.projection import governing_curves, project_member, project_site
    from assess.site.settings import RunSettings
    from inspection_io.site import load_site

    folder = prepare(args.site)
    site = load_site(folder)
    start = time.perf_counter()
    settings = RunSettings(seed=args.seed, quick=True)
    update = update_site(site, settings=settings)
    fit = update_corrosion(site, settings=settings)
    corrosion = zone_corrosion_inputs(site, fit, seed=args.seed)
    mcmc_time = time.perf_counter() - start
    print(f"site: {folder}")
    print(f"MCMC (materials {'reused' if update.reused else 'sampled'}; corrosion): "
          f"{mcmc_time:.1f} s")
    for zone, c in corrosion.items():
        print(f"  zone {zone}: t_i median {c.initiation_median:6.1f} yr (log-sd "
              f"{c.initiation_log_sd:.2f}), i_corr median {c.rate_median:.3f} uA/cm2 "
              f"(log-sd {c.rate_log_sd:.2f}), copula rho {c.log_correlation:+.2f} [{c.origin}]")

    start = time.perf_counter()
    curves = project_site(site, update, corrosion=corrosion, horizon_years=args.horizon,
                          n_samples=args.samples, seed=args.seed)
    projection_time = time.perf_counter() - start
    main_curves = governing_curves(curves)
    target = main_curves[0].target
    print(f"\nAnnual beta(t) against the annual target {target.beta} ({target.source})")
    print(f"{'member':8} {'governing':10} {'beta now':>8} {'beta end':>8} {'max CoV':>7}  "
          "remaining life (band)")
    for c in main_curves:
        print(f"{c.member:8} {c.governing_mode:10} {c.beta[0]:8.2f} {c.beta[-1]:8.2f} "
              f"{np.nanmax(c.cov):7.3f}  {c.remaining_life.text()}")
    n_calls = sum(c.n_calls for c in main_curves)
    print(f"\nprojection of {len(site.members)} members, {len(curves)} curves, "
          f"{args.horizon:g} years, {args.samples} samples each: {projection_time:.1f} s wall "
          f"({n_calls} limit-state evaluations)")

    first = main_curves[0].member
    start = time.perf_counter()
    checked = project_member(site, first, update, corrosion=corrosion,
                             horizon_years=args.horizon, n_samples=args.samples, seed=args.seed,
                             check_years=(0.0, args.horizon))[-1]
    for check in checked.checks:
        print(f"cross-check {first} at +{check['years_from_assessment']:g} yr: importance "
              f"sampling beta {check['beta_importance_sampling']:.3f}, subset simulation "
              f"{check['beta_subset_simulation']:.3f} (CoV {check['cov_subset_simulation']:.2f}), "
              f"agree within 3 CoV: {check['agree_within_3_cov']}")
    print(f"cross-check time {time.perf_counter() - start:.1f} s")


if __name__ == "__main__":
    main()
