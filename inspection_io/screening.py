"""Screening flags for test records: mark, give the reason, never drop.

Flags are short names stored ``;``-joined in the observations' ``flags``
column. `FLAG_REASONS` explains each, including the ``unusual <quantity>``
flags of values outside the soft plausibility range
(`inspection_io.plausibility`). Summaries and updates leave flagged rows out
unless told otherwise (`usable_mask`), except the flags of `KEPT_FLAGS`: a
statistical outlier is a fact about the sample, not a defect of the test, so it
is flagged and kept (a low core is often the weak concrete that matters). The
engineer excludes a specific test with a reason (site file ``[exclude]``).

Outliers
--------
Within a zone, the natural logarithms of the in-situ strengths of cores that
carry no other flag are tested with the two-sided Grubbs test (Grubbs 1969),
repeated on the remaining values while an outlier is found (iterated Grubbs
test, at most n - 2 removals). The statistic is G = max|x_i - mean| / s (s with
n - 1 in the denominator); the critical value is

    G_crit = (n - 1) / sqrt(n) * sqrt(t^2 / (n - 2 + t^2)),

t = upper alpha/(2n) quantile of Student's t with n - 2 degrees of freedom.
Zones with fewer than 3 such cores are not tested.

References
----------
.. [1] F. E. Grubbs, "Procedures for detecting outlying observations in
   samples", Technometrics, 11(1), pp. 1-21, 1969.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
import pandas as pd
from scipy import stats

from inspection_io.errors import InputError
from inspection_io.plausibility import FLAGS as PLAUSIBILITY_FLAGS

__all__ = [
    "FLAG_REASONS",
    "KEPT_FLAGS",
    "MIN_CORE_DIAMETER",
    "OUTLIER_ALPHA",
    "core_row_flags",
    "flag_outlier_records",
    "flag_outliers",
    "grubbs_critical",
    "grubbs_outliers",
    "grubbs_statistic",
    "join_flags",
    "outlier_test_description",
    "split_flags",
    "usable_mask",
]

OUTLIER_ALPHA = 0.05
#: Cores below this diameter are outside EN 13791:2019 [mm].
MIN_CORE_DIAMETER = 50.0

BAR_IN_CORE = "bar_in_core"
DAMAGED = "damaged"
LD_OUTSIDE = "l/d outside 1-2"
SMALL_DIAMETER = "diameter below 50 mm"
OUTLIER = "outlier"

#: Why each flag is set.
FLAG_REASONS = {
    BAR_IN_CORE: "a reinforcing bar crosses the core; strength may be reduced",
    DAMAGED: "the lab reported the core as damaged",
    LD_OUTSIDE: "length/diameter ratio outside 1-2, where the l/d correction is not tabulated",
    SMALL_DIAMETER: "core diameter below 50 mm, outside EN 13791:2019",
    OUTLIER: "log in-situ strength is an outlier in its zone (two-sided Grubbs test, "
             "Grubbs 1969); kept unless excluded with a reason in the site file [exclude]",
    # values inside the hard but outside the soft plausibility range of their quantity
    # ("unusual core strength", ...), see inspection_io.plausibility
    **PLAUSIBILITY_FLAGS,
}


#: Flags that mark a row but keep it in summaries and updates by default.
KEPT_FLAGS = frozenset({OUTLIER})


def split_flags(flags: str | None) -> list[str]:
    """``"damaged;outlier"`` -> ``["damaged", "outlier"]``."""
    return [f for f in (flags or "").split(";") if f]


def join_flags(flags: Iterable[str]) -> str:
    """Join flags, each once, in order of first appearance."""
    return ";".join(dict.fromkeys(f for f in flags if f))


def core_row_flags(*, diameter: float, length_to_diameter: float, bar_in_core: bool,
                   damaged: bool) -> list[str]:
    """Flags one core earns on its own (diameter [mm], l/d [-], lab remarks)."""
    flags = []
    if bar_in_core:
        flags.append(BAR_IN_CORE)
    if damaged:
        flags.append(DAMAGED)
    if not 1.0 <= length_to_diameter <= 2.0:
        flags.append(LD_OUTSIDE)
    if diameter < MIN_CORE_DIAMETER:
        flags.append(SMALL_DIAMETER)
    return flags


def grubbs_critical(n: int, alpha: float = OUTLIER_ALPHA) -> float:
    """Two-sided Grubbs critical value for a sample of size `n` at level `alpha` [-]."""
    if n < 3:
        raise InputError(f"the Grubbs test needs at least 3 values, got {n}")
    t = stats.t.isf(alpha / (2 * n), n - 2)
    return (n - 1) / np.sqrt(n) * np.sqrt(t * t / (n - 2 + t * t))


def grubbs_statistic(values) -> tuple[float, int]:
    """Grubbs statistic max|x - mean|/s and the index of the most extreme value."""
    x = np.asarray(values, float)
    s = x.std(ddof=1)
    if s == 0.0:
        return 0.0, 0
    deviations = np.abs(x - x.mean())
    index = int(np.argmax(deviations))
    return float(deviations[index] / s), index


def grubbs_outliers(values, alpha: float = OUTLIER_ALPHA) -> np.ndarray:
    """Boolean mask of outliers by the iterated two-sided Grubbs test.

    Parameters
    ----------
    values : array_like
        Sample (log-strengths for cores).
    alpha : float
        Significance level of each step [-].
    """
    x = np.asarray(values, float)
    outlier = np.zeros(x.size, bool)
    remaining = np.arange(x.size)
    while remaining.size >= 3:
        g, index = grubbs_statistic(x[remaining])
        if g <= grubbs_critical(remaining.size, alpha):
            break
        outlier[remaining[index]] = True
        remaining = np.delete(remaining, index)
    return outlier


def flag_outliers(observations: pd.DataFrame, alpha: float = OUTLIER_ALPHA,
                  quantity: str = "insitu_strength") -> pd.DataFrame:
    """Add the ``outlier`` flag to every observation of an outlying core.

    The test runs per zone on ``log(value)`` of `quantity` rows without other
    flags; all rows of a flagged ``item_id`` in that zone get the flag.
    Returns a new DataFrame; no row is removed.
    """
    result = observations.copy()
    tested = result[(result["quantity"] == quantity) & (result["flags"] == "")]
    outlying: set[tuple[str, str]] = set()
    for zone, group in tested.groupby("zone", sort=False):
        mask = grubbs_outliers(np.log(group["value"].to_numpy()), alpha)
        outlying.update((zone, item) for item in group["item_id"].to_numpy()[mask])
    if outlying:
        hit = [(z, i) in outlying for z, i in zip(result["zone"], result["item_id"])]
        result.loc[hit, "flags"] = [join_flags([*split_flags(f), OUTLIER])
                                    for f in result.loc[hit, "flags"]]
    return result


def flag_outlier_records(records: list[dict], alpha: float = OUTLIER_ALPHA) -> list[dict]:
    """`flag_outliers` for a list of observation dicts (used by the core reader)."""
    if not records:
        return records
    columns = ["zone", "item_id", "quantity", "value", "flags"]
    frame = pd.DataFrame([[r[c] for c in columns] for r in records], columns=columns)
    flagged = flag_outliers(frame, alpha)["flags"].tolist()
    return [{**record, "flags": flags} for record, flags in zip(records, flagged)]


def usable_mask(flags: pd.Series, include_flagged: set[str] | None = None,
                exclude_flags: set[str] | None = None) -> pd.Series:
    """Which rows a summary uses.

    Parameters
    ----------
    flags : pandas.Series of str
        The observations' ``flags`` column.
    include_flagged : set of str, optional
        Default mode: rows with any flag are left out, except flags named here and
        the flags of `KEPT_FLAGS` (outliers: flagged and kept).
    exclude_flags : set of str, optional
        Opposite mode: only rows with a flag named here are left out.

    Returns
    -------
    pandas.Series of bool
    """
    if include_flagged is not None and exclude_flags is not None:
        raise InputError("give include_flagged or exclude_flags, not both",
                         column="include_flagged")
    for name in (include_flagged or set()) | (exclude_flags or set()):
        if name not in FLAG_REASONS:
            raise InputError(f"unknown flag {name!r}; flags: {', '.join(FLAG_REASONS)}",
                             column="include_flagged" if include_flagged else "exclude_flags")
    sets = flags.fillna("").map(lambda f: set(split_flags(f)))
    if exclude_flags is not None:
        return sets.map(lambda s: not (s & set(exclude_flags)))
    allowed = set(include_flagged or ()) | KEPT_FLAGS
    return sets.map(lambda s: s <= allowed)


def outlier_test_description(alpha: float = OUTLIER_ALPHA) -> str:
    """One line naming the outlier test and its level, for metadata and reports."""
    return (f"iterated two-sided Grubbs test (Grubbs 1969, Technometrics 11(1)) on log "
            f"in-situ strength per zone, alpha = {alpha:g}, cores without other flags, n >= 3")
