"""The value-of-information decision problem of one member of a real site.

From the site's updated knowledge (`assess.site.materials.update_site`)
and a decision set-up (`assess.worth.decision_file`), build the
`DecisionProblem` of one member and the candidate test programmes:

1. **Draws theta.** The current posterior draws of (mu, sigma) of each material
   population ("concrete" on ln f_c, "steel", "cover", "area_ratio") in the
   member's zone, and in every zone a programme tests, taken at the same MCMC
   draw index so that the joint posterior (e.g. partial pooling of the concrete
   between zones) is kept. Columns are named ``"<quantity>.<mu|sigma>@<zone>"``.
2. **Conditional reliability.** Given theta the populations are known: f_c is
   lognormal with (mu, sigma) of ln f_c, f_y, cover and the area ratio are normal
   with (mu, sigma). Loads and model uncertainties stay random as in
   `assess.site.member_models.build_member_model`. The annual reliability index
   beta(theta) of each failure mode and each alternative comes from FORM.
3. **Surrogate.** FORM at every draw would be too slow, so FORM runs at a design
   of ~50 draws chosen by farthest-point selection in standardised theta, and a
   quadratic response surface (constant, linear and squared terms of the
   standardised member-zone columns) is fitted to beta by least squares
   (Bucher & Bourgund 1990, Struct. Saf. 7:57-66, from memory). Its
   leave-one-out error (PRESS, Allen 1974, Technometrics 16:125-127, from
   memory) is reported. The surrogate is judged by the leave-one-out error of the
   member's beta each mode's surrogate causes (`member_loo_errors`): above 0.05 as many
   design draws again are taken from the bulk of the posterior and the surface refitted;
   above 0.10 a warning is raised, above 0.30 the analysis stops.
4. **Costs over the horizon.** The annual pf of the member is the sum over its
   modes of Phi(-beta_mode) (the upper unimodal series bound, Cornell 1967).
   Years are treated as independent given theta: the failure-probability
   increment in year t is pf (1 - pf)^(t - 1), so the horizon pf is
   1 - (1 - pf)^T (the EN 1990 Annex C conversion, which overstates the horizon
   pf of a member whose resistance does not change). Failures are discounted
   with (1 + r)^-t. The same conversion gives the horizon target.

Alternatives and their assumed effects
--------------------------------------
- keep as is: cost 0, theta as it is;
- repair: residual area ratio back to the design-stage population (the
  area-ratio columns no longer matter);
- strengthen: the resistance model uncertainty theta_R of every mode is
  multiplied by ``capacity_factor`` (a stronger member with the same scatter);
- restrict load: the imposed (vehicle) load is multiplied by ``load_factor``;
  a yearly cost is turned into its present value over the horizon;
- replace: annual pf of a new member = target annual pf.

Half-cell surveys need P(active corrosion | theta), which the current-state
model does not carry. It is mapped from the area-ratio population as
P(area ratio < ``active_below``) = Phi((active_below - mu_r) / sigma_r) with
``active_below`` = 0.98 by default: a point whose bars have lost more than 2 %
of their section is taken as actively corroding. This proxy ignores corrosion
that has started but not yet removed section; it is stated in every result.
"""

from __future__ import annotations

import dataclasses
import math
import warnings
from functools import partial
from typing import Any, Callable, Sequence

import numpy as np
from scipy import special, stats

from assess.distributions import make_distribution
from assess.errors import AnalysisError, InputError
from assess.model import ProbabilisticModel
from assess.priors.normal_gamma import NormalGamma
from assess.reliability.form import form
from assess.site.knowledge import QUANTITIES
from assess.site.member_models import MemberModel, build_member_model
from assess.targets import Target, convert_reference_period, target_beta
from assess.updating.measurement_error import MEASUREMENT_ERRORS
from assess.updating.to_model import add_uncertain_quantity
from assess.worth.decision import Alternative, DecisionProblem, discount_factors
from assess.worth.decision_file import AlternativeSpec, DecisionSetup, ProgrammeSpec
from assess.worth.programmes import (
    BreakoutSurvey,
    CoreSampling,
    HalfCellSurvey,
    NormalSampleProgramme,
    Programme,
)

#: Physical variable of each population in the member models and its distribution given theta.
PHYSICAL = {
    "concrete": ("fc", "lognormal"),
    "steel": ("fy", "normal"),
    "cover": ("cover", "lognormal"),  # on ln c [ln mm]
    "area_ratio": ("area_ratio", "normal"),
}
#: Resistance model-uncertainty variables of the member models (`assess.site.member_models`).
RESISTANCE_UNCERTAINTY = ("theta_flexure", "theta_shear", "theta_punching")
#: Imposed (vehicle) load variable of the member models.
IMPOSED_LOAD = "imposed"
_SCALE_FAMILIES = ("normal", "lognormal", "gumbel", "gamma", "weibull")
#: Leave-one-out RMSE of the beta surrogate above which a warning is given [-].
SURROGATE_WARNING_RMSE = 0.10
#: ... and above which the analysis stops [-].
SURROGATE_FAILURE_RMSE = 0.30
#: Leave-one-out error of the member's beta above which more design points are taken from
#: the bulk of the posterior: 0.05 in beta is about 15 % in pf near beta = 3 [-].
SURROGATE_REFINE_RMSE = 0.05
#: Beyond this beta a subset-simulation stand-in for FORM is accepted whatever its CoV: its
#: pf (below 1e-12) carries no weight in the costs [-].
NEGLIGIBLE_BETA = 7.0
ALTERNATIVE_NAMES = {
    "keep": "keep as is",
    "repair": "repair",
    "strengthen": "strengthen",
    "restrict_load": "restrict load",
    "replace": "replace",
}


def parameter_name(quantity: str, statistic: str, zone: str) -> str:
    """Theta column name, e.g. ``"concrete.mu@L3"``."""
    return f"{quantity}.{statistic}@{zone}"


def zone_columns(zone: str) -> list[str]:
    """The eight theta columns of one zone, in the order of `QUANTITIES` (mu, sigma)."""
    return [parameter_name(q, s, zone) for q in QUANTITIES for s in ("mu", "sigma")]


def add_fixed_quantity(
    model: ProbabilisticModel, name: str, mu: float, sigma: float, kind: str = "lognormal"
) -> None:
    """Add a physical variable whose population is known: Y ~ N(mu, sigma^2).

    The counterpart of `assess.updating.to_model.add_uncertain_quantity` for a
    population fixed at one draw theta; Y = ln X for ``kind="lognormal"``.

    Parameters
    ----------
    model : ProbabilisticModel
    name : str
        Name of the physical variable (e.g. ``"fc"``).
    mu, sigma : float
        Mean and standard deviation of Y [units of Y], sigma > 0.
    kind : {"lognormal", "normal"}
    """
    if not (math.isfinite(mu) and math.isfinite(sigma) and sigma > 0):
        raise InputError(
            f"variable '{name}': a fixed population needs finite mu and sigma > 0, "
            f"got mu={mu!r}, sigma={sigma!r}"
        )
    if kind == "lognormal":
        model.add(
            name, make_distribution("lognormal", mu_ln=float(mu), sigma_ln=float(sigma), name=name)
        )
    elif kind == "normal":
        model.add(name, make_distribution("normal", mean=float(mu), std=float(sigma), name=name))
    else:
        raise InputError(f"variable '{name}': kind must be 'lognormal' or 'normal', got {kind!r}")


def _scaled(distribution, factor: float, name: str):
    if distribution.kind not in _SCALE_FAMILIES:
        raise AnalysisError(
            f"variable '{name}' has a {distribution.kind} distribution, which "
            f"cannot be scaled by a factor; the alternative's effect is undefined"
        )
    return make_distribution(
        distribution.kind,
        mean=float(distribution.mean) * factor,
        std=float(distribution.std) * factor,
        name=name,
    )


class ConditionalReliability:
    """Annual beta of each mode of a member given its zone's populations theta.

    Parameters
    ----------
    member_model : MemberModel
        Model of the member built with any knowledge (its loads, model
        uncertainties and failure modes are reused; its material populations are
        replaced).
    repair_population : NormalGamma
        Area-ratio population after a repair (the design-stage prior) [-].
    """

    def __init__(self, member_model: MemberModel, repair_population: NormalGamma):
        self.member_model = member_model
        self.repair_population = repair_population
        self.modes = list(member_model.modes)
        base = member_model.model
        physical = {v for v, _ in PHYSICAL.values()}
        # further bar layers (top bars of continuous members) take their zone's populations
        self._layers = [
            (variable, quantity)
            for quantity, (main, _) in PHYSICAL.items()
            for cover, ratio in getattr(member_model, "layers", {}).values()
            for variable in (cover, ratio)
            if variable != main and variable in base.names and variable.startswith(main)
        ]
        physical |= {v for v, _ in self._layers}
        self._others = [n for n in base.names if n.split(".")[0] not in physical]
        roots, matrix, _ = base.correlation_matrix()
        self._correlations = [
            (roots[i], roots[j], float(matrix[i, j]))
            for i in range(len(roots))
            for j in range(i + 1, len(roots))
            if matrix[i, j] != 0.0 and roots[i] in self._others and roots[j] in self._others
        ]
        if not any(n in self._others for n in RESISTANCE_UNCERTAINTY):
            raise AnalysisError(
                "the member model has no resistance model uncertainty "
                f"({', '.join(RESISTANCE_UNCERTAINTY)}) to strengthen"
            )
        self.n_calls = 0

    def model(self, theta_row, alternative: AlternativeSpec) -> ProbabilisticModel:
        """Probabilistic model with populations fixed at ``theta_row`` (8 member-zone columns)."""
        model = ProbabilisticModel()
        for i, (quantity, (variable, kind)) in enumerate(PHYSICAL.items()):
            if quantity == "area_ratio" and alternative.kind == "repair":
                add_uncertain_quantity(model, variable, self.repair_population, kind=kind)
            else:
                add_fixed_quantity(model, variable, theta_row[2 * i], theta_row[2 * i + 1], kind)
            for extra, of in self._layers:
                if of != quantity:
                    continue
                if quantity == "area_ratio" and alternative.kind == "repair":
                    add_uncertain_quantity(model, extra, self.repair_population, kind=kind)
                else:
                    add_fixed_quantity(model, extra, theta_row[2 * i], theta_row[2 * i + 1], kind)
        base = self.member_model.model
        for name in self._others:
            distribution = base.marginal(name)
            if alternative.kind == "strengthen" and name in RESISTANCE_UNCERTAINTY:
                distribution = _scaled(distribution, alternative.factor, name)
            elif alternative.kind == "restrict_load" and name == IMPOSED_LOAD:
                distribution = _scaled(distribution, alternative.factor, name)
            model.add(name, distribution)
        for a, b, rho in self._correlations:
            model.set_correlation(a, b, rho)
        return model

    def betas(self, theta_rows, alternative: AlternativeSpec) -> tuple[np.ndarray, np.ndarray]:
        """FORM beta per row and mode.

        Returns
        -------
        betas : ndarray of shape (n, modes) [-]
        converged : ndarray of bool, shape (n, modes)
        """
        rows = np.atleast_2d(np.asarray(theta_rows, dtype=float))
        betas = np.empty((rows.shape[0], len(self.modes)))
        converged = np.empty(betas.shape, dtype=bool)
        for i, row in enumerate(rows):
            model = self.model(row, alternative)
            for j, mode in enumerate(self.modes):
                function = self.member_model.modes[mode]
                problem = model.problem(partial(_one_column, function), mode_names=[mode])
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")
                    result = form(problem)
                    if not (result.converged and math.isfinite(result.beta)):
                        # FORM need not converge on a mode with a heavy parameter tail
                        # (e.g. cover on ln c): the beta of that point by subset simulation
                        result = _sampled_beta(problem, seed=1000 * i + j)
                self.n_calls += result.n_calls
                betas[i, j] = result.beta
                converged[i, j] = bool(result.converged) and math.isfinite(result.beta)
        return betas, converged


#: Subset simulation that stands in for FORM where FORM does not converge: samples per
#: level [-] and the largest CoV of its pf estimate accepted for the surrogate [-].
FALLBACK_SAMPLES, FALLBACK_MAX_COV = 2000, 0.2
#: When the first stand-in misses `FALLBACK_MAX_COV`, one more run with this many times the
#: samples per level (its CoV about halves: CoV ~ 1/sqrt(N), Au & Beck 2001) [-].
FALLBACK_RETRY_FACTOR = 4


def _sampled_beta(problem, seed: int):
    """Beta of one design point by subset simulation, accepted as converged when its CoV is
    at most `FALLBACK_MAX_COV` (beyond NEGLIGIBLE_BETA a larger CoV does not matter); a
    second run with `FALLBACK_RETRY_FACTOR` times the samples when the first is short of it
    (the design point is otherwise lost to the surrogate)."""
    from assess.reliability.subset import subset_simulation

    def accepted(result):
        return math.isfinite(result.beta) and (
            result.cov <= FALLBACK_MAX_COV or result.beta > NEGLIGIBLE_BETA
        )

    result = subset_simulation(problem, n_per_level=FALLBACK_SAMPLES, seed=seed)
    if not accepted(result):
        result = subset_simulation(
            problem, n_per_level=FALLBACK_RETRY_FACTOR * FALLBACK_SAMPLES, seed=seed + 500
        )
    return dataclasses.replace(result, converged=accepted(result))


def _one_column(function: Callable, x):
    """A mode's limit state as the one column of a system (`ProbabilisticModel.problem`)."""
    return np.column_stack([function(x)])


@dataclasses.dataclass
class QuadraticSurrogate:
    """Response surface beta(theta) = c0 + sum_i b_i z_i + sum_i q_i z_i^2 on standardised z.

    Attributes
    ----------
    center_, scale_ : ndarray of shape (p,)
        Standardisation of the theta columns (columns with zero spread are dropped).
    used_ : ndarray of bool, shape (p,)
    coef_ : ndarray
        Least-squares coefficients [-].
    loo_rmse_ : float
        Leave-one-out root-mean-square error from the PRESS residuals e_i / (1 - h_ii) [-].
    loo_max_ : float
        Largest absolute leave-one-out residual [-].
    """

    center_: np.ndarray
    scale_: np.ndarray
    used_: np.ndarray
    coef_: np.ndarray
    loo_rmse_: float
    loo_max_: float
    loo_residuals_: np.ndarray | None = None
    """Leave-one-out residuals beta_i - beta_(i) at the design points [-]."""

    @staticmethod
    def _features(z: np.ndarray) -> np.ndarray:
        return np.hstack([np.ones((z.shape[0], 1)), z, z * z])

    def _standardise(self, theta) -> np.ndarray:
        theta = np.atleast_2d(np.asarray(theta, dtype=float))
        return (theta[:, self.used_] - self.center_[self.used_]) / self.scale_[self.used_]

    @classmethod
    def fit(cls, theta, beta, center, scale) -> "QuadraticSurrogate":
        """Least-squares fit to design points theta (n, p) and betas (n,)."""
        theta = np.asarray(theta, dtype=float)
        beta = np.asarray(beta, dtype=float)
        used = np.asarray(scale, dtype=float) > 0
        surrogate = cls(
            np.asarray(center, float),
            np.asarray(scale, float),
            used,
            np.empty(0),
            math.nan,
            math.nan,
        )
        features = cls._features(surrogate._standardise(theta))
        if features.shape[0] <= features.shape[1] + 2:
            raise AnalysisError(
                f"the beta surrogate needs more than {features.shape[1] + 2} "
                f"design points for {features.shape[1]} terms, got "
                f"{features.shape[0]}"
            )
        coef, *_ = np.linalg.lstsq(features, beta, rcond=None)
        hat = np.einsum("ij,ji->i", features, np.linalg.pinv(features))
        residual = (beta - features @ coef) / np.clip(1.0 - hat, 1e-9, None)
        surrogate.coef_ = coef
        surrogate.loo_rmse_ = float(np.sqrt(np.mean(residual**2)))
        surrogate.loo_max_ = float(np.max(np.abs(residual)))
        surrogate.loo_residuals_ = residual
        return surrogate

    def predict(self, theta) -> np.ndarray:
        """Predicted beta for rows of theta [-]."""
        return self._features(self._standardise(theta)) @ self.coef_


def member_beta(betas: np.ndarray) -> np.ndarray:
    """Beta of the member from its modes' betas (rows): Phi^-1 of the sum of the modes'
    pf, the upper unimodal series bound (Cornell 1967), pf kept above 1e-300 [-]."""
    pf = special.ndtr(-np.asarray(betas, dtype=float)).sum(axis=1)
    return stats.norm.isf(np.clip(pf, 1e-300, 1.0))


def member_loo_errors(betas: np.ndarray, residuals: np.ndarray) -> np.ndarray:
    """Leave-one-out error of the member's beta owed to each mode's surrogate [-].

    For mode j, the member beta at every design point is recomputed with mode j's beta
    replaced by its leave-one-out prediction beta_ij - e_ij (the other modes exact); the
    root-mean-square change is mode j's error in what the costs use. A mode far above the
    weakest one barely moves the member's pf, so its own error hardly counts; for the
    dominant mode the error is close to its own leave-one-out error.

    Parameters
    ----------
    betas : ndarray of shape (n, modes)
        Direct betas at the design points [-].
    residuals : ndarray of shape (n, modes)
        Leave-one-out residuals e_ij = beta_ij - beta_(i)j of each mode's surrogate [-].
    """
    betas = np.asarray(betas, dtype=float)
    exact = member_beta(betas)
    errors = np.empty(betas.shape[1])
    for j in range(betas.shape[1]):
        replaced = betas.copy()
        replaced[:, j] = betas[:, j] - residuals[:, j]
        errors[j] = float(np.sqrt(np.mean((member_beta(replaced) - exact) ** 2)))
    return errors


def further_design(n_draws: int, design: np.ndarray, n_points: int) -> np.ndarray:
    """``n_points`` rows spread evenly over the draws not in ``design`` (deterministic).

    The farthest-point design covers the tails; these rows, a systematic sample of the
    posterior draws, add the bulk, where the surrogate's predictions are mostly used.
    """
    rest = np.setdiff1d(np.arange(int(n_draws)), design)
    if rest.size == 0 or n_points <= 0:
        return np.empty(0, dtype=int)
    pick = np.unique(np.linspace(0, rest.size - 1, min(n_points, rest.size)).round())
    return rest[pick.astype(int)]


def farthest_point_design(theta_standardised: np.ndarray, n_points: int) -> np.ndarray:
    """Indices of ``n_points`` rows spread over the cloud (greedy maximin selection).

    Starts at the row nearest the mean and adds, one at a time, the row farthest
    from those already chosen (Gonzalez 1985, Theor. Comput. Sci. 38:293-306, from
    memory), so the design covers the tails the surrogate must predict.
    """
    z = np.asarray(theta_standardised, dtype=float)
    n_points = min(int(n_points), z.shape[0])
    chosen = [int(np.argmin(np.einsum("ij,ij->i", z, z)))]
    distance = np.einsum("ij,ij->i", z - z[chosen[0]], z - z[chosen[0]])
    for _ in range(n_points - 1):
        nxt = int(np.argmax(distance))
        chosen.append(nxt)
        step = z - z[nxt]
        distance = np.minimum(distance, np.einsum("ij,ij->i", step, step))
    return np.array(chosen)


def _normal_gamma_draws(population: NormalGamma, n: int, rng) -> tuple[np.ndarray, np.ndarray]:
    """Draws of (mu, sigma) of a normal-gamma population with its copula correlation."""
    u = rng.standard_normal((2, n))
    rho = float(population.rho)
    precision = stats.gamma.ppf(special.ndtr(u[0]), population.shape, scale=1.0 / population.rate)
    sigma = 1.0 / np.sqrt(precision)
    z = population.z_mean + population.z_std * (rho * u[0] + math.sqrt(1.0 - rho**2) * u[1])
    return population.center + z * sigma, sigma


def population_draws(
    update, zones: Sequence[str], *, n_draws: int = 3000, seed=None
) -> tuple[np.ndarray, list[str]]:
    """Joint draws theta of (mu, sigma) of every population in ``zones``.

    Quantities updated by MCMC use the stored posterior draws, thinned evenly to
    at most ``n_draws`` and taken at the same draw index for every zone and
    quantity (the joint posterior is kept). Quantities without site data use
    independent draws of their `NormalGamma` (the design prior).

    Returns
    -------
    theta : ndarray of shape (N, 8 * len(zones))
    names : list of str
        Column names, `zone_columns` of each zone in turn.
    """
    from assess.updating.models import group_draws

    rng = np.random.default_rng(seed)
    columns, names = [], []
    mcmc = {q for q in QUANTITIES if update.idata is not None and not update.data[q].empty}
    total = None
    if mcmc:
        mu, _ = group_draws(update.idata, zones[0], name=sorted(mcmc)[0])
        total = mu.size
    n = min(int(n_draws), total) if total else int(n_draws)
    index = np.unique(np.linspace(0, total - 1, n).round().astype(int)) if total else None
    n = index.size if index is not None else n
    for zone in zones:
        for quantity in QUANTITIES:
            if quantity in mcmc:
                mu, sigma = group_draws(update.idata, zone, name=quantity)
                mu, sigma = mu[index], sigma[index]
            else:
                mu, sigma = _normal_gamma_draws(update.after[zone][quantity], n, rng)
            columns.extend([mu, sigma])
            names.extend(
                [parameter_name(quantity, "mu", zone), parameter_name(quantity, "sigma", zone)]
            )
    return np.column_stack(columns), names


def system_beta_after(site, update, member_id: str, reference_period_years: float) -> float:
    """FORM system beta of a member on updated knowledge (sum of mode pfs as system pf) [-]."""
    member = site.members[member_id]
    model = build_member_model(
        site,
        member,
        update.after[member.zone],
        reference_period_years=reference_period_years,
        local=(getattr(update, "after_local", None) or {}).get(member.zone),
    )
    pf = 0.0
    for mode in model.modes:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            pf += form(model.problem([mode])).pf
    return float(stats.norm.isf(min(pf, 1.0)))


def weakest_member(site, update) -> tuple[str, dict]:
    """Member with the lowest system beta after updating, and every member's beta [-]."""
    period = float(site.target.reference_period)
    betas = {m: system_beta_after(site, update, m, period) for m in site.members}
    return min(betas, key=lambda m: betas[m]), betas


@dataclasses.dataclass(frozen=True)
class CoverSurvey(NormalSampleProgramme):
    """Cover-meter survey: n readings of cover in one zone.

    Reading i on ln c: ln c_i = mu_c + sigma_c eps_i + e_i, eps_i ~ N(0, 1), e_i ~ N(0,
    measurement_sd^2) (cover-meter error; default the value the site update uses,
    ``MEASUREMENT_ERRORS["cover"]``, BS 1881-204, carried to ln c by `make_programme`).
    The same normal sample model as `CoreSampling`; outcome (mean of ln c, sum of
    squared deviations) [ln mm, -].
    """

    name: str
    cost: float
    n_readings: int
    mean_column: Any
    sd_column: Any
    measurement_sd: float = MEASUREMENT_ERRORS["cover"].sd
    description: str = ""

    COUNT_FIELD = "n_readings"

    def default_description(self) -> str:
        return f"a cover survey of {self.n_readings} readings ('{self.name}')"


def active_probability_from_area_ratio(
    mean_column: int, sd_column: int, threshold: float
) -> Callable[[np.ndarray], np.ndarray]:
    """P(active | theta) = Phi((threshold - mu_r) / sigma_r) (proxy, see the module notes)."""

    def probability(theta):
        theta = np.asarray(theta, dtype=float)
        return special.ndtr((threshold - theta[:, mean_column]) / theta[:, sd_column])

    return probability


def effective_half_cell_count(count: int) -> int:
    """Readings of a planned half-cell survey counted as independent ones [-].

    The survey's ``count`` readings on a square grid at the default spacing carry the
    information of n_eff independent ones (`assess.updating.spatial`, the weighting
    the corrosion update gives a survey), rounded, at least 1.
    """
    from assess.updating.spatial import effective_number, grid_coordinates

    return max(1, round(effective_number(*grid_coordinates(int(count)))))


def make_programme(
    spec: ProgrammeSpec,
    zone: str,
    parameter_names: Sequence[str],
    cover_median_mm: float | None = None,
) -> Programme:
    """Engine programme of a decision-file entry, its columns resolved in ``parameter_names``.

    The cover population is on ln c: a cover-meter error given in [mm] is carried to
    ln c as measurement_sd / ``cover_median_mm`` (first-order, the zone's median cover).
    """

    def column(quantity, statistic):
        return list(parameter_names).index(parameter_name(quantity, statistic, zone))

    where = f" in zone {zone}"
    if spec.kind == "cores":
        return CoreSampling(
            spec.name,
            spec.cost,
            spec.count,
            column("concrete", "mu"),
            column("concrete", "sigma"),
            spec.measurement_sd,
            spec.description or f"drilling {spec.count} cores{where}",
        )
    if spec.kind == "breakouts":
        return BreakoutSurvey(
            spec.name,
            spec.cost,
            spec.count,
            column("area_ratio", "mu"),
            column("area_ratio", "sigma"),
            spec.measurement_sd,
            spec.description or f"opening {spec.count} break-outs{where}",
        )
    if spec.kind == "cover":
        log_sd = spec.measurement_sd / cover_median_mm if cover_median_mm else spec.measurement_sd
        return CoverSurvey(
            spec.name,
            spec.cost,
            spec.count,
            column("cover", "mu"),
            column("cover", "sigma"),
            log_sd,
            spec.description or f"a cover survey of {spec.count} readings{where}",
        )
    if spec.kind == "half-cell":
        return HalfCellSurvey(
            spec.name,
            spec.cost,
            effective_half_cell_count(spec.count),
            active_probability_from_area_ratio(
                column("area_ratio", "mu"), column("area_ratio", "sigma"), spec.active_below
            ),
            spec.probability_of_detection,
            spec.probability_of_false_alarm,
            spec.description or f"a half-cell survey of {spec.count} points{where}",
        )
    raise InputError(f"programme '{spec.name}': unknown kind {spec.kind!r}")


@dataclasses.dataclass
class SiteDecision:
    """Decision problem of one member, its candidate programmes and the surrogate checks.

    Attributes
    ----------
    member, zone : str
    problem : DecisionProblem
        Annual form over the horizon, discounted.
    programmes : list of Programme
    target : Target
        Annual target of the site [-].
    horizon_target_beta : float
        Target converted to the horizon (EN 1990 Annex C) [-].
    horizon_years : int
    annual_beta : dict
        Alternative name -> annual beta of the member per draw, shape (N,) [-].
    surrogates : dict
        Alternative name -> mode -> `QuadraticSurrogate` (None for "replace").
    design_index : ndarray
        Rows of theta used as FORM design points.
    reliability : ConditionalReliability
        For direct FORM checks at other draws.
    member_columns : list of str
        The eight theta columns of the member's zone (surrogate inputs).
    form_calls : int
        Limit-state evaluations spent on the design [-].
    notes : list of str
        Assumptions and warnings in plain words.
    annual_pf_by_year : ndarray of shape (N, A, T)
        Annual pf of each draw, alternative and year of the horizon (before the
        survival of earlier years is applied) [-].
    uses_life_curve : bool
        True when the annual pf follows the member's remaining-life curve.
    keep_cap_loss_by_year : ndarray of shape (T,)
        Mean over the draws of the part of "keep as is"'s annual pf above 1, which the
        cap at 1 removes [-]: the life curve's pf of year t minus the mean capped pf.
    """

    member: str
    zone: str
    problem: DecisionProblem
    programmes: list
    target: Target
    horizon_target_beta: float
    horizon_years: int
    annual_beta: dict
    surrogates: dict
    design_index: np.ndarray
    reliability: ConditionalReliability
    member_columns: list
    form_calls: int
    notes: list
    annual_pf_by_year: np.ndarray | None = None
    uses_life_curve: bool = False
    keep_cap_loss_by_year: np.ndarray | None = None
    member_errors: dict = dataclasses.field(default_factory=dict)
    """Alternative -> mode -> leave-one-out error of the member's beta owed to that mode's
    surrogate (`member_loo_errors`) [-]: the figure the surrogate is judged by."""

    def member_theta(self, rows=None) -> np.ndarray:
        """Member-zone columns of theta (all rows, or the given ones)."""
        index = [self.problem.parameter_names.index(c) for c in self.member_columns]
        theta = self.problem.theta[:, index]
        return theta if rows is None else theta[rows]

    def member_surrogate_errors(self) -> dict:
        """Alternative -> mode -> leave-one-out error of the member's beta owed to that
        mode's surrogate [-] (`member_loo_errors`)."""
        return {alt: dict(modes) for alt, modes in self.member_errors.items() if modes}

    def surrogate_errors(self) -> dict:
        """Alternative -> mode -> leave-one-out RMSE of beta [-]."""
        return {
            alt: {mode: s.loo_rmse_ for mode, s in modes.items()}
            for alt, modes in self.surrogates.items()
            if modes
        }


def _alternative_cost(spec: AlternativeSpec, setup: DecisionSetup) -> float:
    yearly = spec.cost_per_year * float(
        discount_factors(setup.discount_rate, setup.horizon_years).sum()
    )
    return spec.cost + yearly


def _alternative_description(spec: AlternativeSpec) -> str:
    effect = {
        "keep": "no change",
        "repair": "residual bar area back to the design-stage population",
        "strengthen": f"resistance x {spec.factor:g}",
        "restrict_load": f"imposed load x {spec.factor:g}",
        "replace": "new member at the target annual pf",
    }[spec.kind]
    return f"{spec.description}; {effect}" if spec.description else effect


#: Alternatives whose bars keep corroding: their annual pf grows like the life curve's.
DETERIORATING = ("keep", "strengthen", "restrict_load")


def time_dependent_annual_pf(
    pf_now: np.ndarray, kinds: Sequence[str], curve, horizon_years: int
) -> tuple[np.ndarray, str, bool, np.ndarray]:
    """Annual pf of every draw, alternative and year of the horizon, from the life curve.

    The surrogate gives the annual pf of each draw theta_k at the assessment date,
    p_k; the remaining-life curve gives the member's annual pf of year t, P(t)
    (`assess.site.projection`: the annual maximum load against the resistance of
    year t, integrated over the posterior). For year t = 0, 1, ..., T - 1 of the
    horizon:

    - keep as is: p_k(t) = p_k P(t) / mean_k(p_k), so that the mean over the draws
      of each year's annual pf IS the life curve's P(t) (one source for both
      sections), while the spread over theta that gives tests their value is kept;
    - strengthen, restrict load (the bars go on corroding): p_k(t) = p_k P(t) / P(0),
      the life curve's relative growth applied to the alternative's own level;
    - repair, replace: constant, p_k(t) = p_k.

    Years beyond the life curve's horizon keep its last value. Without a curve (or
    with P(0) = 0 where a ratio is needed) the annual pf is held constant.

    Parameters
    ----------
    pf_now : ndarray of shape (N, A)
        Annual pf per draw and alternative at the assessment date [-].
    kinds : sequence of str
        Kind of each alternative (`assess.worth.decision_file.AlternativeSpec.kind`).
    curve : LifeCurve or None
        ``years_from_assessment`` [yr] and ``pf`` [-] of the member's governing curve.
    horizon_years : int
        Years T of the decision horizon [yr].

    Returns
    -------
    yearly : ndarray of shape (N, A, T) [-]
    note : str
        One sentence on what was done, for the report.
    follows_curve : bool
        True when at least one alternative follows the life curve.
    cap_loss : ndarray of shape (T,)
        "keep as is": mean over the draws of the annual pf above 1 that the cap removes [-].
    """
    pf_now = np.asarray(pf_now, dtype=float)
    years = np.arange(int(horizon_years), dtype=float)
    yearly = np.repeat(pf_now[:, :, None], years.size, axis=2)
    if curve is None:
        return (
            yearly,
            (
                "the annual failure probability is held constant over the horizon (no "
                "remaining-life curve in this run); corrosion after the assessment date is "
                "not counted"
            ),
            False,
            np.zeros(years.size),
        )
    life_pf = np.interp(
        years,
        np.asarray(curve.years_from_assessment, dtype=float),
        np.asarray(curve.pf, dtype=float),
    )
    used = []
    cap_loss = np.zeros(years.size)
    for a, kind in enumerate(kinds):
        if kind not in DETERIORATING:
            continue
        if kind == "keep":
            level = float(pf_now[:, a].mean())
            if level <= 0.0:
                continue
            factor = life_pf / level
        else:
            if life_pf[0] <= 0.0:
                continue
            factor = life_pf / life_pf[0]
        unclipped = pf_now[:, a, None] * factor[None, :]
        yearly[:, a, :] = np.clip(unclipped, 0.0, 1.0)
        if kind == "keep":
            cap_loss = np.maximum(unclipped - 1.0, 0.0).mean(axis=0)
        used.append(ALTERNATIVE_NAMES[kind])
    if not used:
        return (
            yearly,
            (
                "the remaining-life curve has no failed sample at the assessment date; the "
                "annual failure probability is held constant over the horizon"
            ),
            False,
            cap_loss,
        )
    total = float(life_pf.sum())
    note = (
        f"the annual failure probability follows the member's remaining-life curve year "
        f"by year ({', '.join(used)}; repair and replace stay constant): summed over the "
        f"{int(horizon_years)} years it is {total:.3g} for 'keep as is', the same as the "
        f"remaining-life section"
    )
    lost = float(cap_loss.sum())
    if lost > 0.0:
        note += (
            f"; in the posterior draws where it would exceed 1 in a year it is taken as 1, "
            f"which lowers that sum to {total - lost:.3g}"
        )
    return yearly, note, True, cap_loss


def failure_increments(yearly: np.ndarray) -> np.ndarray:
    """Failure probability of each year: annual pf of year t times survival of years < t [-].

    P(fail in year t) = p(t) prod_{s<t} (1 - p(s)) for independent years given theta;
    with a constant p this is p (1 - p)^t and the sum over T years is 1 - (1 - p)^T
    (EN 1990 Annex C conversion). ``yearly`` has the years on its last axis.
    """
    yearly = np.asarray(yearly, dtype=float)
    survival = np.cumprod(1.0 - yearly, axis=-1)
    before = np.concatenate([np.ones_like(survival[..., :1]), survival[..., :-1]], axis=-1)
    return yearly * before


def _fit_modes(modes, member_theta, rows, betas, converged, center, scale, name, member_id):
    """Quadratic surrogates of every mode at the design ``rows`` whose FORM converged in
    every mode; returns (mode -> surrogate, points left out, mode -> member-beta error)."""
    ok = converged.all(axis=1)
    if ok.mean() < 0.8:
        raise AnalysisError(
            f"FORM did not converge at {int((~ok).sum())} of {ok.size} design points of "
            f"'{name}' for member {member_id}; the surrogate cannot be built"
        )
    surrogates = {
        mode: QuadraticSurrogate.fit(member_theta[rows][ok], betas[ok, j], center, scale)
        for j, mode in enumerate(modes)
    }
    residuals = np.column_stack(
        [np.asarray(surrogates[m].loo_residuals_, dtype=float) for m in modes]
    )
    errors = dict(zip(modes, member_loo_errors(betas[ok], residuals).tolist()))
    return surrogates, int((~ok).sum()), errors


def build_site_decision(
    site,
    update,
    setup: DecisionSetup,
    *,
    member: str | None = None,
    n_draws: int = 3000,
    n_design: int = 48,
    seed=None,
    progress: Callable[[str], None] | None = None,
    life_curves: dict | None = None,
) -> SiteDecision:
    """Decision problem of one member from the site's updated knowledge.

    Parameters
    ----------
    site : inspection_io.site.Site
    update : SiteUpdate
        From `update_site` (posterior draws in ``idata``, knowledge in ``before``/``after``).
    setup : DecisionSetup
        Costs, horizon, alternatives and programmes (`read_decision_setup`).
    member : str, optional
        Member id; default ``setup.member``, else the member with the lowest
        system beta after updating.
    n_draws : int
        Number N of posterior draws in theta (the MCMC draws are thinned) [-].
    n_design : int
        FORM design points per alternative for the surrogate [-].
    seed : int or numpy Generator
        Seeds the prior draws of quantities without site data.
    progress : callable, optional
        Called with a short text after each alternative.
    life_curves : dict, optional
        Member -> its governing remaining-life curve (`assess.site.projection.LifeCurve`,
        or anything with ``years_from_assessment`` [yr] and annual ``pf`` [-]); the
        member's annual pf then follows that curve year by year
        (`time_dependent_annual_pf`). Without it the annual pf is held constant.

    Raises
    ------
    InputError
        Unknown member or zone.
    AnalysisError
        FORM failed at too many design points, or the surrogate is too poor.
    """
    notes: list[str] = []
    member_id = member or setup.member
    if member_id is None:
        member_id, _ = weakest_member(site, update)
        notes.append(f"member {member_id} chosen: lowest system reliability index after updating")
    if member_id not in site.members:
        raise InputError(
            f"member {member_id!r} is not in the site; members are {', '.join(site.members)}",
            file=None if member else setup.path,
            column="--member" if member else "member",
        )
    zone = site.members[member_id].zone
    zones = [zone]
    for index, spec in enumerate(setup.programmes):
        if spec.zone is not None and spec.zone not in site.zones:
            raise InputError(
                f"programme '{spec.name}': zone {spec.zone!r} is not in the site; "
                f"zones are {', '.join(site.zones)}",
                file=setup.path,
                column=f"programmes[{index}].zone",
            )
        if spec.zone is not None and spec.zone not in zones:
            zones.append(spec.zone)
    theta, names = population_draws(update, zones, n_draws=n_draws, seed=seed)
    member_columns = zone_columns(zone)
    member_theta = theta[:, : len(member_columns)]

    annual_target = target_beta(site.target.consequence_class, 1.0, site.target.cost_of_safety)
    horizon_target = float(convert_reference_period(annual_target.beta, 1.0, setup.horizon_years))
    member_model = build_member_model(
        site,
        site.members[member_id],
        update.after[zone],
        reference_period_years=1.0,
        local=(getattr(update, "after_local", None) or {}).get(zone),
    )
    notes.extend(member_model.notes)
    reliability = ConditionalReliability(member_model, update.before[zone]["area_ratio"])

    center = member_theta.mean(axis=0)
    scale = member_theta.std(axis=0)
    scale[scale < 1e-12 * np.maximum(1.0, np.abs(center))] = 0.0
    standardised = (member_theta - center) / np.where(scale > 0, scale, 1.0)
    design = farthest_point_design(standardised, n_design)

    alternatives: list = []
    annual_pf: list = []
    annual_beta: dict = {}
    surrogates: dict[str, Any] = {}
    member_errors: dict[str, dict] = {}
    used_rows = set(design.tolist())
    for spec in setup.alternatives:
        name = ALTERNATIVE_NAMES[spec.kind]
        alternatives.append(
            Alternative(name, _alternative_cost(spec, setup), _alternative_description(spec))
        )
        if spec.kind == "replace":
            pf = np.full(theta.shape[0], annual_target.pf)
            surrogates[name] = {}
        else:

            def fit_on(rows, betas, converged, name=name):
                return _fit_modes(
                    reliability.modes,
                    member_theta,
                    rows,
                    betas,
                    converged,
                    center,
                    scale,
                    name,
                    member_id,
                )

            rows = design
            betas, converged = reliability.betas(member_theta[rows], spec)
            fitted = fit_on(rows, betas, converged)
            worst = max(fitted[2].values())
            more = further_design(theta.shape[0], design, n_design)
            if worst > SURROGATE_REFINE_RMSE and more.size:
                # more design points from the bulk of the posterior, then fit again
                more_betas, more_converged = reliability.betas(member_theta[more], spec)
                rows = np.concatenate([design, more])
                betas = np.vstack([betas, more_betas])
                converged = np.vstack([converged, more_converged])
                fitted = fit_on(rows, betas, converged)
                used_rows.update(more.tolist())
                notes.append(
                    f"'{name}': {more.size} more design points from the bulk of the posterior "
                    f"(leave-one-out error of the member's beta {worst:.2f} with "
                    f"{design.size}, {max(fitted[2].values()):.2f} with {rows.size})"
                )
            surrogates[name], left_out, member_errors[name] = fitted
            if left_out:
                notes.append(
                    f"'{name}': FORM did not converge at {left_out} design "
                    f"point(s); they were left out of the surrogate"
                )
            pf = np.zeros(theta.shape[0])
            for mode, surrogate in surrogates[name].items():
                error = member_errors[name][mode]
                if error > SURROGATE_FAILURE_RMSE:
                    raise AnalysisError(
                        f"the beta surrogate of '{name}', mode {mode}, member {member_id} is "
                        f"too poor: leave-one-out error {error:.2f} in the member's beta "
                        f"({surrogate.loo_rmse_:.2f} in the mode's own beta) at "
                        f"{rows.size} design points"
                    )
                if error > SURROGATE_WARNING_RMSE:
                    message = (
                        f"the beta surrogate of '{name}', mode {mode} has a "
                        f"leave-one-out error of {error:.2f} in the member's beta; "
                        f"values of information are approximate"
                    )
                    warnings.warn(message, stacklevel=2)
                    notes.append(message)
                pf += special.ndtr(-surrogate.predict(member_theta))
            pf = np.clip(pf, 0.0, 1.0)
        annual_beta[name] = stats.norm.isf(pf)
        annual_pf.append(pf)
        if progress:
            progress(name)
    pf = np.column_stack(annual_pf)
    kinds = [spec.kind for spec in setup.alternatives]
    curve = (life_curves or {}).get(member_id)
    yearly, life_note, follows, cap_loss = time_dependent_annual_pf(
        pf, kinds, curve, setup.horizon_years
    )
    notes.append(life_note)
    increments = failure_increments(yearly)

    def cover_median(z):  # median cover of zone z [mm] (population on ln c)
        return float(np.exp(np.median(theta[:, names.index(parameter_name("cover", "mu", z))])))

    programmes = [
        make_programme(spec, spec.zone or zone, names, cover_median(spec.zone or zone))
        for spec in setup.programmes
    ]
    if any(spec.kind == "half-cell" for spec in setup.programmes):
        notes.append(
            "half-cell survey: P(active corrosion) is taken as the probability that "
            "the residual bar area ratio is below the programme's active_below "
            "(default 0.98); corrosion that has not yet removed section is not "
            "counted, and the grid points are taken as independent"
        )
    notes.append(
        f"years are taken as independent given the material populations: the failure "
        f"probability of year t is the annual pf of year t times the probability of "
        f"surviving the years before; the annual target {annual_target.beta:.2f} "
        f"(1-year reference period) becomes {horizon_target:.2f} over the "
        f"{setup.horizon_years}-year horizon (EN 1990 Annex C conversion)"
    )
    problem = DecisionProblem(
        alternatives=alternatives,
        failure_cost=setup.failure_cost,
        theta=theta,
        parameter_names=names,
        annual_pf=increments,
        discount_rate=setup.discount_rate,
        keep=ALTERNATIVE_NAMES["keep"],
        currency=setup.currency,
    )
    return SiteDecision(
        member=member_id,
        zone=zone,
        problem=problem,
        programmes=programmes,
        target=annual_target,
        horizon_target_beta=horizon_target,
        horizon_years=setup.horizon_years,
        annual_beta=annual_beta,
        surrogates=surrogates,
        design_index=np.array(sorted(used_rows), dtype=int),
        reliability=reliability,
        member_columns=member_columns,
        form_calls=reliability.n_calls,
        notes=notes,
        annual_pf_by_year=yearly,
        uses_life_curve=follows,
        keep_cap_loss_by_year=cap_loss,
        member_errors=member_errors,
    )


__all__ = [
    "ConditionalReliability",
    "CoverSurvey",
    "PHYSICAL",
    "QuadraticSurrogate",
    "SiteDecision",
    "active_probability_from_area_ratio",
    "add_fixed_quantity",
    "build_site_decision",
    "failure_increments",
    "farthest_point_design",
    "further_design",
    "make_programme",
    "member_beta",
    "member_loo_errors",
    "parameter_name",
    "population_draws",
    "system_beta_after",
    "time_dependent_annual_pf",
    "weakest_member",
    "zone_columns",
]
