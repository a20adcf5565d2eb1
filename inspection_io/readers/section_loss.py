"""Reader for bar measurements at break-outs (``kind = "section_loss"``).

``residual_area_ratio`` = (d_res / d_0)^2, the residual cross-section as a
fraction of the original one for uniform (general) corrosion; pitting is
recorded separately as ``max_pit_depth``.
"""

from __future__ import annotations

from inspection_io.readers._common import Column, KindSpec, Row

COLUMNS = (
    Column("breakout_id", "text", required=True),
    Column("bar_diameter", "number", "length_mm", required=True, lower=0.0,
           lower_inclusive=False, what="bar diameter", plausible="bar_diameter"),
    Column("residual_diameter", "number", "length_mm", lower=0.0, what="residual diameter",
           plausible="residual_diameter", flags_quantities=("residual_area_ratio",)),
    Column("max_pit_depth", "number", "length_mm", lower=0.0, what="pit depth",
           plausible="pit_depth", flags_quantities=("max_pit_depth",)),
)


def _build(row: Row) -> list[dict]:
    original = row["bar_diameter"]
    extra = {"bar_diameter": original}
    observations = []
    residual = row["residual_diameter"]
    if residual is not None:
        if residual > original:
            raise row.error(f"residual diameter {residual:g} mm is larger than the original "
                            f"bar diameter {original:g} mm", column="residual_diameter")
        extra["residual_diameter"] = residual
        observations.append(row.observation("residual_area_ratio", (residual / original) ** 2,
                                            "-", extra))
    pit = row["max_pit_depth"]
    if pit is not None:
        if pit > original:
            raise row.error(f"pit depth {pit:g} mm is larger than the bar diameter "
                            f"{original:g} mm", column="max_pit_depth")
        observations.append(row.observation("max_pit_depth", pit, "mm", extra))
    return observations


SPEC = KindSpec(kind="section_loss", id_column="breakout_id", identifying=("breakout_id",),
                columns=COLUMNS, build=_build, one_of=(("residual_diameter", "max_pit_depth"),))
