"""Reader for rebar tensile tests (``kind = "tensile"``)."""

from __future__ import annotations

from inspection_io.readers._common import Column, KindSpec, Row

COLUMNS = (
    Column("specimen_id", "text", required=True),
    Column("diameter", "number", "length_mm", required=True, lower=0.0, lower_inclusive=False,
           what="diameter", plausible="bar_diameter"),
    Column("yield_strength", "number", "stress_metric_ksi", required=True, lower=0.0,
           lower_inclusive=False, what="yield strength", plausible="yield_strength",
           flags_quantities=("yield_strength",)),
    Column("tensile_strength", "number", "stress_metric_ksi", lower=0.0, lower_inclusive=False,
           what="tensile strength", plausible="tensile_strength",
           flags_quantities=("tensile_strength",)),
    Column("elongation", "number", "percent", lower=0.0, what="elongation",
           plausible="elongation", flags_quantities=("elongation",)),
)


def _build(row: Row) -> list[dict]:
    extra = {"diameter": row["diameter"], "strength_unit": row.unit("yield_strength")}
    observations = [row.observation("yield_strength", row["yield_strength"], "MPa", extra)]
    tensile = row["tensile_strength"]
    if tensile is not None:
        if tensile < row["yield_strength"]:
            raise row.error(f"tensile strength {tensile:.4g} MPa is below the yield strength "
                            f"{row['yield_strength']:.4g} MPa", column="tensile_strength")
        observations.append(row.observation("tensile_strength", tensile, "MPa", extra))
    if row["elongation"] is not None:
        if row["elongation"] > 100.0:
            raise row.error(f"elongation {row['elongation']:g} % is above 100 %",
                            column="elongation")
        observations.append(row.observation("elongation", row["elongation"], "%", extra))
    return observations


SPEC = KindSpec(kind="tensile", id_column="specimen_id", identifying=("specimen_id",),
                columns=COLUMNS, build=_build)
