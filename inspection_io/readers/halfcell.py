"""Reader for half-cell potential surveys (``kind = "halfcell"``).

Potentials are converted to the copper/copper-sulfate electrode (CSE) with
the standard electrode potentials in `inspection_io.units`
(E_CSE = E_SCE - 75 mV; E_CSE = E_Ag/AgCl - 119 mV; common practice).
"""

from __future__ import annotations

from inspection_io.readers._common import Column, KindSpec, Row

COLUMNS = (
    Column("location_id", "text", required=True),
    Column("potential", "number", "potential", required=True, what="potential",
           plausible="potential"),
)


def _build(row: Row) -> list[dict]:
    unit = row.context.units["potential"]
    as_read = (row["potential"] - unit.offset) / unit.factor
    extra = {"potential_as_read": as_read, "potential_unit": unit.label,
             "electrode": unit.label.split(" ", 1)[1]}
    return [row.observation("potential", row["potential"], "mV CSE", extra)]


SPEC = KindSpec(kind="halfcell", id_column="location_id", identifying=("location_id", "potential"),
                columns=COLUMNS, build=_build)
