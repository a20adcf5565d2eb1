"""Reader for drilled-core test records (``kind = "cores"``).

Each core gives two observations: ``core_strength`` as tested and
``insitu_strength`` corrected with `inspection_io.cores.insitu_strength`.
Row-level screening flags (bar in core, damaged, l/d outside 1-2, diameter
below 50 mm) are set here; the zone-level outlier test runs at the end
(`inspection_io.screening.flag_outliers`).
"""

from __future__ import annotations

from inspection_io import screening
from inspection_io.cores import (
    CoreCorrections,
    insitu_strength,
    strength_from_failure_load,
)
from inspection_io.readers._common import Column, Context, KindSpec, Row

#: Relative tolerance between a stated strength and 4F/(pi d^2) from the stated
#: failure load when a row gives both (rounding of lab sheets, common practice).
STRENGTH_LOAD_TOLERANCE = 0.02

COLUMNS = (
    Column("core_id", "text", required=True),
    Column("diameter", "number", "length", required=True, lower=0.0, lower_inclusive=False,
           what="diameter", plausible="core_diameter"),
    Column("length", "number", "length", required=True, lower=0.0, lower_inclusive=False,
           what="length", plausible="core_length"),
    Column("strength", "number", "stress", lower=0.0, lower_inclusive=False, what="strength"),
    Column("failure_load", "number", "force", lower=0.0, lower_inclusive=False,
           what="failure load", plausible="failure_load"),
    Column("moisture", "choice", choices=("as-received", "dry", "soaked")),
    Column("bar_in_core", "bool"),
    Column("damaged", "bool"),
    Column("direction", "choice", choices=("vertical", "horizontal")),
)


def _build(row: Row) -> list[dict]:
    diameter, length = row["diameter"], row["length"]
    strength = row["strength"]
    if strength is not None:
        row.check_plausible("core_strength", strength, "strength",
                            as_given=row.as_given("strength"))
    if row["failure_load"] is not None:
        from_load = float(strength_from_failure_load(row["failure_load"], diameter))
        if strength is None:
            strength = from_load
        elif abs(strength - from_load) > STRENGTH_LOAD_TOLERANCE * strength:
            raise row.error(f"strength {strength:.4g} MPa disagrees with 4F/(pi d^2) = "
                            f"{from_load:.4g} MPa from the failure load and diameter",
                            column="strength")
    if row["strength"] is None:
        row.check_plausible("core_strength", strength, "failure_load",
                            as_given=f"4F/(pi d^2) from failure load {row['failure_load']:.6g} kN "
                                     f"and diameter {diameter:.6g} mm")
    corrections = row.context.options.get("core_corrections") or CoreCorrections()
    moisture = row["moisture"] or "as-received"
    insitu, factors = insitu_strength(strength, diameter, length, moisture, corrections)
    extra = {
        "diameter": diameter, "length": length, "moisture": moisture,
        "direction": row["direction"] or "vertical",
        "bar_in_core": bool(row["bar_in_core"]), "damaged": bool(row["damaged"]),
        "strength_unit": row.unit("strength"), "failure_load_unit": row.unit("failure_load"),
        "length_unit": row.unit("length"), "diameter_unit": row.unit("diameter"),
        **factors,
    }
    if row["failure_load"] is not None:
        extra["failure_load"] = row["failure_load"]
    flags = screening.core_row_flags(diameter=diameter, length_to_diameter=length / diameter,
                                     bar_in_core=bool(row["bar_in_core"]),
                                     damaged=bool(row["damaged"]))
    return [row.observation("core_strength", strength, "MPa", extra, flags),
            row.observation("insitu_strength", insitu, "MPa", extra, flags)]


def _finish(observations: list[dict], context: Context) -> list[dict]:
    alpha = context.options.get("outlier_alpha", screening.OUTLIER_ALPHA)
    return screening.flag_outlier_records(observations, alpha=alpha)


SPEC = KindSpec(kind="cores", id_column="core_id", identifying=("core_id",), columns=COLUMNS,
                build=_build, one_of=(("strength", "failure_load"),), finish=_finish)
