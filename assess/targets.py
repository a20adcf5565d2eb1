"""Target reliability indices for the ultimate limit state of existing structures.

Default basis (``"jcss"``): the JCSS PMC Part 1 / ISO 2394 cost-optimal *annual*
targets. Why this default for existing structures:

- it is stated per year, the period in which this tool reports the annual pf and
  beta(t) of a deteriorating member, so no reference-period conversion (with its
  independence caveat) is needed for the main comparison;
- it makes the one real difference between new and existing structures explicit:
  the relative cost of safety measures (strengthening an existing deck costs far
  more than a thicker slab at design), the reason JCSS, ISO 2394 and fib
  Bulletin 80 give lower optimal targets for existing structures;
- the default cost of safety is ``"normal"`` (CC2 -> 4.2 per year, the value JCSS
  marks as most common): lowering the target is left as a conscious, recorded
  choice of the engineer (``cost_of_safety="high"``).

Other bases: EN 1990 Annex B Table B2 and ISO 13822 Annex F Table F.1 (values for
the remaining working life).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import special, stats

from assess.errors import InputError

#: Consequence-class names accepted, mapped to the JCSS consequence classes.
#: JCSS classes are defined by rho = (construction + direct failure cost) /
#: construction cost: minor < 2, moderate 2-5, large 5-10; EN 1990 CC1/CC2/CC3
#: (low / medium / high consequence for loss of life, economic, social) are taken
#: to correspond to minor / moderate / large (common practice). Car parks are
#: usually CC2 (from memory; check the National Annex).
CONSEQUENCE_CLASSES = {
    "cc1": "minor", "rc1": "minor", "minor": "minor", "low": "minor",
    "cc2": "moderate", "rc2": "moderate", "moderate": "moderate", "medium": "moderate",
    "cc3": "large", "rc3": "large", "large": "large", "high": "large",
}

#: JCSS PMC Part 1 section 7 / ISO 2394:2015 Annex G: cost-optimal annual ULS targets,
#: by relative cost of safety measure and consequence class.
JCSS_ANNUAL_TARGETS = {
    "high": {"minor": 3.1, "moderate": 3.3, "large": 3.7},
    "normal": {"minor": 3.7, "moderate": 4.2, "large": 4.4},
    "low": {"minor": 4.2, "moderate": 4.4, "large": 4.7},
}

#: EN 1990:2002 Annex B Table B2: minimum beta for reliability classes RC1-RC3
#: (1-year and 50-year reference periods) (from memory).
EN1990_TARGETS = {
    "minor": {1.0: 4.2, 50.0: 3.3},
    "moderate": {1.0: 4.7, 50.0: 3.8},
    "large": {1.0: 5.2, 50.0: 4.3},
}

#: ISO 13822:2010 Annex F Table F.1: ULS targets for existing structures, reference
#: period = remaining working life (from memory). "very_low" has no CC equivalent.
ISO13822_TARGETS = {"very_low": 2.3, "minor": 3.1, "moderate": 3.8, "large": 4.3}

BASES = ("jcss", "en1990", "iso13822")

_CONVERSION_CAVEAT = (
    "converted with Phi(beta_n) = Phi(beta_1)^n (EN 1990 Annex C), which assumes independent "
    "failure events in each year; resistance uncertainty is shared across years, so the "
    "conversion overstates the difference between periods (Holicky, Diamantidis & Sykora 2018)")


@dataclasses.dataclass(frozen=True)
class Target:
    """A target reliability index with its reference period and source.

    Attributes
    ----------
    beta : float
        Target reliability index [-].
    reference_period_years : float
        Period the target refers to [years].
    source : str
        Published table the value comes from.
    note : str
        Conversions and assumptions applied.
    """

    beta: float
    reference_period_years: float
    source: str
    note: str = ""

    @property
    def pf(self) -> float:
        """Target probability of failure Phi(-beta) over the reference period [-]."""
        return float(stats.norm.sf(self.beta))


def convert_reference_period(beta, from_years: float, to_years: float):
    """Reliability index for another reference period, Phi(beta_to) = Phi(beta_from)^(to/from).

    EN 1990:2002 Annex C (C.6); computed in log space (log Phi via
    `scipy.special.log_ndtr`, pf_to = -expm1(n log Phi(beta_from)), beta = isf(pf)),
    so large indices keep full precision. Assumes independent failure events per
    period (see the caveat in `target_beta` notes).

    Parameters
    ----------
    beta : float or array-like
        Reliability index for ``from_years`` [-].
    from_years, to_years : float
        Reference periods [years].
    """
    if not (from_years > 0 and to_years > 0):
        raise InputError(f"reference periods must be positive [years], got {from_years!r} and "
                         f"{to_years!r}")
    beta = np.asarray(beta, dtype=float)
    log_reliability = (to_years / from_years) * special.log_ndtr(beta)
    out = stats.norm.isf(-np.expm1(log_reliability))
    return float(out) if out.ndim == 0 else out


def _consequence(consequence_class: str, basis: str) -> str:
    key = str(consequence_class).strip().lower().replace(" ", "_").replace("-", "_")
    if basis == "iso13822" and key in ("very_low", "cc0"):
        return "very_low"
    if key not in CONSEQUENCE_CLASSES:
        raise InputError(f"consequence class must be one of CC1, CC2, CC3 (or minor, moderate, "
                         f"large), got {consequence_class!r}")
    return CONSEQUENCE_CLASSES[key]


def target_beta(consequence_class: str = "CC2", reference_period_years: float = 1.0,
                cost_of_safety: str = "normal", basis: str = "jcss") -> Target:
    """Target reliability index for the ultimate limit state.

    Parameters
    ----------
    consequence_class : str
        ``"CC1"``, ``"CC2"``, ``"CC3"`` (or JCSS ``"minor"``, ``"moderate"``,
        ``"large"``; ``"very_low"`` for ISO 13822 only). Mapping in
        `CONSEQUENCE_CLASSES`.
    reference_period_years : float
        Reference period the target must refer to [years].
    cost_of_safety : {"high", "normal", "low"}
        Relative cost of safety measures (JCSS basis only). Existing structures
        often justify ``"high"`` (JCSS PMC Part 1; fib Bulletin 80).
    basis : {"jcss", "en1990", "iso13822"}
        ``"jcss"`` (default, see module notes): annual cost-optimal values,
        converted to other periods. ``"en1990"``: Table B2, 1 and 50 years as
        tabulated, other periods converted from the 1-year value.
        ``"iso13822"``: Table F.1, stated for the remaining working life and
        returned for the given period without conversion.

    Returns
    -------
    Target

    Notes
    -----
    Conversions use Phi(beta_n) = Phi(beta_1)^n (EN 1990 Annex C), which assumes
    independent yearly failure events. Resistance uncertainty is shared across the
    years, so the conversion exaggerates the difference; for a deteriorating
    member compare annual pf, or the cumulative pf computed directly, with the
    target of the same period.

    Examples
    --------
    >>> target_beta("CC2").beta
    4.2
    >>> round(target_beta("CC2", 50, basis="en1990").beta, 1)
    3.8
    """
    if basis not in BASES:
        raise InputError(f"target basis must be one of {BASES}, got {basis!r}")
    if not (reference_period_years > 0 and math.isfinite(reference_period_years)):
        raise InputError(f"reference period must be a positive number of years, got "
                         f"{reference_period_years!r}")
    consequence = _consequence(consequence_class, basis)
    period = float(reference_period_years)

    if basis == "iso13822":
        return Target(ISO13822_TARGETS[consequence], period,
                      source=f"ISO 13822:2010 Annex F Table F.1, ULS, {consequence} consequences "
                             "(from memory)",
                      note="stated for the remaining working life; no period conversion applied")

    if basis == "en1990":
        table = EN1990_TARGETS[consequence]
        source = f"EN 1990:2002 Annex B Table B2, {consequence} consequences (from memory)"
        if period in table:
            return Target(table[period], period, source=source, note=f"tabulated {period:g}-year value")
        return Target(convert_reference_period(table[1.0], 1.0, period), period, source=source,
                      note=f"1-year value {table[1.0]} {_CONVERSION_CAVEAT}")

    cost = str(cost_of_safety).strip().lower()
    if cost not in JCSS_ANNUAL_TARGETS:
        raise InputError(f"cost_of_safety must be one of {sorted(JCSS_ANNUAL_TARGETS)}, got "
                         f"{cost_of_safety!r}")
    annual = JCSS_ANNUAL_TARGETS[cost][consequence]
    source = (f"JCSS PMC Part 1 section 7 / ISO 2394:2015 Annex G, cost-optimal annual ULS target, "
              f"{cost} relative cost of safety, {consequence} consequences")
    if period == 1.0:
        return Target(annual, 1.0, source=source, note="annual value")
    return Target(convert_reference_period(annual, 1.0, period), period, source=source,
                  note=f"annual value {annual} {_CONVERSION_CAVEAT}")


def verdict(beta: float, target: Target | float, *,
            reference_period_years: float | None = None) -> str:
    """``"meets target"`` when beta >= target, else ``"below target"``.

    Parameters
    ----------
    beta : float
        Computed reliability index [-].
    target : Target or float
        Target reliability index.
    reference_period_years : float, optional
        Period of ``beta`` [years]; if given and ``target`` is a `Target` with a
        different period, an InputError is raised (compare like with like).
    """
    if isinstance(target, Target):
        if (reference_period_years is not None
                and not math.isclose(reference_period_years, target.reference_period_years)):
            raise InputError(
                f"beta refers to {reference_period_years:g} yr but the target to "
                f"{target.reference_period_years:g} yr; convert one of them first")
        value = target.beta
    else:
        value = float(target)
    if math.isnan(beta):
        raise InputError("beta is NaN; no verdict possible")
    return "meets target" if beta >= value else "below target"


#: Failure type of each member mode: ductile modes give warning (yielding, cracking,
#: deflection) before collapse; punching and shear of members without shear
#: reinforcement fail without warning (common practice; EN 1992-1-1 9.4.3 and 6.2.1
#: call for punching and shear reinforcement details for that reason, from memory).
MODE_FAILURE_TYPE = {
    "flexure": "ductile",
    "hogging": "ductile",
    "shear": "brittle",
    "punching": "brittle",
}

#: Factor on the target probability of failure of a brittle mode [-] and its basis.
#: NKB Report 36 (Nordic Committee on Building Regulations, 1978), the table the JCSS
#: and ISO 2394 discussions of failure type go back to: annual target failure
#: probabilities by safety class and failure type, each failure type one decade of
#: pf below the previous one (type I ductile with reserve capacity, II ductile without
#: reserve, III brittle), e.g. normal safety class 1e-4 / 1e-5 / 1e-6 (from memory).
#: ISO 2394:2015 asks the target to take into account the consequence *and the nature*
#: of failure (as adopted in SANS 2394:2016 cl. 8.4, read in a quoted excerpt).
#: A brittle mode here takes the site's (ductile) target with its pf divided by 10.
BRITTLE_PF_FACTOR = 0.1
BRITTLE_BASIS = (
    "brittle mode (fails without warning): target pf / 10, one failure-type step of NKB "
    "Report 36 (1978), failure type III brittle vs II ductile (from memory); ISO 2394:2015 "
    "asks the target to reflect the nature of failure (SANS 2394:2016 cl. 8.4, read in a "
    "quoted excerpt)"
)
DUCTILE_BASIS = "ductile mode (warning before collapse): the site target"


def mode_target(mode: str, target: Target) -> Target:
    """Target of one failure mode of a member: brittle modes stricter than ductile ones.

    Parameters
    ----------
    mode : str
        ``"flexure"``, ``"hogging"`` (ductile), ``"shear"`` (members without shear
        reinforcement, the only shear mode modelled), ``"punching"`` (brittle);
        ``"system"`` takes the strictest mode of the member (see `system_target`).
    target : Target
        The site's (ductile) target for the reference period.

    Returns
    -------
    Target
        Ductile: ``target`` with the basis in its note. Brittle: the index of the
        pf ``BRITTLE_PF_FACTOR`` x Phi(-beta) for the same reference period
        (annual 4.2 -> 4.69; annual 3.3 -> 3.90).
    """
    kind = MODE_FAILURE_TYPE.get(mode)
    if kind is None:
        raise InputError(f"unknown mode {mode!r}; known: {', '.join(MODE_FAILURE_TYPE)}")
    if kind == "ductile":
        return dataclasses.replace(target, note=_join(target.note, DUCTILE_BASIS))
    beta = float(stats.norm.isf(BRITTLE_PF_FACTOR * stats.norm.sf(target.beta)))
    return Target(beta, target.reference_period_years, target.source,
                  note=_join(target.note, f"{BRITTLE_BASIS}; {target.beta:.2f} -> {beta:.2f}"))


def system_target(modes, target: Target) -> Target:
    """Target of a member's series system: the strictest of its modes' targets."""
    targets = [mode_target(m, target) for m in modes]
    if not targets:
        raise InputError("a member system needs at least one mode")
    strictest = max(targets, key=lambda t: t.beta)
    return dataclasses.replace(
        strictest, note=_join(strictest.note, "member system: the strictest target of its modes"))


def _join(first: str, second: str) -> str:
    return f"{first}; {second}" if first else second
