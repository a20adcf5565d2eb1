"""The normal-gamma description of an uncertain normal population, and its updating.

A quantity Y (for concrete Y = ln f_c) is normal with unknown mean mu and
standard deviation sigma. The prior from design information, the conjugate
posterior after tests and the posterior known only through MCMC draws are all
described by one type, `NormalGamma`:

    q = 1 / sigma^2 ~ Gamma(shape, rate)          (precision)
    z = (mu - center) / sigma ~ N(z_mean, z_std^2) (standardised location)
    corr(Phi^-1(F_q(q)), Phi^-1(F_z(z))) = rho     (Gaussian copula)

For the conjugate normal-gamma model of the JCSS Probabilistic Model Code
(Part 3.0, Annex A: parameters m, n, s, nu; Part 3.1 for ln f_c) this is exact
with center = m, z_std = 1/sqrt(n), shape = nu/2, rate = nu s^2 / 2, rho = 0,
and the predictive of a new Y is the Student-t Y = m + t_nu s sqrt(1 + 1/n);
n = nu = 0 is the vague prior. For a posterior known only through MCMC draws,
the same family is fitted to the draws (`NormalGamma.fit_draws`): smooth
parametric marginals and a Gaussian copula, so the far tail of the physical
quantity comes from its analytic conditional distribution, not from a
histogram of draws.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.errors import InputError


@dataclasses.dataclass(frozen=True)
class NormalGamma:
    """Uncertain mean and standard deviation of a normal quantity Y.

    Attributes
    ----------
    center : float
        Central value of the mean mu [units of Y].
    z_std : float
        Standard deviation of (mu - center)/sigma [-]; 1/sqrt(n) in the JCSS
        notation (inf for the vague prior, n = 0).
    shape, rate : float
        Gamma distribution of the precision 1/sigma^2 (shape [-], rate
        [units of Y squared]); shape = nu/2, rate = nu s^2 / 2 (0 for nu = 0).
    rho : float
        Normal-space correlation between precision and standardised location [-].
    source : str
        Where the numbers come from.
    z_mean : float
        Mean of the standardised location [-]; 0 for a conjugate normal-gamma.
    log_scale : bool
        True when Y is the logarithm of the physical quantity X (the predictive
        functions then report X).
    """

    center: float
    z_std: float
    shape: float
    rate: float
    rho: float = 0.0
    source: str = ""
    z_mean: float = 0.0
    log_scale: bool = True

    def __post_init__(self):
        for name in ("center", "rho", "z_mean"):
            if not math.isfinite(getattr(self, name)):
                raise InputError(f"normal-gamma parameter {name} must be finite, got "
                                 f"{getattr(self, name)!r} ({self.source})")
        if not (self.z_std > 0) or self.shape < 0 or self.rate < 0 or not abs(self.rho) < 1:
            raise InputError(f"normal-gamma parameters need z_std > 0, shape >= 0, rate >= 0 "
                             f"and |rho| < 1; got z_std={self.z_std}, shape={self.shape}, "
                             f"rate={self.rate}, rho={self.rho} ({self.source})")

    @classmethod
    def from_jcss(cls, m: float, n: float, s: float, nu: float, source: str = "",
                  log_scale: bool = True) -> "NormalGamma":
        """From the JCSS parameters (m, n, s, nu); n = nu = 0 is the vague prior."""
        for name, value in (("m", m), ("n", n), ("s", s), ("nu", nu)):
            if not math.isfinite(value):
                raise InputError(f"normal-gamma parameter {name} must be finite, got {value!r}")
        if n < 0 or nu < 0 or s < 0:
            raise InputError(f"normal-gamma parameters n, nu and s must be >= 0, got n={n}, "
                             f"nu={nu}, s={s} ({source})")
        z_std = math.inf if n == 0 else float(1.0 / math.sqrt(n))
        return cls(center=float(m), z_std=z_std, shape=nu / 2.0, rate=nu * s * s / 2.0,
                   source=source, log_scale=log_scale)

    @classmethod
    def fit_draws(cls, mu_draws, sigma_draws, source: str = "fitted to MCMC draws",
                  log_scale: bool = True) -> "NormalGamma":
        """Fit the family to posterior draws of (mu, sigma).

        The precision marginal is a gamma fitted by maximum likelihood (location
        fixed at 0); the standardised location is normal with the draws' mean and
        standard deviation (centre absorbs the mean); the copula correlation is the
        Pearson correlation of the normal scores of the ranks.
        """
        mu = np.asarray(mu_draws, dtype=float).ravel()
        sigma = np.asarray(sigma_draws, dtype=float).ravel()
        if mu.shape != sigma.shape or mu.size < 50:
            raise InputError("need at least 50 paired draws of mu and sigma")
        precision = 1.0 / sigma**2
        shape, _, scale = stats.gamma.fit(precision, floc=0.0)
        center = float(np.mean(mu))
        z = (mu - center) / sigma
        z_mean, z_std = float(np.mean(z)), float(np.std(z, ddof=1))
        scores_q = stats.norm.ppf(stats.rankdata(precision) / (precision.size + 1))
        scores_z = stats.norm.ppf(stats.rankdata(z) / (z.size + 1))
        rho = float(np.corrcoef(scores_q, scores_z)[0, 1])
        return cls(center=center, z_std=z_std, shape=float(shape), rate=float(1.0 / scale),
                   rho=rho, source=source, z_mean=z_mean, log_scale=log_scale)

    # JCSS notation (exact when rho = 0 and z_mean = 0)
    @property
    def m(self) -> float:
        return self.center

    @property
    def n(self) -> float:
        # 12 significant digits: a count of tests stored as 1/sqrt(n) comes back whole
        return 0.0 if math.isinf(self.z_std) else float(f"{1.0 / self.z_std**2:.12g}")

    @property
    def nu(self) -> float:
        return 2.0 * self.shape

    @property
    def s(self) -> float:
        return 0.0 if self.shape == 0 else float(math.sqrt(self.rate / self.shape))

    @property
    def jcss(self) -> dict:
        """Equivalent JCSS parameters m, n, s, nu (exact only when rho = 0 and z_mean = 0)."""
        return {"m": self.m, "n": self.n, "s": self.s, "nu": self.nu}

    def predictive(self) -> stats.rv_continuous:
        """Student-t predictive of a new Y (exact for rho = 0) [units of Y]."""
        return stats.t(df=self.nu, loc=self.m, scale=_predictive_scale(self))

    def update(self, values) -> "NormalGamma":
        """Conjugate update with observations of Y (JCSS PMC Part 3.0 Annex A).

        Valid only for rho = 0 and z_mean = 0 (a conjugate normal-gamma).
        """
        if abs(self.rho) > 1e-12 or abs(self.z_mean) > 1e-12:
            raise InputError("the conjugate update needs rho = 0 and z_mean = 0")
        return update_normal_gamma(self, values)


def update_normal_gamma(prior: NormalGamma, log_values) -> NormalGamma:
    """Posterior after observing values of the modelled variable (JCSS PMC 3.0 Annex A).

    Parameters
    ----------
    prior : NormalGamma
        Prior parameters (m', n', s', nu'); n' = nu' = 0 is the vague prior.
    log_values : array-like
        Observations of the modelled variable, i.e. ln of the measured strengths
        (ln MPa) when ``prior.log_scale`` is True [ln MPa].

    Returns
    -------
    NormalGamma
        Posterior (m'', n'', s'', nu'').

    Notes
    -----
    With n tests, sample mean m, sample standard deviation s (divisor n - 1), nu = n - 1:

    .. math::
        n'' = n' + n, \\quad \\nu'' = \\nu' + \\nu + \\delta(n'), \\quad
        n'' m'' = n' m' + n m, \\quad
        \\nu'' s''^2 + n'' m''^2 = \\nu' s'^2 + n' m'^2 + \\nu s^2 + n m^2

    with delta(n') = 0 for n' = 0 and 1 otherwise (the "1" is lost in the Markdown
    rendering of the JCSS text; from memory).
    """
    values = np.asarray(log_values, dtype=float).ravel()
    if values.size == 0:
        raise InputError("update_normal_gamma needs at least one observation, got none")
    if not np.all(np.isfinite(values)):
        raise InputError("observations for the normal-gamma update must be finite numbers "
                         "(did a strength of 0 or less reach the logarithm?)")
    n = values.size
    mean = float(values.mean())
    std = float(values.std(ddof=1)) if n > 1 else 0.0
    return update_normal_gamma_summary(prior, n=n, mean=mean, std=std)


def update_normal_gamma_summary(prior: NormalGamma, *, n: int, mean: float,
                                std: float) -> NormalGamma:
    """Same as `update_normal_gamma` from summary statistics of the logs.

    Parameters
    ----------
    n : int
        Number of observations [-].
    mean, std : float
        Sample mean and sample standard deviation (divisor n - 1) [ln MPa].
    """
    if int(n) != n or n < 1:
        raise InputError(f"the number of observations must be a positive integer, got {n!r}")
    if std < 0 or not math.isfinite(std) or not math.isfinite(mean):
        raise InputError(f"sample mean and standard deviation must be finite, std >= 0; "
                         f"got mean={mean!r}, std={std!r}")
    nu = n - 1
    delta = 0 if prior.n == 0 else 1
    n2 = prior.n + n
    nu2 = prior.nu + nu + delta
    m2 = (prior.n * prior.m + n * mean) / n2
    if nu2 > 0:
        ss = (prior.nu * prior.s ** 2 + prior.n * prior.m ** 2 + nu * std ** 2 + n * mean ** 2
              - n2 * m2 ** 2)
        s2 = math.sqrt(max(ss, 0.0) / nu2)
    else:
        s2 = 0.0
    source = f"{prior.source}; updated with {n} observation(s) (JCSS PMC 3.0 Annex A)"
    return NormalGamma.from_jcss(m2, n2, s2, nu2, source=source, log_scale=prior.log_scale)


def _predictive_scale(post: NormalGamma) -> float:
    if post.n <= 0 or post.nu <= 0 or post.s <= 0:
        raise InputError(
            "the Student-t predictive needs n > 0, nu > 0 and s > 0; got "
            f"n={post.n}, nu={post.nu}, s={post.s} ({post.source}). With a vague prior at "
            "least two test results are needed.")
    return post.s * math.sqrt(1.0 + 1.0 / post.n)


def predictive_quantile(post: NormalGamma, p):
    """p-quantile of the predictive distribution of one new value.

    .. math:: \\ln f = m'' + t_{\\nu''}(p)\\, s'' \\sqrt{1 + 1/n''}

    (JCSS PMC 3.0 Annex A; 3.1 for concrete). Returned for X itself (exp of the
    quantile of ln X) when ``post.log_scale`` is True, e.g. [MPa].

    Parameters
    ----------
    post : NormalGamma
        Prior or posterior parameters.
    p : float or array-like
        Probability level(s) in (0, 1) [-], e.g. 0.05 for the characteristic value.
    """
    p = np.asarray(p, dtype=float)
    if np.any((p <= 0) | (p >= 1)):
        raise InputError(f"probability levels must lie strictly between 0 and 1, got {p!r}")
    q = post.m + stats.t.ppf(p, post.nu) * _predictive_scale(post)
    q = np.exp(q) if post.log_scale else q
    return float(q) if q.ndim == 0 else q


def predictive_cdf(post: NormalGamma, x):
    """Predictive probability P(X <= x) of one new value (JCSS PMC 3.1).

    .. math:: F(x) = T_{\\nu''}\\left[(\\ln x - m'') / (s'' \\sqrt{1 + 1/n''})\\right]

    Parameters
    ----------
    x : float or array-like
        Value(s) of X, e.g. strength [MPa] (of ln X if ``post.log_scale`` is False
        and the model is on raw values).
    """
    x = np.asarray(x, dtype=float)
    if post.log_scale:
        with np.errstate(divide="ignore"):
            z = np.where(x > 0, np.log(np.where(x > 0, x, 1.0)), -np.inf)
    else:
        z = x
    out = stats.t.cdf((z - post.m) / _predictive_scale(post), post.nu)
    return float(out) if out.ndim == 0 else out


def predictive_lognormal(post: NormalGamma) -> tuple[float, float]:
    """Lognormal approximation (mu_ln, sigma_ln) of the predictive [ln MPa].

    Uses the exact variance of the scaled Student-t,
    sigma_ln^2 = s''^2 (1 + 1/n'') nu''/(nu'' - 2), valid for nu'' > 2 (standard
    result, from memory). JCSS PMC 3.1 calls the lognormal adequate for
    n'' nu'' > 10; its printed factor n''/(n'' - 1) appears to be a typo for
    (n'' + 1)/n'' (our reading of the JCSS text).
    """
    if post.nu <= 2:
        raise InputError(f"the predictive variance is finite only for nu > 2, got nu={post.nu}")
    return post.m, _predictive_scale(post) * math.sqrt(post.nu / (post.nu - 2.0))


__all__ = ["NormalGamma", "predictive_cdf", "predictive_lognormal", "predictive_quantile",
           "update_normal_gamma", "update_normal_gamma_summary"]
