"""Per-zone summaries of observations (what a report table shows).

- `core_zone_summary`: n, mean, std, CoV of the in-situ strength and the
  characteristic in-situ strength by EN 1990 Annex D ("V unknown" and
  "V known", lognormal by default, `inspection_io.characteristic`).
- `quantity_zone_summary`: n, mean, std, CoV, min, max of any quantity
  (cover, carbonation depth, chloride, potential, ...).
- `summarise`: the usual summary for a record kind.
- `summary_to_dict`: JSON-ready records.

Flagged observations are left out unless `include_flagged` names their flags
(or `exclude_flags` is used instead); the counts of flagged and excluded rows
are part of every summary.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from inspection_io.characteristic import V_KNOWN, V_UNKNOWN, characteristic_value
from inspection_io.errors import InputError
from inspection_io.screening import usable_mask

__all__ = ["DEFAULT_V_KNOWN", "KIND_QUANTITIES", "core_zone_summary", "quantity_zone_summary",
           "summarise", "summary_to_dict"]

#: Coefficient of variation of in-situ strength assumed for "V known" [-]:
#: upper end of the 0.10-0.15 usually quoted for concrete (from memory).
DEFAULT_V_KNOWN = 0.15

#: Quantities summarised per record kind.
KIND_QUANTITIES = {
    "tensile": ("yield_strength", "tensile_strength", "elongation"),
    "cover": ("cover",),
    "carbonation": ("carbonation_depth",),
    "chloride": ("chloride",),
    "halfcell": ("potential",),
    "section_loss": ("residual_area_ratio", "max_pit_depth"),
}


def _counts(group: pd.DataFrame, used: pd.Series) -> dict:
    flagged = group["flags"].fillna("") != ""
    return {"n_total": int(len(group)), "n_flagged": int(flagged.sum()),
            "n_excluded": int((~used).sum()), "n": int(used.sum())}


def core_zone_summary(observations: pd.DataFrame, *, include_flagged: set[str] | None = None,
                      exclude_flags: set[str] | None = None, v_known: float = DEFAULT_V_KNOWN,
                      distribution: str = "lognormal",
                      quantity: str = "insitu_strength") -> pd.DataFrame:
    """Per-zone statistics and characteristic in-situ strength of cores.

    Parameters
    ----------
    observations : pandas.DataFrame
        Core observations (`inspection_io.readers.ReadResult.observations`).
    include_flagged, exclude_flags : set of str, optional
        Which flagged cores to use (`inspection_io.screening.usable_mask`).
    v_known : float
        Coefficient of variation for the "V known" characteristic value [-].
    distribution : {"lognormal", "normal"}
        Distribution assumed by EN 1990 Annex D.
    quantity : str
        ``"insitu_strength"`` (default) or ``"core_strength"``.

    Returns
    -------
    pandas.DataFrame
        One row per zone: ``zone, n_total, n_flagged, n_excluded, n, mean, std,
        cov`` [MPa, MPa, -], ``k_n_v_unknown, characteristic_v_unknown``,
        ``k_n_v_known, characteristic_v_known`` [-, MPa] and ``v_known`` [-].
        Characteristic values are NaN where n is too small (n < 3 for "V unknown").
    """
    cores = observations[observations["quantity"] == quantity]
    rows = []
    for zone, group in cores.groupby("zone", sort=True):
        used = usable_mask(group["flags"], include_flagged, exclude_flags)
        values = group.loc[used, "value"].to_numpy(float)
        row = {"zone": zone, **_counts(group, used), **_moments(values),
               "k_n_v_unknown": math.nan, "characteristic_v_unknown": math.nan,
               "k_n_v_known": math.nan, "characteristic_v_known": math.nan,
               "v_known": v_known}
        if values.size >= 3:
            unknown = characteristic_value(values, V_UNKNOWN, distribution)
            row.update(k_n_v_unknown=unknown["k_n"],
                       characteristic_v_unknown=unknown["characteristic"])
        if values.size >= 1:
            known = characteristic_value(values, V_KNOWN, distribution, v=v_known)
            row.update(k_n_v_known=known["k_n"], characteristic_v_known=known["characteristic"])
        rows.append(row)
    columns = ["zone", "n_total", "n_flagged", "n_excluded", "n", "mean", "std", "cov",
               "k_n_v_unknown", "characteristic_v_unknown", "k_n_v_known",
               "characteristic_v_known", "v_known"]
    return pd.DataFrame(rows, columns=columns)


def _moments(values: np.ndarray) -> dict:
    n = values.size
    mean = float(values.mean()) if n else math.nan
    std = float(values.std(ddof=1)) if n > 1 else math.nan
    return {"mean": mean, "std": std, "cov": std / mean if n > 1 and mean != 0 else math.nan}


def quantity_zone_summary(observations: pd.DataFrame, quantity: str, *,
                          include_flagged: set[str] | None = None,
                          exclude_flags: set[str] | None = None) -> pd.DataFrame:
    """Per-zone n, mean, std, CoV, min and max of one quantity (canonical unit).

    Returns
    -------
    pandas.DataFrame
        Columns ``zone, quantity, unit, n_total, n_flagged, n_excluded, n, mean,
        std, cov, min, max``.
    """
    rows = []
    selected = observations[observations["quantity"] == quantity]
    for zone, group in selected.groupby("zone", sort=True):
        used = usable_mask(group["flags"], include_flagged, exclude_flags)
        values = group.loc[used, "value"].to_numpy(float)
        rows.append({"zone": zone, "quantity": quantity, "unit": group["unit"].iloc[0],
                     **_counts(group, used), **_moments(values),
                     "min": float(values.min()) if values.size else math.nan,
                     "max": float(values.max()) if values.size else math.nan})
    columns = ["zone", "quantity", "unit", "n_total", "n_flagged", "n_excluded", "n", "mean",
               "std", "cov", "min", "max"]
    return pd.DataFrame(rows, columns=columns)


def summarise(kind: str, observations: pd.DataFrame, **options) -> pd.DataFrame:
    """The usual per-zone summary for a record kind (keyword options pass through)."""
    if kind == "cores":
        return core_zone_summary(observations, **options)
    if kind not in KIND_QUANTITIES:
        raise InputError(f"unknown record kind {kind!r}; choose one of cores, "
                         f"{', '.join(KIND_QUANTITIES)}", column="kind")
    parts = [quantity_zone_summary(observations, q, **options) for q in KIND_QUANTITIES[kind]]
    return pd.concat(parts, ignore_index=True)


def summary_to_dict(summary: pd.DataFrame) -> list[dict]:
    """Records of a summary with plain Python numbers and None for NaN (JSON-ready)."""
    records = []
    for record in summary.to_dict("records"):
        clean = {}
        for key, value in record.items():
            if isinstance(value, (np.integer,)):
                value = int(value)
            elif isinstance(value, (float, np.floating)):
                value = None if math.isnan(value) else float(value)
            clean[key] = value
        records.append(clean)
    return records
