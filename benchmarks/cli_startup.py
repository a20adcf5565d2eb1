"""Start-up time of the command line (issue 17: under 0.5 s for ``--help`` and ``solve``).

Run: ``python benchmarks/cli_startup.py [--repeats 5]``

Prints, for a few invocations, the wall time of a fresh ``python -m assess ...`` process
(median and minimum over the repeats) and, from ``python -X importtime -m assess --help``,
the modules that take longest to import (cumulative) and whether any heavy library
(pymc, pytensor, arviz, pandas, matplotlib, dask, scipy, numpy) was loaded. On a machine
shared with other jobs the minimum is the better figure; the load average is printed.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CASES = [
    ("assess --help", ["--help"]),
    ("assess solve --help", ["solve", "--help"]),
    ("assess site --help", ["site", "--help"]),
    (
        "assess solve <deck strip>",
        ["solve", str(ROOT / "demo_sites/problems/deck_strip_bending.toml")],
    ),
]
HEAVY = ("pymc", "pytensor", "arviz", "pandas", "matplotlib", "dask", "scipy", "numpy")


def wall(args: list[str], repeats: int) -> list[float]:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "assess", *args],
            cwd=ROOT,
            env=env,
            capture_output=True,
            check=False,
        )
        times.append(time.perf_counter() - start)
    return times


def import_profile(top: int) -> tuple[list[tuple[int, str]], list[str]]:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    out = subprocess.run(
        [sys.executable, "-X", "importtime", "-m", "assess", "--help"],
        cwd=ROOT,
        env=env,
        capture_output=True,
        text=True,
        check=False,
    )
    rows = []
    loaded = set()
    for line in out.stderr.splitlines():
        if not line.startswith("import time:") or "cumulative" in line:
            continue
        _, cumulative, name = (part.strip() for part in line.split("|"))
        rows.append((int(cumulative), name))
        loaded.add(name.split(".")[0])
    return sorted(rows, reverse=True)[:top], sorted(loaded & set(HEAVY))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    args = parser.parse_args()
    print(f"load average: {', '.join(f'{v:.2f}' for v in os.getloadavg())}\n")
    print(f"{'command':28s} {'median s':>9s} {'min s':>7s}")
    for label, argv in CASES:
        times = sorted(wall(argv, args.repeats))
        print(f"{label:28s} {times[len(times) // 2]:9.2f} {times[0]:7.2f}")
    rows, heavy = import_profile(12)
    print("\nslowest imports of 'assess --help' (cumulative, -X importtime)")
    for micro, name in rows:
        print(f"  {micro / 1e3:8.1f} ms  {name}")
    print(f"\nheavy libraries loaded by 'assess --help': {', '.join(heavy) or 'none'}")
    print("target (issue 17): under 0.5 s for --help and the start of solve")


if __name__ == "__main__":
    main()
