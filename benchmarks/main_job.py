"""Benchmark: the main job (`assess run`) on the demo site, cold and warm.

Cold: a fresh copy of the demo site (no stored posterior, every MCMC run
happens). Warm: the same folder again (posteriors reused from results/,
reliability and report recomputed). PyTensor's compile cache on disk is not
cleared, as on an engineer's machine after the first use.

    python benchmarks/main_job.py [--quick]
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
import time
import warnings
from pathlib import Path

from assess.pipeline import JobSettings, run_site

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def timed_run(folder: Path, settings: JobSettings) -> tuple[float, dict]:
    steps: dict[str, float] = {}
    last = [time.perf_counter(), None]

    def step(text: str) -> None:
        now = time.perf_counter()
        if last[1] is not None:
            steps[last[1]] = now - last[0]
        last[0], last[1] = now, text

    start = time.perf_counter()
    run_site(folder, settings, step=step)
    end = time.perf_counter()
    steps[last[1]] = end - last[0]
    return end - start, steps


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--quick", action="store_true", help="the --quick settings")
    args = parser.parse_args()
    settings = JobSettings(quick=args.quick)
    warnings.simplefilter("ignore")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "site"
        shutil.copytree(DEMO, folder)
        cold, cold_steps = timed_run(folder, settings)
        warm, warm_steps = timed_run(folder, settings)
    print(f"main job on the demo site ({'quick' if args.quick else 'full'} settings)")
    print(f"{'step':62s} {'cold s':>8s} {'warm s':>8s}")
    for name in cold_steps:
        print(f"{name:62s} {cold_steps[name]:8.1f} {warm_steps.get(name, float('nan')):8.1f}")
    print(f"{'total':62s} {cold:8.1f} {warm:8.1f}")


if __name__ == "__main__":
    main()
