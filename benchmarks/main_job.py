"""Benchmark: the main job (`assess run`) on the demo site, cold and warm.

Cold: a fresh copy of the demo site (no stored posterior or reliability result: every
MCMC fit is compiled and sampled, every reliability run made). Warm: the same folder
again (posteriors, reliability results and the report's figures read from ``results/``;
the report is written again). PyTensor's compile cache on disk is not cleared, as on an
engineer's machine after the first use.

    python benchmarks/main_job.py [--quick] [--method subset_simulation]

Prints one row per step with the wall time cold and warm, then the number of MCMC fits
sampled (each one compiles its model), posteriors read from the cache, subset-simulation
runs (member betas, their checks and the remaining-life cross-checks) and reliability
results read from the cache. On a machine shared with other jobs the times are upper
bounds; the load average is printed.
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import assess.reliability.subset as subset  # noqa: E402
import assess.report.figure_cache as figure_cache  # noqa: E402
import assess.site.result_cache as result_cache  # noqa: E402
import assess.updating.cache as posterior_cache  # noqa: E402
from assess.report.job import run_and_report  # noqa: E402
from assess.site.settings import DEFAULT_METHOD, RunSettings  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"
COUNTS = {
    "fits sampled (compilations)": 0,
    "posteriors read": 0,
    "subset-simulation runs": 0,
    "reliability results read": 0,
    "report figures drawn (not read from results/figures)": 0,
}


BACKGROUND = "fits sampled in the background process"


def counting() -> None:
    """Wrap the functions whose calls are counted (module attributes, looked up per call)."""
    sample = posterior_cache._sample_naming_the_fit
    read = posterior_cache.read_posterior
    run_subset = subset._subset
    decode = result_cache.decode_result
    render = figure_cache.render_png

    def sample_counted(*args, **kwargs):
        COUNTS["fits sampled (compilations)"] += 1
        return sample(*args, **kwargs)

    def read_counted(*args, **kwargs):
        COUNTS["posteriors read"] += 1
        return read(*args, **kwargs)

    def subset_counted(*args, **kwargs):
        COUNTS["subset-simulation runs"] += 1
        return run_subset(*args, **kwargs)

    def decode_counted(*args, **kwargs):
        COUNTS["reliability results read"] += 1
        return decode(*args, **kwargs)

    def render_counted(*args, **kwargs):
        COUNTS["report figures drawn (not read from results/figures)"] += 1
        return render(*args, **kwargs)

    posterior_cache._sample_naming_the_fit = sample_counted
    posterior_cache.read_posterior = read_counted
    subset._subset = subset_counted
    result_cache.decode_result = decode_counted
    figure_cache.render_png = render_counted


def timed_run(folder: Path, settings: RunSettings) -> tuple[float, dict, dict]:
    for key in COUNTS:
        COUNTS[key] = 0
    steps: dict[str, float] = {}
    last: list = [time.perf_counter(), None]

    def say(text: str) -> None:
        now = time.perf_counter()
        if last[1] is not None:
            steps[last[1]] = steps.get(last[1], 0.0) + now - last[0]
        last[0], last[1] = now, text

    store = folder / "results" / "posteriors"
    stored_before = set(store.glob("*.nc")) if store.is_dir() else set()
    start = time.perf_counter()
    run_and_report(folder, settings, say=say)
    end = time.perf_counter()
    if last[1] is not None:
        steps[last[1]] = steps.get(last[1], 0.0) + end - last[0]
    counts = dict(COUNTS)
    # the history's cut-off fits are sampled in a background process
    # (assess.site.history_prefetch): counted by the new files in the store
    new_files = len(set(store.glob("*.nc")) - stored_before) if store.is_dir() else 0
    counts[BACKGROUND] = new_files - counts["fits sampled (compilations)"]
    return end - start, steps, counts


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="the --quick settings")
    parser.add_argument(
        "--method", default=DEFAULT_METHOD, help="reliability method of the member betas"
    )
    args = parser.parse_args()
    settings = RunSettings(quick=args.quick, method=args.method)
    warnings.simplefilter("ignore")
    counting()
    load = ", ".join(f"{v:.1f}" for v in os.getloadavg())
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "site"
        shutil.copytree(DEMO, folder)
        cold, cold_steps, cold_counts = timed_run(folder, settings)
        warm, warm_steps, warm_counts = timed_run(folder, settings)
    print(
        f"main job on the demo site ({'quick' if args.quick else 'full'} settings, "
        f"method {args.method}); load average at the start: {load}"
    )
    print(f"{'step':50s} {'cold s':>8s} {'warm s':>8s}")
    for name in dict.fromkeys(list(cold_steps) + list(warm_steps)):
        print(
            f"{name[:50]:50s} {cold_steps.get(name, float('nan')):8.1f} "
            f"{warm_steps.get(name, float('nan')):8.1f}"
        )
    print(f"{'total':50s} {cold:8.1f} {warm:8.1f}")
    print()
    for key in [*COUNTS, BACKGROUND]:
        print(f"{key[:50]:50s} {cold_counts[key]:8d} {warm_counts[key]:8d}")


if __name__ == "__main__":
    main()
