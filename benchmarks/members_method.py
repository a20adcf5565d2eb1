"""Cost of the members step with subset simulation and with "auto" (issue 14: may "auto"
become the default of the site steps?), cold and warm (reliability-result cache).

Run: ``python benchmarks/members_method.py [--full]``

On a temporary imported copy of the demo site: the materials update with the quick
settings (``--full``: the full ones; read from the posterior cache after the first time),
then `assess_members` for every member with each method: cold (empty reliability cache)
and warm (the same call again: every result read from ``results/reliability``). Prints
wall time, limit-state evaluations and the largest |beta(auto) - beta(subset)| over the
members and modes.
"""

from __future__ import annotations

import argparse
import dataclasses
import math
import os
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.site.before_after import assess_members  # noqa: E402
from assess.site.materials import update_site  # noqa: E402
from assess.site.settings import RunSettings  # noqa: E402
from inspection_io.importing import import_site  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--full", action="store_true", help="full settings (not --quick)")
    args = parser.parse_args()
    warnings.simplefilter("ignore")
    settings = RunSettings(quick=not args.full)
    print(f"load average: {', '.join(f'{v:.1f}' for v in os.getloadavg())}")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "site"
        shutil.copytree(DEMO, folder)
        import_site(folder)
        site = load_site(folder)
        start = time.perf_counter()
        update = update_site(site, settings=settings)
        print(f"materials update: {time.perf_counter() - start:.1f} s\n")
        betas: dict = {}
        header = f"{'method':18s} {'cold s':>7s} {'warm s':>7s} {'evaluations':>12s}"
        print(header)
        print("-" * len(header))
        for method in ("subset_simulation", "auto"):
            options = dataclasses.replace(settings, method=method).reliability_options
            times = []
            for _ in ("cold", "warm"):
                start = time.perf_counter()
                table = assess_members(
                    site, update, method=method, seed=settings.seed, options=options
                )
                times.append(time.perf_counter() - start)
            calls = sum(r.before.n_calls + r.after.n_calls for r in table.results)
            betas[method] = {(r.member, r.mode): r.after.beta for r in table.results}
            print(f"{method:18s} {times[0]:7.1f} {times[1]:7.1f} {calls:12d}")
        gaps = [
            abs(betas["auto"][k] - b)
            for k, b in betas["subset_simulation"].items()
            if math.isfinite(b) and math.isfinite(betas["auto"].get(k, math.nan))
        ]
        print(
            f"\nlargest |beta(auto) - beta(subset)| after updating: {max(gaps):.3f} "
            f"over {len(gaps)} members and modes"
        )
        print(
            "cold: empty reliability cache (FORM importance factors included); "
            "warm: the same call again."
        )


if __name__ == "__main__":
    main()
