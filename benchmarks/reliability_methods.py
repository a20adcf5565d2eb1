"""Accuracy, honesty and cost of the reliability methods on reference problems.

Run: ``python benchmarks/reliability_methods.py [--repeats 20] [--study-repeats 200]``

Prints, in one run:

1. every method on every reference problem (tests/reference_problems.py): reference pf,
   mean pf over the repeats and its bias (mean / reference), the CoV observed over the
   repeats against the mean CoV each run reports, the mean number of limit-state
   evaluations, and the crude Monte Carlo sample size for the same CoV,
   N = (1 - pf) / (pf CoV^2), with the gain N / evaluations;
2. the subset-simulation study of issue 14 (linear limit states, 2 and 100 dimensions,
   pf 1e-4 and 1e-6, ``--study-repeats`` independent runs): evaluations, bias, mean reported
   CoV against the observed spread, the CoV reached within 10 000 evaluations and the crude
   Monte Carlo sample size for the same CoV, for the settings tried (only this section:
   ``--skip methods overhead ce``; only some settings: ``--only TEXT``);
3. engine overhead: wall time of each method per limit-state evaluation against the same
   number of points evaluated by the bare numpy function in one call;
4. cross-entropy importance sampling (issue 14): bias, reported vs observed CoV over
   ``--study-repeats`` runs and the crude Monte Carlo sample size for the same CoV, on linear
   limit states (2-D and 100-D, pf 1e-4 and 1e-6) and the four-branch series system, with
   the variants its defaults were chosen from.
"""

from __future__ import annotations

import argparse
import math
import sys
import time
import warnings
from pathlib import Path

import numpy as np
from scipy.stats import norm

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import assess.reliability.cross_entropy_sampling as ce
import assess.reliability.subset as subset
from assess.reliability import StandardNormalProblem, run_method
from tests import reference_problems as ref

PROBLEMS = [
    ("linear normal R-S", ref.linear_normal),
    ("lognormal R-S", ref.lognormal_r_s),
    ("linear 100-D b=4.2", ref.linear_100d),
    ("four-branch (4 modes)", ref.four_branch_series),
    ("four-branch (1 margin)", ref.four_branch_single),
    ("parabola 2 DP", ref.parabolic),
    ("curved quadratic", ref.curved_quadratic),
    ("quartic", ref.quartic),
    ("R - S/(S-40)", ref.form_trap),
    ("linear 2-D pf=1e-6", lambda: ref.linear_pf_1e6(2)),
    ("linear 100-D pf=1e-6", lambda: ref.linear_pf_1e6(100)),
]

METHODS = [
    ("FORM (plain)", "form", {"check": False, "design_points": 1}),
    ("FORM (checked)", "form", {}),
    ("SORM", "sorm", {"check": False, "design_points": 1}),
    ("auto", "auto", {}),
    ("IS (checked)", "importance_sampling", {}),
    ("CE K=1", "cross_entropy", {"check": False}),
    ("CE K=4", "cross_entropy", {"check": False, "components": 4}),
    ("SuS N=1000", "subset_simulation", {}),
    ("crude MC 1e5", "crude_monte_carlo", {"n": 100_000}),
    ("poly. chaos", "polynomial_chaos", {}),
]


def run_repeats(make_case, method: str, options: dict, repeats: int) -> dict:
    pfs, covs, calls, times = [], [], [], []
    n_runs = 1 if method in ("form", "sorm") else repeats
    failures = 0
    for seed in range(n_runs):
        case = make_case()
        start = time.perf_counter()
        try:
            result = run_method(case.problem, method, seed=seed, **options)
        except Exception as exc:  # noqa: BLE001 - a refusal is a result of the benchmark
            failures += 1
            last_error = str(exc)
            continue
        times.append(time.perf_counter() - start)
        pfs.append(result.pf)
        covs.append(result.cov)
        calls.append(result.n_calls)
    if not pfs:
        return {"refused": last_error, "ref_pf": make_case().pf}
    pfs = np.array(pfs)
    mean_pf = float(pfs.mean())
    spread = float(pfs.std(ddof=1) / mean_pf) if len(pfs) > 1 and mean_pf > 0 else math.nan
    covs = np.array(covs, dtype=float)
    return {"pf": mean_pf, "cov": spread,
            "reported_cov": float(np.nanmean(covs)) if np.any(np.isfinite(covs)) else math.nan,
            "calls": float(np.mean(calls)), "time": float(np.mean(times)),
            "ref_pf": make_case().pf, "refused_runs": failures}


def crude_equivalent(pf: float, cov: float) -> float:
    return (1.0 - pf) / (pf * cov * cov) if pf > 0 and cov > 0 else math.nan


def print_methods_table(repeats: int) -> None:
    header = (f"{'problem':23s} {'method':15s} {'ref pf':>9s} {'mean pf':>9s} {'bias':>6s} "
              f"{'obs CoV':>7s} {'rep CoV':>7s} {'evals':>8s} {'MC evals':>9s} {'gain':>7s} "
              f"{'ms/run':>7s}")
    print(header)
    print("-" * len(header))
    for problem, make_case in PROBLEMS:
        small = make_case().pf < 1e-4
        for label, method, options in METHODS:
            if method == "crude_monte_carlo" and small:
                continue
            if method == "polynomial_chaos" and make_case().problem.dim > 20:
                continue
            s = run_repeats(make_case, method, options, repeats)
            if "refused" in s:
                print(f"{problem:23s} {label:15s} {s['ref_pf']:9.3e}  refused: "
                      f"{s['refused'][:70]}")
                continue
            # for FORM/SORM (one deterministic run) the CoV column is the relative error
            cov = s["cov"] if not math.isnan(s["cov"]) else math.nan
            mc = crude_equivalent(s["ref_pf"], cov) if math.isfinite(cov) else math.nan
            gain = mc / s["calls"] if math.isfinite(mc) else math.nan
            print(f"{problem:23s} {label:15s} {s['ref_pf']:9.3e} {s['pf']:9.3e} "
                  f"{s['pf'] / s['ref_pf']:6.3f} {cov:7.3f} {s['reported_cov']:7.3f} "
                  f"{s['calls']:8.0f} {mc:9.3g} {gain:7.1f} {1e3 * s['time']:7.1f}"
                  + (f"  ({s['refused_runs']} refused)" if s["refused_runs"] else ""))
    print("\nbias: mean pf / reference; obs CoV: spread of pf over the repeats (blank for "
          "FORM/SORM, one deterministic run);\nrep CoV: mean CoV reported by the runs; "
          "MC evals: crude Monte Carlo samples for the observed CoV, (1 - pf)/(pf CoV^2); "
          "gain: MC evals / evals.")


def _subset_variant(name: str):
    """A copy of the subset-simulation module with one change tried in issue 14 and not
    kept in the engine (the change is a text substitution, asserted to apply)."""
    import types

    source = Path(subset.__file__).read_text(encoding="utf-8")
    changes = {
        # chains restart the Robbins-Monro step count of lambda at every level
        "reset": ("        max_len = int(lengths.max())\n",
                  "        max_len = int(lengths.max())\n        self.n_adaptations = 0\n"),
        # half of the seeds, chains twice as long
        "half seeds": ("        seeds_u, seeds_g = u[seed_index], g[seed_index]\n",
                       "        seed_index = seed_index[: max(2, seed_index.size // 2)]\n"
                       "        seeds_u, seeds_g = u[seed_index], g[seed_index]\n"),
        # one step of burn-in: the seed itself is not a sample of the next level
        "burn-in": ("        run = chains.run(problem, seeds_u, seeds_g, threshold, lengths)\n",
                    "        run = chains.run(problem, seeds_u, seeds_g, threshold, lengths + 1)\n"
                    "        run['chain_u'] = run['chain_u'][1:]\n"
                    "        run['chain_g'] = run['chain_g'][1:]\n"),
        # the last level is accepted from N p0 / 2 failed samples (not N p0): saves the
        # extra level that a pf just below p0^k costs
        "last level": ("        final = n_fail >= n_seeds_target or level == max_levels - 1\n",
                       "        final = (n_fail >= max(2, n_seeds_target // 2)\n"
                       "                 or level == max_levels - 1)\n"),
    }
    if name in changes:
        old, replacement = changes[name]
        assert old in source, name
        source = source.replace(old, replacement)
    if name == "last level":
        old = "            converged = n_fail > 0 and n_fail >= n_seeds_target\n"
        assert old in source
        source = source.replace(old, "            converged = n_fail >= max(2, n_seeds_target // 2)\n")
    module = types.ModuleType(f"subset_{name.replace(' ', '_')}")
    exec(compile(source, module.__name__, "exec"), module.__dict__)  # noqa: S102 - benchmark only
    if name == "gpCN":
        module._ChainSampler.run = _gpcn_run(module, inflation=2.0)
    elif name == "mixed scale":
        module._ChainSampler._acs_step = _mixed_scale_step(module, spread=0.5)
    else:
        assert name in changes, name
    return module


def _gpcn_run(module, inflation: float):
    """Chains of the generalised preconditioned Crank-Nicolson algorithm (Rudolf & Sprungk
    2018, Foundations of Computational Mathematics 18:309-343): the proposal
    v = m + rho (u - m) + sqrt(1 - rho^2) L xi is reversible for N(m, L L^T) fitted to the
    seeds (full covariance if there are 10 seeds per variable or more, else diagonal; L
    inflated by ``inflation``), accepted with min(1, phi(v) q(u) / (phi(u) q(v))) before the
    limit state is called (a rejection there costs no call), then if inside the subset.
    sqrt(1 - rho^2) = min(1, lambda), lambda adapted as in aCS. Tried in issue 14, not kept."""

    def run(self, problem, seeds_u, seeds_g, threshold, lengths):
        max_len = int(lengths.max())
        n_chains, dim = seeds_u.shape
        chain_u = np.empty((max_len, n_chains, dim))
        chain_g = np.empty((max_len, n_chains))
        chain_u[0], chain_g[0] = seeds_u, seeds_g
        current_u, current_g = seeds_u.copy(), seeds_g.copy()
        mean = seeds_u.mean(axis=0)
        if n_chains >= 10 * dim:
            factor = np.linalg.cholesky(np.cov(seeds_u, rowvar=False) * inflation**2
                                        + 1e-12 * np.eye(dim))
        else:
            factor = np.diag(seeds_u.std(axis=0, ddof=1) * inflation)
        inverse = np.linalg.inv(factor)

        def log_q(x):
            z = (x - mean) @ inverse.T
            return -0.5 * (z * z).sum(axis=1)

        accepted = proposed = 0
        for step in range(1, max_len):
            active = np.flatnonzero(lengths > step)
            u = current_u[active]
            sigma = min(1.0, math.exp(self.log_lambda))
            candidate = (mean + math.sqrt(1.0 - sigma**2) * (u - mean)
                         + sigma * self.rng.standard_normal(u.shape) @ factor.T)
            log_ratio = (0.5 * (u**2).sum(axis=1) - 0.5 * (candidate**2).sum(axis=1)
                         + log_q(u) - log_q(candidate))
            passed = np.flatnonzero(np.log(self.rng.random(active.size)) < log_ratio)
            accept = np.zeros(active.size, dtype=bool)
            if passed.size:
                g_candidate = problem.g(candidate[passed])
                inside = g_candidate <= threshold
                accept[passed[inside]] = True
                current_u[active[passed[inside]]] = candidate[passed[inside]]
                current_g[active[passed[inside]]] = g_candidate[inside]
            self.n_adaptations += 1
            self.log_lambda = min(0.0, self.log_lambda + (accept.mean()
                                                          - module.TARGET_ACCEPTANCE)
                                  / math.sqrt(self.n_adaptations))
            accepted += int(accept.sum())
            proposed += active.size
            chain_u[step], chain_g[step] = current_u, current_g
        return {"chain_u": chain_u, "chain_g": chain_g,
                "acceptance_rate": accepted / proposed if proposed else math.nan,
                "lambda": math.exp(self.log_lambda)}

    return run


def _mixed_scale_step(module, spread: float):
    """aCS step whose scaling lambda is multiplied, per chain and step, by exp(spread Z)
    with Z standard normal (a mixture of conditional-normal kernels, each reversible for
    the standard normal, so the mixture is too). Tried in issue 14, not kept."""

    def step(self, problem, current_u, current_g, active, threshold, sigma_hat):
        scale = math.exp(self.log_lambda) * np.exp(
            spread * self.rng.standard_normal((active.size, 1)))
        sigma = np.minimum(1.0, scale * sigma_hat)
        rho = np.sqrt(1.0 - sigma**2)
        candidate = (rho * current_u[active]
                     + sigma * self.rng.standard_normal((active.size, current_u.shape[1])))
        g_candidate = problem.g(candidate)
        accept = g_candidate <= threshold
        current_u[active[accept]] = candidate[accept]
        current_g[active[accept]] = g_candidate[accept]
        self.n_adaptations += 1
        self.log_lambda += ((accept.mean() - module.TARGET_ACCEPTANCE)
                            / math.sqrt(self.n_adaptations))
        return accept

    return step


def subset_study(repeats: int, only: str = "") -> None:
    """Issue 14: reported vs observed CoV over many runs, and the CoV at 10 000 evaluations.

    The settings tried: level probability p0 0.05-0.5 with N chosen for about 10 000
    evaluations at pf 1e-6, the target acceptance a* of adaptive conditional sampling
    (Papaioannou et al. 2015: 0.44) and its initial scaling lambda_0 (0.6), the adaptation
    restarted at each level, half the seeds with chains twice as long, one step of burn-in,
    the last level accepted from N p0 / 2 failed samples, the modified Metropolis algorithm,
    a random spread of the aCS scaling, the generalised pCN proposal fitted to the seeds,
    and the directional steps now in the engine (every second step, where they suit).
    ``only``: run the settings whose label contains this text.
    """
    plain = {"directional": False}
    settings = [
        # the engine (directional steps in low dimension, where they suit; never in 100-D)
        ("default (N=1000 p0=0.2)", {}, None),
        ("N=1250 p0=0.2", {"n_per_level": 1250, "p0": 0.2}, None),
        ("N=1400 p0=0.15", {"n_per_level": 1400, "p0": 0.15}, None),
        ("N=1800 p0=0.1", {"n_per_level": 1800, "p0": 0.1}, None),
        ("N=1000 p0=0.3", {"n_per_level": 1000, "p0": 0.3}, None),
        # plain aCS (directional=False): the settings tried before the directional steps
        ("plain N=1000 p0=0.2", {**plain}, None),
        ("plain N=1250 p0=0.2", {"n_per_level": 1250, "p0": 0.2, **plain}, None),
        ("plain N=1800 p0=0.1", {"n_per_level": 1800, "p0": 0.1, **plain}, None),
        ("plain N=2300 p0=0.1", {"n_per_level": 2300, "p0": 0.1, **plain}, None),
        ("plain N=2400 p0=0.05", {"n_per_level": 2400, "p0": 0.05, **plain}, None),
        ("plain N=1500 p0=0.15", {"n_per_level": 1500, "p0": 0.15, **plain}, None),
        ("plain N=1000 p0=0.3", {"n_per_level": 1000, "p0": 0.3, **plain}, None),
        ("plain N=900 p0=0.4", {"n_per_level": 900, "p0": 0.4, **plain}, None),
        ("plain N=800 p0=0.5", {"n_per_level": 800, "p0": 0.5, **plain}, None),
        ("plain N=1800 p0=0.1 l0=0.3", {"n_per_level": 1800, "p0": 0.1, "l0": 0.3, **plain},
         None),
        ("plain N=1800 p0=0.1 l0=1.0", {"n_per_level": 1800, "p0": 0.1, "l0": 1.0, **plain},
         None),
        ("plain N=1800 p0=0.1 a*=0.30", {"n_per_level": 1800, "p0": 0.1, "a*": 0.30, **plain},
         None),
        ("plain N=1800 p0=0.1 a*=0.55", {"n_per_level": 1800, "p0": 0.1, "a*": 0.55, **plain},
         None),
        ("plain N=1800 p0=0.1 reset", {"n_per_level": 1800, "p0": 0.1, **plain}, "reset"),
        ("plain N=1800 p0=0.1 half seeds", {"n_per_level": 1800, "p0": 0.1, **plain},
         "half seeds"),
        ("plain N=1650 p0=0.1 burn-in", {"n_per_level": 1650, "p0": 0.1, **plain}, "burn-in"),
        ("plain N=1800 p0=0.1 last level", {"n_per_level": 1800, "p0": 0.1, **plain},
         "last level"),
        ("N=1800 p0=0.1 MMA", {"n_per_level": 1800, "p0": 0.1, "sampler": "mma"}, None),
        ("plain N=1800 p0=0.1 mixed scale", {"n_per_level": 1800, "p0": 0.1, **plain},
         "mixed scale"),
        ("N=2600 p0=0.1 gpCN a*=0.30", {"n_per_level": 2600, "p0": 0.1, "a*": 0.30}, "gpCN"),
        ("directional=True N=1250 p0=0.2", {"n_per_level": 1250, "p0": 0.2,
                                            "directional": True}, None)]
    at_1e4 = ("default (N=1000 p0=0.2)", "N=1250 p0=0.2", "N=1400 p0=0.15",
              "plain N=1000 p0=0.2", "plain N=1250 p0=0.2", "plain N=1800 p0=0.1")
    header = (f"{'case':15s} {'setting':31s} {'bias':>6s} {'obs CoV':>7s} {'rep CoV':>7s} "
              f"{'rep/obs':>7s} {'+/-':>5s} {'AuBeck/obs':>10s} {'evals':>7s} "
              f"{'CoV@10k':>7s} {'MC evals':>9s} {'gain':>6s}")
    print(header)
    print("-" * len(header))
    for dim in (2, 100):
        for pf in (1e-4, 1e-6):
            beta = float(norm.isf(pf))
            for label, options, variant in settings:
                if only not in label:
                    continue
                if pf > 1e-5 and label not in at_1e4:
                    continue
                module = _subset_variant(variant) if variant else subset
                pfs, covs, au_beck, calls = [], [], [], []
                options = dict(options)
                acceptance = options.pop("a*", subset.TARGET_ACCEPTANCE)
                default_acceptance = module.TARGET_ACCEPTANCE
                module.TARGET_ACCEPTANCE = acceptance
                lambda_start = options.pop("l0", subset.LAMBDA_START)
                default_lambda_start = module.LAMBDA_START
                module.LAMBDA_START = lambda_start
                for seed in range(repeats):
                    case = ref.linear_standard_normal(dim, beta)
                    result = module.subset_simulation(case.problem, seed=10_000 + seed,
                                                      **options)
                    pfs.append(result.pf)
                    covs.append(result.cov)
                    au_beck.append(result.details["cov_au_beck"])
                    calls.append(result.n_calls)
                module.TARGET_ACCEPTANCE = default_acceptance
                module.LAMBDA_START = default_lambda_start
                pfs = np.array(pfs)
                observed = float(pfs.std(ddof=1) / pfs.mean())
                ratio = float(np.mean(covs)) / observed
                # standard error of the ratio from the spread of the sample std (delta
                # method with the sample kurtosis of pf)
                z = (pfs - pfs.mean()) / pfs.std(ddof=1)
                kurtosis = float(np.mean(z**4))
                error = ratio * math.sqrt(max(kurtosis - 1.0, 0.0) / (4.0 * repeats))
                at_10k = observed * math.sqrt(float(np.mean(calls)) / 10_000)
                mc = crude_equivalent(pf, observed)
                print(f"{dim:3d}-D pf={pf:.0e}{'':3s} {label:31s} {pfs.mean() / pf:6.3f} "
                      f"{observed:7.3f} {np.mean(covs):7.3f} {ratio:7.2f} {error:5.2f} "
                      f"{np.mean(au_beck) / observed:10.2f} {np.mean(calls):7.0f} "
                      f"{at_10k:7.3f} {mc:9.3g} {mc / np.mean(calls):6.0f}")
    print("\nrep/obs: mean reported CoV / observed spread of pf (target 0.85-1.15), +/- its "
          "standard error;\nAuBeck/obs: the same for the per-level formula of Au & Beck "
          "(2001), kept in details['cov_au_beck'];\nCoV@10k: observed CoV scaled to 10 000 "
          "evaluations as 1/sqrt(evaluations) (target <= 0.25 at pf = 1e-6);\nMC evals: "
          "crude Monte Carlo samples for the observed CoV, (1 - pf)/(pf CoV^2); gain: MC "
          "evals / evals.\nplain: directional=False (aCS only); the engine's default uses "
          "directional steps in 2-D (not in 100-D: fewer than 10 seeds per variable).\n"
          "reset, half seeds, burn-in, last level, mixed scale, gpCN: variants tried in issue "
          "14, not in the engine (a copy of the module with one change, see _subset_variant).")


def overhead(repeats: int) -> None:
    """Engine time per evaluation against the bare numpy function on the same points."""
    def costly(dim: int) -> StandardNormalProblem:
        base = ref.linear_pf_1e6(dim).problem

        def g_u(u):
            extra = u[:, :1] * np.ones((1, 400))
            for _ in range(10):
                extra = np.sin(extra) * 1e-9
            return base.g(u) + extra.sum(axis=1) * 0.0

        return StandardNormalProblem(g_u, dim)

    cases = [("linear 2-D pf=1e-6 (g ~ free)", lambda: ref.linear_pf_1e6(2).problem),
             ("linear 100-D pf=1e-6", lambda: ref.linear_pf_1e6(100).problem),
             ("100-D + ~40 us/point of work", lambda: costly(100))]
    methods = [("SuS N=1000", "subset_simulation", {}), ("auto", "auto", {}),
               ("IS (checked)", "importance_sampling", {}),
               ("FORM (plain)", "form", {"check": False, "design_points": 1})]
    header = (f"{'case':32s} {'method':14s} {'evals':>7s} {'engine ms':>10s} {'bare ms':>8s} "
              f"{'us/eval engine':>15s} {'us/eval bare':>13s} {'ratio':>6s}")
    print(header)
    print("-" * len(header))
    for label, make in cases:
        for name, method, options in methods:
            engine, bare, calls = [], [], []
            for seed in range(repeats):
                problem = make()
                start = time.perf_counter()
                result = run_method(problem, method, seed=seed, **options)
                engine.append(time.perf_counter() - start)
                calls.append(result.n_calls)
                u = np.random.default_rng(seed).standard_normal((result.n_calls, problem.dim))
                raw = make()
                start = time.perf_counter()
                raw._g_u(u)
                bare.append(time.perf_counter() - start)
            e, b, n = np.median(engine), np.median(bare), float(np.mean(calls))
            print(f"{label:32s} {name:14s} {n:7.0f} {1e3 * e:10.2f} {1e3 * b:8.2f} "
                  f"{1e6 * e / n:15.2f} {1e6 * b / n:13.2f} {e / b:6.1f}")
    print("\nbare: the same number of points evaluated by the numpy function in one call; "
          "ratio: engine / bare (medians).")


def cross_entropy_study(repeats: int) -> None:
    """Issue 14: cross-entropy importance sampling, its CoV against the spread over runs."""
    cases = [("linear 2-D pf=1e-4", lambda: ref.linear_standard_normal(2, norm.isf(1e-4))),
             ("linear 2-D pf=1e-6", lambda: ref.linear_pf_1e6(2)),
             ("linear 100-D pf=1e-4", lambda: ref.linear_standard_normal(100, norm.isf(1e-4))),
             ("linear 100-D pf=1e-6", lambda: ref.linear_pf_1e6(100)),
             ("four-branch (4 modes)", ref.four_branch_series),
             ("four-branch (1 margin)", ref.four_branch_single)]
    variants = [("default (K=1)", {}, None),
                ("K=4", {"components": 4}, None),
                ("N=1000", {"n_per_level": 1000}, None),
                ("N=1000 no smoothing", {"n_per_level": 1000, "smoothing": 1.0}, None),
                ("full covariance", {"covariance": "full"}, None),
                ("no variance floor", {}, 0.0)]
    header = (f"{'case':23s} {'variant':20s} {'ref pf':>9s} {'bias':>6s} {'obs CoV':>7s} "
              f"{'rep CoV':>7s} {'rep/obs':>7s} {'evals':>7s} {'MC evals':>9s} {'gain':>7s} "
              f"{'not conv.':>9s}")
    print(header)
    print("-" * len(header))
    for label, make in cases:
        dim = make().problem.dim
        for name, options, floor in variants:
            if name == "K=4" and dim > 2:
                continue
            if name.startswith("N=1000") and dim < 100:
                continue
            if name == "full covariance" and dim < 100:
                continue
            if name == "no variance floor" and (dim > 2 or "four" in label):
                continue
            default_floor = ce.VARIANCE_FLOOR
            if floor is not None:
                ce.VARIANCE_FLOOR = floor
            pfs, covs, calls, failed = [], [], [], 0
            for seed in range(repeats):
                case = make()
                result = ce.cross_entropy(case.problem, seed=20_000 + seed, **options)
                pfs.append(result.pf)
                covs.append(result.cov)
                calls.append(result.n_calls)
                failed += not result.converged
            ce.VARIANCE_FLOOR = default_floor
            pfs = np.array(pfs)
            observed = float(pfs.std(ddof=1) / pfs.mean()) if pfs.mean() > 0 else math.nan
            reported = float(np.nanmean(covs)) if np.any(np.isfinite(covs)) else math.nan
            mc = crude_equivalent(case.pf, observed)
            print(f"{label:23s} {name:20s} {case.pf:9.3e} {pfs.mean() / case.pf:6.3f} "
                  f"{observed:7.3f} {reported:7.3f} {reported / observed:7.2f} "
                  f"{np.mean(calls):7.0f} {mc:9.3g} {mc / np.mean(calls):7.1f} {failed:9d}")
    print("\nK: Gaussian components; N: samples per level (default 2000); smoothing 0.7 by "
          "default;\nfull covariance: fitted d x d covariances (default above 10 variables: "
          "means only);\nno variance floor: fitted variances not raised to 1 (default: they "
          "are); not conv.: runs that did not reach the failure domain.")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=20, help="runs per method and problem")
    parser.add_argument("--study-repeats", type=int, default=200,
                        help="runs per case of the subset-simulation study")
    parser.add_argument("--only", default="",
                        help="subset study: only the settings whose label contains this text")
    parser.add_argument("--skip", nargs="*", default=[], choices=["methods", "study", "overhead", "ce"])
    args = parser.parse_args()
    warnings.simplefilter("ignore")
    repeats = max(2, args.repeats)
    if "methods" not in args.skip:
        print(f"1. Methods on the reference problems, {repeats} repeats each (FORM and SORM: "
              "one run)\n")
        print_methods_table(repeats)
    if "study" not in args.skip:
        print(f"\n2. Subset simulation: reported against observed CoV, {args.study_repeats} "
              "runs per case\n")
        subset_study(max(10, args.study_repeats), args.only)
    if "overhead" not in args.skip:
        print(f"\n3. Engine overhead per limit-state evaluation (median of {min(repeats, 5)} "
              "runs)\n")
        overhead(min(repeats, 5))
    if "ce" not in args.skip:
        print(f"\n4. Cross-entropy importance sampling, {args.study_repeats} runs per case\n")
        cross_entropy_study(max(10, args.study_repeats))


if __name__ == "__main__":
    main()
