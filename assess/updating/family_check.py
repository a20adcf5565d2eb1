"""Run-time check of the posterior-to-reliability family against the raw draws.

The reliability models take a posterior through a fitted family (gamma
precision, normal standardised location, Gaussian copula; `NormalGamma.fit_draws`,
decision 4 of the design notes). The family is exact for a conjugate
normal-gamma posterior, but an MCMC posterior (partial pooling, measurement
error, a hierarchical prior) may have a heavier or lighter tail of sigma. What
matters to a member is the predictive probability of a low (or high) value of
the physical quantity at the probability level of its design point, so that is
what is compared:

    P_raw(Y < y)    = (1/D) sum_d Phi((y - mu_d) / sigma_d)       (the draws, exact)
    P_family(Y < y) = int phi(u) Phi((y - m(u)) / (sigma(u) k)) du (1-D quadrature)

with sigma(u) = 1 / sqrt(F_q^-1(Phi(u))), m(u) = center + sigma(u)(z_mean + z_std
rho u), k = sqrt(1 + z_std^2 (1 - rho^2)) (the normal location given the
precision, integrated analytically). y is the raw predictive quantile at each
level p of `CHECK_LEVELS`; the check fails when P_family(y) / p lies outside
[1 / FAMILY_CHECK_FACTOR, FAMILY_CHECK_FACTOR].

A member's own level is checked too (`check_family_at_member`, wired by
`assess.site.member_family`): p = Phi(-beta sqrt(alpha^2)) with the member's FORM beta
and importance factor of the quantity.

The levels 1e-2 to 1e-4 span the marginal probabilities at design points of
members with target betas 3.1-4.7 and importance factors 0.5-0.8
(Phi(-0.5 x 3.1) = 0.06 ... Phi(-0.8 x 4.7) = 8.5e-5), the range where the
issue found differences of 1.1-1.6 (common practice for the importance factors).
"""

from __future__ import annotations

import dataclasses

import numpy as np
from scipy import integrate, special, stats

from assess.errors import InputError

FAMILY_CHECK_FACTOR = 1.5
"""Largest accepted ratio (either way) of the family's to the raw draws' tail probability [-]
(judgement: a factor 1.5 on pf moves beta by about 0.1 at pf = 1e-4)."""

CHECK_LEVELS = (1e-2, 1e-3, 1e-4)
"""Tail probability levels p of the check [-]."""

TAIL_SIDES = {"concrete": ("lower",), "steel": ("lower",), "cover": ("lower", "upper"),
              "area_ratio": ("lower",)}
"""Tails that matter for each materials population: low strengths and remaining
areas weaken a member; cover matters both ways (low: durability, high: a shorter
lever arm)."""

_U = np.linspace(-8.5, 8.5, 1201)
_PHI_U = stats.norm.pdf(_U)


@dataclasses.dataclass(frozen=True)
class FamilyCheck:
    """Outcome of one check.

    Attributes
    ----------
    side : {"lower", "upper"}
    levels : tuple of float
        Tail probabilities p of the raw draws [-].
    ratios : tuple of float
        P_family / P_raw at each level [-].
    cov : tuple of float
        Coefficient of variation of the raw estimate at each level [-]: the
        standard error of a mean of D draws (independent draws assumed) over the
        mean.
    factor : float
        Accepted ratio [-].
    """

    side: str
    levels: tuple
    ratios: tuple
    cov: tuple
    factor: float = FAMILY_CHECK_FACTOR

    @property
    def worst(self) -> float:
        """The ratio farthest from 1 (in the log sense) [-]."""
        return max(self.ratios, key=lambda r: abs(np.log(r)))

    @property
    def passed(self) -> bool:
        """Every |ln ratio| within ln(factor) plus two CoVs of the raw estimate.

        The allowance keeps the draws' own Monte Carlo error from raising the
        warning (a 4000-draw tail at 1e-4 can be uncertain by 30 %)."""
        return all(abs(np.log(r)) <= np.log(self.factor) + 2.0 * c
                   for r, c in zip(self.ratios, self.cov))

    def to_dict(self) -> dict:
        return {"side": self.side, "levels": list(self.levels), "ratios": list(self.ratios),
                "cov": list(self.cov), "factor": self.factor, "passed": self.passed}


def raw_tail(y, mu, sigma, side="lower"):
    """P(Y < y) (lower) or P(Y > y) (upper) of the predictive of the draws [-]."""
    y = np.atleast_1d(np.asarray(y, dtype=float))
    z = (y[:, None] - mu[None, :]) / sigma[None, :]
    return special.ndtr(z if side == "lower" else -z).mean(axis=1)


def family_tail(y, population, side="lower"):
    """P(Y < y) (lower) or P(Y > y) (upper) of the fitted family (quadrature) [-]."""
    y = np.atleast_1d(np.asarray(y, dtype=float))
    rho = float(population.rho)
    # precision quantile at Phi(u): upper tail through isf, for accuracy at both ends
    precision = np.where(_U < 0, stats.gamma.ppf(special.ndtr(_U), population.shape,
                                                 scale=1.0 / population.rate),
                         stats.gamma.isf(special.ndtr(-_U), population.shape,
                                         scale=1.0 / population.rate))
    sigma = 1.0 / np.sqrt(precision)
    mean = population.center + sigma * (population.z_mean + population.z_std * rho * _U)
    spread = sigma * np.sqrt(1.0 + population.z_std**2 * (1.0 - rho**2))
    z = (y[:, None] - mean[None, :]) / spread[None, :]
    integrand = special.ndtr(z if side == "lower" else -z) * _PHI_U[None, :]
    return integrate.trapezoid(integrand, _U, axis=1)


def raw_quantiles(levels, mu, sigma, side="lower", points=100):
    """y with raw_tail(y) = p for each level p [units of Y].

    The tail is evaluated once on a grid of ``points`` values reaching 12 of the
    largest sigma beyond the means, and ln(tail) is interpolated (it is smooth and
    monotone); the check then evaluates the raw tail exactly at these y."""
    p = np.asarray(levels, dtype=float)
    spread = float(np.max(sigma))
    if side == "lower":
        grid = np.linspace(float(np.min(mu)) - 12.0 * spread, float(np.median(mu)), points)
    else:
        grid = np.linspace(float(np.median(mu)), float(np.max(mu)) + 12.0 * spread, points)
    tail = np.maximum(raw_tail(grid, mu, sigma, side), 1e-300)
    log_tail = np.log(tail)
    if side == "upper":  # np.interp needs increasing x
        return np.interp(np.log(p), log_tail[::-1], grid[::-1])
    return np.interp(np.log(p), log_tail, grid)


def check_family(population, mu_draws, sigma_draws, *, side="lower", levels=CHECK_LEVELS,
                 factor=FAMILY_CHECK_FACTOR) -> FamilyCheck:
    """Compare the family's tail with the raw draws' at each level.

    Parameters
    ----------
    population : NormalGamma
        The family fitted to the draws.
    mu_draws, sigma_draws : array_like (D,)
        Posterior draws of the population mean and sd [units of Y].
    side : {"lower", "upper"}
    levels : sequence of float
        Tail probabilities in (0, 0.5) [-].
    factor : float
        Accepted ratio, > 1 [-].
    """
    mu = np.asarray(mu_draws, dtype=float).ravel()
    sigma = np.asarray(sigma_draws, dtype=float).ravel()
    if side not in ("lower", "upper"):
        raise InputError(f"side must be 'lower' or 'upper', got {side!r}", column="side")
    if mu.shape != sigma.shape or mu.size < 50 or not np.all(sigma > 0):
        raise InputError("check_family needs at least 50 paired draws of mu and sigma > 0",
                         column="draws")
    y = raw_quantiles(levels, mu, sigma, side)
    z = (y[:, None] - mu[None, :]) / sigma[None, :]
    terms = special.ndtr(z if side == "lower" else -z)
    achieved = terms.mean(axis=1)
    cov = terms.std(axis=1, ddof=1) / np.sqrt(mu.size) / achieved
    ratios = family_tail(y, population, side) / achieved
    return FamilyCheck(side, tuple(float(p) for p in levels),
                       tuple(float(r) for r in ratios), tuple(float(c) for c in cov),
                       float(factor))


def family_warning(failures) -> str | None:
    """One warning text for the checks that failed: [(zone, quantity, FamilyCheck)]."""
    if not failures:
        return None
    parts = [f"{quantity} in zone {zone} ({check.side} tail: family / draws = "
             f"{', '.join(f'{r:.2f}' for r in check.ratios)} at p = "
             f"{', '.join(f'{p:g}' for p in check.levels)})"
             for zone, quantity, check in failures]
    factor = failures[0][2].factor
    return ("The fitted posterior family (gamma precision, normal location, Gaussian copula) "
            f"differs from the raw posterior draws by more than a factor {factor:g} in the "
            "tail that matters for reliability: " + "; ".join(parts) + ". The member "
            "reliabilities of these zones may be off by that factor in pf.")


MEMBER_LEVEL_FLOOR = 1e-7
"""Smallest member tail level checked [-]: below it a few thousand draws say nothing (the
CoV allowance of `FamilyCheck.passed` would swallow any ratio)."""


def member_tail_level(beta, alpha2):
    """Marginal tail probability of a quantity at a member's design point [-].

    p = Phi(-|beta| sqrt(alpha^2)), with alpha^2 the member's FORM importance factor of
    the quantity (its precision, location and physical value together): the probability,
    under the predictive, of a value at least as adverse as the design point's when the
    quantity is one standard-normal direction of the design point (first-order reliability,
    e.g. Madsen, Krenk & Lind, *Methods of Structural Safety*, 1986, ch. 5; from memory).
    Vectorised over ``beta`` and ``alpha2``; clipped to [`MEMBER_LEVEL_FLOOR`, 0.5].
    """
    beta = np.abs(np.asarray(beta, dtype=float))
    alpha2 = np.clip(np.asarray(alpha2, dtype=float), 0.0, 1.0)
    return np.clip(special.ndtr(-beta * np.sqrt(alpha2)), MEMBER_LEVEL_FLOOR, 0.5)


def check_family_at_member(population, mu_draws, sigma_draws, *, beta, alpha2,
                           side="lower", factor=FAMILY_CHECK_FACTOR) -> FamilyCheck:
    """`check_family` at the member's own tail level `member_tail_level(beta, alpha2)`.

    Parameters
    ----------
    population : NormalGamma
        The family the member's model uses.
    mu_draws, sigma_draws : array_like (D,)
        The raw posterior draws the family was fitted to [units of Y].
    beta : float
        The member's (FORM) reliability index [-].
    alpha2 : float
        The member's importance factor of the quantity [-].
    side : {"lower", "upper"}
        The tail the design point lies in.
    """
    level = float(member_tail_level(beta, alpha2))
    return check_family(population, mu_draws, sigma_draws, side=side, levels=(level,),
                        factor=factor)


LOGNORMAL_CHECK_LEVELS = (0.05, 0.01)
"""Levels of the check of a lognormal fitted to draws [-]: a few thousand draws resolve
the empirical tail to about 15 % at 1e-2 and no further."""


def check_lognormal_tail(log_mean, log_sd, draws, *, side="lower",
                         levels=LOGNORMAL_CHECK_LEVELS,
                         factor=FAMILY_CHECK_FACTOR) -> FamilyCheck:
    """Compare a lognormal fitted to draws with the draws' own tail.

    At the empirical p-quantile x_p of the draws the ratio is
    P_lognormal(X < x_p) / p (or the upper tail); the CoV of the empirical tail
    probability is the binomial sqrt((1 - p) / (D p)) (independent draws assumed).
    Used for the corrosion initiation time and rate (`assess.site.corrosion`), whose
    early-initiation tail decides the projected section loss.

    Parameters
    ----------
    log_mean, log_sd : float
        Parameters of ln X [-].
    draws : array_like (D,)
        Posterior draws of X, > 0.
    """
    x = np.asarray(draws, dtype=float).ravel()
    if x.size < 50 or not np.all(x > 0):
        raise InputError("check_lognormal_tail needs at least 50 draws > 0", column="draws")
    p = np.asarray(levels, dtype=float)
    quantiles = np.quantile(x, p if side == "lower" else 1.0 - p)
    z = (np.log(quantiles) - log_mean) / log_sd
    fitted = special.ndtr(z) if side == "lower" else special.ndtr(-z)
    cov = np.sqrt((1.0 - p) / (x.size * p))
    return FamilyCheck(side, tuple(float(v) for v in p), tuple(float(r) for r in fitted / p),
                       tuple(float(c) for c in cov), float(factor))
