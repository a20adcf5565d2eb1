"""Marginal distributions of basic variables, given by mean and std or by native parameters.

Engineers state most variables by mean and standard deviation (JCSS Probabilistic
Model Code, Part 1); every kind here converts those two moments exactly into its
native parameters. Parameters may be numpy arrays (one value per sample) so that a
variable whose parameters depend on other variables is evaluated vectorised.

The maps to and from standard normal space (`Distribution.x_from_u`,
`Distribution.u_from_x`) work on the tail that is nearer: the lower half through
``cdf``/``ppf`` and the upper half through ``sf``/``isf``, never ``1 - cdf``, so
that probabilities near 1e-12 keep their precision.

Kinds and native parameters (units are those of the variable unless stated):

================  =======================================  ==========================================
kind              native parameters                        by moments
================  =======================================  ==========================================
normal            mu, sigma                                mean, std
lognormal         mu_ln, sigma_ln (of ln X) [-]            mean > 0, std
gumbel            loc, scale  (largest values)             mean, std
weibull           shape [-], scale  (smallest values)      mean > 0, std (shape by root finding)
gamma             shape [-], scale                         mean > 0, std
uniform           lower, upper                             mean, std
beta              alpha [-], beta [-], lower, upper        mean, std, lower, upper
truncated_normal  mu, sigma, lower, upper                  mean, std (of the PARENT normal), lower,
                                                           upper
student_t         nu [-], loc, scale                       mean, std, nu (nu > 2)
deterministic     value                                    mean (std absent or 0)
================  =======================================  ==========================================

References
----------
JCSS, "Probabilistic Model Code", Part 1 Basis of design, Annex (distribution
formulas), Joint Committee on Structural Safety, 2001.
N. L. Johnson, S. Kotz, N. Balakrishnan, "Continuous Univariate Distributions",
Vols. 1 and 2, 2nd ed., Wiley, 1994/1995 (moments of each family).
"""

from __future__ import annotations

import numpy as np
from scipy import special

from assess.errors import InputError

EULER_GAMMA = 0.5772156649015329
"""Euler-Mascheroni constant, mean of the standard Gumbel distribution [-]."""

_SHAPE_KEYS = {
    # keywords that belong to the kind whichever way it is given
    "beta": ("lower", "upper"),
    "truncated_normal": ("lower", "upper"),
    "student_t": ("nu",),
}
_NATIVE_KEYS = {
    "normal": ("mu", "sigma"),
    "lognormal": ("mu_ln", "sigma_ln"),
    "gumbel": ("loc", "scale"),
    "weibull": ("shape", "scale"),
    "gamma": ("shape", "scale"),
    "uniform": ("lower", "upper"),
    "beta": ("alpha", "beta"),
    "truncated_normal": ("mu", "sigma"),
    "student_t": ("loc", "scale"),
    "deterministic": ("value",),
}
KINDS = tuple(_NATIVE_KEYS)
"""Valid distribution kinds, in the order of the module table."""

# Weibull: the coefficient of variation depends on the shape k only; it is
# found by bisection on ln k inside this bracket, which covers CoV from about
# 1.3e-5 (k = 1e5) to above 1e5 (k = 0.05).
_WEIBULL_LN_SHAPE_BRACKET = (np.log(0.05), np.log(1.0e5))


def _where(name: str | None) -> str:
    return f"variable '{name}': " if name else ""


def _show(value) -> str:
    array = np.asarray(value, dtype=float)
    if array.ndim == 0:
        return f"{float(array):.6g}"
    return f"an array of {array.size} values"


def _first_bad(condition: np.ndarray, value) -> str:
    """Describe the first offending entry of a (possibly array) parameter."""
    array = np.broadcast_to(np.asarray(value, dtype=float), np.shape(condition))
    if array.ndim == 0:
        return f"{float(array):.6g}"
    index = int(np.flatnonzero(condition)[0])
    return f"{array.flat[index]:.6g} at sample {index}"


def _as_float(key: str, value, name: str | None, *, allow_inf: bool = False) -> np.ndarray:
    try:
        array = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{_where(name)}{key} must be a number, got {value!r}") from None
    bad = np.isnan(array) if allow_inf else ~np.isfinite(array)
    if bad.any():
        raise InputError(
            f"{_where(name)}{key} must be a finite number, got {_first_bad(bad, array)}")
    return array


def _require(condition, message: str, value, name: str | None) -> None:
    failed = ~np.asarray(condition, dtype=bool)
    if failed.any():
        raise InputError(f"{_where(name)}{message}, got {_first_bad(failed, value)}")


def weibull_shape_from_cov(cov) -> np.ndarray:
    """Shape parameter k of a 2-parameter Weibull with a given coefficient of variation.

    Solves ``CoV^2 = Gamma(1 + 2/k) / Gamma(1 + 1/k)^2 - 1`` by bisection on ln k,
    vectorised over `cov` (Johnson, Kotz & Balakrishnan 1994, Vol. 1, ch. 21).

    Parameters
    ----------
    cov : float or ndarray
        Coefficient of variation std/mean, between about 1.3e-5 and 1e5 [-].

    Returns
    -------
    ndarray
        Shape k [-], same shape as `cov`.
    """
    target = np.log(np.asarray(cov, dtype=float) ** 2)
    low = np.full(target.shape, _WEIBULL_LN_SHAPE_BRACKET[0])
    high = np.full(target.shape, _WEIBULL_LN_SHAPE_BRACKET[1])
    for _ in range(80):  # bracket width 14.5 / 2^80: far below double spacing
        middle = 0.5 * (low + high)
        k = np.exp(middle)
        ln_cov2 = np.log(np.expm1(special.gammaln(1 + 2 / k) - 2 * special.gammaln(1 + 1 / k)))
        too_spread = ln_cov2 > target  # CoV falls as k grows
        low = np.where(too_spread, middle, low)
        high = np.where(too_spread, high, middle)
    return np.exp(0.5 * (low + high))


class Distribution:
    """One marginal (or conditional) distribution, a thin layer on a frozen scipy one.

    Build it with `make_distribution`. Parameters may be arrays; every method
    then broadcasts elementwise against its argument.

    Attributes
    ----------
    kind : str
        One of `KINDS`.
    params : dict
        Native parameters (see the module table) as floats or arrays.
    name : str or None
        Variable name used in messages.
    """

    def __init__(self, kind: str, params: dict, frozen=None, name: str | None = None):
        self.kind = kind
        self.params = params
        self.name = name
        # The scipy object is built on first use: conditional variables are rebuilt
        # on every limit-state call and mostly need only the fast maps below.
        self._frozen_or_factory = frozen

    @property
    def _frozen(self):
        if callable(self._frozen_or_factory) and not hasattr(self._frozen_or_factory, "ppf"):
            self._frozen_or_factory = self._frozen_or_factory()
        return self._frozen_or_factory

    def renamed(self, name: str | None) -> "Distribution":
        """The same distribution under another variable name (for messages)."""
        return Distribution(self.kind, self.params, self._frozen_or_factory, name)

    # -- moments -------------------------------------------------------------
    @property
    def mean(self):
        """Mean [variable units]; for truncated_normal the mean after truncation."""
        if self.kind == "deterministic":
            return self.params["value"]
        return _scalar_or_array(self._frozen.mean())

    @property
    def std(self):
        """Standard deviation [variable units]; inf or NaN for student_t with nu <= 2."""
        if self.kind == "deterministic":
            return _scalar_or_array(np.zeros_like(np.asarray(self.params["value"], dtype=float)))
        return _scalar_or_array(self._frozen.std())

    @property
    def is_random(self) -> bool:
        """False for a deterministic value (it takes no standard normal coordinate)."""
        return self.kind != "deterministic"

    @property
    def is_scalar(self) -> bool:
        """True when every parameter is a single number (a root variable)."""
        return all(np.ndim(v) == 0 for v in self.params.values())

    # -- scipy pass-through ----------------------------------------------------
    def pdf(self, x):
        """Probability density [1/variable units]; a Dirac spike for deterministic."""
        if self.kind == "deterministic":
            return np.where(np.asarray(x) == self.params["value"], np.inf, 0.0)
        return self._frozen.pdf(x)

    def logpdf(self, x):
        """Natural log of the density."""
        if self.kind == "deterministic":
            return np.where(np.asarray(x) == self.params["value"], np.inf, -np.inf)
        return self._frozen.logpdf(x)

    def cdf(self, x):
        """P(X <= x) [-]."""
        if self.kind == "deterministic":
            return np.where(np.asarray(x) >= self.params["value"], 1.0, 0.0)
        return self._frozen.cdf(x)

    def sf(self, x):
        """P(X > x) [-], computed directly (not as 1 - cdf)."""
        if self.kind == "deterministic":
            return np.where(np.asarray(x) >= self.params["value"], 0.0, 1.0)
        return self._frozen.sf(x)

    def logsf(self, x):
        """Natural log of P(X > x)."""
        if self.kind == "deterministic":
            return np.log(self.sf(x))
        return self._frozen.logsf(x)

    def ppf(self, p):
        """Quantile: x with P(X <= x) = p [variable units]."""
        if self.kind == "deterministic":
            return np.broadcast_arrays(self.params["value"], np.asarray(p, dtype=float))[0] * 1.0
        return self._frozen.ppf(p)

    def isf(self, q):
        """Upper quantile: x with P(X > x) = q [variable units]."""
        if self.kind == "deterministic":
            return np.broadcast_arrays(self.params["value"], np.asarray(q, dtype=float))[0] * 1.0
        return self._frozen.isf(q)

    # -- isoprobabilistic maps ---------------------------------------------------
    def x_from_u(self, u):
        """Physical value from a standard normal value, x = F^-1(Phi(u)) [variable units].

        Lower half through ``ppf(Phi(u))``, upper half through ``isf(Phi(-u))``,
        so both tails keep full relative precision in the probability.
        """
        u = np.asarray(u, dtype=float)
        if self.kind == "deterministic":
            return np.broadcast_arrays(np.asarray(self.params["value"], dtype=float), u)[0].copy()
        fast = _fast_x_from_u(self.kind, self.params, u)
        if fast is not None:
            return fast
        lower = self._frozen.ppf(special.ndtr(np.minimum(u, 0.0)))
        upper = self._frozen.isf(special.ndtr(-np.maximum(u, 0.0)))
        return np.where(u < 0.0, lower, upper)

    def u_from_x(self, x):
        """Standard normal value from a physical value, u = Phi^-1(F(x)) [-].

        Uses ``Phi^-1(cdf)`` where cdf <= 0.5 and ``-Phi^-1(sf)`` elsewhere.
        Not defined for a deterministic variable.
        """
        if self.kind == "deterministic":
            raise InputError(f"{_where(self.name)}a deterministic value has no "
                             "standard normal coordinate")
        x = np.asarray(x, dtype=float)
        fast = _fast_u_from_x(self.kind, self.params, x)
        if fast is not None:
            return fast
        cdf = self._frozen.cdf(x)
        sf = self._frozen.sf(x)
        return np.where(cdf <= 0.5, special.ndtri(cdf), -special.ndtri(sf))

    def describe(self) -> str:
        """Short text for tables, e.g. ``lognormal(mean=30, std=4.5)``."""
        if not self.is_scalar:
            size = max(np.size(v) for v in self.params.values())
            return f"{self.kind} (parameters per sample, {size} values)"
        if self.kind == "deterministic":
            return f"deterministic({float(self.params['value']):.4g})"
        text = f"mean={float(self.mean):.4g}, std={float(self.std):.4g}"
        if self.kind == "truncated_normal":
            p = self.params
            text = (f"parent mean={float(p['mu']):.4g}, std={float(p['sigma']):.4g}, "
                    f"bounds [{float(p['lower']):.4g}, {float(p['upper']):.4g}]")
        elif self.kind in ("beta", "uniform"):
            p = self.params
            text += f", bounds [{float(p['lower']):.4g}, {float(p['upper']):.4g}]"
        elif self.kind == "student_t":
            text = (f"nu={float(self.params['nu']):.4g}, loc={float(self.params['loc']):.4g}, "
                    f"scale={float(self.params['scale']):.4g}")
        return f"{self.kind}({text})"

    def __repr__(self) -> str:
        label = f" '{self.name}'" if self.name else ""
        return f"<Distribution{label} {self.describe()}>"


class _TruncatedNormal:
    """Frozen truncated normal whose quantiles stay exact in both tails.

    Moments, density and cdf/sf come from ``scipy.stats.truncnorm``; the
    quantiles use the closed form (Johnson, Kotz & Balakrishnan 1994, Vol. 1,
    sec. 13.10) x = mu + sigma Phi^-1(Phi(a) + p Z) for the lower tail and
    x = mu + sigma Phi_bar^-1(Phi_bar(b) + q Z) for the upper tail, each written
    on the side of the parent normal where the probabilities are small, with
    Z = P(a < z < b) formed without cancellation. Next to a finite bound inside
    the body of the parent, probabilities below about 1e-16 Phi(a) cannot be
    resolved in double precision and x returns the bound itself. (scipy 1.17's truncnorm.isf
    is off by about 3e-7 relative at q = 1e-12.)
    """

    def __init__(self, mu, sigma, lower, upper):
        self._mu, self._sigma = mu, sigma
        self._a = (lower - mu) / sigma
        self._b = (upper - mu) / sigma
        from scipy import stats  # on first use: scipy.stats takes long to import

        self._scipy = stats.truncnorm(self._a, self._b, loc=mu, scale=sigma)
        upper_side = self._a > 0  # both bounds above the parent mean: use sf differences
        self._mass = np.where(upper_side, special.ndtr(-self._a) - special.ndtr(-self._b),
                              special.ndtr(self._b) - special.ndtr(self._a))

    def __getattr__(self, attribute):
        return getattr(self._scipy, attribute)

    def _clip(self, z):
        return np.clip(self._mu + self._sigma * z, self._mu + self._sigma * self._a,
                       self._mu + self._sigma * self._b)

    def ppf(self, p):
        p = np.asarray(p, dtype=float)
        # work on the side of the parent normal that holds the bound, where the
        # normal probabilities are small and keep their digits
        from_upper = -special.ndtri(special.ndtr(-self._a) - p * self._mass)
        from_lower = special.ndtri(special.ndtr(self._a) + p * self._mass)
        return self._clip(np.where(self._a > 0, from_upper, from_lower))

    def isf(self, q):
        q = np.asarray(q, dtype=float)
        from_lower = special.ndtri(special.ndtr(self._b) - q * self._mass)
        from_upper = -special.ndtri(special.ndtr(-self._b) + q * self._mass)
        return self._clip(np.where(self._b < 0, from_lower, from_upper))


def _scalar_or_array(value):
    array = np.asarray(value, dtype=float)
    return float(array) if array.ndim == 0 else array


def make_distribution(kind: str, *, mean=None, std=None, name: str | None = None,
                      **native) -> Distribution:
    """Build a distribution from mean and std or from its native parameters.

    Parameters
    ----------
    kind : str
        One of ``normal, lognormal, gumbel, weibull, gamma, uniform, beta,
        truncated_normal, student_t, deterministic``.
    mean, std : float or ndarray, optional
        Mean and standard deviation [variable units]. For ``truncated_normal``
        they are the mean and std of the PARENT normal before truncation (the
        `Distribution.mean` of the result is the truncated mean). For
        ``deterministic`` give ``mean`` (or ``value``) and no std (or std = 0).
    name : str, optional
        Variable name, used in error messages (``variable 'fc': ...``).
    **native
        Native parameters (module table) or the bounds/shape that the kind needs
        with mean/std: ``lower, upper`` for beta and truncated_normal (defaults
        -inf/+inf for truncated_normal), ``nu`` for student_t.

    Returns
    -------
    Distribution

    Raises
    ------
    InputError
        Unknown kind, missing or mixed parameters, std <= 0, mean outside the
        support, or a std too large for a bounded kind.

    Examples
    --------
    >>> d = make_distribution("lognormal", mean=30.0, std=4.5)
    >>> round(d.params["sigma_ln"], 6)
    0.149166
    """
    where = _where(name)
    if kind not in _NATIVE_KEYS:
        raise InputError(f"{where}unknown distribution kind {kind!r}; "
                         f"valid kinds are: {', '.join(KINDS)}")
    shape_keys = _SHAPE_KEYS.get(kind, ())
    native_keys = _NATIVE_KEYS[kind]
    unknown = sorted(set(native) - set(shape_keys) - set(native_keys))
    if unknown:
        valid = ", ".join(("mean", "std") + shape_keys + native_keys)
        raise InputError(f"{where}{kind} does not take {', '.join(unknown)}; "
                         f"valid parameters are: {valid}")
    given_native = [k for k in native_keys if k in native and native[k] is not None]
    by_moments = mean is not None or std is not None
    if by_moments and given_native:
        raise InputError(f"{where}give either mean and std or the native parameters "
                         f"({', '.join(native_keys)}) of the {kind} distribution, not both "
                         f"(got mean/std and {', '.join(given_native)})")
    if kind == "deterministic":
        return _deterministic(mean, std, native.get("value"), name)
    if by_moments:
        if mean is None or std is None:
            missing = "mean" if mean is None else "std"
            raise InputError(f"{where}{kind} given by moments needs both mean and std; "
                             f"{missing} is missing")
        mean = _as_float("mean", mean, name)
        std = _as_float("std", std, name)
        _require(std > 0, "std must be > 0", std, name)
        params = _native_from_moments(kind, mean, std, native, name)
    else:
        missing = [k for k in native_keys if native.get(k) is None]
        missing += [k for k in shape_keys
                    if native.get(k) is None and kind not in ("truncated_normal",)]
        if missing:
            raise InputError(f"{where}{kind} needs mean and std or the native parameters "
                             f"{', '.join(native_keys + shape_keys)}; missing: "
                             f"{', '.join(missing)}")
        params = {k: native[k] for k in native_keys + shape_keys if native.get(k) is not None}
        if kind == "truncated_normal":
            params["lower"], params["upper"] = _bounds(kind, native, name, required=False)
    return _build(kind, params, name)


def _deterministic(mean, std, value, name):
    if value is None and mean is None:
        raise InputError(f"{_where(name)}deterministic needs a value (or mean)")
    if std is not None and np.any(np.asarray(std, dtype=float) != 0):
        raise InputError(f"{_where(name)}a deterministic value has std 0, "
                         f"got std={_show(std)}; use a random kind instead")
    value = _as_float("value", mean if value is None else value, name)
    return Distribution("deterministic", {"value": _scalar_or_array(value)}, None, name)


def _bounds(kind, native, name, *, required):
    lower = native.get("lower")
    upper = native.get("upper")
    if required and (lower is None or upper is None):
        raise InputError(f"{_where(name)}{kind} needs both bounds lower and upper")
    lower = _as_float("lower", -np.inf if lower is None else lower, name, allow_inf=True)
    upper = _as_float("upper", np.inf if upper is None else upper, name, allow_inf=True)
    _require(upper > lower, "upper bound must be greater than lower bound", upper, name)
    return lower, upper


def _native_from_moments(kind, mean, std, native, name):
    """Exact conversion of mean and std into native parameters (arrays allowed)."""
    if kind == "normal":
        return {"mu": mean, "sigma": std}
    if kind in ("lognormal", "weibull", "gamma"):
        _require(mean > 0, f"{kind} mean must be > 0", mean, name)
    if kind == "lognormal":
        sigma_ln = np.sqrt(np.log1p((std / mean) ** 2))
        return {"mu_ln": np.log(mean) - 0.5 * sigma_ln**2, "sigma_ln": sigma_ln}
    if kind == "gumbel":
        scale = std * np.sqrt(6.0) / np.pi
        return {"loc": mean - EULER_GAMMA * scale, "scale": scale}
    if kind == "weibull":
        cov = std / mean
        _require((cov > 1.3e-5) & (cov < 1e5), "weibull coefficient of variation must lie "
                 "between 1.3e-5 and 1e5", cov, name)
        shape = weibull_shape_from_cov(cov)
        return {"shape": shape, "scale": mean / special.gamma(1 + 1 / shape)}
    if kind == "gamma":
        return {"shape": (mean / std) ** 2, "scale": std**2 / mean}
    if kind == "uniform":
        half_width = np.sqrt(3.0) * std
        return {"lower": mean - half_width, "upper": mean + half_width}
    if kind == "beta":
        lower, upper = _bounds(kind, native, name, required=True)
        _require(np.isfinite(lower) & np.isfinite(upper), "beta bounds must be finite",
                 upper - lower, name)
        _require((mean > lower) & (mean < upper),
                 "beta mean must lie strictly between the bounds lower and upper", mean, name)
        m = (mean - lower) / (upper - lower)
        v = (std / (upper - lower)) ** 2
        _require(v < m * (1 - m), "std too large for a beta distribution on [lower, upper] "
                 "(needs std^2 < (mean - lower)(upper - mean))", std, name)
        common = m * (1 - m) / v - 1
        return {"alpha": m * common, "beta": (1 - m) * common, "lower": lower, "upper": upper}
    if kind == "truncated_normal":
        lower, upper = _bounds(kind, native, name, required=False)
        return {"mu": mean, "sigma": std, "lower": lower, "upper": upper}
    # student_t
    if native.get("nu") is None:
        raise InputError(f"{_where(name)}student_t needs the degrees of freedom nu")
    nu = _as_float("nu", native["nu"], name)
    _require(nu > 2, "student_t given by mean and std needs nu > 2 (finite variance)", nu, name)
    return {"nu": nu, "loc": mean, "scale": std * np.sqrt((nu - 2) / nu)}


def _fast_x_from_u(kind, p, u):
    """Closed-form x = F^-1(Phi(u)) for the common kinds (same tail rules), else None.

    normal: mu + sigma u; lognormal: exp(mu_ln + sigma_ln u); Gumbel (max):
    loc - scale ln(-ln Phi(u)) with ln Phi(u) from ``log_ndtr`` (accurate in both
    tails); Weibull (min): `weibull_x_from_u`; gamma: regularised incomplete-gamma
    inverses on the lower/upper side.
    """
    if kind == "normal":
        return p["mu"] + p["sigma"] * u
    if kind == "lognormal":
        return np.exp(p["mu_ln"] + p["sigma_ln"] * u)
    if kind == "gumbel":
        return p["loc"] - p["scale"] * np.log(-special.log_ndtr(u))
    if kind == "weibull":
        return weibull_x_from_u(p["shape"], p["scale"], u)
    if kind == "gamma":
        if np.ndim(p["shape"]) == 0 and np.ndim(p["scale"]) == 0:
            # fixed parameters (a root variable): no broadcasting, one inverse per point
            x = np.empty(u.shape)
            low = u < 0.0
            high = ~low
            x[low] = special.gammaincinv(p["shape"], special.ndtr(u[low]))
            x[high] = special.gammainccinv(p["shape"], special.ndtr(-u[high]))
            return p["scale"] * x
        shape, scale = np.broadcast_arrays(p["shape"], p["scale"], u)[:2]
        x = np.empty(np.broadcast(shape, u).shape)
        u_b = np.broadcast_to(u, x.shape)
        low = u_b < 0.0
        x[low] = special.gammaincinv(shape[low] if shape.ndim else shape,
                                     special.ndtr(u_b[low]))
        x[~low] = special.gammainccinv(shape[~low] if shape.ndim else shape,
                                       special.ndtr(-u_b[~low]))
        return np.broadcast_to(scale, x.shape) * x
    return None


def weibull_x_from_u(shape, scale, u) -> np.ndarray:
    """x = F^-1(Phi(u)) of the 2-parameter Weibull (smallest values) [units of scale].

    F(x) = 1 - exp(-(x/scale)^shape), so x = scale t^(1/shape) with t = -ln(1 - Phi(u))
    = -log1p(-Phi(u)) in the lower half and t = -ln Phi(-u) in the upper half (the
    probability of the nearer tail in both; Johnson, Kotz & Balakrishnan 1994, Vol. 1,
    ch. 21). The same expressions as scipy.stats.weibull_min's ppf and isf.
    """
    u = np.asarray(u, dtype=float)
    with np.errstate(divide="ignore"):  # u = +inf: t = inf
        t = np.where(u < 0.0, -np.log1p(-special.ndtr(np.minimum(u, 0.0))),
                     -np.log(special.ndtr(-np.maximum(u, 0.0))))
    return scale * t ** (1.0 / np.asarray(shape, dtype=float))


def _fast_u_from_x(kind, p, x):
    """Closed-form u = Phi^-1(F(x)) for the kinds of `_fast_x_from_u`, else None."""
    if kind == "weibull":
        # cdf = -expm1(-t) and sf = exp(-t) with t = (x/scale)^shape (x < 0: cdf 0)
        t = (np.maximum(x, 0.0) / p["scale"]) ** p["shape"]
        cdf = -np.expm1(-t)
        with np.errstate(divide="ignore"):  # cdf 0 or sf 0: u = -inf or +inf
            return np.where(cdf <= 0.5, special.ndtri(cdf), -special.ndtri(np.exp(-t)))
    if kind == "normal":
        return (x - p["mu"]) / p["sigma"]
    if kind == "lognormal":
        with np.errstate(divide="ignore"):
            return (np.log(x) - p["mu_ln"]) / p["sigma_ln"]
    if kind == "gamma":
        z = np.maximum(x, 0.0) / p["scale"]
        if np.ndim(p["shape"]) == 0 and z.ndim == 1:
            # fixed shape: the upper tail only where it is needed (the same values)
            u = special.ndtri(special.gammainc(p["shape"], z))
            upper = ~(u <= 0.0)
            u[upper] = -special.ndtri(special.gammaincc(p["shape"], z[upper]))
            return u
        cdf = special.gammainc(p["shape"], z)
        sf = special.gammaincc(p["shape"], z)
        return np.where(cdf <= 0.5, special.ndtri(cdf), -special.ndtri(sf))
    return None


def conditional_x_from_u(kind: str, values: dict, u, name: str | None = None) -> np.ndarray:
    """x = F^-1(Phi(u)) for per-sample parameters, without building a `Distribution`.

    The same arithmetic, checks and result as
    ``make_distribution(kind, name=name, **values).x_from_u(u)``, in one pass for the
    normal and lognormal kinds given by mean and std or by their native parameters
    (the conditional variables of a member model, evaluated on every limit-state
    call). Any other kind or keyword, and any parameter that fails a check, goes
    through `make_distribution`, so errors read the same.

    Parameters
    ----------
    kind : str
        Distribution kind.
    values : dict
        Keyword parameters of `make_distribution` (floats or arrays (n,)).
    u : ndarray
        Standard normal values [-].
    name : str, optional
        Variable name for messages.

    Returns
    -------
    ndarray
        Physical values [variable units].
    """
    fast = _lean_normal_params(kind, values)
    if fast is not None:
        location, spread = fast
        u = np.asarray(u, dtype=float)
        if kind == "normal":
            return location + spread * u
        return np.exp(location + spread * u)
    return make_distribution(kind, name=name, **values).x_from_u(u)


def _lean_normal_params(kind, values):
    """(mu, sigma) or (mu_ln, sigma_ln) as `make_distribution` computes them, else None."""
    if kind not in ("normal", "lognormal") or len(values) != 2:
        return None
    native = _NATIVE_KEYS[kind]
    if "mean" in values and "std" in values:
        try:
            mean = np.asarray(values["mean"], dtype=float)
            std = np.asarray(values["std"], dtype=float)
        except (TypeError, ValueError):
            return None
        # one check for all: NaN fails "> 0" and an infinite term makes the sum infinite
        # (on any doubt the caller takes the checked path of `make_distribution`)
        if not ((std > 0).all() and np.isfinite(mean + std).all()):
            return None
        if kind == "normal":
            return mean, std
        if not (mean > 0).all():
            return None
        sigma_ln = np.sqrt(np.log1p((std / mean) ** 2))
        location, spread = np.log(mean) - 0.5 * sigma_ln**2, sigma_ln
    elif native[0] in values and native[1] in values:
        try:
            location = np.asarray(values[native[0]], dtype=float)
            spread = np.asarray(values[native[1]], dtype=float)
        except (TypeError, ValueError):
            return None
    else:
        return None
    if not ((spread > 0).all() and np.isfinite(location + spread).all()):
        return None
    return location, spread


def _build(kind, params, name):
    """Validate native parameters and freeze the scipy distribution."""
    infinite_ok = {"lower", "upper"} if kind == "truncated_normal" else set()
    p = {k: _as_float(k, v, name, allow_inf=k in infinite_ok) for k, v in params.items()}
    positive = {"normal": ("sigma",), "lognormal": ("sigma_ln",), "gumbel": ("scale",),
                "weibull": ("shape", "scale"), "gamma": ("shape", "scale"),
                "beta": ("alpha", "beta"), "truncated_normal": ("sigma",),
                "student_t": ("nu", "scale"), "uniform": ()}[kind]
    for key in positive:
        _require(p[key] > 0, f"{kind} {key} must be > 0", p[key], name)

    def freeze():
        return _freeze(kind, p, name)

    if kind in ("uniform", "beta", "truncated_normal"):
        _freeze(kind, p, name, check_only=True)
    return Distribution(kind, {k: _scalar_or_array(v) for k, v in p.items()}, freeze, name)


def _freeze(kind, p, name, check_only=False):
    """The scipy distribution (or, with ``check_only``, only the bound checks)."""
    from scipy import stats  # on first use: the closed-form maps do not need scipy.stats

    if kind == "normal":
        frozen = stats.norm(loc=p["mu"], scale=p["sigma"])
    elif kind == "lognormal":
        frozen = stats.lognorm(s=p["sigma_ln"], scale=np.exp(p["mu_ln"]))
    elif kind == "gumbel":
        frozen = stats.gumbel_r(loc=p["loc"], scale=p["scale"])
    elif kind == "weibull":
        frozen = stats.weibull_min(c=p["shape"], scale=p["scale"])
    elif kind == "gamma":
        frozen = stats.gamma(a=p["shape"], scale=p["scale"])
    elif kind == "uniform":
        _require(p["upper"] > p["lower"], "uniform upper bound must be greater than lower bound",
                 p["upper"], name)
        frozen = stats.uniform(loc=p["lower"], scale=p["upper"] - p["lower"])
    elif kind == "beta":
        _require(p["upper"] > p["lower"], "beta upper bound must be greater than lower bound",
                 p["upper"], name)
        frozen = stats.beta(p["alpha"], p["beta"], loc=p["lower"], scale=p["upper"] - p["lower"])
    elif kind == "truncated_normal":
        _require(p["upper"] > p["lower"], "truncated_normal upper bound must be greater than "
                 "lower bound", p["upper"], name)
        frozen = _TruncatedNormal(p["mu"], p["sigma"], p["lower"], p["upper"])
    else:
        frozen = stats.t(df=p["nu"], loc=p["loc"], scale=p["scale"])
    return None if check_only else frozen


__all__ = [
    "Distribution", "make_distribution", "conditional_x_from_u", "weibull_shape_from_cov",
    "weibull_x_from_u",
    "KINDS", "EULER_GAMMA",
]
