"""Annual reliability index beta(t) of deteriorating members and their remaining life.

Model
-----
At the assessment date t0 the residual bar area ratio of a member's bars is r0,
the "after" population of the site update for the member's tension face
(`assess.site.locations.knowledge_at`; today's state per face from
`assess.site.corrosion_state`: break-outs where they were opened on that face,
else the corrosion model's loss since initiation). Later it is

    r(t) = r0 A(t) / A(t0),   A(t) = max(1 - 2 P(t) / D0, 0)^2 Pi(t),
    P(t) = 0.0116 i_corr max(age(t) - t_i,q, 0)  [mm]

(uniform corrosion by Faraday's law, `assess.deterioration.corrosion`; Pi the share
left after the deepest pit where pitting is on), with the zone's corrosion
initiation time t_i [yr of age] and corrosion rate i_corr [uA/cm2] as random
variables of the member model (`assess.site.corrosion`), t_i,q = t_i
exp(s Phi^-1(q)) the initiation time of the critical section at the same spatial
quantile q as the present state. Hence beta(t0) is the "after" beta of
`assess.site.before_after.assess_members` by construction, and beta(t)
cannot increase while only deterioration acts.

Reference period
----------------
beta(t) is an *annual* reliability index: the probability that the member
fails in year t under the annual maximum load, with the resistance it has in
year t. It is compared with the annual target of `assess.targets` (JCSS / ISO
2394 annual values). It is not the probability of failure over (t0, t]; that
cumulative probability is larger (Mori & Ellingwood
1993, Struct. Saf. 12, from memory).

Estimator
---------
Importance sampling with common random numbers: ONE set of N samples in
standard normal space, drawn from an equal-weight mixture of unit normal
densities centred at the FORM design points of every mode at t0, at the middle
and at the end of the horizon, serves every year and every mode. Each sample's
weight w = phi(u) / h(u) is fixed; the physical values are transformed once and
only the corrosion factor changes with t. Since A(t) is non-increasing and the
capacities increase with the bar area, the set of failed samples grows with t,
so the estimated pf(t) is non-decreasing and the curve smooth. The CoV of each
year's estimate is sqrt(Var(I w) / N) / pf; the band of beta is +/- 2 standard
errors by the delta method, se_beta = CoV pf / phi(beta). Equal mixture weights
(rather than weights proportional to each design point's pf) keep enough
samples near the design points of the non-governing modes, whose own curves are
reported too (a defensive choice; Owen & Zhou 2000, J. Am. Stat. Assoc. 95,
from memory).

Two bands, for two different things
-----------------------------------
beta(t) above is the predictive index: the uncertainty of the population
parameters (means and spreads of concrete, steel, cover and residual bar area,
the zone's corrosion initiation time and rate; `parameter_names`) is integrated
out. Its *sampling band* (beta -/+ 2 standard errors) only says how precisely
the sampler estimated that one curve. The *parameter band* says how far the
curve itself could lie, given what the tests tell about the parameters: for K
draws theta_k of the parameters' standard normal coordinates, the conditional
pf(t | theta_k) is estimated by importance sampling over the other variables,
centred at the FORM design points shifted to the plane of theta_k (linearised
limit state beta_j - alpha_j.u = 0, so the conditional centre is (beta_j -
alpha_p.theta) alpha_a / |alpha_a|^2), and the band is the pointwise 5 % and
95 % quantile of beta(t | theta_k); the remaining life of each draw gives the
5 % and 95 % quantile of the remaining life. The conditional estimates carry
their own sampling noise, which widens this band slightly (on the safe side).

References
----------
.. [1] C. G. Bucher, "Adaptive sampling - an iterative fast Monte Carlo procedure,"
   *Structural Safety* 5(2), 119-126, 1988.
.. [2] R. E. Melchers, "Importance sampling in structural systems," *Structural
   Safety* 6(1), 3-10, 1989 (mixture over design points).
.. [3] Y. Mori and B. R. Ellingwood, "Reliability-based service-life assessment of
   aging concrete structures," *J. Struct. Eng.* 119(5), 1600-1621, 1993 (from memory).
"""

from __future__ import annotations

import dataclasses
import math
import zlib
from functools import partial
from typing import Any, Callable, Sequence

import numpy as np
from scipy import stats
from scipy.special import logsumexp

from assess.errors import AnalysisError, InputError
from assess.reliability.crude import check_int, resolve_seed
from assess.reliability.form import form
from assess.site.corrosion import INITIATION_NAME, RATE_NAME, age_at
from assess.site.corrosion_state import PITTING_NAME, area_path, present_state

#: Suffix of the corrosion variables of the top bars of a continuous member whose top
#: face has its own corrosion state (initiation_time_top, ...).
TOP_SUFFIX = "_top"

ANNUAL_NOTE = (
    "annual reliability index: failure in year t under the annual maximum load "
    "with the resistance of year t; compared with the annual target"
)
DEFAULT_SAMPLES = 6000
BAND_STANDARD_ERRORS = 2.0
PARAMETER_DRAWS = 40
"""Parameter draws K of the parameter band [-]."""
PARAMETER_BAND = (0.05, 0.95)
"""Quantiles of the parameter band (a 90 % band) [-]."""
SAMPLES_PER_DRAW_FRACTION = 8
"""Importance samples per parameter draw: the curve's samples / this, at least 100 [-]."""
PARAMETER_SUFFIXES = (".precision", ".location")
MIN_ALEATORY_SHARE = 0.05
"""Below this share |alpha_a|^2 of a design point's direction in the other variables, its
centre is not shifted with the parameter draw (the shift would blow up) [-]."""

ALREADY_BELOW, CROSSES, BEYOND = "already below target", "crosses target", "beyond horizon"


# -- the estimator -------------------------------------------------------------------------
@dataclasses.dataclass
class CurveEstimate:
    """pf(t) of several groups of modes from one common set of importance samples.

    Attributes
    ----------
    times : ndarray (T,)
        Times of the estimates [yr].
    pf, cov : dict
        Group label -> ndarray (T,) of pf [-] and its coefficient of variation [-].
    n_failures : dict
        Group label -> ndarray (T,) of failed samples [-].
    centres : list of dict
        Mixture centres: ``{"time", "mode", "beta", "converged"}``.
    n_samples : int
    n_calls : int
        Points at which the limit state was evaluated (FORM + samples x times) [-].
    seed : int or None
    warnings : list of str
    """

    times: np.ndarray
    pf: dict
    cov: dict
    n_failures: dict
    centres: list
    n_samples: int
    n_calls: int
    seed: int | None
    warnings: list
    parameter_pf: dict = dataclasses.field(default_factory=dict)
    """Group label -> ndarray (K, T): pf(t | theta_k) for each parameter draw [-]."""
    parameter_names: list = dataclasses.field(default_factory=list)
    samples_per_draw: int = 0


def parameter_names(model) -> list:
    """Names of the model's parameter variables: ``<q>.precision`` and ``<q>.location`` of
    every population (`assess.updating.to_model`) and the zone's corrosion initiation time
    and rate (`assess.site.corrosion`)."""
    return [
        n
        for n in model.random_names
        if n.endswith(PARAMETER_SUFFIXES)
        or n in (INITIATION_NAME, RATE_NAME, INITIATION_NAME + TOP_SUFFIX, RATE_NAME + TOP_SUFFIX)
    ]


def _conditional_centres(
    centres: np.ndarray,
    betas: np.ndarray,
    theta: np.ndarray,
    p_cols: np.ndarray,
    a_cols: np.ndarray,
) -> np.ndarray:
    """(K, J, d_a) sampling centres of the other variables given each parameter draw.

    Linearised limit state of centre j: beta_j - alpha_j.u = 0 with alpha_j = u*_j / beta_j;
    given theta its nearest point in the other coordinates is
    (beta_j - alpha_jp.theta) alpha_ja / |alpha_ja|^2.
    """
    k = theta.shape[0]
    out = np.broadcast_to(centres[:, a_cols], (k, *centres[:, a_cols].shape)).copy()
    for j, (centre, beta) in enumerate(zip(centres, betas)):  # over design points, not samples
        if not (np.isfinite(beta) and abs(beta) > 1e-9):
            continue
        alpha = centre / beta
        alpha_a = alpha[a_cols]
        share = float(alpha_a @ alpha_a)
        if share < MIN_ALEATORY_SHARE:
            continue
        distance = (beta - theta @ alpha[p_cols]) / share
        out[:, j, :] = distance[:, None] * alpha_a[None, :]
    return out


def _parameter_curves(
    model, limit_state_at, times, groups, centres, betas, names, n_draws, per_draw, rng
):
    """pf(t | theta_k) of every group for ``n_draws`` parameter draws (see the module notes)."""
    p_cols = np.array([model.random_names.index(n) for n in names], dtype=int)
    a_cols = np.setdiff1d(np.arange(model.dim), p_cols)
    theta = rng.standard_normal((n_draws, p_cols.size))
    cond = _conditional_centres(centres, betas, theta, p_cols, a_cols)
    n_centres = cond.shape[1]
    component = rng.integers(0, n_centres, size=(n_draws, per_draw))
    ua = cond[np.arange(n_draws)[:, None], component] + rng.standard_normal(
        (n_draws, per_draw, a_cols.size)
    )
    squared = ((ua[:, :, None, :] - cond[:, None, :, :]) ** 2).sum(axis=3)
    log_h = logsumexp(-0.5 * squared, axis=2) - math.log(n_centres)
    weights = np.exp(-0.5 * (ua * ua).sum(axis=2) - log_h)  # (K, M)
    u = np.empty((n_draws * per_draw, model.dim))
    u[:, p_cols] = np.repeat(theta, per_draw, axis=0)
    u[:, a_cols] = ua.reshape(n_draws * per_draw, a_cols.size)
    x = model.u_to_x(u)
    pf = {label: np.zeros((n_draws, times.size)) for label in groups}
    for j, t in enumerate(times):
        g = np.asarray(limit_state_at(x, float(t)), dtype=float)
        if g.ndim == 1:
            g = g[:, None]
        g = np.where(np.isfinite(g), g, -np.inf)  # a non-finite value counts as failure
        for label, columns in groups.items():
            failed = (g[:, list(columns)].min(axis=1) <= 0.0).reshape(n_draws, per_draw)
            pf[label][:, j] = (weights * failed).mean(axis=1)
    return pf


def _at_time(limit_state_at: Callable, x, t: float):
    return limit_state_at(x, t)


def estimate_curves(
    model,
    limit_state_at: Callable,
    times: Any,
    groups: dict,
    *,
    mode_names: Sequence[str],
    n_samples: int = DEFAULT_SAMPLES,
    seed=None,
    centre_times: Sequence[float] | None = None,
    parameters: Sequence[str] = (),
    n_parameter_draws: int = PARAMETER_DRAWS,
    samples_per_draw: int | None = None,
) -> CurveEstimate:
    """Probability of failure at each time, by importance sampling with common random numbers.

    Parameters
    ----------
    model : ProbabilisticModel
        Basic variables (time-invariant distributions).
    limit_state_at : callable
        ``limit_state_at(x, t)`` with x a dict name -> array (n,) and t a time
        [yr]; returns g of shape (n, m), one column per mode of ``mode_names``
        [units of g]; g <= 0 is failure.
    times : sequence of float
        Times of the estimates [yr], increasing.
    groups : dict
        Label -> list of column indices; a group fails when any of its modes
        fails (series system).
    mode_names : sequence of str
        Names of the m columns.
    n_samples : int
        Number of importance samples, shared by all times [-].
    seed : int, numpy.random.Generator or None
        Pass an int for reproducible output across calls.
    centre_times : sequence of float, optional
        Times whose FORM design points centre the sampling mixture; default the
        first, middle and last of ``times``.
    parameters : sequence of str
        Parameter variables (`parameter_names`); with some, also pf(t | theta_k) for
        ``n_parameter_draws`` draws of them (``parameter_pf``, the parameter band).
    n_parameter_draws : int
        Parameter draws K [-].
    samples_per_draw : int, optional
        Importance samples per draw [-]; default n_samples / 8, at least 100.

    Returns
    -------
    CurveEstimate
    """
    caller = "estimate_curves"
    n_samples = check_int(n_samples, "n_samples", caller, 100)
    rng, recorded = resolve_seed(seed, caller)
    times = np.asarray(times, dtype=float)
    if times.ndim != 1 or times.size < 1 or np.any(np.diff(times) <= 0):
        raise InputError(f"The 'times' parameter of {caller} must be increasing. Got {times!r}.")
    if centre_times is None:
        centre_times = sorted({float(times[0]), float(times[times.size // 2]), float(times[-1])})
    mode_names = list(mode_names)

    warnings: list[str] = []
    centres: Any = []
    info: list[dict] = []
    n_calls = 0
    for t in centre_times:
        problem = model.problem(partial(_at_time, limit_state_at, t=t), mode_names=mode_names)
        result = form(problem)
        n_calls += problem.n_calls
        modes = result.details.get("modes") or [
            {
                "mode": mode_names[0],
                "beta": result.beta,
                "converged": result.converged,
                "design_point_u": result.design_point_u,
            }
        ]
        for m in modes:
            point = np.asarray(m["design_point_u"], dtype=float)
            if not (np.all(np.isfinite(point)) and np.isfinite(m["beta"])):
                warnings.append(
                    f"FORM gave no finite design point for {m['mode']} at t = "
                    f"{t:g} yr; that centre is left out of the sampling mixture"
                )
                continue
            if not m["converged"]:
                warnings.append(
                    f"FORM did not converge for {m['mode']} at t = {t:g} yr; its "
                    "last iterate centres a mixture component"
                )
            centres.append(point)
            info.append(
                {
                    "time": float(t),
                    "mode": m["mode"],
                    "beta": float(m["beta"]),
                    "converged": bool(m["converged"]),
                }
            )
    if not centres:
        centres = [np.zeros(model.dim)]
        info.append(
            {"time": float(times[0]), "mode": "origin", "beta": math.nan, "converged": False}
        )
    centres = np.array(centres)
    k = centres.shape[0]
    component = rng.integers(0, k, size=n_samples)
    u = centres[component] + rng.standard_normal((n_samples, model.dim))
    squared = ((u[:, None, :] - centres[None, :, :]) ** 2).sum(axis=2)
    log_h = logsumexp(-0.5 * squared, axis=1) - math.log(k)
    weights = np.exp(-0.5 * (u * u).sum(axis=1) - log_h)
    x = model.u_to_x(u)

    pf = {label: np.zeros(times.size) for label in groups}
    cov = {label: np.full(times.size, math.nan) for label in groups}
    n_fail = {label: np.zeros(times.size, dtype=int) for label in groups}
    for j, t in enumerate(times):
        g = np.asarray(limit_state_at(x, float(t)), dtype=float)
        if g.ndim == 1:
            g = g[:, None]
        n_calls += n_samples
        if not np.all(np.isfinite(g)):
            raise AnalysisError(
                f"the limit state returned a non-finite value at t = {t:g} yr; "
                "check the member data and the corrosion inputs"
            )
        for label, columns in groups.items():
            failed = g[:, list(columns)].min(axis=1) <= 0.0
            contribution = weights * failed
            estimate = float(contribution.mean())
            pf[label][j] = estimate
            n_fail[label][j] = int(failed.sum())
            if estimate > 0:
                variance = float(contribution.var(ddof=1))
                cov[label][j] = math.sqrt(variance / n_samples) / estimate
    parameters = [n for n in parameters if n in model.random_names]
    per_draw = 0
    parameter_pf: dict = {}
    if parameters and len(parameters) < model.dim:
        n_parameter_draws = check_int(n_parameter_draws, "n_parameter_draws", caller, 2)
        per_draw = (
            max(n_samples // SAMPLES_PER_DRAW_FRACTION, 100)
            if samples_per_draw is None
            else check_int(samples_per_draw, "samples_per_draw", caller, 10)
        )
        betas = np.array([c["beta"] for c in info], dtype=float)
        parameter_pf = _parameter_curves(
            model,
            limit_state_at,
            times,
            groups,
            centres,
            betas,
            parameters,
            n_parameter_draws,
            per_draw,
            rng,
        )
        n_calls += n_parameter_draws * per_draw * times.size
    return CurveEstimate(
        times=times,
        pf=pf,
        cov=cov,
        n_failures=n_fail,
        centres=info,
        n_samples=n_samples,
        n_calls=n_calls,
        seed=recorded,
        warnings=warnings,
        parameter_pf=parameter_pf,
        parameter_names=list(parameters) if parameter_pf else [],
        samples_per_draw=per_draw,
    )


def parameter_band(parameter_pf, times, target: float, quantiles=PARAMETER_BAND):
    """The parameter band from pf(t | theta_k) of K draws.

    Returns
    -------
    lower, upper : ndarray (T,)
        Pointwise ``quantiles`` of beta(t | theta_k) over the draws [-] (+inf where a
        draw's conditional estimate found no failure).
    life_low, life_high : float
        Same quantiles of the remaining life of the draws (first crossing of the target
        after times[0]) [yr]; +inf beyond the horizon.
    """
    from assess.life.crossing import crossing_times

    beta = stats.norm.isf(np.asarray(parameter_pf, dtype=float))
    lower, upper = np.quantile(beta, quantiles, axis=0, method="inverted_cdf")
    life = crossing_times(times, beta, target) - float(times[0])
    life = np.where(np.isnan(life), np.inf, life)
    life_low, life_high = np.quantile(life, quantiles, method="inverted_cdf")
    return lower, upper, float(life_low), float(life_high)


def beta_band(pf, cov, standard_errors: float = BAND_STANDARD_ERRORS):
    """beta and its band beta -/+ k se_beta, se_beta = CoV pf / phi(beta) (delta method) [-].

    Returns
    -------
    beta, lower, upper : ndarray
        Where pf = 0 (no failed sample) all three are +inf.
    """
    pf = np.asarray(pf, dtype=float)
    cov = np.asarray(cov, dtype=float)
    beta = stats.norm.isf(pf)
    with np.errstate(invalid="ignore", divide="ignore"):
        se = np.where(pf > 0, cov * pf / stats.norm.pdf(beta), np.inf)
    se = np.where(np.isfinite(se), se, 0.0)
    return beta, beta - standard_errors * se, beta + standard_errors * se


# -- remaining life ------------------------------------------------------------------------
def first_crossing(times, beta, target: float) -> float:
    """First time at which beta(t) < target, linear interpolation between times [yr].

    ``times[0]`` when beta starts below the target; NaN when it never falls
    below within ``times``.
    """
    from assess.life.crossing import target_crossing_time

    return target_crossing_time(times, beta, target)


@dataclasses.dataclass(frozen=True)
class RemainingLife:
    """Remaining life against the annual target, with its two bands.

    Attributes
    ----------
    status : str
        ``"already below target"``, ``"crosses target"`` or ``"beyond horizon"``.
    years : float
        Years from the assessment date to the first year with beta < target
        (0 when already below; NaN beyond the horizon) [yr].
    earliest, latest : float
        Sampling band: crossing of beta -/+ 2 standard errors of the estimate [yr]; NaN
        when that band does not cross within the horizon. Says how precisely the one
        curve was estimated, not how long the member may last.
    horizon_years : float
        Length of the projection [yr].
    parameter_low, parameter_high : float
        Parameter band: 5 % and 95 % quantile of the remaining life over draws of the
        population and corrosion parameters from their posterior [yr]; +inf beyond the
        horizon, NaN when not computed.
    parameter_level : float
        Probability content of the parameter band [-].
    """

    status: str
    years: float
    earliest: float
    latest: float
    horizon_years: float
    parameter_low: float = math.nan
    parameter_high: float = math.nan
    parameter_level: float = 0.90

    def _years(self, value: float) -> str:
        return f"{value:.1f}" if math.isfinite(value) else f">{self.horizon_years:g}"

    def sampling_text(self) -> str:
        """The sampling band in words, e.g. ``"22.9-24.1 yr"``; "-" when neither end crosses."""
        if self.status == ALREADY_BELOW:
            return "-"
        if not (math.isfinite(self.earliest) or math.isfinite(self.latest)):
            return "-"
        earliest = f"{self.earliest:.1f}" if math.isfinite(self.earliest) else "0"
        return f"{earliest}-{self._years(self.latest)} yr"

    def parameter_text(self) -> str:
        """The parameter band in words, e.g. ``"12.0-35.5 yr"``; "-" when not computed."""
        if math.isnan(self.parameter_low) or math.isnan(self.parameter_high):
            return "-"
        return f"{self._years(self.parameter_low)}-{self._years(self.parameter_high)} yr"

    def text(self) -> str:
        """Plain-language remaining life with both bands named, e.g.
        ``"23.4 yr (parameters 15.0-33.2 yr; sampling 22.9-24.1 yr)"``."""
        bands = []
        if self.parameter_text() != "-":
            bands.append(f"parameters {self.parameter_text()}")
        if self.status == ALREADY_BELOW:
            head = "already below target"
        elif self.status == BEYOND:
            head = f"more than {self.horizon_years:g} yr"
            if math.isfinite(self.earliest):
                bands.append(f"sampling: may cross from {self.earliest:.1f} yr")
        else:
            head = f"{self.years:.1f} yr"
            bands.append(f"sampling {self.sampling_text()}")
        return head + (f" ({'; '.join(bands)})" if bands else "")

    def to_dict(self) -> dict:
        clean = {
            k: (v if not isinstance(v, float) or math.isfinite(v) else None)
            for k, v in dataclasses.asdict(self).items()
        }
        for key in ("parameter_low", "parameter_high"):  # +inf: beyond the horizon
            value = getattr(self, key)
            clean[f"{key}_beyond_horizon"] = bool(value == math.inf)
        clean["text"] = self.text()
        clean["sampling_band"] = self.sampling_text()
        clean["parameter_band"] = self.parameter_text()
        return clean


def remaining_life(
    times, beta, lower, upper, target: float, parameter_life: tuple[float, float] | None = None
) -> RemainingLife:
    """Remaining life from beta(t) and its sampling band (times from the assessment date)
    [yr]; ``parameter_life`` = (low, high) of the parameter band (`parameter_band`)."""
    times = np.asarray(times, dtype=float)
    horizon = float(times[-1] - times[0])
    crossing = first_crossing(times, beta, target)
    earliest = first_crossing(times, lower, target)
    latest = first_crossing(times, upper, target)
    if beta[0] < target:
        status, years = ALREADY_BELOW, 0.0
    elif math.isfinite(crossing):
        status, years = CROSSES, crossing - times[0]
    else:
        status, years = BEYOND, math.nan
    shift = float(times[0])
    low, high = parameter_life if parameter_life is not None else (math.nan, math.nan)
    return RemainingLife(
        status=status,
        years=float(years),
        earliest=float(earliest - shift) if math.isfinite(earliest) else math.nan,
        latest=float(latest - shift) if math.isfinite(latest) else math.nan,
        horizon_years=horizon,
        parameter_low=float(low),
        parameter_high=float(high),
    )


# -- members -------------------------------------------------------------------------------
@dataclasses.dataclass
class LifeCurve:
    """Annual beta(t) of one member and mode (``mode="system"`` for the series system).

    Attributes
    ----------
    member, zone, kind, mode : str
    years_from_assessment : ndarray (T,)
        Time since the assessment date [yr].
    calendar_year : ndarray (T,)
        Decimal calendar year [yr].
    age_years : ndarray (T,)
        Age of the structure [yr].
    beta, pf, cov : ndarray (T,)
        Annual reliability index [-], annual pf [-], CoV of the pf estimate [-].
    beta_lower, beta_upper : ndarray (T,)
        Sampling band: beta -/+ 2 standard errors of the estimator [-].
    parameter_lower, parameter_upper : ndarray (T,) or None
        Parameter band: 5 % and 95 % quantile of beta(t | theta) over draws of the
        population and corrosion parameters [-] (None when not computed).
    target : Target
        Annual target (`assess.targets.target_beta` with a 1-year period).
    remaining_life : RemainingLife
    governing_mode : str
        For the system: the mode with the lowest beta at the end of the
        horizon; else the mode itself.
    corrosion : dict
        The zone's `CorrosionInputs` as a dict.
    n_samples, n_calls : int
    seed : int or None
    centres : list of dict
        FORM design points that centre the sampling mixture.
    warnings : list of str
    checks : list of dict
        Cross-checks by subset simulation at given years.
    reference : str
        Always `ANNUAL_NOTE`.
    anchor : dict
        How the curve was tied to the members' "after" result at the assessment
        date (`assess.site.life.anchor_to_members`); empty when it was not.
    section_loss : dict
        Face of the bars, where today's state comes from (break-outs or the
        corrosion model), and whether pitting or uniform loss governs the section
        loss today and at the horizon (`assess.site.corrosion_state.pitting_note`).
    """

    member: str
    zone: str
    kind: str
    mode: str
    years_from_assessment: np.ndarray
    calendar_year: np.ndarray
    age_years: np.ndarray
    beta: np.ndarray
    pf: np.ndarray
    cov: np.ndarray
    beta_lower: np.ndarray
    beta_upper: np.ndarray
    target: Any
    remaining_life: RemainingLife
    governing_mode: str
    corrosion: dict
    n_samples: int
    n_calls: int
    seed: int | None
    centres: list
    warnings: list
    checks: list = dataclasses.field(default_factory=list)
    reference: str = ANNUAL_NOTE
    parameter_lower: np.ndarray | None = None
    parameter_upper: np.ndarray | None = None
    parameter_draws: int = 0
    anchor: dict = dataclasses.field(default_factory=dict)
    section_loss: dict = dataclasses.field(default_factory=dict)

    @property
    def beta_now(self) -> float:
        """Annual beta at the assessment date [-]."""
        return float(self.beta[0])

    def to_dict(self) -> dict:
        def values(a):
            return [float(v) if math.isfinite(v) else None for v in np.asarray(a, dtype=float)]

        return {
            "member": self.member,
            "zone": self.zone,
            "kind": self.kind,
            "mode": self.mode,
            "reference_period_years": 1.0,
            "reference": self.reference,
            "years_from_assessment": values(self.years_from_assessment),
            "calendar_year": values(self.calendar_year),
            "age_years": values(self.age_years),
            "beta": values(self.beta),
            "pf": values(self.pf),
            "cov": values(self.cov),
            "beta_lower": values(self.beta_lower),
            "beta_upper": values(self.beta_upper),
            "sampling_band": {
                "what": f"beta -/+ {BAND_STANDARD_ERRORS:g} standard errors of the sampling "
                "estimate of this curve (not the uncertainty of the member)",
                "lower": values(self.beta_lower),
                "upper": values(self.beta_upper),
            },
            "parameter_band": None
            if self.parameter_lower is None
            else {
                "what": "5 % and 95 % quantile of beta(t) over draws of the population and "
                "corrosion parameters from their posterior",
                "quantiles": list(PARAMETER_BAND),
                "draws": self.parameter_draws,
                "lower": values(self.parameter_lower),
                "upper": values(self.parameter_upper),
            },
            "target": {
                "beta": self.target.beta,
                "reference_period_years": self.target.reference_period_years,
                "source": self.target.source,
                "note": self.target.note,
            },
            "remaining_life": self.remaining_life.to_dict(),
            "governing_mode": self.governing_mode,
            "corrosion": self.corrosion,
            "n_samples": self.n_samples,
            "n_calls": self.n_calls,
            "seed": self.seed,
            "centres": self.centres,
            "warnings": list(self.warnings),
            "checks": self.checks,
            "anchor": self.anchor,
            "section_loss": self.section_loss,
        }


def area_factor(
    initiation_time,
    corrosion_rate,
    age_years: float,
    age_now_years: float,
    bar_diameter_mm: float,
    pitting_factor=None,
    *,
    local_factor: float = 1.0,
):
    """A(age) / A(age_now) of a bar at the critical section [-].

    Uniform Faraday corrosion from the critical section's initiation time
    ``local_factor`` x t_i (the spatial quantile of the present state,
    `CorrosionInputs.local_factor`). With ``pitting_factor`` R the bar also carries
    its deepest pit, R times the uniform penetration deep (Val & Melchers 1997 pit
    geometry, `residual_area_ratio` rule "uniform_then_pit"). Exactly 1 at
    ``age_years == age_now_years``; 0 where the bar is already consumed at
    ``age_now`` (then nothing is left to lose, and the present state is taken as
    lost at once - a conservative edge case). See
    `assess.site.corrosion_state.area_path`.
    """
    return area_path(
        initiation_time,
        corrosion_rate,
        age_years,
        age_now_years,
        bar_diameter_mm,
        local_factor,
        pitting_factor,
    )


def deteriorating_limit_state(
    member_model,
    bar_diameter_mm: float,
    age_now_years: float,
    mode_names: Sequence[str],
    pitting: bool = False,
    *,
    local_factor: float = 1.0,
    top: tuple[float, float, bool] | None = None,
):
    """``limit_state_at(x, t)`` of a member whose bar area corrodes after the assessment.

    t is the time since the assessment date [yr]; ``x["area_ratio"]`` is scaled
    by `area_factor` before the member's mode functions are evaluated. With
    ``pitting`` the model must carry the variable ``pitting_factor``.

    ``top`` = (bar diameter [mm], local factor [-], pitting) of the top bars of a
    continuous member when their face has its own corrosion state: ``x["area_ratio_top"]``
    then follows the variables ``TOP_SUFFIX``-named initiation time, rate (and pitting
    factor); without it the top bars follow the main face.
    """
    funcs = [member_model.modes[m] for m in mode_names]

    def limit_state_at(x, t):
        factor = area_factor(
            x[INITIATION_NAME],
            x[RATE_NAME],
            age_now_years + float(t),
            age_now_years,
            bar_diameter_mm,
            x[PITTING_NAME] if pitting else None,
            local_factor=local_factor,
        )
        shifted = dict(x)
        shifted["area_ratio"] = x["area_ratio"] * factor
        if "area_ratio_top" in x:
            if top is None:  # top bars of a continuous member: the main face's rate
                shifted["area_ratio_top"] = x["area_ratio_top"] * factor
            else:
                diameter, top_local, top_pits = top
                shifted["area_ratio_top"] = x["area_ratio_top"] * area_factor(
                    x[INITIATION_NAME + TOP_SUFFIX],
                    x[RATE_NAME + TOP_SUFFIX],
                    age_now_years + float(t),
                    age_now_years,
                    diameter,
                    x[PITTING_NAME + TOP_SUFFIX] if top_pits else None,
                    local_factor=top_local,
                )
        return np.column_stack([f(shifted) for f in funcs])

    return limit_state_at


def annual_target(site):
    """Annual ULS target of the site's consequence class and cost of safety (`target_beta`)."""
    from assess.targets import target_beta

    return target_beta(site.target.consequence_class, 1.0, site.target.cost_of_safety)


def _member_seed(seed: int, member: str) -> int:
    return (int(seed) + zlib.crc32(f"{member}/remaining-life".encode())) % (2**32)


def _decimal_year(date) -> float:
    start = type(date)(date.year, 1, 1)
    return date.year + (date - start).days / 365.25


def project_member(
    site,
    member_id: str,
    update,
    *,
    corrosion: dict | None = None,
    horizon_years: float = 50.0,
    step_years: float = 1.0,
    n_samples: int = DEFAULT_SAMPLES,
    seed: int = 20261202,
    check_years: Sequence[float] = (),
    check_samples: int = 1000,
    pitting: bool | None = None,
    parameter_draws: int = PARAMETER_DRAWS,
    state: dict | None = None,
) -> list:
    """Annual beta(t) and remaining life of every mode and the system of one member.

    Parameters
    ----------
    site : inspection_io.site.Site
    member_id : str
    update : SiteUpdate
        Its ``after`` knowledge (with ``after_local``, `knowledge_at` the member's
        tension face) gives the state at the assessment date.
    corrosion : dict, optional
        Zone -> `CorrosionInputs`; default the priors of `zone_corrosion_inputs`.
        Used only without ``state``.
    horizon_years : float, default 50
        Length of the projection from the assessment date [yr].
    step_years : float, default 1
        Time step [yr].
    n_samples : int
        Importance samples shared by all years and modes [-].
    seed : int
        Base seed; each member gets its own.
    check_years : sequence of float
        Years from the assessment date at which the system pf is recomputed by
        subset simulation as a cross-check (stored in ``checks``).
    check_samples : int
        Samples per subset level of the cross-checks [-].
    pitting : bool, optional
        Each bar's deepest pit at the critical section: pit depth R times the
        uniform penetration, R ~ Gumbel updated with the face's measured pits
        (`assess.deterioration.pitting`). None: on chloride-exposed faces and where
        pits were measured; True everywhere; False nowhere. On the safe side: every
        bar's deepest pit is taken in the critical section. Used only without ``state``.
    state : dict, optional
        (zone, face) -> `FaceCorrosion` (`assess.site.corrosion_state`); with it,
        ``update`` must already carry the present state (`present_state`).
    parameter_draws : int
        Parameter draws of the parameter band (0: no parameter band) [-].

    Returns
    -------
    list of LifeCurve
        One per mode, then ``"system"`` when the member has several modes.
    """
    from assess.reliability.subset import subset_simulation
    from assess.site.corrosion_state import critical_length_mm, pitting_note
    from assess.site.member_models import build_member_model
    from assess.targets import mode_target, system_target

    if member_id not in site.members:
        raise InputError(
            f"member {member_id!r} is not in the site file; members are {', '.join(site.members)}",
            column="member",
        )
    if not (horizon_years > 0 and step_years > 0 and step_years <= horizon_years):
        raise InputError(
            f"horizon and step must be positive years with step <= horizon, got "
            f"{horizon_years!r} and {step_years!r}",
            column="horizon",
        )
    member = site.members[member_id]
    if state is None:
        update, state = present_state(
            site, update, corrosion, pitting=pitting, seed=seed, until_date=update.until_date
        )
    face = getattr(member, "tension_face", None) or "bottom"
    face_state = state[(member.zone, face)]
    inputs = face_state.inputs
    # each bar layer takes today's state of its own face (`knowledge_at` inside the model)
    member_model = build_member_model(
        site,
        member,
        update.after[member.zone],
        reference_period_years=1.0,
        local=(getattr(update, "after_local", None) or {}).get(member.zone),
    )
    inputs.add_to_model(member_model.model)
    with_pits = face_state.pitting is not None
    if with_pits:
        face_state.pitting.add_to_model(
            member_model.model, PITTING_NAME, critical_length_mm(member)
        )
    top = None
    top_state = state.get((member.zone, "top"))
    if "top" in getattr(member_model, "layers", {}) and face != "top" and top_state is not None:
        top_state.inputs.add_to_model(
            member_model.model, INITIATION_NAME + TOP_SUFFIX, RATE_NAME + TOP_SUFFIX
        )
        top_pits = top_state.pitting is not None
        if top_pits:
            top_state.pitting.add_to_model(
                member_model.model, PITTING_NAME + TOP_SUFFIX, critical_length_mm(member)
            )
        top_diameter = float(getattr(member, "top_bar_diameter", None) or member.bar_diameter)
        top = (top_diameter, top_state.inputs.local_factor, top_pits)
    mode_names = list(member_model.modes)
    age_now = age_at(site, site.site.assessment_date)
    limit_state_at = deteriorating_limit_state(
        member_model,
        float(member.bar_diameter),
        age_now,
        mode_names,
        pitting=with_pits,
        local_factor=inputs.local_factor,
        top=top,
    )
    section_loss = {
        "face": face,
        "present_state_from": "break-outs" if face_state.measured else "corrosion model",
        "breakouts_on_face": face_state.breakouts,
        "local_factor": inputs.local_factor,
        "state_quantile": inputs.state_quantile,
        **pitting_note(site, member, face_state, horizon_years, seed=_member_seed(seed, member_id)),
    }
    n_steps = int(round(horizon_years / step_years))
    times = np.arange(n_steps + 1) * float(step_years)
    groups = {name: [j] for j, name in enumerate(mode_names)}
    if len(mode_names) > 1:
        groups["system"] = list(range(len(mode_names)))
    run_seed = _member_seed(seed, member_id)
    estimate = estimate_curves(
        member_model.model,
        limit_state_at,
        times,
        groups,
        mode_names=mode_names,
        n_samples=n_samples,
        seed=run_seed,
        parameters=parameter_names(member_model.model) if parameter_draws else (),
        n_parameter_draws=max(int(parameter_draws), 2),
    )
    site_target = annual_target(site)
    start_year = _decimal_year(site.site.assessment_date)
    curves = []
    for label in groups:
        # each mode against its own target (brittle stricter), the system the strictest
        target = (
            system_target(mode_names, site_target)
            if label == "system"
            else mode_target(label, site_target)
        )
        beta, lower, upper = beta_band(estimate.pf[label], estimate.cov[label])
        band: tuple = (None, None)
        parameter_life = None
        if label in estimate.parameter_pf:
            p_low, p_high, life_low, life_high = parameter_band(
                estimate.parameter_pf[label], times, target.beta
            )
            band, parameter_life = (p_low, p_high), (life_low, life_high)
        governing = label
        if label == "system":
            governing = min(mode_names, key=lambda m: stats.norm.isf(estimate.pf[m][-1]))
        warnings = list(estimate.warnings)
        if np.any(estimate.n_failures[label] == 0):
            first = int(np.flatnonzero(estimate.n_failures[label] == 0)[0])
            warnings.append(
                f"no failed sample at t = {times[first]:g} yr: beta there is beyond "
                "what the sample set resolves (shown as +inf)"
            )
        curves.append(
            LifeCurve(
                member=member_id,
                zone=member.zone,
                kind=member.kind,
                mode=label,
                years_from_assessment=times,
                calendar_year=start_year + times,
                age_years=age_now + times,
                beta=beta,
                pf=estimate.pf[label],
                cov=estimate.cov[label],
                beta_lower=lower,
                beta_upper=upper,
                target=target,
                remaining_life=remaining_life(
                    times, beta, lower, upper, target.beta, parameter_life
                ),
                governing_mode=governing,
                corrosion=inputs.to_dict(),
                n_samples=estimate.n_samples,
                n_calls=estimate.n_calls,
                seed=estimate.seed,
                centres=estimate.centres,
                warnings=warnings,
                parameter_lower=band[0],
                parameter_upper=band[1],
                parameter_draws=len(next(iter(estimate.parameter_pf.values()), ())),
                section_loss=section_loss,
            )
        )
    system = curves[-1]
    for t in check_years:
        j = int(np.argmin(np.abs(times - float(t))))
        problem = member_model.model.problem(
            partial(_at_time, limit_state_at, t=times[j]), mode_names=mode_names
        )
        check = subset_simulation(problem, n_per_level=check_samples, seed=run_seed + j + 1)
        combined = math.hypot(check.cov * check.pf, system.cov[j] * system.pf[j])
        system.checks.append(
            {
                "years_from_assessment": float(times[j]),
                "beta_importance_sampling": float(system.beta[j]),
                "beta_subset_simulation": float(check.beta),
                "cov_subset_simulation": float(check.cov),
                "n_calls": int(check.n_calls),
                "agree_within_3_cov": bool(abs(check.pf - system.pf[j]) <= 3.0 * combined),
            }
        )
    return curves


def project_site(
    site,
    update,
    *,
    corrosion: dict | None = None,
    members=None,
    horizon_years: float = 50.0,
    step_years: float = 1.0,
    n_samples: int = DEFAULT_SAMPLES,
    seed: int = 20261202,
    check_years: Sequence[float] = (),
    progress: Callable[[str], None] | None = None,
    pitting: bool | None = None,
    parameter_draws: int = PARAMETER_DRAWS,
    state: dict | None = None,
    cache: bool = True,
) -> list:
    """`project_member` for every member (or those given); curves of all modes and systems.

    With ``cache`` (an imported site), each member's curves are stored under a hash of its
    model, knowledge (today's corrosion state included), corrosion inputs, settings and
    code (`assess.site.result_cache`) and read back when nothing changed.

    Without ``state`` the present corrosion state is built once (`present_state`);
    with it, ``update`` must already carry it.
    """
    if state is None:
        update, state = present_state(
            site, update, corrosion, pitting=pitting, seed=seed, until_date=update.until_date
        )
    chosen = list(members) if members else list(site.members)
    unknown = [m for m in chosen if m not in site.members]
    if unknown:
        raise InputError(
            f"member(s) {', '.join(unknown)} not in the site file; members are "
            f"{', '.join(site.members)}",
            column="--member",
        )
    from assess.site.paths import has_ledger
    from assess.site.result_cache import cached_value, member_payload

    folder = site.folder if cache and has_ledger(site.folder) else None
    curves = []
    for member_id in chosen:
        member = site.members[member_id]
        payload = {
            **member_payload(
                site,
                member,
                update.after[member.zone],
                local=(getattr(update, "after_local", None) or {}).get(member.zone),
            ),
            "corrosion": {
                "/".join(key): value for key, value in state.items() if key[0] == member.zone
            },
            "projection": [
                horizon_years,
                step_years,
                n_samples,
                seed,
                list(check_years),
                pitting,
                parameter_draws,
            ],
        }
        curves.extend(
            cached_value(
                folder,
                "life",
                payload,
                partial(
                    project_member,
                    site,
                    member_id,
                    update,
                    corrosion=corrosion,
                    horizon_years=horizon_years,
                    step_years=step_years,
                    n_samples=n_samples,
                    seed=seed,
                    check_years=check_years,
                    parameter_draws=parameter_draws,
                    state=state,
                ),
            )
        )
        if progress:
            progress(member_id)
    return curves


def governing_curves(curves) -> list:
    """One curve per member: its system curve, or its only mode."""
    by_member: dict[str, LifeCurve] = {}
    for curve in curves:
        if curve.mode == "system" or curve.member not in by_member:
            by_member[curve.member] = curve
    return list(by_member.values())


__all__ = [
    "ANNUAL_NOTE",
    "CurveEstimate",
    "LifeCurve",
    "RemainingLife",
    "annual_target",
    "area_factor",
    "beta_band",
    "deteriorating_limit_state",
    "estimate_curves",
    "first_crossing",
    "governing_curves",
    "parameter_band",
    "parameter_names",
    "project_member",
    "project_site",
    "remaining_life",
]
