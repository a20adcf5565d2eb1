"""Benchmark: import every campaign file of the demo site into a fresh ledger.

Prints one row per file (kind, rows, observations, seconds) and the totals,
then the time of a second import of the whole site (every file already
imported, so each is a hash check and a no-op).

    python benchmarks/import_demo.py
"""

from __future__ import annotations

import shutil
import tempfile
import time
from pathlib import Path

from inspection_io.importing import import_site

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        site = Path(tmp) / "site"
        shutil.copytree(DEMO, site)
        timings = []
        last = [time.perf_counter()]

        def on_report(report):
            now = time.perf_counter()
            timings.append((report, now - last[0]))
            last[0] = now

        start = time.perf_counter()
        import_site(site, on_report=on_report)
        total = time.perf_counter() - start
        start = time.perf_counter()
        import_site(site)
        again = time.perf_counter() - start
    print(f"{'file':42s} {'kind':13s} {'rows':>5s} {'obs':>6s} {'s':>7s}")
    rows = observations = 0
    for report, seconds in timings:
        name = f"{report.campaign}/{report.path.name}"
        rows += report.rows
        observations += report.observations
        print(f"{name[-42:]:42s} {report.kind:13s} {report.rows:5d} {report.observations:6d} "
              f"{seconds:7.3f}")
    print(f"{'total (first import)':42s} {'':13s} {rows:5d} {observations:6d} {total:7.3f}")
    print(f"{'second import (all files already there)':56s} {'':6s} {again:7.3f}")


if __name__ == "__main__":
    main()
