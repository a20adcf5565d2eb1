"""Benchmark: cost of the ledger's integrity features (version 2).

Prints a table of seconds for: the import of every demo campaign file into a fresh ledger
and a second import (all skipped); the full ledger check (SQLite integrity check, hash
chain, rules) of the demo ledger; the import of a large invented half-cell grid and of a
second grid (specimen ids checked against the first, same-content check) and the check
of the grown ledger; appending results (each linked into the chain).

    python benchmarks/ledger_integrity.py [--grid-rows 20000] [--results 200]
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
import time
from pathlib import Path

from inspection_io.importing import import_file, import_site
from inspection_io.ledger import LEDGER_NAME, Ledger
from inspection_io.ledger_check import check_ledger

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def timed(call):
    start = time.perf_counter()
    value = call()
    return time.perf_counter() - start, value


def grid(path: Path, rows: int, prefix: str) -> Path:
    """An invented half-cell grid on zone L1: `rows` locations, potentials in mV CSE."""
    lines = ["location_id,zone,potential [mV CSE]"]
    lines += [f"{prefix}-{i:06d},L1,{-100 - (i * 37) % 300}" for i in range(rows)]
    path.write_text("\n".join(lines) + "\n")
    return path


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--grid-rows", type=int, default=20000)
    parser.add_argument("--results", type=int, default=200)
    args = parser.parse_args()
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        site = Path(tmp) / "site"
        shutil.copytree(DEMO, site)
        seconds, reports = timed(lambda: import_site(site))
        rows.append(("import demo site (first)", f"{len(reports)} files", seconds))
        seconds, _ = timed(lambda: import_site(site))
        rows.append(("import demo site (second, all skipped)", f"{len(reports)} files", seconds))
        seconds, report = timed(lambda: check_ledger(site))
        assert report.ok, report.problems
        rows.append(("check demo ledger", f"{report.chain_length} chain rows", seconds))

        folder = site / "campaigns" / "2025-principal-inspection"
        first = grid(folder / "grid-a.csv", args.grid_rows, "GA")
        seconds, _ = timed(lambda: import_file(site, first))
        rows.append(("import half-cell grid A", f"{args.grid_rows} rows", seconds))
        second = grid(folder / "grid-b.csv", args.grid_rows, "GB")
        seconds, _ = timed(lambda: import_file(site, second))
        rows.append(("import grid B (ids checked against A)", f"{args.grid_rows} rows", seconds))
        crlf = folder / "grid-b-crlf.csv"
        crlf.write_bytes(second.read_bytes().replace(b"\n", b"\r\n"))
        seconds, skipped = timed(lambda: import_file(site, crlf))
        assert not skipped.imported
        rows.append(("grid B with CRLF (same content: skipped)", f"{args.grid_rows} rows",
                     seconds))
        with Ledger(site) as ledger:
            seconds, _ = timed(lambda: [ledger.append_result("probe", {"i": i}, seed=i)
                                        for i in range(args.results)])
        rows.append(("append results (chained)", f"{args.results} rows", seconds))
        seconds, report = timed(lambda: check_ledger(site))
        assert report.ok, report.problems
        size = (site / LEDGER_NAME).stat().st_size / 1e6
        rows.append(("check grown ledger", f"{size:.1f} MB", seconds))
    print(f"{'step':44s} {'size':>16s} {'s':>8s}")
    for step, size, seconds in rows:
        print(f"{step:44s} {size:>16s} {seconds:8.3f}")


if __name__ == "__main__":
    main()
