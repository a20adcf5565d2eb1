"""Benchmark: a portfolio of invented sites, sequential against a Dask local cluster,
and the cost of one site as its number of members grows.

Part 1 - speed-up. An invented portfolio of 8 sites (10-16 members each, varied
ages and data; `demo_sites/generate_portfolio.py`, seed 18) is run twice from
fresh copies: one site after another in this process (as the single-site tool
runs today), then as Dask tasks on a local cluster with one single-threaded
worker process per core. A first site is run once beforehand, untimed, so both
runs meet a warm PyTensor compile cache. Reported: wall times, the start-up of
the cluster, the speed-up and whether both runs gave the same numbers.

Part 2 - members. One invented site with all three campaigns and 20, 100 and
400 members (the same data), run cold in this process with the time of every
step of the main job; the ratio to 20 members, the marginal cost per member and
a linearity check (the 100-member time against the straight line through 20 and
400 members).

    python benchmarks/portfolio.py [--quick] [--workers N] [--sites 8] [--sizes 20,100,400]

``--quick``: quick main-job settings without history and remaining-life steps
(the two steps that run further MCMC), for a first look in minutes.
``--chains-in-one-process``: a what-if for the Dask arm only, with PyMC sampling
the chains one after another inside each worker (what a sampler-cores setting
of the pipeline would do; PyMC gives the same draws). The load
average of the machine is printed before and after each part: other work on the
machine slows both runs and lowers the speed-up.
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import shutil
import tempfile
import time
import warnings
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _generator():
    spec = importlib.util.spec_from_file_location(
        "generate_portfolio", ROOT / "demo_sites" / "generate_portfolio.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _load() -> str:
    one, five, _fifteen = os.getloadavg()
    return f"load average {one:.2f} (1 min), {five:.2f} (5 min)"


def _members_numbers(outcome: dict) -> list:
    summary = outcome.get("summary") or {}
    return [(m["member"], m["beta_now"], m.get("remaining_life_years"))
            for m in summary.get("members", [])]


def chains_in_one_process_job(folder, settings, step=None):
    """What-if for the Dask arm: the main job with every PyMC chain in the worker process.

    Stands in for a sampler-cores setting the pipeline does not have yet: while
    the job runs, `assess.updating.models` sees one core, so `pm.sample` runs
    the chains one after another (PyMC gives the same draws either way).
    """
    from unittest import mock

    from assess.portfolio.site_job import run_one_site
    from assess.updating import models

    with mock.patch.object(models.os, "cpu_count", return_value=1):
        return run_one_site(folder, settings, step=step)


def part_speedup(work: Path, settings: dict, sites: int, workers: int,
                 one_process_chains: bool = False) -> None:
    from assess.portfolio import load_portfolio, run_portfolio
    from assess.portfolio.cluster import open_client
    from assess.portfolio.site_job import run_one_site

    gen = _generator()
    gen.generate_portfolio(work / "sequential", sites=sites, seed=18, members="10-16")
    shutil.copytree(work / "sequential", work / "dask")
    gen.generate_portfolio(work / "warm-up", sites=1, seed=18, members="10", campaigns="latest")
    print(f"Part 1: {sites} sites, settings {settings}, {workers} worker(s); {_load()}")
    start = time.perf_counter()
    run_one_site(next(p for p in (work / "warm-up").iterdir() if p.is_dir()), settings)
    print(f"  warm-up site (untimed in the comparison): {time.perf_counter() - start:.1f} s")

    start = time.perf_counter()
    sequential = run_portfolio(load_portfolio(work / "sequential"), overrides=settings,
                               sequential=True)
    t_seq = time.perf_counter() - start
    print(f"  sequential done; {_load()}")

    start = time.perf_counter()
    with open_client(workers=workers) as (client, description):
        t_start = time.perf_counter() - start
        begin = time.perf_counter()
        job = chains_in_one_process_job if one_process_chains else None
        on_dask = run_portfolio(load_portfolio(work / "dask"), overrides=settings, client=client,
                                job=job)
        t_dask = time.perf_counter() - begin
    t_total = time.perf_counter() - start
    print(f"  Dask done ({description}"
          f"{'; what-if: PyMC chains in the worker process' if one_process_chains else ''}); "
          f"{_load()}")

    same = all(_members_numbers(sequential.outcomes[k]) == _members_numbers(on_dask.outcomes[k])
               for k in sequential.outcomes)
    print()
    print(f"{'run':44s} {'wall s':>9s} {'speed-up':>9s}")
    print(f"{'sequential, this process':44s} {t_seq:9.1f} {1.0:9.2f}")
    print(f"{'Dask local cluster, sites only':44s} {t_dask:9.1f} {t_seq / t_dask:9.2f}")
    print(f"{'Dask local cluster, with its start-up':44s} {t_total:9.1f} {t_seq / t_total:9.2f}")
    print(f"  cluster start-up {t_start:.1f} s; target speed-up >= 0.8 x {workers} = "
          f"{0.8 * workers:.2f}")
    print(f"  failed sites: sequential {sequential.failed}, Dask {on_dask.failed}")
    print(f"  same numbers (beta now, remaining life of every member): {'yes' if same else 'NO'}")
    print("  per-site seconds (sequential / Dask) and the largest step (sequential):")
    for key in sequential.outcomes:
        first, second = sequential.outcomes[key], on_dask.outcomes[key]
        members = len((first.get("summary") or {}).get("members", []))
        steps = first.get("steps") or [["-", float("nan")]]
        name, seconds = max(steps, key=lambda item: item[1])
        print(f"    {key:24s} {members:3d} members  {first.get('seconds') or float('nan'):7.1f}  "
              f"{second.get('seconds') or float('nan'):7.1f}   {name[:40]} {seconds:.1f}")


def _timed_site(folder: Path, settings: dict) -> tuple[float, dict]:
    from assess.portfolio.site_job import run_one_site

    steps: dict[str, float] = {}
    last = [time.perf_counter(), None]

    def step(text: str) -> None:
        now = time.perf_counter()
        if last[1] is not None:
            steps[last[1]] = now - last[0]
        last[0], last[1] = now, text

    start = time.perf_counter()
    run_one_site(folder, settings, step=step)
    end = time.perf_counter()
    steps[last[1]] = end - last[0]
    return end - start, steps


def part_members(work: Path, settings: dict, sizes: list[int]) -> None:
    gen = _generator()
    print(f"\nPart 2: one site, {sizes} members, settings {settings}; {_load()}")
    times, steps = {}, {}
    for size in sizes:
        folder = work / f"members-{size}"
        gen.generate_site(folder, 0, seed=18, members=size, campaigns="all", thin=False,
                          decisions=True)
        times[size], steps[size] = _timed_site(folder, settings)
        print(f"  {size} members: {times[size]:.1f} s; {_load()}")
    names = list(dict.fromkeys(name for size in sizes for name in steps[size]))
    print()
    print(f"{'step':58s}" + "".join(f"{f'{s} m. s':>11s}" for s in sizes))
    for name in names:
        print(f"{name[:58]:58s}" + "".join(f"{steps[s].get(name, float('nan')):11.1f}"
                                          for s in sizes))
    print(f"{'total':58s}" + "".join(f"{times[s]:11.1f}" for s in sizes))
    low, high = min(sizes), max(sizes)
    print(f"{'ratio to ' + str(low) + ' members':58s}" + "".join(f"{times[s] / times[low]:11.2f}"
                                                                 for s in sizes))
    slope = (times[high] - times[low]) / (high - low)
    print(f"  marginal cost {slope:.2f} s per member; fixed part {times[low] - slope * low:.1f} s")
    for size in sizes:
        if size not in (low, high):
            line = times[low] + slope * (size - low)
            print(f"  {size} members: measured {times[size]:.1f} s, straight line {line:.1f} s "
                  f"({100 * (times[size] / line - 1):+.0f} %)")
    top = max(steps[high], key=steps[high].get)
    print(f"  at {high} members the largest step is '{top}' "
          f"({100 * steps[high][top] / times[high]:.0f} % of the time); "
          f"target {high}/{low} ratio <= 25: {times[high] / times[low]:.1f}")


def main() -> None:
    from assess.portfolio.cluster import default_workers

    parser = argparse.ArgumentParser(description=__doc__,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true",
                        help="quick settings, no history, no remaining life")
    parser.add_argument("--workers", type=int, default=default_workers())
    parser.add_argument("--sites", type=int, default=8)
    parser.add_argument("--sizes", default="20,100,400")
    parser.add_argument("--skip", choices=("speedup", "members"), help="leave one part out")
    parser.add_argument("--chains-in-one-process", action="store_true",
                        help="what-if for the Dask arm: PyMC samples the chains one after another "
                             "inside the worker (as a sampler-cores setting would)")
    args = parser.parse_args()
    settings = {"quick": True, "history": False, "life": False} if args.quick else {}
    warnings.simplefilter("ignore")
    print(f"cores available: {default_workers()}; os.cpu_count(): {os.cpu_count()}")
    with tempfile.TemporaryDirectory(prefix="portfolio-bench-") as tmp:
        work = Path(tmp)
        if args.skip != "speedup":
            part_speedup(work, settings, args.sites, args.workers, args.chains_in_one_process)
        if args.skip != "members":
            part_members(work, settings, [int(s) for s in args.sizes.split(",")])


if __name__ == "__main__":
    main()
