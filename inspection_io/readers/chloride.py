"""Reader for chloride profiles by grinding increments (``kind = "chloride"``).

Several rows share a ``profile_id``; within a profile the increments must not
repeat or overlap. Chloride by mass of concrete is converted to by mass of
binder with the site's ``concrete_density / binder_content``
(`inspection_io.units.chloride_concrete_to_binder`). A row with ``below_limit``
= yes gives the lab's detection limit in ``chloride``; it is stored with
``below_limit: true`` and enters the fit as a censored value.
"""

from __future__ import annotations

from inspection_io.readers._common import Column, Context, KindSpec, Row
from inspection_io.units import chloride_concrete_to_binder

COLUMNS = (
    Column("profile_id", "text", required=True),
    Column("depth_from", "number", "length_metric", required=True, lower=0.0,
           what="depth_from", plausible="chloride_depth"),
    Column("depth_to", "number", "length_metric", required=True, lower=0.0, what="depth_to",
           plausible="chloride_depth"),
    Column("chloride", "number", "chloride", required=True, lower=0.0, what="chloride content"),
    # "yes": the lab reported the content as below its detection limit, and ``chloride``
    # gives that limit; the fit treats it as left-censored (P(C <= limit)), not as a value.
    Column("below_limit", "bool"),
)


def _check_columns(context: Context) -> None:
    unit = context.units["chloride"]
    if not unit.needs_binder:
        return
    missing = [name for name in ("binder_content", "concrete_density")
               if not _positive(getattr(context, name))]
    if missing:
        raise context.error("chloride by mass of concrete needs the site's "
                            f"{' and '.join('[materials] ' + m for m in missing)} "
                            "(positive, [kg/m3]) to convert to % by mass of binder",
                            row=1, column="chloride")
    context.conversions.append(
        f"chloride: % concrete -> % binder (x {context.concrete_density:g}/"
        f"{context.binder_content:g} = concrete_density/binder_content)")


def _positive(value) -> bool:
    return value is not None and value > 0


def _build(row: Row) -> list[dict]:
    start, end = row["depth_from"], row["depth_to"]
    if end <= start:
        raise row.error(f"depth_to ({end:g} mm) must be greater than depth_from ({start:g} mm)",
                        column="depth_to")
    _check_profile(row, start, end)
    row.check_within_member(end, "depth_to", "chloride increment depth_to", allow_equal=True)
    context = row.context
    value = row["chloride"]
    as_given = None
    if value > 100.0:
        raise row.error(f"chloride content {value:g} {row.unit('chloride')} is more than "
                        "100 %", column="chloride")
    if context.units["chloride"].needs_binder:
        as_given = f"{value:g} % concrete"
        value = chloride_concrete_to_binder(value, context.concrete_density,
                                            context.binder_content)
    row.check_plausible("chloride", value, "chloride", as_given=as_given)
    extra = {"depth_from": start, "depth_to": end, "depth_mid": 0.5 * (start + end),
             "chloride_as_given": row["chloride"], "chloride_unit": row.unit("chloride"),
             "depth_unit": row.unit("depth_from")}
    if row["below_limit"]:
        if not value > 0:
            raise row.error("a reading below the detection limit needs the limit (> 0) in "
                            "the chloride column", column="chloride")
        extra["below_limit"] = True
    return [row.observation("chloride", value, "% binder", extra)]


def _check_profile(row: Row, start: float, end: float) -> None:
    profiles = row.context.state.setdefault("profiles", {})
    increments = profiles.setdefault(row["profile_id"], [])
    for other_row, other_zone, other_start, other_end in increments:
        if other_zone != row["zone"]:
            raise row.error(f"profile '{row['profile_id']}' is in zone '{other_zone}' in row "
                            f"{other_row} but in zone '{row['zone']}' here", column="zone")
        if start < other_end and other_start < end:
            raise row.error(f"increment {start:g}-{end:g} mm of profile '{row['profile_id']}' "
                            f"overlaps {other_start:g}-{other_end:g} mm in row {other_row}",
                            column="depth_from")
    increments.append((row.number, row["zone"], start, end))


SPEC = KindSpec(kind="chloride", id_column="profile_id", identifying=("profile_id",),
                columns=COLUMNS, build=_build, unique_ids=False, check_columns=_check_columns)
