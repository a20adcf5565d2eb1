"""Time the site update and the before/after table on the demo site; print a table.

Run:  python benchmarks/update_demo.py

Works on temporary copies of demo_sites/tanners-yard (the repository copy is never
touched). Measures:

1. PyMC's own NUTS on the joint model of `assess.site.materials`, split into
   building the graph, compiling the log-density and its gradient, and the sampling
   loop itself (tuning + draws, PyMC's ``sampling_time``); the rest of the
   ``pm.sample`` call (its own compile, initialisation, worker processes) is shown
   as "sample() overhead";
2. the same model with nutpie (numba backend), split into compile and sampling;
   for both: the convergence gate, the smallest bulk ESS of the gated variables and
   the effective samples per second of sampling (min bulk ESS / sampling seconds);
3. the ``assess members`` command (subprocess, plots on) cold (no stored posterior)
   and warm (posterior reused), against the target of <= 60 s warm on 2 cores;
4. in-process, warm: `update_site` loading the stored posterior and `assess_members`
   (the before/after table) with the command's default settings.

Settings: the materials fit of `RunSettings()` (a full run: 4 chains x 1000 tuning + 1000
draws, its target_accept and the default seed).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
import time
import warnings
from pathlib import Path

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"
TARGET_WARM_SECONDS = 60.0


def fresh_copy(root: Path, name: str) -> Path:
    from inspection_io.importing import import_site

    folder = root / name
    shutil.copytree(DEMO, folder)
    import_site(folder)
    return folder


def gate_figures(idata, names) -> dict:
    from assess.updating.gate import check_convergence

    gate = check_convergence(idata, names)
    return {"passed": gate.passed, "min_ess_bulk": gate.min_ess_bulk, "max_rhat": gate.max_rhat,
            "divergences": gate.divergences}


def joint_inputs(site, data):
    """Priors and cover layout exactly as `assess.site.materials.update_site` builds them."""
    from assess.site.cover_layers import cover_layout
    from assess.site.knowledge import design_knowledge, update_priors

    layout = cover_layout(site, data["cover"])
    before = design_knowledge(site)
    for zone in site.zones:
        before[zone]["cover"] = layout.before_local[zone][(None, layout.main_face(zone))]["cover"]
    return update_priors(before), layout


def bench_pymc(site, data, settings) -> dict:
    from assess.site.materials import _build_joint_model
    from assess.updating.models import free_parameter_names, sample_posterior

    start = time.perf_counter()
    priors, layout = joint_inputs(site, data)
    joint = _build_joint_model(site, data, priors, layout)
    built = time.perf_counter()
    joint.compile_logp()
    joint.compile_dlogp()
    compiled = time.perf_counter()
    fit = settings.fit("materials")
    idata = sample_posterior(joint, draws=fit.draws, tune=fit.tune, chains=fit.chains,
                             seed=settings.seed, target_accept=fit.target_accept,
                             sampler="pymc")
    done = time.perf_counter()
    sampling = float(idata.posterior.attrs["sampling_time"])
    row = {"build": built - start, "compile": compiled - built, "sample_call": done - compiled,
           "sampling": sampling, "overhead": (done - compiled) - sampling}
    row.update(gate_figures(idata, free_parameter_names(joint)))
    return row, joint


def bench_nutpie(joint, settings) -> dict:
    import nutpie

    from assess.updating.models import free_parameter_names

    fit = settings.fit("materials")
    start = time.perf_counter()
    compiled_model = nutpie.compile_pymc_model(joint, backend="numba")
    compiled = time.perf_counter()
    idata = nutpie.sample(compiled_model, draws=fit.draws, tune=fit.tune, chains=fit.chains,
                          cores=min(fit.chains, os.cpu_count() or 1), seed=settings.seed,
                          target_accept=fit.target_accept, progress_bar=False)
    done = time.perf_counter()
    row = {"build": float("nan"), "compile": compiled - start, "sample_call": done - compiled,
           "sampling": done - compiled, "overhead": 0.0}
    row.update(gate_figures(idata, free_parameter_names(joint)))
    return row


def run_cli(folder: Path) -> tuple[float, int]:
    start = time.perf_counter()
    result = subprocess.run([sys.executable, "-m", "assess", "members", str(folder), "--json"],
                            capture_output=True, text=True)
    seconds = time.perf_counter() - start
    if result.returncode != 0:
        print(result.stderr[-2000:], file=sys.stderr)
    return seconds, result.returncode


def main() -> None:
    warnings.simplefilter("ignore")
    import logging

    for name in ("pymc", "pytensor", "arviz", "nutpie"):
        logging.getLogger(name).setLevel(logging.ERROR)

    from assess.site.before_after import assess_members
    from assess.site.materials import apply_exclusions, collect_data, update_site
    from assess.site.settings import RunSettings
    from inspection_io.ledger import Ledger
    from inspection_io.site import load_site

    settings = RunSettings()
    fit = settings.fit("materials")
    with tempfile.TemporaryDirectory(prefix="bench-update-") as tmp:
        root = Path(tmp)
        site = load_site(fresh_copy(root, "sampler"))
        with Ledger(site.folder / "ledger.sqlite") as ledger:
            data = collect_data(ledger, None, ())
        data, _ = apply_exclusions(data, getattr(site, "exclude", None))
        n_obs = sum(len(df) for df in data.values())

        pymc_row, joint = bench_pymc(site, data, settings)
        nutpie_row = bench_nutpie(joint, settings)

        cli_folder = fresh_copy(root, "cli")
        cold, cold_rc = run_cli(cli_folder)
        warm, warm_rc = run_cli(cli_folder)

        cli_site = load_site(cli_folder)
        start = time.perf_counter()
        update = update_site(cli_site, settings=settings)
        loaded = time.perf_counter()
        assess_members(cli_site, update, method=settings.method, seed=settings.seed,
                       options=settings.reliability_options)
        table_done = time.perf_counter()

    print(f"Demo site: {len(site.zones)} zones, {n_obs} observations, "
          f"{len(joint.free_RVs)} free variables; {fit.chains} chains x "
          f"({fit.tune} tune + {fit.draws} draws); os.cpu_count() = {os.cpu_count()}")
    print()
    header = (f"{'sampler':<8} {'build s':>8} {'compile s':>10} {'sample() s':>11} "
              f"{'of which sampling s':>20} {'min bulk ESS':>13} {'ESS/s':>7} {'gate':>6} "
              f"{'diverg.':>8}")
    print(header)
    print("-" * len(header))
    for name, row in (("pymc", pymc_row), ("nutpie", nutpie_row)):
        build = "-" if row["build"] != row["build"] else f"{row['build']:.2f}"
        print(f"{name:<8} {build:>8} {row['compile']:>10.2f} {row['sample_call']:>11.2f} "
              f"{row['sampling']:>20.2f} {row['min_ess_bulk']:>13.0f} "
              f"{row['min_ess_bulk'] / row['sampling']:>7.1f} "
              f"{'pass' if row['passed'] else 'FAIL':>6} {row['divergences']:>8d}")
    print(f"(pymc sample() overhead beyond its sampling loop: {pymc_row['overhead']:.2f} s: "
          "its own compile, initialisation and worker processes)")
    pymc_rate = pymc_row["min_ess_bulk"] / pymc_row["sampling"]
    nutpie_rate = nutpie_row["min_ess_bulk"] / nutpie_row["sampling"]
    pymc_total = pymc_row["compile"] + pymc_row["sample_call"]
    nutpie_total = nutpie_row["compile"] + nutpie_row["sample_call"]
    print(f"ESS per sampling second: {'nutpie' if nutpie_rate > pymc_rate else 'pymc'} better "
          f"({max(nutpie_rate, pymc_rate) / min(nutpie_rate, pymc_rate):.1f}x); "
          f"compile + sample wall: pymc {pymc_total:.1f} s, nutpie {nutpie_total:.1f} s")
    print()
    print(f"{'step':<52} {'seconds':>8}")
    print("-" * 61)
    print(f"{'assess members (CLI, plots) cold: MCMC + table':<52} {cold:>8.1f}"
          + ("" if cold_rc == 0 else f"  exit {cold_rc}"))
    print(f"{'assess members (CLI, plots) warm: posterior reused':<52} {warm:>8.1f}"
          + ("" if warm_rc == 0 else f"  exit {warm_rc}")
          + f"  (target <= {TARGET_WARM_SECONDS:.0f} s: "
          + ("met)" if warm <= TARGET_WARM_SECONDS else "NOT met)"))
    print(f"{'update_site, stored posterior loaded (in-process)':<52} {loaded - start:>8.1f}")
    print(f"{'assess_members before/after table (in-process)':<52} {table_done - loaded:>8.1f}")


if __name__ == "__main__":
    main()
