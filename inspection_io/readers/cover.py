"""Reader for cover-meter surveys (``kind = "cover"``)."""

from __future__ import annotations

from inspection_io.readers._common import Column, KindSpec, Row

COLUMNS = (
    Column("location_id", "text", required=True),
    Column("cover", "number", "length", required=True, lower=0.0, what="cover",
           plausible="cover"),
)


def _build(row: Row) -> list[dict]:
    row.check_within_member(row["cover"], "cover", "cover")
    extra = {"face": row["face"] or None, "cover_unit": row.unit("cover")}
    return [row.observation("cover", row["cover"], "mm", extra)]


SPEC = KindSpec(kind="cover", id_column="location_id", identifying=("location_id", "cover"),
                columns=COLUMNS, build=_build)
