"""Pitting factor of corroding bars: Gumbel (EV1) model updated with measured pit depths.

The deepest pit of a bar length L is p_max = R P, P the uniform (average)
penetration, with the pitting factor R = p_max / P a largest-value Gumbel
variable (Val & Melchers 1997; Stewart 2004; Stewart & Al-Harthy 2008):

    F(R) = exp(-exp(-(R - mu) / beta)),   mu_L = mu_0 + beta ln(L / L0)

with the published mu_0 = 5.08, beta = 1 / alpha = 1 / 1.02 for L0 = 125 mm
(`assess.deterioration.defaults.PITTING_FACTOR`, from memory).

Updating with measured pits
---------------------------
The scale beta is kept at its published value (a handful of break-outs does
not identify it); the location mu is updated. Writing theta = exp(mu / beta),
the Gumbel density is

    f(R | theta) = theta / beta exp(-R / beta) exp(-theta exp(-R / beta)),

so theta has a conjugate gamma prior (the Gumbel with known scale is an
exponential family in theta): prior Gamma(a0, b0), n observed factors R_i give
Gamma(a0 + n, b0 + sum exp(-R_i / beta)). The predictive distribution of R is
closed form (the gamma's Laplace transform):

    P(R <= r) = E[exp(-theta exp(-r / beta))] = (1 + exp(-r / beta) / b)^(-a).

With a0, b0 -> 0 the posterior mean of theta, n / sum exp(-R_i / beta), is the
maximum-likelihood estimate, i.e. beta ln(E[theta]) equals
``scipy.stats.gumbel_r.fit(R, fscale=beta)`` (checked in the tests).

Prior weight: a0 = `PRIOR_EQUIVALENT_PITS` (2 pits, judgement: the published
fit comes from accelerated laboratory corrosion, not from this structure), b0
chosen so that E[beta ln theta] = mu_0 (b0 = exp(psi(a0) - mu_0 / beta)).

A measured factor is R_i = p_max,i / P_i at one break-out, with P_i = (D0 -
d_res) / 2 from the residual diameter read at the same break-out; only
break-outs with P_i >= `MIN_UNIFORM_PENETRATION_MM` enter (a smaller P is
within the caliper's reading error and makes the ratio meaningless), and a
factor below 1 (a pit shallower than the uniform loss, e.g. "no pit found")
counts as 1.

References
----------
.. [1] D. V. Val and R. E. Melchers, "Reliability of deteriorating RC slab bridges,"
   *J. Struct. Eng.* 123(12), 1638-1644, 1997 (from memory).
.. [2] M. G. Stewart, "Spatial variability of pitting corrosion and its influence on
   structural fragility and reliability of RC beams in flexure," *Struct. Saf.* 26,
   453-470, 2004 (from memory).
.. [3] M. G. Stewart and A. Al-Harthy, "Pitting corrosion and structural reliability of
   corroding RC structures: experimental data and probabilistic analysis," *Reliab.
   Eng. Syst. Saf.* 93, 373-382, 2008 (from memory).
.. [4] E. J. Gumbel, *Statistics of Extremes*, Columbia University Press, 1958
   (extreme-value scaling with length).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import special

from assess.deterioration.defaults import PITTING_FACTOR, PITTING_REFERENCE_LENGTH_MM
from assess.errors import InputError
from assess.reliability.crude import resolve_seed

PRIOR_EQUIVALENT_PITS = 2.0
"""Weight a0 of the published Gumbel location, in measured pits [-] (judgement)."""

MIN_UNIFORM_PENETRATION_MM = 0.1
"""Smallest uniform penetration P at which p_max / P is used [mm] (judgement: half the
0.2 mm step of a diameter read to 0.1 mm on both sides)."""


def measured_pitting_factors(
    max_pit_depth_mm,
    bar_diameter_mm,
    residual_diameter_mm,
    min_penetration_mm=MIN_UNIFORM_PENETRATION_MM,
):
    """Pitting factors R = p_max / P of break-outs with both readings [-].

    Parameters
    ----------
    max_pit_depth_mm : array_like
        Deepest pit measured on the bar p_max [mm], >= 0.
    bar_diameter_mm : array_like
        Original diameter D0 [mm], > 0.
    residual_diameter_mm : array_like
        Residual diameter of the uniformly corroded bar d_res [mm].
    min_penetration_mm : float
        Break-outs with P = (D0 - d_res) / 2 below this are left out [mm].

    Returns
    -------
    ndarray
        R >= 1 of the usable break-outs, in input order [-].
    """
    pit = np.asarray(max_pit_depth_mm, dtype=float)
    d0 = np.asarray(bar_diameter_mm, dtype=float)
    d_res = np.asarray(residual_diameter_mm, dtype=float)
    pit, d0, d_res = np.broadcast_arrays(pit, d0, d_res)
    penetration = 0.5 * (d0 - d_res)
    usable = np.isfinite(pit) & np.isfinite(penetration) & (penetration >= min_penetration_mm)
    return np.maximum(pit[usable] / penetration[usable], 1.0)


@dataclasses.dataclass(frozen=True)
class GumbelPitting:
    """Gumbel pitting factor with known scale and a gamma-distributed theta = exp(mu / beta).

    Attributes
    ----------
    scale : float
        beta = 1 / alpha [-].
    shape, rate : float
        Gamma(a, b) of theta [-], [-].
    reference_length_mm : float
        Bar length L0 of the factors [mm].
    n_measured : int
        Measured factors in the update [-].
    source : str
    """

    scale: float
    shape: float
    rate: float
    reference_length_mm: float = PITTING_REFERENCE_LENGTH_MM
    n_measured: int = 0
    source: str = ""

    def __post_init__(self):
        for name in ("scale", "shape", "rate", "reference_length_mm"):
            value = getattr(self, name)
            if not (math.isfinite(value) and value > 0):
                raise InputError(
                    f"The {name!r} of GumbelPitting must be a finite number > 0. Got {value!r}.",
                    column=name,
                )

    @classmethod
    def published(cls, prior_pits: float = PRIOR_EQUIVALENT_PITS) -> "GumbelPitting":
        """The published Gumbel (Stewart 2004) as a prior worth ``prior_pits`` measured pits."""
        location = float(PITTING_FACTOR.params["location"])
        scale = float(PITTING_FACTOR.params["scale"])
        a0 = float(prior_pits)
        if not (math.isfinite(a0) and a0 > 0):
            raise InputError(f"prior_pits must be > 0, got {prior_pits!r}", column="prior_pits")
        b0 = math.exp(float(special.digamma(a0)) - location / scale)
        return cls(
            scale, a0, b0, source=f"{PITTING_FACTOR.source}; location weighted as {a0:g} pits"
        )

    def update(self, factors) -> "GumbelPitting":
        """Conjugate update with measured pitting factors R_i (length L0) [-]."""
        r = np.asarray(factors, dtype=float).ravel()
        if not np.all(np.isfinite(r)):
            raise InputError("measured pitting factors must be finite", column="max_pit_depth")
        if r.size == 0:
            return self
        return dataclasses.replace(
            self,
            shape=self.shape + r.size,
            rate=self.rate + float(np.exp(-r / self.scale).sum()),
            n_measured=self.n_measured + int(r.size),
            source=f"{self.source}; updated with {r.size} measured pit depth(s)",
        )

    def location_shift(self, bar_length_mm: float) -> float:
        """beta ln(L / L0): shift of the location for a bar length L [-]."""
        if not (math.isfinite(bar_length_mm) and bar_length_mm > 0):
            raise InputError(f"bar length must be > 0 mm, got {bar_length_mm!r}", column="length")
        return self.scale * math.log(bar_length_mm / self.reference_length_mm)

    @property
    def location_mean(self) -> float:
        """E[mu] = beta (psi(a) - ln b) for length L0 [-]."""
        return self.scale * (float(special.digamma(self.shape)) - math.log(self.rate))

    @property
    def location_sd(self) -> float:
        """Standard deviation of mu = beta ln theta: beta sqrt(psi'(a)) [-]."""
        return self.scale * math.sqrt(float(special.polygamma(1, self.shape)))

    def predictive_cdf(self, r, bar_length_mm: float = PITTING_REFERENCE_LENGTH_MM):
        """P(R <= r) = (1 + exp(-(r - shift) / beta) / b)^(-a) [-]."""
        z = -(np.asarray(r, dtype=float) - self.location_shift(bar_length_mm)) / self.scale
        return np.exp(-self.shape * np.log1p(np.exp(z) / self.rate))

    def predictive_ppf(self, q, bar_length_mm: float = PITTING_REFERENCE_LENGTH_MM):
        """Inverse of `predictive_cdf` [-]."""
        q = np.asarray(q, dtype=float)
        inner = self.rate * np.expm1(-np.log(q) / self.shape)
        return self.location_shift(bar_length_mm) - self.scale * np.log(inner)

    def predictive_mean(self, bar_length_mm: float = PITTING_REFERENCE_LENGTH_MM) -> float:
        """E[R] = E[mu] + 0.5772 beta [-]."""
        return self.location_mean + self.location_shift(bar_length_mm) + 0.5772156649 * self.scale

    def sample(self, n: int, seed, bar_length_mm: float = PITTING_REFERENCE_LENGTH_MM):
        """Draws of R from the predictive, lifted to >= 1 [-]."""
        rng, _ = resolve_seed(seed, "GumbelPitting.sample")
        return np.maximum(self.predictive_ppf(rng.uniform(size=int(n)), bar_length_mm), 1.0)

    def add_to_model(self, model, name: str, bar_length_mm: float = PITTING_REFERENCE_LENGTH_MM):
        """Add theta (gamma root) and R | theta (Gumbel) to a `ProbabilisticModel`."""
        from assess.distributions import make_distribution

        theta_name = f"{name}_theta"
        model.add(
            theta_name,
            make_distribution("gamma", shape=self.shape, scale=1.0 / self.rate, name=theta_name),
        )
        shift = self.location_shift(bar_length_mm)
        scale = self.scale

        def params(values):
            theta = np.maximum(values[theta_name], 1e-300)
            loc = scale * np.log(theta) + shift
            return {"loc": loc, "scale": np.full_like(loc, scale)}

        model.add_conditional(name, "gumbel", [theta_name], params)

    def to_dict(self) -> dict:
        out = dataclasses.asdict(self)
        out["location_mean"] = self.location_mean
        out["location_sd"] = self.location_sd
        out["predictive_mean"] = self.predictive_mean()
        return out


__all__ = [
    "GumbelPitting",
    "MIN_UNIFORM_PENETRATION_MM",
    "PRIOR_EQUIVALENT_PITS",
    "measured_pitting_factors",
]
