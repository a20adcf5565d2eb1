"""Benchmark: a portfolio of invented sites, one site at a time against a Dask local cluster,
and the cost of one site as its number of members grows.

Part 1 - speed-up. An invented portfolio of 8 sites (10-16 members each, varied
ages and data; `demo_sites/generate_portfolio.py`, seed 18) is run from fresh
copies: one site after another in this process (the baselines below), then as
Dask tasks on a local cluster with one single-threaded worker process per core.
In a worker a site runs on one core: its MCMC chains one after another and one
BLAS/OpenMP thread (`assess.portfolio.tasks.one_core_per_task`); the draws are
the same as with parallel chains, so every arm gives the same numbers (checked).
A first site is run once beforehand, untimed, so every arm meets a warm PyTensor
compile cache.

Baselines (``--baselines``, default both):

- ``parallel``: one site after another with the chains in parallel processes,
  as a user runs ``assess run`` site after site (PyMC: one process per chain, at
  most one per core);
- ``one-process``: one site after another with the chains one after another in
  this process (``ASSESS_MCMC_CORES=1``).

The speed-up is the faster baseline's wall time over the Dask wall time. The
machine is shared: wall times are inflated by the load of other work (printed
with each arm), and under a load above the number of cores each process gets a
share of a core, so the wall-time speed-up then measures the number of our
processes that are runnable, not the cluster. The CPU seconds of every arm (all
its processes: this one, PyMC's chain processes, the Dask workers) are printed
too, with a load-free estimate of the speed-up on an idle machine: the CPU
seconds of the one-process baseline (one process, so its wall time on an idle
core) over the busiest worker's CPU seconds in its site tasks plus its start-up.

Part 2 - members. One invented site with all three campaigns and 20, 100 and
400 members (the same data), run cold in this process with the chains one after
another (so that this process's CPU time is the site's CPU time), with the wall
and CPU time of every step of the main job; the ratio to 20 members, the marginal
cost per member, a linearity check (the 100-member time against the straight line
through 20 and 400 members) and the steps that grow with the members.

    python benchmarks/portfolio.py [--quick] [--workers N] [--sites 8] [--site-members 10-16]
        [--campaigns all|latest|...] [--sizes 20,100,400] [--baselines parallel,one-process]
        [--skip speedup|members]

PyTensor's compile cache is copied to a private folder for the run (``--shared-compiledir``
to use the shared one): its file lock is shared by every process of the user on the machine,
and on a machine where others compile a process can wait minutes for it.

``--quick``: quick main-job settings without history and remaining-life steps
(the two steps that run further MCMC). For a first look in minutes on a busy
machine: ``--quick --sites 4 --site-members 10 --campaigns latest --sizes 20,40,80
--baselines one-process``.
"""

from __future__ import annotations

import argparse
import importlib.util
import multiprocessing.forkserver
import os
import resource
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


def _cpu_all() -> float:
    """CPU seconds [s] of this process and of every child process it has reaped."""
    own = resource.getrusage(resource.RUSAGE_SELF)
    children = resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def _stop_forkserver() -> None:
    """Stop multiprocessing's fork server (PyMC's chain processes come from it).

    The fork server reaps the chain processes; stopping it makes their CPU time count in
    this process's children. A private function of the standard library, benchmark only.
    """
    stop = getattr(multiprocessing.forkserver._forkserver, "_stop", None)
    if stop is not None:
        stop()


def _private_compiledir(work: Path) -> str:
    """Point PyTensor (here, in the chain processes and in the Dask workers, which inherit the
    environment) at a copy of this user's compile cache inside ``work``; returns its path.

    PyTensor reads its module cache and compiles under one file lock per compile directory,
    shared by every process of the user on the machine: on a machine shared with other work
    that compiles, a process can wait minutes for it. A copy keeps the cache warm and the
    lock to this benchmark. Must run before PyTensor is imported.
    """
    import glob

    base = os.path.expanduser("~/.pytensor")
    private = work / "pytensor"
    private.mkdir()
    for source in glob.glob(os.path.join(base, "compiledir_*")):
        shutil.copytree(source, private / os.path.basename(source), symlinks=True,
                        ignore=shutil.ignore_patterns(".lock", "lock_dir"),
                        ignore_dangling_symlinks=True, dirs_exist_ok=True)
    flags = os.environ.get("PYTENSOR_FLAGS", "")
    os.environ["PYTENSOR_FLAGS"] = ",".join(f for f in (flags, f"base_compiledir={private}") if f)
    return str(private)


def _chains(mode: str):
    """Context: ``ASSESS_MCMC_CORES`` for one arm (``one-process`` -> "1", else unset)."""
    import contextlib

    from assess.updating.models import CORES_VARIABLE

    @contextlib.contextmanager
    def context():
        old = os.environ.pop(CORES_VARIABLE, None)
        if mode == "one-process":
            os.environ[CORES_VARIABLE] = "1"
        try:
            yield
        finally:
            os.environ.pop(CORES_VARIABLE, None)
            if old is not None:
                os.environ[CORES_VARIABLE] = old

    return context()


def _warm_worker() -> float:
    """On a worker: import the main job and open PyTensor's module cache, as its first site
    would (the cache is read under PyTensor's compile lock, once per process); returns the
    worker's CPU seconds so far [s]."""
    import pymc  # noqa: F401
    import pytensor
    from pytensor.link.c.cmodule import get_module_cache

    import assess.portfolio.site_job  # noqa: F401
    import assess.report.job  # noqa: F401

    get_module_cache(pytensor.config.compiledir)
    return time.process_time()


def _compile_lock_wait() -> float:
    """Seconds [s] this process waits for PyTensor's compile lock (shared by every process
    of this user on the machine: each new process reads the module cache under it)."""
    from pytensor.compile.compilelock import lock_ctx

    start = time.perf_counter()
    with lock_ctx():
        return time.perf_counter() - start


def part_speedup(work: Path, settings: dict, sites: int, workers: int, members: str,
                 campaigns: str | None, baselines: list[str], warm_up: bool = True) -> None:
    import assess.portfolio.report  # noqa: F401 - the page's imports, not in the first arm
    from assess.portfolio import load_portfolio, run_portfolio
    from assess.portfolio.cluster import open_client
    from assess.portfolio.site_job import run_one_site

    gen = _generator()
    gen.generate_portfolio(work / "template", sites=sites, seed=18, members=members,
                           campaigns=campaigns)
    # the warm-up site has every campaign and a decisions file: every kind of fit is compiled
    gen.generate_site(work / "warm-up" / "site", 0, seed=18, members=10, campaigns="all",
                      thin=False, decisions=True)
    print(f"Part 1: {sites} sites ({members} members, campaigns {campaigns or 'drawn per site'}), "
          f"settings {settings}, {workers} worker(s); {_load()}")
    start = time.perf_counter()
    if warm_up:
        with _chains("one-process"):
            run_one_site(work / "warm-up" / "site", settings)
        what = "warm-up site (untimed in the comparison)"
    else:  # the imports and the module cache only (the compile cache must be warm already)
        _warm_worker()
        what = "imports and PyTensor module cache, no warm-up site"
    print(f"  {what}: {time.perf_counter() - start:.1f} s; "
          f"PyTensor compile lock acquired in {_compile_lock_wait():.1f} s")

    arms: dict[str, dict] = {}
    for mode in baselines:
        shutil.copytree(work / "template", work / mode)
        _stop_forkserver()
        cpu, start = _cpu_all(), time.perf_counter()
        with _chains(mode):
            result = run_portfolio(load_portfolio(work / mode), overrides=settings,
                                   sequential=True)
        wall = time.perf_counter() - start
        _stop_forkserver()
        arms[mode] = {"run": result, "wall": wall, "cpu": _cpu_all() - cpu}
        print(f"  one site at a time, chains {mode}: {wall:.1f} s; {_load()}")

    shutil.copytree(work / "template", work / "dask")
    cpu, start = _cpu_all(), time.perf_counter()
    with open_client(workers=workers) as (client, description):
        started = client.run(_warm_worker)
        t_start = time.perf_counter() - start
        begin = time.perf_counter()
        on_dask = run_portfolio(load_portfolio(work / "dask"), overrides=settings, client=client)
        t_dask = time.perf_counter() - begin
    t_total = time.perf_counter() - start
    cpu_dask = _cpu_all() - cpu
    print(f"  Dask done ({description}); {_load()}")

    best = min(arms, key=lambda m: arms[m]["wall"])
    t_seq = arms[best]["wall"]
    print()
    print(f"{'run':52s} {'wall s':>8s} {'CPU s':>8s} {'speed-up':>9s}")
    for mode, arm in arms.items():
        label = ("one site at a time, chains in parallel (assess run)" if mode == "parallel"
                 else "one site at a time, chains in this process")
        print(f"{label:52s} {arm['wall']:8.1f} {arm['cpu']:8.1f} {t_seq / arm['wall']:9.2f}")
    print(f"{'Dask local cluster, sites only':52s} {t_dask:8.1f} {'':8s} {t_seq / t_dask:9.2f}")
    print(f"{'Dask local cluster, with its start-up and imports':52s} {t_total:8.1f} "
          f"{cpu_dask:8.1f} {t_seq / t_total:9.2f}")
    print(f"  baseline of the speed-up: the faster one-site-at-a-time run ({best}); cluster "
          f"start-up with the workers' imports {t_start:.1f} s; target >= 0.8 x {workers} = "
          f"{0.8 * workers:.2f}")
    # load-free estimate: CPU of the one-process baseline over the busiest worker's CPU
    per_worker: dict[str, float] = {}
    for outcome in on_dask.outcomes.values():
        worker = outcome.get("worker") or "?"
        per_worker[worker] = per_worker.get(worker, 0.0) + (outcome.get("cpu_seconds") or 0.0)
    imports = max(started.values()) if started else 0.0
    busiest = max(per_worker.values()) + imports if per_worker else float("nan")
    print(f"  CPU s in site tasks per worker: "
          f"{', '.join(f'{v:.1f}' for v in per_worker.values())}; worker start-up and "
          f"imports up to {imports:.1f} CPU s")
    if "one-process" in arms:
        one = arms["one-process"]["cpu"]
        print(f"  load-free estimate of the speed-up on an idle machine: {one:.1f} CPU s one "
              f"process / {busiest:.1f} CPU s busiest worker = {one / busiest:.2f}")
        print(f"  CPU of the Dask arm over the one-process arm: {cpu_dask / one:.2f}")
    if "parallel" in arms and "one-process" in arms:
        print(f"  CPU of chains in parallel processes over chains in this process: "
              f"{arms['parallel']['cpu'] / arms['one-process']['cpu']:.2f} (each chain "
              f"process imports PyMC and receives the compiled model)")
    reference = arms[best]["run"]
    failed = {mode: arm["run"].failed for mode, arm in arms.items()}
    print(f"  failed sites: {failed}, Dask {on_dask.failed}")
    same = all(_members_numbers(arm["run"].outcomes[k]) == _members_numbers(on_dask.outcomes[k])
               for arm in arms.values() for k in reference.outcomes)
    print(f"  same numbers in every arm (beta now, remaining life of every member): "
          f"{'yes' if same else 'NO'}")
    print(f"  per-site wall s ({' / '.join(arms)} / Dask), Dask CPU s, largest step ({best}):")
    for key in reference.outcomes:
        first = reference.outcomes[key]
        count = len((first.get("summary") or {}).get("members", []))
        walls = "  ".join(f"{arm['run'].outcomes[key].get('seconds') or float('nan'):7.1f}"
                          for arm in arms.values())
        second = on_dask.outcomes[key]
        steps = first.get("steps") or [["-", float("nan")]]
        name, seconds = max(steps, key=lambda item: item[1])
        print(f"    {key:20s} {count:3d} m.  {walls}  {second.get('seconds') or float('nan'):7.1f}"
              f"  {second.get('cpu_seconds') or float('nan'):7.1f}   {name[:36]} {seconds:.1f}")


def _timed_site(folder: Path, settings: dict) -> tuple[float, float, dict]:
    from assess.portfolio.site_job import run_one_site

    steps: dict[str, list[float]] = {}
    last: list = [time.perf_counter(), time.process_time(), None]

    def step(text: str) -> None:
        now, cpu = time.perf_counter(), time.process_time()
        if last[2] is not None:
            steps[last[2]] = [now - last[0], cpu - last[1]]
        last[:] = [now, cpu, text]

    start, cpu = time.perf_counter(), time.process_time()
    with _chains("one-process"):
        run_one_site(folder, settings, step=step)
    end, cpu_end = time.perf_counter(), time.process_time()
    steps[last[2]] = [end - last[0], cpu_end - last[1]]
    return end - start, cpu_end - cpu, steps


def part_members(work: Path, settings: dict, sizes: list[int]) -> None:
    gen = _generator()
    print(f"\nPart 2: one site, {sizes} members, all campaigns, settings {settings}, chains in "
          f"this process; {_load()}")
    times, cpus, steps = {}, {}, {}
    for size in sizes:
        folder = work / f"members-{size}"
        gen.generate_site(folder, 0, seed=18, members=size, campaigns="all", thin=False,
                          decisions=True)
        times[size], cpus[size], steps[size] = _timed_site(folder, settings)
        print(f"  {size} members: {times[size]:.1f} s wall, {cpus[size]:.1f} CPU s; {_load()}")
    names = list(dict.fromkeys(name for size in sizes for name in steps[size]))
    print()
    print("CPU s per step (wall s in the total line)")
    print(f"{'step':58s}" + "".join(f"{f'{s} m.':>10s}" for s in sizes))
    for name in names:
        print(f"{name[:58]:58s}" + "".join(f"{steps[s].get(name, [0, float('nan')])[1]:10.1f}"
                                          for s in sizes))
    print(f"{'total CPU s':58s}" + "".join(f"{cpus[s]:10.1f}" for s in sizes))
    print(f"{'total wall s':58s}" + "".join(f"{times[s]:10.1f}" for s in sizes))
    low, high = min(sizes), max(sizes)
    print(f"{'CPU ratio to ' + str(low) + ' members':58s}"
          + "".join(f"{cpus[s] / cpus[low]:10.2f}" for s in sizes))
    slope = (cpus[high] - cpus[low]) / (high - low)
    print(f"  marginal cost {slope:.2f} CPU s per member; fixed part "
          f"{cpus[low] - slope * low:.1f} CPU s")
    for size in sizes:
        if size not in (low, high):
            line = cpus[low] + slope * (size - low)
            print(f"  {size} members: measured {cpus[size]:.1f} CPU s, straight line "
                  f"{line:.1f} ({100 * (cpus[size] / line - 1):+.0f} %)")
    growth = {name: steps[high].get(name, [0, 0.0])[1] - steps[low].get(name, [0, 0.0])[1]
              for name in names}
    grown = sorted(growth, key=growth.get, reverse=True)[:3]
    top = max(steps[high], key=lambda n: steps[high][n][1])
    print(f"  at {high} members the largest step is '{top}' "
          f"({100 * steps[high][top][1] / cpus[high]:.0f} % of the CPU time)")
    print("  steps that grow most from {} to {} members: {}".format(
        low, high, "; ".join(f"'{n}' +{growth[n]:.1f} CPU s" for n in grown)))
    print(f"  target {high}/{low} ratio <= 25: CPU {cpus[high] / cpus[low]:.1f}, "
          f"wall {times[high] / times[low]:.1f}")


def main() -> None:
    from assess.portfolio.cluster import default_workers

    parser = argparse.ArgumentParser(description=__doc__,
                                     formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--quick", action="store_true",
                        help="quick settings, no history, no remaining life")
    parser.add_argument("--workers", type=int, default=default_workers())
    parser.add_argument("--sites", type=int, default=8)
    parser.add_argument("--site-members", default="10-16",
                        help="members per site of part 1 (a count or a range)")
    parser.add_argument("--campaigns", default=None,
                        help="campaigns of every site of part 1 (default: drawn per site)")
    parser.add_argument("--sizes", default="20,100,400")
    parser.add_argument("--baselines", default="parallel,one-process",
                        help="one-site-at-a-time runs to time: parallel, one-process or both")
    parser.add_argument("--skip", choices=("speedup", "members"), help="leave one part out")
    parser.add_argument("--no-warm-up", action="store_true",
                        help="no untimed warm-up site before part 1 (only the imports); for a "
                             "compile cache that is already warm")
    parser.add_argument("--shared-compiledir", action="store_true",
                        help="use the user's PyTensor compile directory and its lock as it is "
                             "(default: a private copy, see _private_compiledir)")
    args = parser.parse_args()
    baselines = [b.strip() for b in args.baselines.split(",") if b.strip()]
    if not baselines or set(baselines) - {"parallel", "one-process"}:
        parser.error("--baselines: parallel, one-process or both")
    settings = {"quick": True, "history": False, "life": False} if args.quick else {}
    warnings.simplefilter("ignore")
    print(f"cores available: {default_workers()}; os.cpu_count(): {os.cpu_count()}; "
          f"{time.strftime('%Y-%m-%d %H:%M:%S', time.gmtime())} UTC; {_load()}")
    with tempfile.TemporaryDirectory(prefix="portfolio-bench-") as tmp:
        work = Path(tmp)
        if not args.shared_compiledir:
            print(f"PyTensor compile cache: a private copy ({_private_compiledir(work)})")
        if args.skip != "speedup":
            part_speedup(work, settings, args.sites, args.workers, args.site_members,
                         args.campaigns, baselines, warm_up=not args.no_warm_up)
        if args.skip != "members":
            part_members(work, settings, [int(s) for s in args.sizes.split(",")])


if __name__ == "__main__":
    main()
