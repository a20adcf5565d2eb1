"""The normal-gamma description of an uncertain normal population.

A quantity Y (for concrete Y = ln f_c) is normal with unknown mean mu and
standard deviation sigma. Both the prior from design information and the
posterior after testing are described here in one form:

    q = 1 / sigma^2 ~ Gamma(shape, rate)          (precision)
    z = (mu - center) / sigma ~ N(z_mean, z_std^2) (standardised location)
    corr(Phi^-1(F_q(q)), Phi^-1(F_z(z))) = rho     (Gaussian copula)

For the conjugate normal-gamma prior of the JCSS Probabilistic Model Code
(Part 3.0, Annex A: parameters m', n', s', nu') this is exact with
center = m', z_std = 1/sqrt(n'), shape = nu'/2, rate = nu' s'^2 / 2, rho = 0,
and the predictive of a new Y is the Student-t
Y = m' + t_nu' s' sqrt(1 + 1/n').  For a posterior known only through MCMC
draws, the same family is fitted to the draws (decision 4 of the design
notes): smooth parametric marginals and a Gaussian copula, so the far tail of
the physical quantity comes from its analytic conditional distribution, not
from a histogram of draws.
"""

from __future__ import annotations

import dataclasses

import numpy as np
from scipy import stats


@dataclasses.dataclass(frozen=True)
class NormalGamma:
    """Uncertain mean and standard deviation of a normal quantity.

    Attributes
    ----------
    center : float
        Central value of the mean mu [units of Y].
    z_std : float
        Standard deviation of (mu - center)/sigma [-]; 1/sqrt(n') for a
        normal-gamma prior with equivalent sample size n'.
    shape, rate : float
        Gamma distribution of the precision 1/sigma^2 (shape [-], rate
        [units of Y squared]); shape = nu/2, rate = nu s^2 / 2.
    rho : float
        Normal-space correlation between precision and standardised location [-].
    z_mean : float
        Mean of the standardised location [-]; 0 for a normal-gamma prior.
    source : str
        Where the numbers come from.
    """

    center: float
    z_std: float
    shape: float
    rate: float
    rho: float = 0.0
    source: str = ""
    z_mean: float = 0.0

    @classmethod
    def from_jcss(cls, m: float, n: float, s: float, nu: float, source: str = "") -> "NormalGamma":
        """From the JCSS parameters (m, n, s, nu) of a normal-gamma prior or posterior."""
        if n <= 0 or nu <= 0 or s <= 0:
            raise ValueError("a proper normal-gamma needs n > 0, nu > 0 and s > 0")
        return cls(center=float(m), z_std=float(1.0 / np.sqrt(n)), shape=nu / 2.0,
                   rate=nu * s * s / 2.0, source=source)

    @classmethod
    def fit_draws(cls, mu_draws, sigma_draws, source: str = "fitted to MCMC draws") -> "NormalGamma":
        """Fit the family to posterior draws of (mu, sigma).

        The precision marginal is a gamma fitted by maximum likelihood (location
        fixed at 0); the standardised location is normal with the draws' mean and
        standard deviation (centre absorbs the mean); the copula correlation is the
        Pearson correlation of the normal scores of the ranks.
        """
        mu = np.asarray(mu_draws, dtype=float).ravel()
        sigma = np.asarray(sigma_draws, dtype=float).ravel()
        if mu.shape != sigma.shape or mu.size < 50:
            raise ValueError("need at least 50 paired draws of mu and sigma")
        precision = 1.0 / sigma**2
        shape, _, scale = stats.gamma.fit(precision, floc=0.0)
        center = float(np.mean(mu))
        z = (mu - center) / sigma
        z_mean, z_std = float(np.mean(z)), float(np.std(z, ddof=1))
        scores_q = stats.norm.ppf(stats.rankdata(precision) / (precision.size + 1))
        scores_z = stats.norm.ppf(stats.rankdata(z) / (z.size + 1))
        rho = float(np.corrcoef(scores_q, scores_z)[0, 1])
        return cls(center=center, z_std=z_std, shape=float(shape), rate=float(1.0 / scale),
                   rho=rho, source=source, z_mean=z_mean)

    @property
    def jcss(self) -> dict:
        """Equivalent JCSS parameters m, n, s, nu (exact only when rho = 0 and z_mean = 0)."""
        nu = 2.0 * self.shape
        return {"m": self.center, "n": 1.0 / self.z_std**2, "s": float(np.sqrt(2.0 * self.rate / nu)),
                "nu": nu}

    def predictive(self) -> stats.rv_continuous:
        """Student-t predictive of a new Y (exact for rho = 0) [units of Y]."""
        p = self.jcss
        return stats.t(df=p["nu"], loc=p["m"], scale=p["s"] * np.sqrt(1.0 + 1.0 / p["n"]))

    @classmethod
    def from_prior(cls, prior) -> "NormalGamma":
        """From a `assess.priors.NormalGammaPrior` (JCSS m, n, s, nu) with n, nu > 0."""
        return cls.from_jcss(prior.m, prior.n, prior.s, prior.nu, source=prior.source)

    def to_prior(self, log_scale: bool = True):
        """As a `assess.priors.NormalGammaPrior` (valid for rho = 0 and z_mean = 0)."""
        from assess.priors import NormalGammaPrior

        p = self.jcss
        return NormalGammaPrior(m=p["m"], n=p["n"], s=p["s"], nu=p["nu"], source=self.source,
                                log_scale=log_scale)

    def update(self, values) -> "NormalGamma":
        """Conjugate update with observations of Y (JCSS PMC Part 3.0 Annex A).

        Delegates to `assess.priors.update_normal_gamma`; valid only for rho = 0
        and z_mean = 0 (a proper normal-gamma prior).
        """
        from assess.priors import update_normal_gamma

        if abs(self.rho) > 1e-12 or abs(self.z_mean) > 1e-12:
            raise ValueError("the conjugate update needs rho = 0 and z_mean = 0")
        return NormalGamma.from_prior(update_normal_gamma(self.to_prior(), values))
