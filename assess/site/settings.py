"""Run settings: the one home of the seed, quick-mode and sampler defaults.

Every site step takes a `RunSettings`. The MCMC settings are given per kind of
fit (`FIT_KINDS`), so that one fit that needs more draws or a higher target
acceptance can get them without slowing the others. They come, in rising order
of precedence, from the defaults below, the site file's ``[sampling.<fit>]``
tables and the command line (``--draws`` etc. for every fit, ``--sampling
FIT.KEY=VALUE`` for one).
"""

from __future__ import annotations

import dataclasses
from typing import Any, Mapping

from assess.errors import InputError

DEFAULT_SEED = 20261202
"""Seed of every MCMC and sampling run unless the user gives another [-]."""

FIT_KINDS = ("materials", "chloride", "carbonation", "corrosion")
"""The MCMC fits of a site: materials (cores, tensile tests, cover, section loss), chloride
profiles, carbonation depths, corrosion (break-outs and half-cell surveys)."""

SAMPLERS = ("pymc", "nutpie")

QUICK_TUNE = 500
"""Tuning steps per chain in quick mode [-]; the draws (and so the gate) are unchanged."""
FULL_TUNE = 1000
QUICK_SUBSET_SAMPLES = 500
"""Samples per subset-simulation level in quick mode [-]."""
FULL_SUBSET_SAMPLES = 1000
QUICK_LIFE_SAMPLES = 2000
"""Importance samples of the remaining-life curves in quick mode [-]."""
FULL_LIFE_SAMPLES = 6000
QUICK_WORTH_OUTCOMES = 200
"""Simulated outcomes per test programme in quick mode [-]."""
FULL_WORTH_OUTCOMES = 500

QUICK_VERDICT_CALLS = 20_000
"""Budget of limit-state calls per member verdict in quick mode [-]: an undecided verdict
(its 95 % interval straddles the target) is sampled again until decided or this is spent."""
FULL_VERDICT_CALLS = 60_000
"""Budget of limit-state calls per member verdict in a full run [-] (about ten subset
simulation runs of 1000 samples per level at pf 1e-5)."""
MAX_VERDICT_CALLS = 10**8

DEFAULT_METHOD = "auto"
"""Reliability method of the member betas when none is chosen (`assess.reliability.auto`:
subset simulation, FORM from every region it shows, importance sampling on the design
points, and a cross-check of the two estimates; the estimate it trusts carries its CoV,
so the verdict interval applies) [-]."""

MAX_DRAWS = 100_000
MAX_CHAINS = 16


@dataclasses.dataclass(frozen=True)
class FitSettings:
    """NUTS settings of one kind of fit (Hoffman & Gelman 2014).

    Attributes
    ----------
    draws : int
        Draws kept per chain [-].
    tune : int
        Tuning steps per chain [-].
    chains : int
        Chains [-]; the gate needs at least 4.
    target_accept : float
        Step-size adaptation target [-]; raise towards 0.99 against divergences.
    sampler : str
        ``"pymc"`` or ``"nutpie"``.
    """

    draws: int = 1000
    tune: int = FULL_TUNE
    chains: int = 4
    target_accept: float = 0.95
    sampler: str = "pymc"

    def __post_init__(self):
        check_fit_settings(self, where="sampling")

    def sampler_options(self) -> dict:
        """Keyword options of the fit functions (`assess.updating.models.sample_posterior`)."""
        return dataclasses.asdict(self)


def check_fit_settings(fit: FitSettings, where: str) -> None:
    """Refuse impossible sampler settings with an `InputError` naming ``where``."""
    for key, low, high in (
        ("draws", 100, MAX_DRAWS),
        ("tune", 0, MAX_DRAWS),
        ("chains", 1, MAX_CHAINS),
    ):
        value = getattr(fit, key)
        if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
            raise InputError(
                f"{key} must be a whole number from {low} to {high}, got {value!r}",
                column=f"{where}.{key}",
            )
    if not (isinstance(fit.target_accept, (int, float)) and 0.5 <= fit.target_accept < 1.0):
        raise InputError(
            f"target_accept must be a number in [0.5, 1), got {fit.target_accept!r}",
            column=f"{where}.target_accept",
        )
    if fit.sampler not in SAMPLERS:
        raise InputError(
            f"sampler must be one of {', '.join(SAMPLERS)}, got {fit.sampler!r}",
            column=f"{where}.sampler",
        )


@dataclasses.dataclass(frozen=True)
class RunSettings:
    """Settings of one run over a site, shared by every command.

    Attributes
    ----------
    seed : int
        Base seed of every MCMC and sampling run [-].
    quick : bool
        Smaller runs for a first look: fewer tuning steps and samples (the gate still applies).
    method : str
        Reliability method of the member betas (`assess.reliability.METHODS`).
    fits : mapping
        Fit kind -> `FitSettings` (missing kinds take the defaults).
    reliability_samples : int or None
        Samples per subset-simulation level of ``subset_simulation`` and ``auto`` (default
        by ``quick``) [-].
    life_samples : int or None
        Importance samples of the remaining-life curves (default by ``quick``) [-].
    worth_outcomes : int or None
        Simulated outcomes per test programme (default by ``quick``) [-].
    horizon_years : float
        Years projected from the assessment date [yr].
    history, life, worth : bool
        Whether the main job runs these steps.
    pitting : bool or None
        Pitting of the bars: None (default) on chloride-exposed faces and where pits
        were measured (`assess.site.corrosion_state`), True everywhere, False nowhere.
    verdict_calls : int or None
        Budget of limit-state calls per member verdict (default by ``quick``); 0 = one run
        per estimate, never repeated [-].
    """

    seed: int = DEFAULT_SEED
    quick: bool = False
    method: str = DEFAULT_METHOD
    fits: Mapping[str, FitSettings] = dataclasses.field(default_factory=dict)
    reliability_samples: int | None = None
    life_samples: int | None = None
    worth_outcomes: int | None = None
    horizon_years: float = 50.0
    history: bool = True
    life: bool = True
    worth: bool = True
    pitting: bool | None = None
    verdict_calls: int | None = None

    def __post_init__(self):
        if (
            isinstance(self.seed, bool)
            or not isinstance(self.seed, int)
            or not 0 <= self.seed < 2**32
        ):
            raise InputError(
                f"the seed must be a whole number from 0 to {2**32 - 1}, got {self.seed!r}",
                column="--seed",
            )
        from assess.reliability.dispatch import METHODS

        if self.method not in METHODS:
            raise InputError(
                f"unknown method {self.method!r}; choose one of {', '.join(METHODS)}",
                column="--method",
            )
        if self.verdict_calls is not None and (
            isinstance(self.verdict_calls, bool)
            or not isinstance(self.verdict_calls, int)
            or not 0 <= self.verdict_calls <= MAX_VERDICT_CALLS
        ):
            raise InputError(
                f"the budget of limit-state calls per verdict must be a whole number from 0 to "
                f"{MAX_VERDICT_CALLS}, got {self.verdict_calls!r}",
                column="--verdict-calls",
            )
        unknown = sorted(set(self.fits) - set(FIT_KINDS))
        if unknown:
            raise InputError(
                f"unknown fit(s) {', '.join(unknown)}; the fits are {', '.join(FIT_KINDS)}",
                column="sampling",
            )

    def fit(self, kind: str) -> FitSettings:
        """Sampler settings of the fit ``kind``."""
        if kind not in FIT_KINDS:
            raise InputError(
                f"unknown fit {kind!r}; the fits are {', '.join(FIT_KINDS)}", column="sampling"
            )
        return self.fits.get(kind) or self.default_fit()

    def default_fit(self) -> FitSettings:
        return FitSettings(tune=QUICK_TUNE if self.quick else FULL_TUNE)

    @property
    def subset_samples(self) -> int:
        """Samples per subset-simulation level [-]."""
        if self.reliability_samples is not None:
            return self.reliability_samples
        return QUICK_SUBSET_SAMPLES if self.quick else FULL_SUBSET_SAMPLES

    @property
    def reliability_options(self) -> dict:
        """Options of `assess.reliability.run_method` for ``method``."""
        if self.method == "subset_simulation":
            return {"n_per_level": self.subset_samples}
        if self.method == "auto":
            # one pass; an undecided verdict is repeated by the members step within its
            # budget (`max_calls_per_verdict`), not by auto towards its own CoV
            return {"n_per_level": self.subset_samples, "max_calls": 0}
        if self.method in ("importance_sampling", "crude_monte_carlo") and self.reliability_samples:
            return {"n": self.reliability_samples}
        if self.method == "cross_entropy" and self.reliability_samples:
            return {"n_per_level": self.reliability_samples}
        return {}

    @property
    def max_calls_per_verdict(self) -> int:
        """Budget of limit-state calls per member verdict [-] (`verdict_calls`, else the
        quick or full default)."""
        if self.verdict_calls is not None:
            return self.verdict_calls
        return QUICK_VERDICT_CALLS if self.quick else FULL_VERDICT_CALLS

    @property
    def life_sample_count(self) -> int:
        if self.life_samples is not None:
            return self.life_samples
        return QUICK_LIFE_SAMPLES if self.quick else FULL_LIFE_SAMPLES

    @property
    def worth_outcome_count(self) -> int:
        if self.worth_outcomes is not None:
            return self.worth_outcomes
        return QUICK_WORTH_OUTCOMES if self.quick else FULL_WORTH_OUTCOMES

    def to_dict(self) -> dict:
        out = dataclasses.asdict(self)
        out["fits"] = {kind: dataclasses.asdict(self.fit(kind)) for kind in FIT_KINDS}
        return out


def build_settings(
    *,
    site_sampling: Mapping[str, Mapping[str, Any]] | None = None,
    overrides: Mapping[str, Any] | None = None,
    per_fit: Mapping[str, Mapping[str, Any]] | None = None,
    site_verdict_calls: int | None = None,
    **options: Any,
) -> RunSettings:
    """`RunSettings` from the site file's ``[sampling]`` tables and the command line.

    Parameters
    ----------
    site_sampling : mapping, optional
        Fit kind -> {key: value} from the site file.
    overrides : mapping, optional
        {key: value} for every fit (``--draws``, ``--tune``, ``--target-accept``,
        ``--sampler``); None values are ignored.
    per_fit : mapping, optional
        Fit kind -> {key: value} from ``--sampling FIT.KEY=VALUE``.
    site_verdict_calls : int, optional
        ``[sampling] verdict_calls`` of the site file: the budget of limit-state calls per
        member verdict [-], used when ``verdict_calls`` (``--verdict-calls``) is None.
    **options
        The other `RunSettings` fields (seed, quick, ...).
    """
    if options.get("verdict_calls") is None and site_verdict_calls is not None:
        options["verdict_calls"] = site_verdict_calls
    quick = bool(options.get("quick", False))
    base = {"tune": QUICK_TUNE if quick else FULL_TUNE}
    common = {k: v for k, v in (overrides or {}).items() if v is not None}
    fits = {}
    for kind in FIT_KINDS:
        merged = {
            **base,
            **dict((site_sampling or {}).get(kind, {})),
            **common,
            **dict((per_fit or {}).get(kind, {})),
        }
        fields = {f.name for f in dataclasses.fields(FitSettings)}
        unknown = sorted(set(merged) - fields)
        if unknown:
            raise InputError(
                f"unknown sampler setting(s) {', '.join(unknown)} for the {kind} "
                f"fit; the settings are {', '.join(sorted(fields))}",
                column=f"sampling.{kind}",
            )
        try:
            fits[kind] = FitSettings(**merged)
        except InputError as exc:
            raise InputError(
                exc.message,
                column=f"sampling.{kind}.{exc.column.split('.')[-1]}"
                if exc.column
                else f"sampling.{kind}",
            ) from None
    return RunSettings(fits=fits, **options)


def parse_fit_assignments(texts) -> dict[str, dict[str, Any]]:
    """``["corrosion.draws=3000", "materials.sampler=nutpie"]`` -> {fit: {key: value}}."""
    out: dict[str, dict[str, Any]] = {}
    for text in texts or ():
        name, sep, raw = str(text).partition("=")
        kind, dot, key = name.strip().partition(".")
        if not sep or not dot or kind not in FIT_KINDS or not key:
            raise InputError(
                f"write --sampling as FIT.KEY=VALUE with FIT one of "
                f"{', '.join(FIT_KINDS)}, e.g. corrosion.draws=3000; got {text!r}",
                column="--sampling",
            )
        out.setdefault(kind, {})[key.strip()] = _value(raw.strip(), key.strip())
    return out


def _value(raw: str, key: str) -> Any:
    if key == "sampler":
        return raw
    if key == "target_accept":
        try:
            return float(raw)
        except ValueError:
            raise InputError(
                f"target_accept must be a number, got {raw!r}", column="--sampling"
            ) from None
    if raw.isascii() and raw.isdigit():
        return int(raw)
    raise InputError(
        f"{key} must be a whole number written with the digits 0-9, got {raw!r}",
        column="--sampling",
    )


__all__ = [
    "DEFAULT_METHOD",
    "DEFAULT_SEED",
    "FIT_KINDS",
    "FitSettings",
    "RunSettings",
    "SAMPLERS",
    "build_settings",
    "check_fit_settings",
    "parse_fit_assignments",
]
