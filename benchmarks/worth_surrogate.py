"""The value-of-information beta surrogate against direct FORM at held-out draws.

Run: ``python benchmarks/worth_surrogate.py [--site FOLDER] [--member S3-02] [--held-out 12]``

Without ``--site`` the demo site (invented data) is copied to a temporary folder, imported
and updated with the ``--quick`` MCMC settings of ``assess worth``; with ``--site`` an
imported copy is used and a stored posterior is reused. The decision problem of
``--member`` is built from ``demo_sites/tanners-yard/decisions.toml`` (FORM design, beta
surrogate, more design points where its error is above 0.05). Then FORM (with its
subset-simulation stand-in) runs directly at ``--held-out`` posterior draws that are no
design point, and the table compares, per alternative, the member's beta (the series bound
of its modes, what the costs use) and each mode's beta below 5 from the surrogate with the
direct values. Also printed: each mode's own leave-one-out error and the leave-one-out
error of the member's beta it causes (the figure the surrogate is judged by).
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.site.materials import update_site  # noqa: E402
from assess.site.settings import RunSettings  # noqa: E402
from assess.site.worth_decision import (  # noqa: E402
    ALTERNATIVE_NAMES,
    build_site_decision,
    member_beta,
)
from assess.worth.decision_file import read_decision_setup  # noqa: E402
from inspection_io.importing import import_site  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--site", type=Path, default=None,
                        help="an imported copy of the demo site (default: a fresh copy)")
    parser.add_argument("--member", default="S3-02")
    parser.add_argument("--held-out", type=int, default=12, help="draws checked directly")
    parser.add_argument("--draws", type=int, default=3000, help="theta draws N")
    parser.add_argument("--design", type=int, default=48, help="FORM design points")
    parser.add_argument("--seed", type=int, default=20261202)
    args = parser.parse_args()
    warnings.simplefilter("ignore")

    temporary = None
    folder = args.site
    if folder is None:
        temporary = tempfile.mkdtemp(prefix="worth-surrogate-")
        folder = Path(temporary) / "tanners-yard"
        shutil.copytree(DEMO, folder)
        import_site(folder)
    try:
        site = load_site(folder)
        update = update_site(site, settings=RunSettings(seed=args.seed, quick=True))
        setup = read_decision_setup(DEMO / "decisions.toml")
        t0 = time.perf_counter()
        made = build_site_decision(site, update, setup, member=args.member,
                                   n_draws=args.draws, n_design=args.design, seed=args.seed)
        t_build = time.perf_counter() - t0
    finally:
        if temporary:
            shutil.rmtree(temporary, ignore_errors=True)

    modes = made.reliability.modes
    print(f"member {made.member}: decision problem built in {t_build:.0f} s, "
          f"{made.form_calls:,} limit-state calls, {made.design_index.size} design draws used")
    print("leave-one-out error [-], mode's own beta / member's beta owed to the mode:")
    own, member = made.surrogate_errors(), made.member_surrogate_errors()
    for alternative in own:
        print(f"  {alternative:14s} " + ", ".join(
            f"{m} {own[alternative][m]:.3f} / {member[alternative][m]:.3f}" for m in modes))
    rng = np.random.default_rng(5)
    held = rng.choice(np.setdiff1d(np.arange(made.problem.n_draws), made.design_index),
                      args.held_out, replace=False)
    theta = made.member_theta(held)
    header = (f"{'alternative':14s} {'draws':>5s} {'member beta':>12s} {'max |diff|':>10s} "
              f"{'rmse':>6s}  " + "  ".join(f"{m + ' max (<5)':>16s}" for m in modes))
    print(header)
    print("-" * len(header))
    for spec in setup.alternatives:
        if spec.kind == "replace":
            continue
        name = ALTERNATIVE_NAMES[spec.kind]
        direct, converged = made.reliability.betas(theta, spec)
        ok = converged.all(axis=1)
        predicted = np.column_stack([made.surrogates[name][m].predict(theta) for m in modes])
        exact, approx = member_beta(direct[ok]), member_beta(predicted[ok])
        error = np.abs(predicted - direct)[ok]
        low = direct[ok] < 5.0
        per_mode = "  ".join(f"{error[:, j][low[:, j]].max(initial=0.0):16.3f}"
                             for j in range(len(modes)))
        print(f"{name:14s} {int(ok.sum()):5d} {exact.min():5.2f}-{exact.max():5.2f} "
              f"{np.abs(exact - approx).max():10.3f} "
              f"{np.sqrt(np.mean((exact - approx) ** 2)):6.3f}  {per_mode}")


if __name__ == "__main__":
    main()
