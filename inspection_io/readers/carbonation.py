"""Reader for phenolphthalein carbonation depths (``kind = "carbonation"``)."""

from __future__ import annotations

from inspection_io.readers._common import Column, KindSpec, Row

COLUMNS = (
    Column("location_id", "text", required=True),
    Column("carbonation_depth", "number", "length_metric", required=True, lower=0.0,
           what="carbonation depth", plausible="carbonation_depth"),
)


def _build(row: Row) -> list[dict]:
    row.check_within_member(row["carbonation_depth"], "carbonation_depth", "carbonation depth",
                            allow_equal=True)
    extra = {"depth_unit": row.unit("carbonation_depth")}
    return [row.observation("carbonation_depth", row["carbonation_depth"], "mm", extra)]


SPEC = KindSpec(kind="carbonation", id_column="location_id",
                identifying=("location_id", "carbonation_depth"), columns=COLUMNS, build=_build)
