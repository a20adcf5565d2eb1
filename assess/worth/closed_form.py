"""Closed-form value of information: two actions, linear loss, normal prior and sampling.

Source: Raiffa & Schlaifer (1961) *Applied Statistical Decision Theory*, Harvard
University, ch. 5-6 (normal prior on an unknown mean, normal sampling with known
standard deviation, two actions with costs linear in the mean) (from memory).
Used as the reference that the general Monte Carlo engine must reproduce, and as a
quick estimate when, e.g., the decision turns on the mean in-situ log-strength.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.errors import InputError


def unit_normal_loss(u):
    """Unit normal linear loss integral G(u) = phi(u) - u (1 - Phi(u)) [-].

    G(u) = integral_u^inf (x - u) phi(x) dx (Raiffa & Schlaifer 1961; from memory).
    G(0) = 0.3989, G(1) = 0.0833.

    Parameters
    ----------
    u : array_like
        Standardised distance [-].
    """
    u = np.asarray(u, dtype=float)
    return stats.norm.pdf(u) - u * stats.norm.sf(u)


def posterior_sd(prior_sd, sampling_sd, n):
    """Posterior standard deviation of the mean, sigma'' = (1/sigma'^2 + n/sigma^2)^-1/2.

    Parameters
    ----------
    prior_sd : array_like
        sigma', prior standard deviation of the unknown mean [unit of the mean].
    sampling_sd : array_like
        sigma, known standard deviation of one observation [unit of the mean].
    n : array_like
        Number of observations [-].
    """
    prior_sd, sampling_sd, n = (np.asarray(v, dtype=float) for v in (prior_sd, sampling_sd, n))
    return 1.0 / np.sqrt(1.0 / prior_sd ** 2 + n / sampling_sd ** 2)


def preposterior_sd(prior_sd, sampling_sd, n):
    """sigma* = sqrt(sigma'^2 - sigma''^2), spread of the posterior mean before sampling.

    Equal to sigma'^2 sqrt(n / (sigma^2 + n sigma'^2)) (Raiffa & Schlaifer 1961; from
    memory) [unit of the mean].
    """
    prior_sd, sampling_sd, n = (np.asarray(v, dtype=float) for v in (prior_sd, sampling_sd, n))
    return prior_sd ** 2 * np.sqrt(n / (sampling_sd ** 2 + n * prior_sd ** 2))


@dataclasses.dataclass(frozen=True)
class TwoActionLinearLoss:
    """Two actions whose costs are linear in an unknown mean with a normal prior.

    Attributes
    ----------
    prior_mean : float
        m', prior mean of the unknown mean mu [unit of mu].
    prior_sd : float
        sigma', prior standard deviation of mu, > 0 [unit of mu].
    break_even : float
        mu_b, value of mu at which both actions cost the same [unit of mu].
    loss_slope : float
        k_t, absolute difference of the two cost slopes: the loss of the wrong
        action is k_t |mu - mu_b| [currency per unit of mu].
    """

    prior_mean: float
    prior_sd: float
    break_even: float
    loss_slope: float

    def __post_init__(self):
        for key in ("prior_mean", "prior_sd", "break_even", "loss_slope"):
            if not math.isfinite(getattr(self, key)):
                raise InputError(f"{key} must be a finite number, got {getattr(self, key)!r}")
        if self.prior_sd <= 0 or self.loss_slope < 0:
            raise InputError(f"prior_sd must be > 0 and loss_slope >= 0, got "
                             f"{self.prior_sd!r} and {self.loss_slope!r}")

    def evpi(self) -> float:
        """EVPI = k_t sigma' G(D'), D' = |mu_b - m'| / sigma' [currency]."""
        d = abs(self.break_even - self.prior_mean) / self.prior_sd
        return float(self.loss_slope * self.prior_sd * unit_normal_loss(d))

    def evsi(self, sampling_sd, n):
        """EVSI(n) = k_t sigma* G(D*), D* = |mu_b - m'| / sigma* [currency].

        Parameters
        ----------
        sampling_sd : array_like
            Known standard deviation of one observation, > 0 [unit of mu].
        n : array_like
            Number of observations, >= 0 [-].
        """
        s_star = preposterior_sd(self.prior_sd, sampling_sd, n)
        distance = abs(self.break_even - self.prior_mean)
        informative = s_star > 0
        d_star = distance / np.where(informative, s_star, 1.0)
        value = np.where(informative, self.loss_slope * s_star * unit_normal_loss(d_star), 0.0)
        return float(value) if np.ndim(value) == 0 else value

    def net_gain(self, sampling_sd, n, fixed_cost, cost_per_observation):
        """ENGS(n) = EVSI(n) - fixed cost - cost per observation * n [currency]."""
        n = np.asarray(n, dtype=float)
        return self.evsi(sampling_sd, n) - fixed_cost - cost_per_observation * n

    def best_sample_size(self, sampling_sd, fixed_cost, cost_per_observation,
                         n_max: int = 1000) -> tuple[int, float]:
        """Number of observations 0..n_max with the largest ENGS, and that ENGS.

        n = 0 (no test, ENGS = 0) is returned when no sample size pays for itself.
        """
        n = np.arange(1, int(n_max) + 1)
        gains = self.net_gain(sampling_sd, n, fixed_cost, cost_per_observation)
        best = int(np.argmax(gains))
        if gains[best] <= 0:
            return 0, 0.0
        return int(n[best]), float(gains[best])
