"""How much the half-cell readings move the demo's initiation times, and how honestly.

Run: ``python benchmarks/halfcell_evidence.py [--seed 20261202] [--site PATH]``

The demo site is copied to a temporary folder and imported; chloride, carbonation and
corrosion are fitted with --quick-sized MCMC (a second run with ``--site`` reuses the
stored posteriors). Four corrosion fits are compared per zone:

- ``tempered``: the default, each survey weighted by n_eff / n (correlation length 1 m,
  readings placed on a 0.5 m grid when they carry no coordinates);
- ``independent``: every reading counted as independent (correlation length 1e-6 m), the
  behaviour before the weighting;
- ``4x finer grid``: every reading duplicated at the four points of a grid of half the
  spacing over the same area (tempered); it should barely narrow t_i;
- ``active -50 mV``: the tempered fit with the active-state mean 50 mV more negative.

The table gives the posterior median and 90 % interval of t_i [yr], the sd of ln t_i,
the readings and their effective number, and (tempered) the t_i median without the
half-cell readings (importance reweighting). The run-time family check of the materials
update closes the run.
"""

from __future__ import annotations

import argparse
import dataclasses
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
    folder = Path(tempfile.mkdtemp(prefix="halfcell-demo-")) / "tanners-yard"
    shutil.copytree(DEMO, folder)
    import_site(folder)
    return folder


def finer_grid(half_cell, spacing=0.5):
    """Every reading four times, at the corners of a grid of half the spacing."""
    from assess.updating.corrosion import HalfCellData
    from assess.updating.spatial import grid_coordinates

    zone = np.asarray(half_cell.zone_index)
    age = np.asarray(half_cell.age_years)
    x = np.full(zone.size, np.nan)
    y = np.full(zone.size, np.nan)
    for key in {(z, a) for z, a in zip(zone.tolist(), age.tolist())}:
        members = np.flatnonzero((zone == key[0]) & (age == key[1]))
        x[members], y[members] = grid_coordinates(members.size, spacing)
    shift = spacing / 4.0
    offsets = np.array([[-shift, -shift], [-shift, shift], [shift, -shift], [shift, shift]])
    return HalfCellData(
        age_years=np.repeat(age, 4),
        potential_mv_cse=np.repeat(np.asarray(half_cell.potential_mv_cse), 4),
        zone_index=np.repeat(zone, 4),
        x_m=(x[:, None] + offsets[:, 0]).ravel(),
        y_m=(y[:, None] + offsets[:, 1]).ravel(),
    )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--site", type=Path, default=None,
                        help="An imported copy of the demo site (reuses its posteriors).")
    args = parser.parse_args()
    warnings.filterwarnings("ignore")

    from assess.deterioration.defaults import HALF_CELL_LIKELIHOOD
    from assess.site.corrosion import corrosion_evidence, update_corrosion
    from assess.site.initiation import update_initiation
    from assess.site.materials import update_site
    from assess.site.settings import RunSettings
    from assess.updating.corrosion import CorrosionModelSettings
    from inspection_io.site import load_site

    folder = prepare(args.site)
    site = load_site(folder)
    settings = RunSettings(seed=args.seed, quick=True)
    start = time.perf_counter()
    evidence = corrosion_evidence(site)
    initiation = update_initiation(site, evidence.zones, settings=settings)
    shifted = dict(HALF_CELL_LIKELIHOOD)
    shifted["active_mean_mv"] -= 50.0
    variants = {
        "tempered": (CorrosionModelSettings(), evidence),
        "independent": (CorrosionModelSettings(half_cell_correlation_length_m=1e-6), evidence),
        "4x finer grid": (CorrosionModelSettings(),
                          dataclasses.replace(evidence, half_cell=finer_grid(evidence.half_cell))),
        "active -50 mV": (CorrosionModelSettings(half_cell_params=shifted), evidence),
    }
    fits = {name: update_corrosion(site, settings=settings, evidence=data, model=model,
                                   initiation=initiation)
            for name, (model, data) in variants.items()}
    mcmc_seconds = time.perf_counter() - start

    print(f"{'zone':5} {'variant':14} {'median':>7} {'5 %':>6} {'95 %':>6} {'sd ln':>6} "
          f"{'n':>5} {'n_eff':>6} {'median w/o':>10}")
    for zone in evidence.zones:
        for name, fit in fits.items():
            t_i = fit.zone_draws(zone)["initiation_time"]
            p05, p50, p95 = np.quantile(t_i, [0.05, 0.5, 0.95])
            effect = fit.half_cell_effect(zone)
            n = f"{effect['readings']:5d}" if effect else "    -"
            n_eff = f"{effect['effective_readings']:6.1f}" if effect else "     -"
            without = (f"{effect['without_half_cell_years']['median']:10.1f}"
                       if effect and name == "tempered" else "         -")
            print(f"{zone:5} {name:14} {p50:7.1f} {p05:6.1f} {p95:6.1f} "
                  f"{np.log(t_i).std():6.3f} {n} {n_eff} {without}")
    print(f"MCMC and reweighting: {mcmc_seconds:.0f} s")

    start = time.perf_counter()
    update = update_site(site, settings=settings)
    print(f"\nmaterials update: {time.perf_counter() - start:.0f} s; family check "
          "(family / raw draws at p = 1e-2, 1e-3, 1e-4; CoV of the raw estimate at 1e-4)")
    for key, check in update.family_checks.items():
        ratios = ", ".join(f"{r:.2f}" for r in check["ratios"])
        print(f"  {key:28} {ratios:20} cov {check['cov'][-1]:.2f} "
              f"{'ok' if check['passed'] else 'WARN'}")


if __name__ == "__main__":
    main()
