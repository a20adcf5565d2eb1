"""What telling the uncertainty costs on the demo car park: undecided verdicts and life bands.

Run: ``python benchmarks/uncertainty_demo.py [--seed 20261202] [--members N]``

Uses the demo site's design information only (no MCMC, so it runs in a minute; the
posterior case differs only in the numbers). Two tables:

1. Member verdicts (subset simulation, quick and full sample sizes) with budgets of 0
   (one run) and the quick / full defaults of limit-state calls per verdict: wall time,
   limit-state calls, and how many member/mode verdicts stay undecided.
2. Remaining-life curves with and without the parameter band (K = 40 draws): wall time,
   and per member the remaining life with the width of both bands.
"""

from __future__ import annotations

import argparse
import sys
import time
import types
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--members", type=int, default=None, help="only the first N members")
    args = parser.parse_args(argv)

    from assess.site.before_after import assess_members
    from assess.site.knowledge import design_knowledge
    from assess.site.projection import project_site
    from assess.site.settings import (
        FULL_SUBSET_SAMPLES,
        FULL_VERDICT_CALLS,
        QUICK_SUBSET_SAMPLES,
        QUICK_VERDICT_CALLS,
    )
    from inspection_io.site import load_site

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        site = load_site(DEMO)
        knowledge = design_knowledge(site)
    update = types.SimpleNamespace(before=knowledge, after=knowledge, data_hash="design")
    members = list(site.members)[: args.members] if args.members else None

    print("1. Member verdicts (design information; subset simulation)")
    print(f"{'samples/level':>13} {'budget':>8} {'time [s]':>9} {'calls':>9} {'results':>8} "
          f"{'undecided':>10}")
    for samples, budgets in ((QUICK_SUBSET_SAMPLES, (None, QUICK_VERDICT_CALLS)),
                             (FULL_SUBSET_SAMPLES, (None, FULL_VERDICT_CALLS))):
        for budget in budgets:
            start = time.perf_counter()
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                a = assess_members(site, update, seed=args.seed, importance=False,
                                   options={"n_per_level": samples}, members=members,
                                   max_calls=budget)
            seconds = time.perf_counter() - start
            calls = sum(r.after.n_calls for r in a.results)
            print(f"{samples:>13} {budget or 0:>8} {seconds:>9.1f} {calls:>9} "
                  f"{len(a.results):>8} {len(a.undecided):>10}")

    print("\n2. Remaining-life curves (design information, quick: 2000 importance samples)")
    times = {}
    curves = {}
    for draws in (0, 40):
        start = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            curves[draws] = project_site(site, update, members=members, n_samples=2000,
                                         seed=args.seed, parameter_draws=draws)
        times[draws] = time.perf_counter() - start
    print(f"wall time: without parameter band {times[0]:.1f} s, with it (K = 40) "
          f"{times[40]:.1f} s")
    print(f"{'member':<8} {'mode':<10} {'life':>14} {'parameter band':>18} {'sampling band':>18}")
    for c in curves[40]:
        if c.mode != "system" and any(o.member == c.member and o.mode == "system"
                                      for o in curves[40]):
            continue
        life = c.remaining_life
        print(f"{c.member:<8} {c.mode:<10} {life.text().split(' (')[0]:>14} "
              f"{life.parameter_text():>18} {life.sampling_text():>18}")


if __name__ == "__main__":
    main()
