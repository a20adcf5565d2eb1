"""Subset simulation with adaptive conditional sampling or the modified Metropolis algorithm.

References
----------
.. [1] S.-K. Au and J. L. Beck, "Estimation of small failure probabilities in high
   dimensions by subset simulation," *Probabilistic Engineering Mechanics*,
   16(4):263-277, 2001, doi:10.1016/S0266-8920(01)00019-4.
.. [2] I. Papaioannou, W. Betz, K. Zwirglmaier and D. Straub, "MCMC algorithms for
   subset simulation," *Probabilistic Engineering Mechanics*, 41:89-103, 2015,
   doi:10.1016/j.probengmech.2015.06.006.
"""

from __future__ import annotations

import math

import numpy as np

from assess.errors import InputError
from assess.reliability.crude import check_int, check_real, resolve_seed
from assess.reliability.problem import StandardNormalProblem
from assess.reliability.result import ReliabilityResult, beta_from_pf

SAMPLERS = ("acs", "mma")
TARGET_ACCEPTANCE = 0.44   # a* of adaptive conditional sampling [2]
LAMBDA_START = 0.6         # lambda_0 of adaptive conditional sampling [2]
MMA_PROPOSAL_STD = 1.0     # component proposal spread of the modified Metropolis algorithm [1]


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

    def __init__(self, kind: str, rng: np.random.Generator):
        self.kind = kind
        self.rng = rng
        self.log_lambda = math.log(LAMBDA_START)
        self.n_adaptations = 0

    def run(self, problem: StandardNormalProblem, seeds_u: np.ndarray, seeds_g: np.ndarray,
            threshold: float, lengths: np.ndarray) -> dict:
        max_len = int(lengths.max())
        n_chains, dim = seeds_u.shape
        chain_u = np.empty((max_len, n_chains, dim))
        chain_g = np.empty((max_len, n_chains))
        chain_u[0], chain_g[0] = seeds_u, seeds_g
        current_u, current_g = seeds_u.copy(), seeds_g.copy()
        sigma_hat = seeds_u.std(axis=0, ddof=1) if n_chains > 1 else np.ones(dim)
        accepted = proposed = 0
        for step in range(1, max_len):
            active = np.flatnonzero(lengths > step)
            if self.kind == "acs":
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


def subset_simulation(problem: StandardNormalProblem, *, n_per_level: int = 1000,
                      p0: float = 0.1, seed=None, sampler: str = "acs",
                      max_levels: int = 20) -> ReliabilityResult:
    """Probability of failure by subset simulation.

    Parameters
    ----------
    problem : StandardNormalProblem
        Limit state(s) in u-space; g <= 0 is failure (a series system uses its
        minimum over modes, which subset simulation handles directly).
    n_per_level : int, default 1000
        Samples per level N [-]. The run costs about
        N (1 + (m - 1)(1 - p0)) limit-state calls for m levels.
    p0 : float, default 0.1
        Level probability: each threshold is the p0-quantile of g [-].
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    sampler : {"acs", "mma"}, default "acs"
        Conditional sampler: adaptive conditional sampling [2]_ or the modified
        Metropolis algorithm [1]_.
    max_levels : int, default 20
        Maximum number of levels (pf down to about p0**max_levels) [-].

    Returns
    -------
    ReliabilityResult
        pf = prod P_i, beta, cov, and in ``details["levels"]`` the threshold,
        conditional probability, chain-correlation factor gamma, level CoV,
        acceptance rate and aCS scaling lambda of each level.

    Notes
    -----
    Level i CoV: delta_i^2 = (1 - P_i) / (N P_i) (1 + gamma_i), with gamma_i from
    the lag correlations of the level indicator along the chains (eq. 29 of [1]_;
    gamma_1 = 0 for the direct Monte Carlo level). The reported
    cov = sqrt(sum delta_i^2) treats the levels as uncorrelated, so it is a lower
    bound; the spread over repeated runs is typically somewhat larger.

    The N P_i seeds of a level are shuffled and each grows a chain; all chains
    advance together, so each step costs one vectorised limit-state call. With
    aCS, the proposal spread sigma_k = min(1, lambda sigma_hat_k) uses the seeds'
    sample standard deviation sigma_hat_k, and ln lambda is updated after every
    step from the acceptance rate of that step's proposals, with step size
    1/sqrt(t), target a* = 0.44 and lambda_0 = 0.6, carried over from level to
    level [2]_. Adapting after each joint step of the N p0 chains uses N p0
    proposals per update, which equals the p_a N proposals per update of [2]_
    for p_a = p0 (= 0.1 by default).

    Cost and accuracy at pf = 1e-6 (linear limit state, benchmarks/
    reliability_methods.py, 20 runs): N = 1000, p0 = 0.1 costs about 5900
    evaluations for a CoV of about 0.3 (100-D) to 0.5 (2-D); the CoV falls as
    1/sqrt(N), so CoV <= 0.25 needs N of about 3000 (about 18 000 evaluations).

    If no failure is reached within ``max_levels`` levels, or a level does not
    lower the threshold (a flat limit state), the run stops with
    ``converged=False`` and a warning; pf may then be 0 (beta = inf).
    """
    caller = "subset_simulation"
    n_per_level = check_int(n_per_level, "n_per_level", caller, 10)
    p0 = check_real(p0, "p0", caller, 0.0, 0.5 + 1e-12)
    max_levels = check_int(max_levels, "max_levels", caller, 1)
    if sampler not in SAMPLERS:
        raise InputError(f"The 'sampler' parameter of {caller} must be one of "
                         f"{', '.join(repr(s) for s in SAMPLERS)}. Got {sampler!r} instead.")
    n_seeds_target = int(round(n_per_level * p0))
    if n_seeds_target < 2:
        raise InputError(f"n_per_level * p0 must give at least 2 chains; got "
                         f"n_per_level={n_per_level}, p0={p0}")
    rng, recorded_seed = resolve_seed(seed, caller)
    calls_before = problem.n_calls
    chains = _ChainSampler(sampler, rng)

    u = rng.standard_normal((n_per_level, problem.dim))
    g = problem.g(u)
    indicator_shape = (1, n_per_level)
    lengths = np.ones(n_per_level, dtype=int)
    chain_g = g.reshape(indicator_shape)
    acceptance, lam = math.nan, math.nan

    levels, warnings = [], []
    pf = 1.0
    converged = False
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
        seeds_u, seeds_g = u[inside], g[inside]
        order = rng.permutation(seeds_g.size)
        seeds_u, seeds_g = seeds_u[order], seeds_g[order]
        n_chains = seeds_g.size
        lengths = np.full(n_chains, n_per_level // n_chains)
        lengths[: n_per_level % n_chains] += 1
        run = chains.run(problem, seeds_u, seeds_g, threshold, lengths)
        valid = np.arange(run["chain_g"].shape[0])[:, None] < lengths[None, :]
        u, g = run["chain_u"][valid], run["chain_g"][valid]
        chain_g = run["chain_g"]
        acceptance, lam = run["acceptance_rate"], run["lambda"]
        if sampler == "mma":
            lam = math.nan

    cov2_sum = sum(lv["cov"]**2 for lv in levels)
    cov = math.sqrt(cov2_sum) if pf > 0 and math.isfinite(cov2_sum) else math.nan
    if pf == 0 and not warnings:
        warnings.append("no failed sample: pf = 0 is not an estimate")
    return ReliabilityResult(
        method="subset_simulation", pf=pf, beta=beta_from_pf(pf), cov=cov,
        n_calls=problem.n_calls - calls_before, seed=recorded_seed,
        settings={"n_per_level": n_per_level, "p0": p0, "sampler": sampler,
                  "max_levels": max_levels},
        converged=converged, warnings=tuple(warnings),
        details={"levels": levels, "n_levels": len(levels)})
