"""Normal-gamma conjugate model for the log of a strength, and its Student-t predictive.

Source: JCSS Probabilistic Model Code, Part 3.0 "General principles", Annex A
(Bayesian updating of a normal variable with unknown mean and standard deviation),
and Part 3.1 "Concrete properties" (use on ln f_c).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.errors import InputError


@dataclasses.dataclass(frozen=True)
class NormalGammaPrior:
    """Parameters (m, n, s, nu) of a normal-gamma model in the JCSS notation.

    The same type holds a prior (m', n', s', nu') and a posterior (m'', n'', s'', nu''),
    so a posterior can serve as the prior of the next inspection campaign.

    Attributes
    ----------
    m : float
        Mean of the modelled variable (here ln f_c with f_c in MPa) [ln MPa].
    n : float
        Equivalent number of observations behind ``m`` [-]; 0 = no information.
    s : float
        Standard deviation of the modelled variable [ln MPa].
    nu : float
        Degrees of freedom behind ``s`` [-]; 0 = no information.
    source : str
        Where the parameters come from.
    log_scale : bool
        True when the model is for ln X (the predictive is then reported for X).

    Notes
    -----
    Equivalent to the textbook normal-gamma posterior with kappa = n, mu = m,
    alpha = nu/2, beta = nu s^2/2 (from memory).
    """

    m: float
    n: float
    s: float
    nu: float
    source: str
    log_scale: bool = True

    def __post_init__(self):
        for name in ("m", "n", "s", "nu"):
            value = getattr(self, name)
            if not math.isfinite(value):
                raise InputError(f"normal-gamma parameter {name} must be finite, got {value!r}")
        if self.n < 0 or self.nu < 0 or self.s < 0:
            raise InputError(
                f"normal-gamma parameters n, nu and s must be >= 0, got n={self.n}, "
                f"nu={self.nu}, s={self.s} ({self.source})")


def update_normal_gamma(prior: NormalGammaPrior, log_values) -> NormalGammaPrior:
    """Posterior after observing values of the modelled variable (JCSS PMC 3.0 Annex A).

    Parameters
    ----------
    prior : NormalGammaPrior
        Prior parameters (m', n', s', nu'); n' = nu' = 0 is the vague prior.
    log_values : array-like
        Observations of the modelled variable, i.e. ln of the measured strengths
        (ln MPa) when ``prior.log_scale`` is True [ln MPa].

    Returns
    -------
    NormalGammaPrior
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


def update_normal_gamma_summary(prior: NormalGammaPrior, *, n: int, mean: float,
                                std: float) -> NormalGammaPrior:
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
    return NormalGammaPrior(m=m2, n=n2, s=s2, nu=nu2, source=source, log_scale=prior.log_scale)


def _predictive_scale(post: NormalGammaPrior) -> float:
    if post.n <= 0 or post.nu <= 0 or post.s <= 0:
        raise InputError(
            "the Student-t predictive needs n > 0, nu > 0 and s > 0; got "
            f"n={post.n}, nu={post.nu}, s={post.s} ({post.source}). With a vague prior at "
            "least two test results are needed.")
    return post.s * math.sqrt(1.0 + 1.0 / post.n)


def predictive_quantile(post: NormalGammaPrior, p):
    """p-quantile of the predictive distribution of one new value.

    .. math:: \\ln f = m'' + t_{\\nu''}(p)\\, s'' \\sqrt{1 + 1/n''}

    (JCSS PMC 3.0 Annex A; 3.1 for concrete). Returned for X itself (exp of the
    quantile of ln X) when ``post.log_scale`` is True, e.g. [MPa].

    Parameters
    ----------
    post : NormalGammaPrior
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


def predictive_cdf(post: NormalGammaPrior, x):
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


def predictive_lognormal(post: NormalGammaPrior) -> tuple[float, float]:
    """Lognormal approximation (mu_ln, sigma_ln) of the predictive [ln MPa].

    Uses the exact variance of the scaled Student-t,
    sigma_ln^2 = s''^2 (1 + 1/n'') nu''/(nu'' - 2), valid for nu'' > 2 (standard
    result, from memory). JCSS PMC 3.1 calls the lognormal adequate for
    n'' nu'' > 10; its printed factor n''/(n'' - 1) appears to be a typo for
    (n'' + 1)/n'' (domain notes 1.1).
    """
    if post.nu <= 2:
        raise InputError(f"the predictive variance is finite only for nu > 2, got nu={post.nu}")
    return post.m, _predictive_scale(post) * math.sqrt(post.nu / (post.nu - 2.0))
