"""A small, documented probability model: kind, mean, standard deviation and source."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from assess.errors import InputError

#: Euler-Mascheroni constant, used by the Gumbel moments.
EULER_GAMMA = 0.5772156649015329

KINDS = ("normal", "lognormal", "gamma", "gumbel")


@dataclasses.dataclass(frozen=True)
class Prior:
    """Probability model of one basic variable before (or without) site data.

    Attributes
    ----------
    kind : str
        ``"normal"``, ``"lognormal"``, ``"gamma"`` or ``"gumbel"`` (maximum,
        right-skewed).
    mean : float
        Mean value [unit].
    std : float
        Standard deviation [unit].
    source : str
        Published source of the model and its parameters.
    unit : str
        Unit of the variable, e.g. ``"MPa"``, ``"mm"``, ``"kN/m2"``, ``"-"``.
    note : str
        Assumptions made when choosing the values.
    """

    kind: str
    mean: float
    std: float
    source: str
    unit: str = "-"
    note: str = ""

    def __post_init__(self):
        if self.kind not in KINDS:
            raise InputError(f"distribution kind must be one of {KINDS}, got {self.kind!r}")
        if not (math.isfinite(self.mean) and math.isfinite(self.std)) or self.std < 0:
            raise InputError(
                f"a {self.kind} model needs a finite mean and a non-negative standard deviation, "
                f"got mean={self.mean!r}, std={self.std!r} ({self.source})")
        if self.kind in ("lognormal", "gamma") and self.mean <= 0:
            raise InputError(
                f"a {self.kind} model needs a positive mean, got {self.mean!r} {self.unit} "
                f"({self.source})")

    @property
    def cov(self) -> float:
        """Coefficient of variation std/|mean| [-] (inf for a zero mean)."""
        return self.std / abs(self.mean) if self.mean != 0 else math.inf

    def to_scipy(self):
        """The frozen `scipy.stats` distribution with this mean and standard deviation.

        Lognormal: sigma_ln = sqrt(ln(1 + V^2)), mu_ln = ln(mean) - sigma_ln^2 / 2.
        Gamma: shape 1/V^2, scale mean V^2. Gumbel (maximum): scale sqrt(6) std / pi,
        location mean - 0.5772 scale.
        """
        if self.kind == "normal":
            return stats.norm(loc=self.mean, scale=self.std)
        if self.kind == "lognormal":
            sigma_ln = math.sqrt(math.log1p(self.cov ** 2))
            return stats.lognorm(s=sigma_ln, scale=self.mean * math.exp(-0.5 * sigma_ln ** 2))
        if self.kind == "gamma":
            shape = 1.0 / self.cov ** 2
            return stats.gamma(a=shape, scale=self.mean / shape)
        scale = math.sqrt(6.0) * self.std / math.pi
        return stats.gumbel_r(loc=self.mean - EULER_GAMMA * scale, scale=scale)

    def sample(self, size: int, seed: int | np.random.Generator | None = None) -> np.ndarray:
        """Draw ``size`` values [unit]. Pass an int seed for reproducible output."""
        return self.to_scipy().rvs(size=size, random_state=np.random.default_rng(seed))
