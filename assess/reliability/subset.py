"""Subset simulation with adaptive conditional sampling or the modified Metropolis algorithm.

References
----------
.. [1] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001, doi:10.1016/S0266-8920(01)00019-4.
.. [2] I. Papaioannou, W. Betz, K. Zwirglmaier and D. Straub, "MCMC algorithms for
   subset simulation," *Probabilistic Engineering Mechanics*, 41:89-103, 2015,
   doi:10.1016/j.probengmech.2015.06.006.
.. [3] H. P. Chan and T. L. Lai, "A general theory of particle filters in hidden Markov
   models and some applications," *Annals of Statistics*, 41(6):2877-2904, 2013,
   doi:10.1214/13-AOS1172 (variance estimate from the ancestral origins of the particles).
.. [4] L. Tierney, "Markov chains for exploring posterior distributions," *Annals of
   Statistics*, 22(4):1701-1728, 1994, doi:10.1214/aos/1176325750 (independence proposals;
   cycles of kernels that each keep the target invariant).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import special

from assess.errors import InputError
from assess.reliability.crude import check_int, check_real, resolve_seed
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf

SAMPLERS = ("acs", "mma")
TARGET_ACCEPTANCE = 0.44   # a* of adaptive conditional sampling [2]
LAMBDA_START = 0.6         # lambda_0 of adaptive conditional sampling [2]
MMA_PROPOSAL_STD = 1.0     # component proposal spread of the modified Metropolis algorithm [1]
DEFAULT_P0 = 0.2
"""Default level probability [-] (kept in issue 14; p0 = 0.15 with N = 1400 did best in 2-D,
see the Notes of `subset_simulation` and benchmarks/reliability_methods.py)."""
DEFAULT_MAX_LEVELS = 30
"""Default deepest level: pf down to about 0.2**30 = 1e-21 (beta about 9.5) [-]."""
MAX_SAMPLES_PER_LEVEL = 10**6
"""Upper bound on ``n_per_level`` [-]."""
MAX_LEVEL_VALUES = 2 * 10**7
"""Upper bound on ``n_per_level`` x number of variables: one level's points in memory
(8 bytes each, about 160 MB) [-]."""
MAX_REPEAT_CALLS = 10**7
DIRECTIONAL_SEEDS_PER_VARIABLE = 10
"""Directional steps are used only with at least this many seeds per variable in each half
of a level's seeds (direction and lower bound fitted on the other half) [-]."""
"""Default budget of limit-state evaluations when running until a requested CoV [-]."""


def _chain_gamma(indicator: np.ndarray, lengths: np.ndarray, n_total: int) -> float:
    """Chain-correlation factor gamma of one level, eq. (29) of Au & Beck [1].

    ``indicator`` has shape (max chain length, n_chains); entries beyond a
    chain's length are ignored.
    """
    n_chains = indicator.shape[1]
    max_len = indicator.shape[0]
    if max_len < 2:
        return 0.0
    valid = np.arange(max_len)[:, None] < lengths[None, :]
    x = np.where(valid, indicator, False).astype(float)
    p = x.sum() / valid.sum()
    r0 = p * (1.0 - p)
    if r0 <= 0.0:
        return 0.0
    gamma = 0.0
    for lag in range(1, max_len):
        pairs = np.maximum(lengths - lag, 0).sum()
        if pairs == 0:
            break
        r_lag = (x[:-lag] * x[lag:]).sum() / pairs - p * p
        gamma += 2.0 * (1.0 - lag * n_chains / n_total) * r_lag / r0
    return max(gamma, 0.0) if math.isfinite(gamma) else 0.0


class _ChainSampler:
    """Advances all Markov chains of a level together, one limit-state call per step."""

    def __init__(self, kind: str, rng: np.random.Generator, directional: bool | None = None):
        self.kind = kind
        self.rng = rng
        self.log_lambda = math.log(LAMBDA_START)
        self.n_adaptations = 0
        self.directional = directional
        self.n_directional_levels = 0

    def _directions(self, seeds_u: np.ndarray):
        """Per chain: unit direction e and lower bound t_lo of t = e.u for directional steps,
        each fitted on the other half of the seeds (cross-fitted, so that the kernel of a
        chain does not depend on its own seed); None where not used."""
        n_chains, dim = seeds_u.shape
        if self.kind != "acs" or self.directional is False:
            return None
        half = np.arange(n_chains) % 2
        if self.directional is None and n_chains // 2 < DIRECTIONAL_SEEDS_PER_VARIABLE * dim:
            return None
        directions = np.empty((n_chains, dim))
        lower = np.empty(n_chains)
        for k in (0, 1):
            other = seeds_u[half != k]
            mean = other.mean(axis=0)
            length = float(np.linalg.norm(mean))
            if length == 0.0:
                return None
            directions[half == k] = mean / length
            lower[half == k] = (other @ (mean / length)).min()
        if self.directional is None and lower.min() <= 0.0:
            return None   # the seeds do not lie on one side of a plane through the origin
        return directions, lower

    def run(self, problem: StandardNormalProblem, seeds_u: np.ndarray, seeds_g: np.ndarray,
            threshold: float, lengths: np.ndarray) -> dict:
        max_len = int(lengths.max())
        n_chains, dim = seeds_u.shape
        chain_u = np.empty((max_len, n_chains, dim))
        chain_g = np.empty((max_len, n_chains))
        chain_u[0], chain_g[0] = seeds_u, seeds_g
        current_u, current_g = seeds_u.copy(), seeds_g.copy()
        sigma_hat = seeds_u.std(axis=0, ddof=1) if n_chains > 1 else np.ones(dim)
        directions = self._directions(seeds_u) if n_chains >= 4 else None
        self.n_directional_levels += directions is not None
        accepted = proposed = 0
        for step in range(1, max_len):
            active = np.flatnonzero(lengths > step)
            if directions is not None and step % 2 == 0:
                accept = self._directional_step(problem, current_u, current_g, active,
                                                threshold, *directions)
            elif self.kind == "acs":
                accept = self._acs_step(problem, current_u, current_g, active, threshold,
                                        sigma_hat)
            else:
                accept = self._mma_step(problem, current_u, current_g, active, threshold)
            accepted += int(accept.sum())
            proposed += active.size
            chain_u[step], chain_g[step] = current_u, current_g
        return {"chain_u": chain_u, "chain_g": chain_g,
                "acceptance_rate": accepted / proposed if proposed else math.nan,
                "lambda": math.exp(self.log_lambda)}

    def _acs_step(self, problem, current_u, current_g, active, threshold, sigma_hat):
        """Conditional-normal proposal v = rho u + sqrt(1 - rho^2) xi, whole-vector accept [2]."""
        sigma = np.minimum(1.0, math.exp(self.log_lambda) * sigma_hat)
        rho = np.sqrt(1.0 - sigma**2)
        candidate = (rho * current_u[active]
                     + sigma * self.rng.standard_normal((active.size, current_u.shape[1])))
        g_candidate = problem.g(candidate)
        accept = g_candidate <= threshold
        current_u[active[accept]] = candidate[accept]
        current_g[active[accept]] = g_candidate[accept]
        # Robbins-Monro update of ln(lambda) towards the target acceptance rate [2].
        self.n_adaptations += 1
        self.log_lambda += (accept.mean() - TARGET_ACCEPTANCE) / math.sqrt(self.n_adaptations)
        return accept

    def _directional_step(self, problem, current_u, current_g, active, threshold,
                          directions, lower):
        """Independence proposal along e: t' drawn from the standard normal restricted to
        [t_lo, inf), the rest of u kept; accepted if inside the subset [4]_.

        With u = t e + w, the target phi(t) phi(w) 1_F and the proposal density
        q(t') = phi(t') / Phi(-t_lo) give the Metropolis-Hastings ratio 1_F(u') for t >= t_lo;
        a chain below t_lo cannot make this move (q(t) = 0) and stays, which keeps detailed
        balance. The aCS steps in between move w and reach t < t_lo."""
        e, t_lo = directions[active], lower[active]
        t = np.einsum("ij,ij->i", current_u[active], e)
        able = np.flatnonzero(t >= t_lo)
        accept = np.zeros(active.size, dtype=bool)
        if able.size:
            tail = special.ndtr(-t_lo[able])
            t_new = -special.ndtri(self.rng.random(able.size) * tail)
            candidate = current_u[active[able]] + (t_new - t[able])[:, None] * e[able]
            g_candidate = problem.g(candidate)
            inside = g_candidate <= threshold
            accept[able[inside]] = True
            current_u[active[able[inside]]] = candidate[inside]
            current_g[active[able[inside]]] = g_candidate[inside]
        return accept

    def _mma_step(self, problem, current_u, current_g, active, threshold):
        """Component-wise Metropolis on phi, then accept if inside the subset [1]."""
        u = current_u[active]
        candidate = u + MMA_PROPOSAL_STD * self.rng.standard_normal(u.shape)
        ratio = np.exp(-0.5 * (candidate**2 - u**2))
        keep_component = self.rng.random(u.shape) < ratio
        candidate = np.where(keep_component, candidate, u)
        moved = np.flatnonzero(keep_component.any(axis=1))
        accept = np.zeros(active.size, dtype=bool)
        if moved.size:
            g_candidate = problem.g(candidate[moved])
            inside = g_candidate <= threshold
            accept[moved[inside]] = True
            current_u[active[moved[inside]]] = candidate[moved[inside]]
            current_g[active[moved[inside]]] = g_candidate[inside]
        return accept


def _lineage_cov(records: list, n_per_level: int) -> float:
    """CoV of the subset-simulation pf from the ancestral origins of the samples [3]_.

    ln pf = sum_i ln P_i; to first order its error is the sum over levels and
    samples of (I_ik - P_i) / (N P_i). Every sample descends from one sample
    of the first (direct Monte Carlo) level, its root; the roots are
    independent, so the squared sums per root add up to the variance. This
    counts the correlation along each chain, between chains grown from related
    seeds, and between levels, which the per-level formula of Au & Beck leaves
    out.
    """
    totals = np.zeros(n_per_level)
    for record in records:
        p = record["p"]
        if not 0.0 < p:
            return math.nan
        np.add.at(totals, record["roots"], (record["inside"] - p) / (n_per_level * p))
    return float(math.sqrt(float(totals @ totals)))


def _one_run(problem: StandardNormalProblem, n_per_level: int, p0: float,
             rng: np.random.Generator, sampler: str, max_levels: int,
             directional: bool | None = None) -> dict:
    """One subset-simulation run: pf, its CoV, the levels and warnings."""
    n_seeds_target = round(n_per_level * p0)
    chains = _ChainSampler(sampler, rng, directional)
    u = rng.standard_normal((n_per_level, problem.dim))
    g = problem.g(u)
    roots = np.arange(n_per_level)
    lengths = np.ones(n_per_level, dtype=int)
    chain_g = g.reshape((1, n_per_level))
    acceptance, lam = math.nan, math.nan

    levels, records, warnings = [], [], []
    pf = 1.0
    converged = False
    n_fail = 0
    for level in range(max_levels):
        n_fail = int(np.count_nonzero(g <= 0.0))
        final = n_fail >= n_seeds_target or level == max_levels - 1
        if final:
            threshold = 0.0
        else:
            g_sorted = np.sort(g)
            threshold = 0.5 * (g_sorted[n_seeds_target - 1] + g_sorted[n_seeds_target])
        inside = g <= threshold
        p_level = float(inside.mean())
        records.append({"p": p_level, "inside": inside.astype(float), "roots": roots})
        gamma = _chain_gamma(chain_g <= threshold, lengths, n_per_level)
        cov2 = ((1.0 - p_level) / (n_per_level * p_level) * (1.0 + gamma)
                if p_level > 0 else math.nan)
        levels.append({"level": level + 1, "threshold": float(threshold),
                       "conditional_probability": p_level, "gamma": gamma,
                       "cov": math.sqrt(cov2) if math.isfinite(cov2) else math.nan,
                       "acceptance_rate": acceptance, "lambda": lam})
        pf *= p_level
        if final:
            converged = n_fail > 0 and n_fail >= n_seeds_target
            if not converged:
                warnings.append(
                    f"subset simulation stopped at max_levels={max_levels} with only {n_fail} "
                    f"failed samples in the last level (pf < about {p0:.2g}^{max_levels}); "
                    "raise max_levels or n_per_level")
            break
        if p_level >= 1.0:
            warnings.append(
                f"level {level + 1}: the threshold did not move below {threshold:.6g} "
                "(the limit state is flat over the samples); subset simulation cannot "
                "progress - check the limit state or use crude_monte_carlo")
            pf = 0.0 if n_fail == 0 else pf * n_fail / n_per_level
            break
        seed_index = np.flatnonzero(inside)
        seed_index = seed_index[rng.permutation(seed_index.size)]
        seeds_u, seeds_g = u[seed_index], g[seed_index]
        n_chains = seeds_g.size
        lengths = np.full(n_chains, n_per_level // n_chains)
        lengths[: n_per_level % n_chains] += 1
        run = chains.run(problem, seeds_u, seeds_g, threshold, lengths)
        valid = np.arange(run["chain_g"].shape[0])[:, None] < lengths[None, :]
        u, g = run["chain_u"][valid], run["chain_g"][valid]
        chain_of_sample = np.broadcast_to(np.arange(n_chains), valid.shape)[valid]
        roots = roots[seed_index][chain_of_sample]
        chain_g = run["chain_g"]
        acceptance, lam = run["acceptance_rate"], run["lambda"]
        if sampler == "mma":
            lam = math.nan

    cov2_sum = sum(lv["cov"]**2 for lv in levels)
    cov_au_beck = math.sqrt(cov2_sum) if pf > 0 and math.isfinite(cov2_sum) else math.nan
    cov = _lineage_cov(records, n_per_level) if pf > 0 else math.nan
    if pf == 0 and not warnings:
        warnings.append("no failed sample: pf = 0 is not an estimate")
    return {"pf": pf, "cov": cov, "cov_au_beck": cov_au_beck, "levels": levels,
            "directional_levels": chains.n_directional_levels,
            "warnings": warnings, "converged": converged, "n_failures_last_level": n_fail,
            "last_u": u, "last_g": g}


def subset_simulation(problem: StandardNormalProblem, *, n_per_level: int = 1000,
                      p0: float = DEFAULT_P0, seed=None, sampler: str = "acs",
                      max_levels: int = DEFAULT_MAX_LEVELS, target_cov: float | None = None,
                      max_calls: int | None = None,
                      directional: bool | None = None) -> ReliabilityResult:
    """Probability of failure by subset simulation.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure (a series system uses its
        minimum over modes, which subset simulation handles directly).
    n_per_level : int, default 1000
        Samples per level N [-], at most `MAX_SAMPLES_PER_LEVEL` (10**6) and
        N x dim at most `MAX_LEVEL_VALUES` (2 x 10**7, memory). The run costs
        about N (1 + (m - 1)(1 - p0)) limit-state calls for m levels.
    p0 : float, default 0.2
        Level probability: each threshold is the p0-quantile of g [-] (0.1 before
        issue 14; see `DEFAULT_P0`).
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    sampler : {"acs", "mma"}, default "acs"
        Conditional sampler: adaptive conditional sampling [2]_ or the modified
        Metropolis algorithm [1]_.
    max_levels : int, default 30
        Maximum number of levels (pf down to about p0**max_levels) [-].
    target_cov : float, optional
        Run independent repetitions of N samples per level and pool them until
        the CoV of the pooled pf is at most this value [-] (or ``max_calls``
        is spent). Without it, one run.
    max_calls : int, optional
        Budget of limit-state evaluations for ``target_cov`` [-]; default
        `MAX_REPEAT_CALLS` (10**7).
    directional : bool or None, default None
        With aCS, make every second chain step a directional step (see Notes). None: only
        where it suits - at least `DIRECTIONAL_SEEDS_PER_VARIABLE` (10) seeds per variable
        in each half of the level's seeds (so in low dimension: up to 10 variables with
        the default N p0 = 200) and all seeds of each half on the far side of the plane
        through the origin normal to the direction fitted on them (t_lo > 0: one failure
        region, not several round the origin); True: at every level; False: plain aCS.

    Returns
    -------
    ReliabilityResult
        pf = prod P_i, beta, cov, and in ``details["levels"]`` the threshold,
        conditional probability, chain-correlation factor gamma, level CoV of
        Au & Beck, acceptance rate and aCS scaling lambda of each level; with
        ``target_cov``, ``details["runs"]`` lists the repetitions.

    Notes
    -----
    Reported CoV. Each sample descends from one sample of the first level (its
    root). To first order the relative error of pf is
    sum_i sum_k (I_ik - P_i) / (N P_i) over levels i and samples k, and the sums
    per root are independent, so cov^2 = sum_roots (sum of the root's terms)^2
    (an ancestral-origin variance estimate in the sense of Chan & Lai [3]_). It
    counts the correlation of the samples within each chain, between chains
    grown from related seeds and between levels. The per-level formula of Au &
    Beck [1]_, delta_i^2 = (1 - P_i) / (N P_i) (1 + gamma_i) summed over levels,
    leaves the last two out; it is kept as ``details["cov_au_beck"]``.
    Measured over 200 runs of linear limit states at pf = 1e-4 and 1e-6 in 2 and 100
    dimensions (benchmarks/reliability_methods.py, section 2), the mean reported CoV is
    0.85-1.08 of the observed spread of pf for the settings below (default N = 1000,
    p0 = 0.2: 0.85-1.06; the per-level formula of Au & Beck: 0.78-1.0).

    The N P_i seeds of a level are shuffled and each grows a chain; all chains
    advance together, so each step costs one vectorised limit-state call. With
    aCS, the proposal spread sigma_k = min(1, lambda sigma_hat_k) uses the seeds'
    sample standard deviation sigma_hat_k, and ln lambda is updated after every
    step from the acceptance rate of that step's proposals, with step size
    1/sqrt(t), target a* = 0.44 and lambda_0 = 0.6, carried over from level to
    level [2]_. Adapting after each joint step of the N p0 chains uses N p0
    proposals per update, which equals the p_a N proposals per update of [2]_
    for p_a = p0 (= 0.1 by default).

    Directional steps (issue 14; ``directional``). For a linear limit state only the
    component t = a.u along the design direction matters, and aCS moves it as a local
    random walk: each level's variance is 2.3-3.5 times that of independent samples
    (chain-correlation factor gamma, median 1.8), whatever the dimension. Where they
    suit, every second step of a chain is therefore an independence proposal along a
    direction e: t' = e.u' is drawn from the standard normal restricted to
    [t_lo, inf) and the rest of u kept, accepted if inside the subset (Metropolis-Hastings
    with an independence proposal; a cycle of two kernels that each keep the conditional
    law invariant keeps it too, Tierney [4]_). e is the normalised mean of the seeds and
    t_lo the smallest e.u of the seeds, both fitted on the other half of the seeds than
    the chain's own (cross-fitted; fitted on all seeds, the kernel depends on the chain's
    own start and the estimate was biased, 0.8 in 100-D). The combination is ours, not
    from a paper. It is used when each half has at least 10 seeds per variable (with
    N p0 = 200: up to 10 variables) and all its seeds lie beyond the plane through the
    origin normal to e (one failure region; not for regions all round the origin such
    as the four-branch system). In 100-D it stays off: forced on, the direction fitted
    from 100 seeds is too rough and the runs were biased (pf 0.81-0.89 of the exact one).

    Cost and accuracy (linear limit states, 200 runs, issue 14; CoV observed over the
    runs, scaled to 10 000 evaluations as 1/sqrt(evaluations) in brackets):
    2-D, pf = 1e-6: default N = 1000, p0 = 0.2: 7400 evaluations, CoV 0.30 (0.255);
    N = 1250, p0 = 0.2: 9200, 0.26 (0.25); N = 1400, p0 = 0.15: 9700, 0.22 (0.21), the
    best setting found, meeting the 0.25 within 10 000 evaluations of issue 14; plain aCS
    (directional=False) needed about 16 000 for 0.25. 2-D, pf = 1e-4: default 5000, 0.22;
    N = 1400, p0 = 0.15: 6200, 0.17. 5-D and 10-D, pf = 1e-6, N = 1000 (scratch runs):
    CoV at 10 000 0.28 and 0.30 against 0.32 and 0.33 with plain aCS.
    100-D (plain aCS), pf = 1e-6: N = 1250, p0 = 0.2: 9300 evaluations for 0.33 (0.32);
    N = 1800, p0 = 0.1: 10 800 for 0.28 (0.29), the best of the settings tried; 0.25 is
    not reached within 10 000 evaluations (N = 2300, p0 = 0.1: 0.26 at 13 800; about
    15 000-16 000 are needed, or ``target_cov=0.25``, which pools independent runs).
    Tried without gain (plain aCS, 2-D and 100-D, pf = 1e-6; CoV at 10 000): p0 from 0.05
    to 0.5 (0.29-0.42), the target acceptance a* 0.30 and 0.55 (0.33-0.39 against
    0.29-0.31 at 0.44), lambda_0 0.3 and 1.0, the adaptation restarted at each level,
    half the seeds with chains twice as long, one burn-in step, the last level accepted
    from N p0 / 2 failures (0.28-0.29), the modified Metropolis algorithm (0.42-0.55), a
    random spread exp(0.5 Z) of lambda per chain and step (0.40-0.44), and the generalised
    preconditioned Crank-Nicolson proposal (Rudolf & Sprungk 2018, Found. Comput. Math.
    18:309-343) reversible for a normal law fitted to the seeds (2-D: 0.32; 100-D: broke
    down, mean pf 2.6 times the exact one). All in benchmarks/reliability_methods.py, section 2.

    If no failure is reached within ``max_levels`` levels, or a level does not
    lower the threshold (a flat limit state), the run stops with
    ``converged=False`` and a warning; pf may then be 0 (beta = inf), and
    ``details["pf_upper"]`` gives p0**(levels - 1) times the bound 3/N on the
    last level (rule of three).
    """
    return _subset(problem, n_per_level=n_per_level, p0=p0, seed=seed, sampler=sampler,
                   max_levels=max_levels, target_cov=target_cov, max_calls=max_calls,
                   directional=directional)[0]


def _subset(problem, *, n_per_level, p0, seed, sampler, max_levels, target_cov, max_calls,
            directional=None):
    """`subset_simulation` and the samples of the last level of its first run (u, g)."""
    caller = "subset_simulation"
    n_per_level = check_int(n_per_level, "n_per_level", caller, 10, MAX_SAMPLES_PER_LEVEL,
                            "memory")
    if n_per_level * problem.dim > MAX_LEVEL_VALUES:
        raise InputError(f"The 'n_per_level' parameter of {caller} times the number of "
                         f"variables ({problem.dim}) must not exceed {MAX_LEVEL_VALUES:.0e} "
                         f"(memory of one level). Got n_per_level={n_per_level} instead.")
    p0 = check_real(p0, "p0", caller, 0.0, 0.5 + 1e-12)
    max_levels = check_int(max_levels, "max_levels", caller, 1, 200)
    if sampler not in SAMPLERS:
        raise InputError(f"The 'sampler' parameter of {caller} must be one of "
                         f"{', '.join(repr(s) for s in SAMPLERS)}. Got {sampler!r} instead.")
    if target_cov is not None:
        target_cov = check_real(target_cov, "target_cov", caller, 0.0, 10.0)
    max_calls = (MAX_REPEAT_CALLS if max_calls is None
                 else check_int(max_calls, "max_calls", caller, 1))
    if round(n_per_level * p0) < 2:
        raise InputError(f"n_per_level * p0 must give at least 2 chains; got "
                         f"n_per_level={n_per_level}, p0={p0}")
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls
    counters = problem.counters()
    settings = {"n_per_level": n_per_level, "p0": p0, "sampler": sampler,
                "max_levels": max_levels, "directional": directional}

    if directional not in (None, True, False):
        raise InputError(f"The 'directional' parameter of {caller} must be None, True or "
                         f"False. Got {directional!r} instead.")
    runs = [_one_run(problem, n_per_level, p0, rng, sampler, max_levels, directional)]
    if target_cov is not None:
        settings.update({"target_cov": target_cov, "max_calls": max_calls})
        per_run = problem.n_calls - calls_before
        while True:
            pooled = _pool(runs)
            if pooled["cov"] <= target_cov or pooled["pf"] == 0.0:
                break
            if problem.n_calls - calls_before + per_run > max_calls:
                break
            runs.append(_one_run(problem, n_per_level, p0, rng, sampler, max_levels,
                                 directional))

    first = runs[0]
    warnings = list(first["warnings"])
    details = {"levels": first["levels"], "n_levels": len(first["levels"]),
               "cov_au_beck": first["cov_au_beck"], "cov_method": "ancestral origins",
               "directional_levels": first["directional_levels"]}
    if len(runs) == 1:
        pf, cov, converged = first["pf"], first["cov"], first["converged"]
    else:
        pooled = _pool(runs)
        pf, cov = pooled["pf"], pooled["cov"]
        converged = all(r["converged"] for r in runs) and cov <= target_cov
        for r in runs[1:]:
            warnings += [w for w in r["warnings"] if w not in warnings]
        details["runs"] = [{"pf": r["pf"], "cov": r["cov"], "n_levels": len(r["levels"])}
                           for r in runs]
        details["cov_spread"] = pooled["cov_spread"]
        if cov > target_cov:
            warnings.append(f"the requested CoV {target_cov:g} was not reached within "
                            f"max_calls={max_calls}: CoV {cov:.3g} after {len(runs)} runs")
    if pf == 0.0:
        levels_done = len(first["levels"])
        details["pf_upper"] = min(1.0, p0 ** max(levels_done - 1, 0) * 3.0 / n_per_level)
    warnings += problem.nonfinite_warnings(counters)
    result = ReliabilityResult(
        method="subset_simulation", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings=settings, converged=converged, warnings=tuple(warnings), details=details)
    return result, (first["last_u"], first["last_g"])


def _pool(runs: list) -> dict:
    """Mean pf of independent runs, its CoV from the runs' own CoVs, and the CoV from
    their spread (for three runs or more)."""
    pfs = np.array([r["pf"] for r in runs])
    covs = np.array([r["cov"] for r in runs])
    pf = float(pfs.mean())
    if pf <= 0 or not np.all(np.isfinite(covs)):
        return {"pf": pf, "cov": math.inf, "cov_spread": math.nan}
    cov = float(math.sqrt(float(np.mean(covs**2)) / len(runs)))
    spread = (float(pfs.std(ddof=1) / pf / math.sqrt(len(runs))) if len(runs) >= 3
              else math.nan)
    return {"pf": pf, "cov": cov, "cov_spread": spread}
