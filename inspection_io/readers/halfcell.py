"""Reader for half-cell potential surveys (``kind = "halfcell"``).

Potentials are converted to the copper/copper-sulfate electrode (CSE) with
the standard electrode potentials in `inspection_io.units`
(E_CSE = E_SCE - 75 mV; E_CSE = E_Ag/AgCl - 119 mV; common practice).

Optional grid coordinates ``x [m]`` and ``y [m]`` (or ``[mm]``) place each
reading on the surveyed surface; both or neither must be given, in every row
once the columns exist. They let the update count how many readings are
effectively independent (`assess.updating.spatial`); without them the update
assumes a square grid at a stated spacing.
"""

from __future__ import annotations

from inspection_io.readers._common import Column, Context, KindSpec, Row

COLUMNS = (
    Column("location_id", "text", required=True),
    Column("potential", "number", "potential", required=True, what="potential",
           plausible="potential"),
    Column("x", "number", "position", what="grid coordinate x", plausible="grid_coordinate"),
    Column("y", "number", "position", what="grid coordinate y", plausible="grid_coordinate"),
)


def _check_columns(context: Context) -> None:
    given = [name for name in ("x", "y") if name in context.headers]
    if len(given) == 1:
        other = "y" if given[0] == "x" else "x"
        raise context.error(f"grid coordinate column '{given[0]}' needs its partner "
                            f"'{other} [m]': give both grid coordinates of each reading or "
                            f"neither", row=1, column=given[0])


def _build(row: Row) -> list[dict]:
    unit = row.context.units["potential"]
    as_read = (row["potential"] - unit.offset) / unit.factor
    extra = {"potential_as_read": as_read, "potential_unit": unit.label,
             "electrode": unit.label.split(" ", 1)[1]}
    if "x" in row.context.headers:
        for name in ("x", "y"):
            if row[name] is None:
                raise row.error("empty grid coordinate: once the file has 'x' and 'y' "
                                "columns every reading needs both (position on the surveyed "
                                "surface [m])", column=name)
        extra["x_m"], extra["y_m"] = float(row["x"]), float(row["y"])
    return [row.observation("potential", row["potential"], "mV CSE", extra)]


SPEC = KindSpec(kind="halfcell", id_column="location_id", identifying=("location_id", "potential"),
                columns=COLUMNS, build=_build, check_columns=_check_columns)
