"""Engine overhead on the demo members' limit states (issue 17).

Run: ``python benchmarks/member_overhead.py [--repeats 5] [--methods subset_simulation form]``

For every member and mode of the demo site (design priors, "before"; and the same
populations with a precision-location correlation rho = 0.3, standing in for a
fitted posterior, "rho=0.3"), a reliability run is timed; the points it evaluated
are then recorded (same seed, same points) and evaluated again in ONE vectorised
call of the member's limit state (``limit_state(model.u_to_x(U))``). The ratio
engine time / one-call time is the engine's overhead on that member: the fixed
cost per limit-state call (building the conditional distributions, checks) and the
method's own arithmetic. Target of issue 17: at most 1.5 for subset simulation.

Prints a table: member, mode, state, method, points, calls of the limit state,
engine ms, one-call ms, ratio (minimum over the repeats: the least disturbed run) and the u_to_x cost of a
one-point call [us]. Times are CPU times of this process (``time.process_time``), which a
machine shared with other jobs disturbs less than wall time.
"""

from __future__ import annotations

import argparse
import dataclasses
import sys
import time
import warnings
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from assess.reliability import run_method  # noqa: E402
from assess.site.before_after import DEFAULT_METHOD, _analysis_seed  # noqa: E402
from assess.site.knowledge import design_knowledge  # noqa: E402
from assess.site.member_models import build_member_model  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"
METHOD_OPTIONS = {"form": {"check": False, "design_points": 1}}


def correlated(knowledge: dict, rho: float) -> dict:
    """The same populations with normal-space correlation rho (a fitted posterior's shape)."""
    return {
        zone: {k: dataclasses.replace(v, rho=rho, z_mean=0.1) for k, v in pops.items()}
        for zone, pops in knowledge.items()
    }


def recorded(problem):
    """Wrap the problem's g_u so every batch of points it evaluates is kept."""
    batches: list[np.ndarray] = []
    inner = problem._g_u

    def g_u(u):
        batches.append(np.array(u, copy=True))
        return inner(u)

    problem._g_u = g_u
    return batches


def measure(member_model, group, method, seed, repeats):
    options = METHOD_OPTIONS.get(method, {})
    engine = []
    for _ in range(repeats):
        problem = member_model.problem(group)
        start = time.process_time()
        result = run_method(problem, method, seed=seed, **options)
        engine.append(time.process_time() - start)
    problem = member_model.problem(group)
    batches = recorded(problem)
    run_method(problem, method, seed=seed, **options)
    points = np.vstack(batches)
    funcs = [member_model.modes[m] for m in group]
    model = member_model.model
    single = []
    for _ in range(repeats):
        start = time.process_time()
        x = model.u_to_x(points)
        np.column_stack([f(x) for f in funcs])
        single.append(time.process_time() - start)
    one_point = []
    u1 = points[:1]
    for _ in range(200):
        start = time.process_time()
        model.u_to_x(u1)
        one_point.append(time.process_time() - start)
    return {
        "points": points.shape[0],
        "calls": len(batches),
        "n_calls": result.n_calls,
        "engine": float(np.min(engine)),
        "single": float(np.min(single)),
        "u_to_x_us": 1e6 * float(np.min(one_point)),
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--methods", nargs="*", default=[DEFAULT_METHOD, "form"])
    parser.add_argument("--members", nargs="*", default=None)
    args = parser.parse_args()
    warnings.simplefilter("ignore")
    site = load_site(DEMO)
    before = design_knowledge(site)
    states = {"before": before, "rho=0.3": correlated(before, 0.3)}
    period = float(site.target.reference_period)
    header = (
        f"{'member':10s} {'mode':9s} {'state':8s} {'method':18s} {'points':>7s} "
        f"{'calls':>6s} {'engine ms':>10s} {'1-call ms':>10s} {'ratio':>6s} "
        f"{'u_to_x 1pt us':>14s}"
    )
    print(header)
    print("-" * len(header))
    ratios: dict[str, list] = {m: [] for m in args.methods}
    for member_id in args.members or list(site.members):
        member = site.members[member_id]
        for state, knowledge in states.items():
            mm = build_member_model(
                site, member, knowledge[member.zone], reference_period_years=period
            )
            modes = list(mm.modes)
            groups = [[m] for m in modes] + ([modes] if len(modes) > 1 else [])
            for group in groups:
                label = group[0] if len(group) == 1 else "system"
                for method in args.methods:
                    seed = _analysis_seed(20261202, member_id, label)
                    r = measure(mm, group, method, seed, args.repeats)
                    ratio = r["engine"] / r["single"]
                    ratios[method].append(ratio)
                    print(
                        f"{member_id:10s} {label:9s} {state:8s} {method:18s} {r['points']:7d} "
                        f"{r['calls']:6d} {1e3 * r['engine']:10.1f} {1e3 * r['single']:10.1f} "
                        f"{ratio:6.2f} {r['u_to_x_us']:14.0f}",
                        flush=True,
                    )
    print()
    for method, values in ratios.items():
        if values:
            print(
                f"{method:18s} overhead ratio: median {np.median(values):.2f}, "
                f"max {np.max(values):.2f} over {len(values)} runs"
            )
    print(
        "\nratio: engine time / one vectorised call of the limit state on all the points "
        "the run evaluated (target <= 1.5 for subset simulation, issue 17)."
    )


if __name__ == "__main__":
    main()
