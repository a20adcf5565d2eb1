"""Which uncertainty drives the risk of each member: importance factors and Sobol indices of
its governing mode (`assess.surrogate.sensitivity.risk_drivers`).

For every member, the governing mode is the mode with the lowest beta after updating in the
members step. Its importance factors alpha^2 come from the FORM design point the members step
already computed (read from the same result, no new FORM); where FORM did not converge, from
the failure samples of a subset simulation. The Sobol indices of the safety margin g of that
mode come from a sparse polynomial-chaos expansion on a few hundred evaluations of the
vectorised limit state (Sudret 2008, Reliab. Eng. Syst. Saf. 93:964-979). Both are merged per
physical variable (a population's precision and location and the variable's own scatter
count as that variable).

Importance factors say what pushes the member towards failure at its design point; Sobol
indices say what makes its safety margin uncertain over the whole range. A variable high in
both is the one whose testing is most likely to change the verdict.
"""

from __future__ import annotations

import dataclasses
import math
import zlib

from assess.surrogate.sensitivity import risk_drivers

#: Evaluations of the limit state for the polynomial-chaos expansion per member [-] and its
#: highest degree: on the demo members degree 2 on 150 points leaves a leave-one-out error
#: below 0.3 % and moves the indices by at most about 0.02 against degree 3 on 300 points,
#: at a tenth of the time (measured on the demo site's governing modes).
SOBOL_SAMPLES, SOBOL_DEGREE = 150, 2


@dataclasses.dataclass
class MemberDrivers:
    """Which uncertainty drives the risk of one member's governing mode.

    Attributes
    ----------
    member, mode : str
    beta : float
        Beta after updating of the governing mode [-].
    importance : dict or None
        alpha^2 per physical variable [-] (sums to 1).
    importance_source : str
        "FORM design point" or "failure samples of subset simulation".
    sobol_first, sobol_total : dict or None
        First-order and total Sobol indices of g per physical variable [-].
    sobol_loo_error : float or None
        Relative leave-one-out error of the expansion [-].
    note : str
        Why something is missing, in plain words.
    n_calls : int
        Limit-state evaluations spent here [-].
    """

    member: str
    mode: str
    beta: float
    importance: dict | None
    importance_source: str
    sobol_first: dict | None
    sobol_total: dict | None
    sobol_loo_error: float | None
    note: str = ""
    n_calls: int = 0

    def variables(self) -> list[str]:
        """Variables by their largest share (alpha^2 or total index), largest first."""
        names = list(dict.fromkeys([*(self.importance or {}), *(self.sobol_total or {})]))

        def share(name):
            values = [(self.importance or {}).get(name), (self.sobol_total or {}).get(name)]
            return max((v for v in values if v is not None and math.isfinite(v)), default=0.0)

        return sorted(names, key=lambda n: -share(n))

    def to_dict(self) -> dict:
        return dataclasses.asdict(self)


def governing_results(assessment) -> list:
    """Per member, the mode result (not the system) with the lowest beta after updating;
    members whose modes all lack a finite beta are left out."""
    best: dict = {}
    for r in assessment.results:
        if r.mode == "system" or not math.isfinite(r.after.beta):
            continue
        if r.member not in best or r.after.beta < best[r.member].after.beta:
            best[r.member] = r
    return list(best.values())


def member_drivers(
    site, update, result, *, seed: int, sobol_samples: int = SOBOL_SAMPLES
) -> MemberDrivers:
    """`MemberDrivers` of one members-step result (`assess.site.before_after.MemberResult`),
    on the "after" model that the members step used (the same ``update``)."""
    from assess.site.before_after import state_model

    model = state_model(site, update, result.member, "after")
    problem = model.problem([result.mode])
    own_seed = (int(seed) + zlib.crc32(f"drivers/{result.member}/{result.mode}".encode())) % 2**32
    found = risk_drivers(
        problem,
        form_result=result.form_after,
        seed=own_seed,
        n_samples=sobol_samples,
        max_degree=SOBOL_DEGREE,
    )
    note = found["sobol_note"]
    if found["importance"] is None:
        note = "; ".join(filter(None, ["no importance factors: no failure sample found", note]))
    return MemberDrivers(
        member=result.member,
        mode=result.mode,
        beta=float(result.after.beta),
        importance=found["importance"],
        importance_source=found["importance_source"],
        sobol_first=found["sobol_first"],
        sobol_total=found["sobol_total"],
        sobol_loo_error=found["sobol_loo_error"],
        note=note,
        n_calls=found["n_calls"],
    )


def site_drivers(
    site, update, assessment, *, seed: int, sobol_samples: int = SOBOL_SAMPLES
) -> list[MemberDrivers]:
    """`MemberDrivers` of every member's governing mode, lowest beta first."""
    rows = [
        member_drivers(site, update, r, seed=seed, sobol_samples=sobol_samples)
        for r in governing_results(assessment)
    ]
    return sorted(rows, key=lambda d: d.beta)


def population_shares(decision, alternative: str = "keep as is") -> dict:
    """Which population's uncertainty moves the member's beta over the posterior draws: the
    Sobol index of each material population (its mu and sigma together) for the beta of
    the mode that carries most of the member's pf under ``alternative``.

    The value-of-information surrogate is additive in the standardised theta columns
    (constant, linear and squared terms, `assess.site.worth_decision.QuadraticSurrogate`),
    so with independent populations the first-order and total indices of a population are
    equal: the variance over the draws of its own terms over the variance of the
    prediction (Sobol 1993, for an additive model; Saltelli et al. 2008, *Global
    Sensitivity Analysis: The Primer*, Wiley, ch. 1, from memory). The largest correlation
    between columns of different populations is returned with them: when it is not small,
    the shares are approximate.

    Returns
    -------
    dict
        ``mode``, ``shares`` (population -> share [-], largest first), ``largest_correlation``
        between columns of different populations [-]; empty when there is no surrogate.
    """
    import numpy as np
    from scipy import special

    modes = decision.surrogates.get(alternative) or {}
    if not modes:
        return {}
    theta = decision.member_theta()
    weight = {m: float(np.mean(special.ndtr(-s.predict(theta)))) for m, s in modes.items()}
    mode = max(weight, key=lambda m: weight[m])
    surrogate = modes[mode]
    z = surrogate._standardise(theta)
    used = np.flatnonzero(surrogate.used_)
    p = z.shape[1]
    linear, square = surrogate.coef_[1 : 1 + p], surrogate.coef_[1 + p : 1 + 2 * p]
    columns = [decision.member_columns[k] for k in used]
    groups = [c.split(".")[0] for c in columns]
    total = float(np.var(surrogate.predict(theta)))
    shares = {}
    for group in dict.fromkeys(groups):
        pick = np.array([g == group for g in groups])
        part = z[:, pick] @ linear[pick] + (z[:, pick] ** 2) @ square[pick]
        shares[group] = float(np.var(part) / total) if total > 0 else 0.0
    correlation = np.corrcoef(z, rowvar=False) if p > 1 else np.ones((1, 1))
    between = [
        abs(correlation[i, j])
        for i in range(p)
        for j in range(p)
        if groups[i] != groups[j] and np.isfinite(correlation[i, j])
    ]
    return {
        "alternative": alternative,
        "mode": mode,
        "shares": dict(sorted(shares.items(), key=lambda kv: -kv[1])),
        "largest_correlation": float(max(between, default=0.0)),
    }


__all__ = [
    "MemberDrivers",
    "SOBOL_DEGREE",
    "SOBOL_SAMPLES",
    "governing_results",
    "member_drivers",
    "population_shares",
    "site_drivers",
]
