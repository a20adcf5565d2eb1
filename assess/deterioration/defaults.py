"""Documented parameter tables for the deterioration models.

Every entry names its source. Values tagged "(from memory)" were recalled, not
re-read from the publication, and must be confirmed before they are relied on
(the list is in docs/deterioration-updating.md). Tables hold plain data (`DistributionSpec`)
so that the Monte Carlo routines and the Bayesian priors read the same numbers.

Units: depths and covers [mm], time [yr], chloride [% by mass of binder],
diffusion coefficients [mm2/yr] unless a name says otherwise, temperature [K],
corrosion current density [uA/cm2].

References
----------
.. [1] fib, *Model Code for Service Life Design*, fib Bulletin 34, Lausanne, 2006,
   Annex B (chloride ingress and carbonation models).
.. [2] U. Angst, B. Elsener, C. K. Larsen and O. Vennesland, "Critical chloride
   content in reinforced concrete - a review," *Cem. Concr. Res.*, vol. 39,
   pp. 1122-1138, 2009. doi:10.1016/j.cemconres.2009.08.006
.. [3] C. Andrade and C. Alonso, "Corrosion rate monitoring in the laboratory and
   on-site," *Constr. Build. Mater.*, vol. 10, no. 5, pp. 315-328, 1996.
.. [4] M. G. Stewart, "Spatial variability of pitting corrosion and its influence
   on structural fragility and reliability of RC beams in flexure," *Struct.
   Saf.*, vol. 26, 2004.
.. [5] J. A. Gonzalez, C. Andrade, C. Alonso and S. Feliu, "Comparison of rates
   of general corrosion and maximum pitting penetration on concrete embedded
   steel reinforcement," *Cem. Concr. Res.*, vol. 25, no. 2, 1995.
"""

from __future__ import annotations

import dataclasses
import math
from types import MappingProxyType

import numpy as np
from scipy import stats

from assess.errors import InputError

SECONDS_PER_YEAR = 365.25 * 24 * 3600.0
"""Julian year [s]."""

M2_PER_S_TO_MM2_PER_YEAR = 1.0e6 * SECONDS_PER_YEAR
"""Multiply a diffusion coefficient in [m2/s] by this to get [mm2/yr] (3.156e13)."""

REFERENCE_AGE_YEARS = 28.0 / 365.25
"""fib 34 reference age t0 = 28 d = 0.0767 yr of D_RCM,0 and of the carbonation
weather function [yr] [1]_ (from memory)."""

REFERENCE_TEMPERATURE_K = 293.0
"""fib 34 reference temperature T_ref of the temperature factor k_e [K] [1]_
(from memory)."""

_KINDS = {
    "deterministic": ("value",),
    "normal": ("mean", "sd"),
    "lognormal": ("mean", "sd"),
    "beta": ("mean", "sd", "lower", "upper"),
    "gumbel": ("location", "scale"),
    "uniform": ("lower", "upper"),
}


@dataclasses.dataclass(frozen=True)
class DistributionSpec:
    """A named probability distribution given by its published parameters.

    Parameters
    ----------
    kind : str
        One of ``"deterministic"`` (value), ``"normal"`` (mean, sd),
        ``"lognormal"`` (mean, sd of the variable itself, not of its log),
        ``"beta"`` (mean, sd, lower, upper: the four-parameter Beta of fib 34),
        ``"gumbel"`` (location, scale of the largest-value Gumbel; scale = 1/alpha),
        ``"uniform"`` (lower, upper).
    params : dict
        Parameters named as above, in the unit ``unit``.
    unit : str
        Unit of the variable, e.g. ``"[mm]"``.
    source : str
        Where the numbers come from, with "(from memory)" where recalled.
    """

    kind: str
    params: dict
    unit: str = ""
    source: str = ""

    def __post_init__(self):
        if self.kind not in _KINDS:
            raise InputError(f"Unknown distribution kind {self.kind!r}; expected one of "
                             f"{sorted(_KINDS)}.")
        needed = set(_KINDS[self.kind])
        if set(self.params) != needed:
            raise InputError(f"A {self.kind!r} distribution needs the parameters "
                             f"{sorted(needed)}. Got {sorted(self.params)} instead.")
        object.__setattr__(self, "params", MappingProxyType(dict(self.params)))
        if self.kind == "beta":
            _beta_shapes(**self.params)  # validates that the moments fit the bounds

    def to_scipy(self):
        """Frozen scipy.stats distribution (not available for ``deterministic``)."""
        p = self.params
        if self.kind == "normal":
            return stats.norm(loc=p["mean"], scale=p["sd"])
        if self.kind == "lognormal":
            sigma_ln = math.sqrt(math.log1p((p["sd"] / p["mean"]) ** 2))
            mu_ln = math.log(p["mean"]) - 0.5 * sigma_ln**2
            return stats.lognorm(s=sigma_ln, scale=math.exp(mu_ln))
        if self.kind == "beta":
            a, b = _beta_shapes(**p)
            return stats.beta(a, b, loc=p["lower"], scale=p["upper"] - p["lower"])
        if self.kind == "gumbel":
            return stats.gumbel_r(loc=p["location"], scale=p["scale"])
        if self.kind == "uniform":
            return stats.uniform(loc=p["lower"], scale=p["upper"] - p["lower"])
        raise InputError("A deterministic value has no scipy distribution; use sample().")

    def sample(self, size, rng: np.random.Generator) -> np.ndarray:
        """Draw ``size`` values with the generator ``rng`` [unit]."""
        if self.kind == "deterministic":
            return np.full(size, float(self.params["value"]))
        return np.asarray(self.to_scipy().rvs(size=size, random_state=rng), dtype=float)


def _beta_shapes(mean, sd, lower, upper):
    """Shape parameters (alpha, beta) of a Beta on [lower, upper] with given mean and sd."""
    if not lower < mean < upper or sd <= 0:
        raise InputError(f"A Beta distribution needs lower < mean < upper and sd > 0. "
                         f"Got mean={mean}, sd={sd}, bounds=({lower}, {upper}).")
    m = (mean - lower) / (upper - lower)
    s = sd / (upper - lower)
    k = m * (1.0 - m) / s**2 - 1.0
    if k <= 0:
        raise InputError(f"The standard deviation {sd} is too large for a Beta with mean "
                         f"{mean} on [{lower}, {upper}]; it must be below "
                         f"{(upper - lower) * math.sqrt(m * (1 - m)):.4g}.")
    return m * k, (1.0 - m) * k


_FIB34 = "fib Bulletin 34 (2006), Annex B (from memory)"

AGEING_EXPONENT = MappingProxyType({
    "CEM I": DistributionSpec("beta", {"mean": 0.30, "sd": 0.12, "lower": 0.0, "upper": 1.0},
                              "[-]", f"{_FIB34}; Portland cement"),
    "fly ash": DistributionSpec("beta", {"mean": 0.60, "sd": 0.15, "lower": 0.0, "upper": 1.0},
                                "[-]", f"{_FIB34}; Portland cement with fly ash"),
    "GGBS": DistributionSpec("beta", {"mean": 0.45, "sd": 0.20, "lower": 0.0, "upper": 1.0},
                             "[-]", f"{_FIB34}; blast-furnace slag cement (CEM III)"),
})
"""Ageing exponent a of D_app(t) = k_e D_0 (t0/t)^a by binder type [-].

Example: ``AGEING_EXPONENT["CEM I"].to_scipy().mean()`` gives 0.30."""

CRITICAL_CHLORIDE = DistributionSpec(
    "beta", {"mean": 0.6, "sd": 0.15, "lower": 0.2, "upper": 2.0}, "[% by mass of binder]",
    f"{_FIB34}; total chloride, uncoated carbon steel; see Angst et al. 2009 for the spread")
"""Critical (depassivating) chloride content C_crit [% by mass of binder]."""

CONVECTION_ZONE_DEPTH = MappingProxyType({
    "splash": DistributionSpec("beta", {"mean": 8.9, "sd": 5.6, "lower": 0.0, "upper": 50.0},
                               "[mm]", f"{_FIB34}; splash, spray and de-icing salt exposure"),
    "submerged": DistributionSpec("deterministic", {"value": 0.0}, "[mm]",
                                  f"{_FIB34}; submerged or no intermittent wetting"),
})
"""Depth Delta x of the convection zone by exposure [mm]."""

TEMPERATURE_COEFFICIENT = DistributionSpec(
    "normal", {"mean": 4800.0, "sd": 700.0}, "[K]", f"{_FIB34}; b_e of k_e")
"""Regression variable b_e of the temperature factor k_e [K]."""

RAPID_MIGRATION_COEFFICIENT_CEM_I = MappingProxyType({
    0.40: 8.9e-12, 0.45: 10.0e-12, 0.50: 15.8e-12, 0.55: 19.7e-12, 0.60: 25.0e-12,
})
"""Indicative D_RCM,0 at t0 = 28 d for CEM I by water/cement ratio [m2/s]; normal with
CoV 0.2. fib Bulletin 34 Annex B (from memory - verify the table). Multiply by
`M2_PER_S_TO_MM2_PER_YEAR` for [mm2/yr]. For an existing structure fit D_app to
measured chloride profiles instead."""

_RATE_NOTE = ("ranges from Andrade & Alonso 1996 risk levels and DuraCrete 2000 (both "
              "from memory); lognormal shape and CoV are an illustrative judgement")

CORROSION_RATE = MappingProxyType({
    "exposed deck": DistributionSpec(
        "lognormal", {"mean": 1.0, "sd": 0.5}, "[uA/cm2]",
        f"chloride-contaminated deck, active corrosion, typically 0.5-2 uA/cm2; {_RATE_NOTE}"),
    "sheltered soffit": DistributionSpec(
        "lognormal", {"mean": 0.1, "sd": 0.06}, "[uA/cm2]",
        f"sheltered (carbonation-induced) corrosion, typically 0.05-0.2 uA/cm2; {_RATE_NOTE}"),
    "internal": DistributionSpec(
        "lognormal", {"mean": 0.03, "sd": 0.02}, "[uA/cm2]",
        f"dry internal concrete, below the 0.1 uA/cm2 'negligible' level; {_RATE_NOTE}"),
})
"""Prior corrosion current density i_corr after initiation, by exposure class [uA/cm2].

Example: ``CORROSION_RATE["exposed deck"].to_scipy().ppf([0.05, 0.95])`` is about
(0.41, 1.9) uA/cm2."""

PITTING_FACTOR = DistributionSpec(
    "gumbel", {"location": 5.08, "scale": 1.0 / 1.02}, "[-]",
    "Stewart 2004, Struct. Saf. 26, fitted to accelerated-corrosion data (from memory); "
    "scale = 1/alpha, alpha = 1.02; reference bar length PITTING_REFERENCE_LENGTH_MM")
"""Pitting factor R = p_max / p_av of one bar length L0 [-] (largest-value Gumbel)."""

PITTING_REFERENCE_LENGTH_MM = 125.0
"""Bar length L0 to which `PITTING_FACTOR` refers [mm]; Stewart 2004 (from memory;
100-125 mm are quoted - confirm)."""

PITTING_FACTOR_RANGE = (4.0, 8.0)
"""Deterministic range of R reported by Gonzalez et al. 1995 [-] (from memory)."""

HALF_CELL_LIKELIHOOD = MappingProxyType({
    "active_mean_mv": -400.0,
    "active_sd_mv": 75.0,
    "passive_mean_mv": -150.0,
    "passive_sd_mv": 75.0,
})
"""Normal likelihoods of a half-cell potential (vs CSE) given the corrosion state
[mV]. ILLUSTRATIVE ONLY: means about -400 and -150 mV, sd 50-100 mV as quoted for
the indicator approach of Faber & Sorensen 2002, Struct. Saf. 24 (from memory).
Calibrate against the survey (e.g. cumulative-probability plot, RILEM TC 154-EMC)
before use."""

CARBONATION = MappingProxyType({
    "rh_ref": 0.65,
    "f_e": 5.0,
    "g_e": 2.5,
    "curing_exponent": DistributionSpec("normal", {"mean": -0.567, "sd": 0.024}, "[-]",
                                        f"{_FIB34}; b_c of k_c"),
    "test_method_factor": DistributionSpec("normal", {"mean": 1.25, "sd": 0.35}, "[-]",
                                           f"{_FIB34}; k_t of the ACC test"),
    "error_term_m2_s_per_kg_m3": DistributionSpec(
        "normal", {"mean": 1.0e-11, "sd": 0.15e-11}, "[(m2/s)/(kg/m3)]",
        f"{_FIB34}; epsilon_t. Quoted elsewhere as 315.5 and 48 'x 1e-11 (m2/s)/(kg/m3)'; "
        "315.5 and 48 are the same values expressed in (mm2/yr)/(kg/m3)"),
    "co2_kg_m3": 8.2e-4,
    "weather_exponent_b_w": DistributionSpec("normal", {"mean": 0.446, "sd": 0.163}, "[-]",
                                             f"{_FIB34}; b_w of W(t)"),
})
"""Constants of the fib 34 carbonation model (RH_ref [-], f_e, g_e [-], b_c [-],
k_t [-], epsilon_t [(m2/s)/(kg/m3)], atmospheric CO2 C_S [kg/m3], b_w [-]); all
fib Bulletin 34 Annex B (from memory)."""


def lookup(table, name: str, table_name: str):
    """Entry ``name`` of a parameter table, with a helpful error when missing.

    Parameters
    ----------
    table : mapping
        One of the tables of this module.
    name : str
        Key to look up (e.g. ``"CEM I"``).
    table_name : str
        Name of the table, used in the error message.
    """
    try:
        return table[name]
    except KeyError:
        raise InputError(f"{name!r} is not an entry of {table_name}. Valid names: "
                         f"{sorted(table)}. See assess.deterioration.defaults.{table_name}."
                         ) from None


def check_range(values, name: str, caller: str, low: float = -math.inf,
                high: float = math.inf, low_open: bool = False,
                high_open: bool = False) -> np.ndarray:
    """Array ``values`` as float, after checking every element lies in the range.

    Raises `InputError` naming the parameter and the caller when any element is
    NaN or out of range.
    """
    arr = np.asarray(values, dtype=float)
    lo_ok = arr > low if low_open else arr >= low
    hi_ok = arr < high if high_open else arr <= high
    if not np.all(lo_ok & hi_ok):
        bounds = f"{'(' if low_open else '['}{low}, {high}{')' if high_open else ']'}"
        bad = arr[~(lo_ok & hi_ok)]
        raise InputError(f"The {name!r} parameter of {caller} must lie in {bounds}. "
                         f"Got {bad.size} value(s) outside, e.g. {bad.flat[0]!r}.",
                         column=name)
    return arr
