"""Cost and agreement of the members step with subset simulation and with "auto" (issue 14:
"auto" is the default of the site steps), per member and mode, cold and warm.

Run: ``python benchmarks/members_method.py [--full] [--reference N] [--site FOLDER]
[--verdict-calls N]``

On a temporary imported copy of the demo site (or of ``--site``, an imported copy whose
posteriors are cached already): the materials update with the quick settings (``--full``:
the full ones; read from the posterior cache when there), today's section loss from the
corrosion priors (as the members step without the life step), then `assess_members`
member by member with each method as the members step calls it, cold (empty reliability
cache, timed per member) and warm (the whole table again: every result read from
``results/reliability``). ``--verdict-calls`` is the budget per verdict (default: the
run settings' budget, as the members step; 0 = one run per estimate, the methods' own
estimates).

Prints per member and mode (after updating): beta and its 95 % interval by each method,
the estimate "auto" reported (``is`` importance sampling, ``sus`` subset simulation), the
gap in beta divided by the two estimates' combined standard error (``z``), the limit-state
calls of each, and the seconds per member of each method (cold). With ``--reference N``,
crude Monte Carlo with N samples on every mode whose |z| exceeds 2 and where at least 20
failures are expected (the independent reference; its own 95 % interval printed). Then the
totals: wall time cold/warm, evaluations, the largest |beta(auto) - beta(subset)|.
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

from scipy import stats  # noqa: E402

from assess.reliability.crude import crude_monte_carlo  # noqa: E402
from assess.reliability.interval import beta_standard_error, result_interval  # noqa: E402
from assess.site.before_after import _analysis_seed, assess_members  # noqa: E402
from assess.site.corrosion import zone_corrosion_inputs  # noqa: E402
from assess.site.corrosion_state import present_state  # noqa: E402
from assess.site.locations import knowledge_at  # noqa: E402
from assess.site.materials import update_site  # noqa: E402
from assess.site.member_models import build_member_model  # noqa: E402
from assess.site.settings import RunSettings  # noqa: E402
from inspection_io.importing import import_site  # noqa: E402
from inspection_io.site import load_site  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "tanners-yard"
METHODS = ("subset_simulation", "auto")
SHORT = {"importance_sampling": "is", "subset_simulation": "sus"}


def _after_problem(site, update, member_id: str, mode: str):
    """The "after" `StandardNormalProblem` of one member and mode (all modes: "system"),
    built as `assess_members` builds it."""
    member = site.members[member_id]
    use = getattr(getattr(site, "priors", None), "imposed_use", None) or "commercial"
    face = getattr(member, "tension_face", "bottom")
    local = (update.after_local or {}).get(member.zone)
    model = build_member_model(
        site,
        member,
        knowledge_at(update.after[member.zone], local, member_id, face),
        reference_period_years=float(site.target.reference_period),
        car_park_use=use,
        local=local,
    )
    return model.problem(None if mode == "system" else [mode])


def _fmt(beta: float, interval: tuple[float, float]) -> str:
    return f"{beta:5.2f} [{interval[0]:5.2f}, {interval[1]:5.2f}]"


def _z(a, b) -> float:
    """(beta_a - beta_b) / sqrt(se_a^2 + se_b^2) (delta-method standard errors) [-]."""
    se = math.hypot(beta_standard_error(a.pf, a.cov), beta_standard_error(b.pf, b.cov))
    return (a.beta - b.beta) / se if se > 0 and math.isfinite(se) else math.nan


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--full", action="store_true", help="full settings (not --quick)")
    parser.add_argument(
        "--reference",
        type=int,
        default=0,
        help="crude Monte Carlo samples on every mode where the two differ by |z| > 2",
    )
    parser.add_argument("--site", type=Path, default=None, help="an imported copy of the demo site")
    parser.add_argument("--verdict-calls", type=int, default=None, help="budget per verdict")
    args = parser.parse_args()
    warnings.simplefilter("ignore")
    settings = RunSettings(quick=not args.full, verdict_calls=args.verdict_calls)
    budget = settings.max_calls_per_verdict
    print(f"load average: {', '.join(f'{v:.1f}' for v in os.getloadavg())}")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "site"
        shutil.copytree(args.site or DEMO, folder)
        shutil.rmtree(folder / "results" / "reliability", ignore_errors=True)
        if args.site is None:
            import_site(folder)
        site = load_site(folder)
        start = time.perf_counter()
        update = update_site(site, settings=settings)
        update, _ = present_state(
            site, update, zone_corrosion_inputs(site, seed=settings.seed), seed=settings.seed
        )
        print(f"materials update and section loss: {time.perf_counter() - start:.1f} s")
        print(f"budget per verdict: {budget} limit-state calls\n")
        results: dict = {}
        seconds: dict = {}
        totals: dict = {}
        for method in METHODS:
            options = dataclasses.replace(settings, method=method).reliability_options
            cold = 0.0
            for member_id in site.members:
                start = time.perf_counter()
                table = assess_members(
                    site,
                    update,
                    method=method,
                    seed=settings.seed,
                    options=options,
                    members=[member_id],
                    max_calls=budget,
                )
                seconds[method, member_id] = time.perf_counter() - start
                cold += seconds[method, member_id]
                for r in table.results:
                    results[method, r.member, r.mode] = r.after
            start = time.perf_counter()
            table = assess_members(
                site, update, method=method, seed=settings.seed, options=options, max_calls=budget
            )
            warm = time.perf_counter() - start
            calls = sum(r.before.n_calls + r.after.n_calls for r in table.results)
            totals[method] = (cold, warm, calls, options)

        header = (
            f"{'member':8s} {'mode':9s} {'subset beta [95 %]':>22s} {'auto beta [95 %]':>22s} "
            f"{'chose':>5s} {'z':>5s} {'SuS calls':>9s} {'auto calls':>10s} "
            f"{'SuS s':>6s} {'auto s':>6s}"
        )
        print(header)
        print("-" * len(header))
        gaps, to_check = [], []
        last = None
        for method, member_id, mode in [k for k in results if k[0] == "subset_simulation"]:
            sus = results["subset_simulation", member_id, mode]
            aut = results["auto", member_id, mode]
            chose = SHORT.get((aut.details or {}).get("chosen"), "?")
            z = _z(aut, sus)
            if math.isfinite(sus.beta) and math.isfinite(aut.beta):
                gaps.append((abs(aut.beta - sus.beta), member_id, mode))
            # crude MC only where it can tell them apart: |z| > 2 and at least 20 failures
            # expected at the larger of the two pf
            if args.reference and not abs(z) <= 2.0 and max(sus.pf, aut.pf) * args.reference >= 20:
                to_check.append((member_id, mode))
            times = ("", "")
            if member_id != last:
                times = tuple(f"{seconds[m, member_id]:6.1f}" for m in METHODS)
                last = member_id
            print(
                f"{member_id:8s} {mode:9s} {_fmt(sus.beta, result_interval(sus)):>22s} "
                f"{_fmt(aut.beta, result_interval(aut)):>22s} {chose:>5s} {z:5.1f} "
                f"{sus.n_calls:9d} {aut.n_calls:10d} {times[0]:>6s} {times[1]:>6s}"
            )
        print()
        head = f"{'method':18s} {'cold s':>7s} {'warm s':>7s} {'evaluations':>12s}  options"
        print(head)
        print("-" * len(head))
        for method, (cold, warm, calls, options) in totals.items():
            print(f"{method:18s} {cold:7.1f} {warm:7.1f} {calls:12d}  {options}")
        if gaps:
            gap, member_id, mode = max(gaps)
            print(
                f"\nlargest |beta(auto) - beta(subset)| after updating: {gap:.3f} "
                f"({member_id} {mode}) over {len(gaps)} members and modes"
            )
        print(
            "cold: empty reliability cache, FORM importance factors included; warm: the same "
            "table again. z = (beta auto - beta subset) / combined standard error."
        )
        if to_check:
            print(f"\ncrude Monte Carlo, {args.reference} samples, where |z| > 2:")
            for member_id, mode in to_check:
                problem = _after_problem(site, update, member_id, mode)
                start = time.perf_counter()
                ref = crude_monte_carlo(
                    problem, n=args.reference, seed=_analysis_seed(99, member_id, mode)
                )
                text = (
                    f"{_fmt(ref.beta, result_interval(ref))} CoV {ref.cov:.3f}"
                    if ref.pf > 0
                    else f"no failure: beta > {stats.norm.isf(3.0 / args.reference):.2f}"
                )
                print(
                    f"{member_id:8s} {mode:9s} crude {text}  ({time.perf_counter() - start:.1f} s)"
                )


if __name__ == "__main__":
    main()
