"""Is more testing worth it? Five programmes on the demo site, timed.

Run: ``python benchmarks/worth_demo.py [--site FOLDER] [--outcomes 500] [--seed 20261202]``

Without ``--site`` the demo site (invented data) is copied to a temporary folder,
imported and updated with the ``--quick`` MCMC settings of ``assess worth``; with
``--site`` an already imported (and updated) copy is used and a stored posterior
is reused. Then the decision problem of the weakest member is built from
``demo_sites/tanners-yard/decisions.toml`` (FORM design and beta surrogate) and
the five candidate programmes are ranked with common random numbers. Prints the
time of each step, a table with EVSI, its Monte Carlo standard error, the net
value, P(beta >= target) and the wall time per programme, and the total.
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.site.materials import update_site  # noqa: E402
from assess.site.settings import RunSettings  # noqa: E402
from assess.site.worth_decision import build_site_decision  # noqa: E402
from assess.worth import recommendation_text, value_of_information  # noqa: E402
from assess.worth.decision_file import read_decision_setup  # noqa: E402
from inspection_io.importing import import_site  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--site", type=Path, default=None,
                        help="an imported copy of the demo site (default: a fresh copy)")
    parser.add_argument("--outcomes", type=int, default=500)
    parser.add_argument("--draws", type=int, default=3000, help="theta draws N")
    parser.add_argument("--design", type=int, default=48, help="FORM design points")
    parser.add_argument("--seed", type=int, default=20261202)
    args = parser.parse_args()
    warnings.simplefilter("ignore")

    start = time.perf_counter()
    temporary = None
    folder = args.site
    if folder is None:
        temporary = tempfile.mkdtemp(prefix="worth-demo-")
        folder = Path(temporary) / "tanners-yard"
        shutil.copytree(DEMO, folder)
        import_site(folder)
    try:
        site = load_site(folder)
        t0 = time.perf_counter()
        update = update_site(site, settings=RunSettings(seed=args.seed, quick=True))
        t_update = time.perf_counter() - t0

        setup = read_decision_setup(DEMO / "decisions.toml")
        t0 = time.perf_counter()
        decision = build_site_decision(site, update, setup, n_draws=args.draws,
                                       n_design=args.design, seed=args.seed)
        t_build = time.perf_counter() - t0

        results, times = [], []
        for programme in decision.programmes:
            t0 = time.perf_counter()
            results.append(value_of_information(decision.problem, programme,
                                                n_outcomes=args.outcomes, seed=args.seed,
                                                target_beta=decision.horizon_target_beta))
            times.append(time.perf_counter() - t0)
        total = time.perf_counter() - start
    finally:
        if temporary:
            shutil.rmtree(temporary, ignore_errors=True)

    currency = decision.problem.currency
    errors = decision.surrogate_errors()
    worst = max(v for modes in errors.values() for v in modes.values())
    print(f"member {decision.member} (zone {decision.zone}); N = {decision.problem.n_draws} "
          f"draws, J = {args.outcomes} outcomes, {args.design} FORM design points per "
          f"alternative ({decision.form_calls} limit-state calls), surrogate leave-one-out "
          f"error <= {worst:.3f}")
    print(f"update (MCMC {'reused' if update.reused else 'run'}): {t_update:6.1f} s")
    print(f"decision problem (FORM + surrogate): {t_build:6.1f} s")
    header = (f"{'programme':38s} {'cost':>9s} {'EVSI':>9s} {'SE':>7s} {'net':>10s} "
              f"{'P(adeq.)':>8s} {'time [s]':>8s}")
    print(header)
    print("-" * len(header))
    for result, seconds in sorted(zip(results, times), key=lambda rt: -rt[0].net_value):
        print(f"{result.description[:38]:38s} {result.programme_cost:9,.0f} {result.evsi:9,.0f} "
              f"{result.evsi_standard_error:7,.0f} {result.net_value:10,.0f} "
              f"{result.probability_adequate:8.2f} {seconds:8.2f}")
    print(f"EVPI {results[0].evpi:,.0f} {currency} (SE {results[0].evpi_standard_error:,.0f}); "
          f"best alternative now: '{results[0].prior_decision}'")
    print(f"programmes total: {sum(times):.1f} s; whole run (import, update, build, "
          f"programmes): {total:.1f} s")
    ordered = sorted(results, key=lambda r: -r.net_value)
    print()
    print(recommendation_text(decision.problem, ordered))


if __name__ == "__main__":
    main()
