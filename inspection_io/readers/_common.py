"""Column specifications and cell parsing shared by all campaign-file readers.

A reader declares its columns (`Column`) and a `KindSpec`; `parse_rows` checks
the header line, then every cell of every row in file order, and hands each
row's parsed values (`Row`) to the kind's builder. The first bad cell raises
`InputError` naming file, row and column.
"""

from __future__ import annotations

import datetime as dt
import json
import math
import re
from collections.abc import Callable, Collection, Mapping
from dataclasses import dataclass, field
from typing import Any

from inspection_io import plausibility, units
from inspection_io.console_text import quote_cell
from inspection_io.errors import InputError
from inspection_io.number_text import (
    NumberFormat,
    NumberTextError,
    detect_format,
    parse_number,
)
from inspection_io.tables import Header, RawTable

TRUE_WORDS = {"yes", "y", "true", "1", "x"}
FALSE_WORDS = {"no", "n", "false", "0", ""}
#: Faces of a member a reading can be taken on ("" = not stated).
FACES = ("", "top", "bottom", "side")
_DATE_RE = re.compile(r"^\d{4}-\d{2}-\d{2}(T00:00(:00)?)?$")


@dataclass(frozen=True)
class Column:
    """One column a kind understands.

    Attributes
    ----------
    name : str
        Canonical header name (lower case, ``_`` for spaces).
    parse : str
        ``"text"``, ``"number"``, ``"bool"``, ``"choice"`` or ``"date"``.
    dimension : str or None
        Unit dimension from `inspection_io.units.DIMENSIONS`; None = no unit.
    required : bool
        The column must exist and every row must give a value.
    lower : float or None
        Smallest allowed value (numbers); ``lower_inclusive`` says if it is allowed.
    choices : tuple of str
        Accepted words for ``"choice"`` (the first is the default for empty cells).
    what : str
        Physical wording for messages (``"strength"``, ``"cover"``).
    plausible : str or None
        Key of `inspection_io.plausibility.RANGES` checked on the canonical value
        (hard range: refused; soft range: flagged). None = no check here (the
        builder checks derived or site-converted values itself).
    flags_quantities : tuple of str
        Observation quantities of the row that carry this column's plausibility
        flag; empty = all observations of the row.
    """

    name: str
    parse: str = "text"
    dimension: str | None = None
    required: bool = False
    lower: float | None = None
    lower_inclusive: bool = True
    choices: tuple[str, ...] = ()
    what: str = ""
    plausible: str | None = None
    flags_quantities: tuple[str, ...] = ()


@dataclass(frozen=True)
class KindSpec:
    """How one kind of campaign file is read."""

    kind: str
    id_column: str
    identifying: tuple[str, ...]
    columns: tuple[Column, ...]
    build: Callable[[Row], list[dict]]
    one_of: tuple[tuple[str, ...], ...] = ()
    unique_ids: bool = True
    finish: Callable[[list[dict], Context], list[dict]] | None = None
    check_columns: Callable[[Context], None] | None = None

    def all_columns(self) -> tuple[Column, ...]:
        return COMMON_COLUMNS + self.columns


COMMON_COLUMNS = (
    Column("zone", "text", required=True),
    Column("member", "text"),
    Column("date", "date"),
    Column("note", "text"),
    Column("face", "choice", choices=FACES),
)


@dataclass
class Context:
    """Everything a reader needs besides the table: site facts and options."""

    table: RawTable
    spec: KindSpec
    binder_content: float | None = None
    concrete_density: float | None = None
    known_zones: Collection[str] | None = None
    known_members: Collection[str] | Mapping[str, str] | None = None
    member_depths: Mapping[str, float] | None = None
    options: dict[str, Any] = field(default_factory=dict)
    units: dict[str, units.Unit] = field(default_factory=dict)
    headers: dict[str, Header] = field(default_factory=dict)
    conversions: list[str] = field(default_factory=list)
    state: dict[str, Any] = field(default_factory=dict)
    number_format: NumberFormat | None = None

    def error(self, message: str, row: int | None = None, column: str | None = None) -> InputError:
        header = self.headers.get(column) if column else None
        return InputError(message, file=self.table.path, row=row,
                          column=header.raw if header else column)


@dataclass
class Row:
    """Parsed values of one data row (canonical units) plus its context."""

    number: int
    values: dict[str, Any]
    context: Context
    soft_flags: list[tuple[str, tuple[str, ...]]] = field(default_factory=list)
    cells: list[str] = field(default_factory=list)

    def as_given(self, name: str) -> str | None:
        """Cell `name` as written with its unit when it was converted (for messages), else None."""
        unit = self.context.units.get(name)
        header = self.context.headers.get(name)
        if unit is None or header is None or (unit.factor == 1.0 and not unit.offset):
            return None
        return f"{quote_cell(self.cells[header.position].strip())} {unit.label}"

    def __getitem__(self, name: str) -> Any:
        return self.values.get(name)

    def error(self, message: str, column: str | None = None) -> InputError:
        return self.context.error(message, row=self.number, column=column)

    def unit(self, name: str) -> str | None:
        unit = self.context.units.get(name)
        return unit.label if unit else None

    def check_plausible(self, quantity: str, value: float, column: str, *,
                        as_given: str | None = None,
                        flags_quantities: tuple[str, ...] = ()) -> None:
        """Check a canonical value against `inspection_io.plausibility.RANGES[quantity]`.

        Outside the hard range: `InputError` naming the row, `column` and the range;
        outside the soft range: the flag is kept for the observations named in
        `flags_quantities` (all of the row when empty).
        """
        where = plausibility.check(quantity, value)
        if where == "hard":
            raise self.error(plausibility.hard_message(plausibility.RANGES[quantity], value,
                                                       as_given), column=column)
        if where == "soft":
            self.soft_flags.append((plausibility.RANGES[quantity].flag, flags_quantities))

    def check_within_member(self, value: float, column: str, what: str, *,
                            allow_equal: bool = False) -> None:
        """Refuse a depth-like value [mm] that does not fit in the row's member (site depth)."""
        depths, member = self.context.member_depths, self["member"]
        if not depths or member is None or member not in depths:
            return
        if not plausibility.within_member_depth(value, depths[member], allow_equal=allow_equal):
            relation = "larger than" if allow_equal else "not smaller than"
            raise self.error(f"{what} {value:g} mm is {relation} the depth of member "
                             f"'{member}' ({depths[member]:g} mm in the site file)",
                             column=column)

    def observation(self, quantity: str, value: float, unit: str, extra: Mapping | None = None,
                    flags: tuple[str, ...] | list[str] = ()) -> dict:
        """One canonical observation of this row (with the row's plausibility flags)."""
        flags = list(flags) + [flag for flag, quantities in self.soft_flags
                               if not quantities or quantity in quantities]
        extra = dict(extra or {})
        if self["note"]:
            extra["note"] = self["note"]
        if self["face"]:
            extra.setdefault("face", self["face"])
        return {
            "source_row": self.number,
            "item_id": self[self.context.spec.id_column],
            "zone": self["zone"],
            "member": self["member"],
            "date": self["date"],
            "quantity": quantity,
            "value": float(value),
            "unit": unit,
            "flags": ";".join(dict.fromkeys(flags)),
            "extra": json.dumps(extra, sort_keys=True),
        }


def resolve_columns(context: Context) -> None:
    """Check the header line against the kind: required columns and units."""
    spec, table = context.spec, context.table
    for column in spec.all_columns():
        header = table.header(column.name)
        if header is None:
            if column.required:
                raise context.error(f"missing required column '{column.name}' for a {spec.kind} "
                                    f"file{_unit_hint(column)}", row=1, column=column.name)
            continue
        context.headers[column.name] = header
        if column.dimension is None:
            if header.unit not in (None, "", "-") and header.unit_style != "parentheses":
                raise context.error(f"column '{column.name}' takes no unit, found "
                                    f"'[{quote_cell(header.unit)}]'", row=1, column=column.name)
            continue
        if header.unit is None or not header.unit.strip():
            raise context.error(f"missing unit: write '{column.name} [unit]' with one of "
                                f"{', '.join(units.accepted_units(column.dimension))}",
                                row=1, column=column.name)
        try:
            unit = units.lookup_unit(header.unit, column.dimension)
        except units.UnitError as err:
            raise context.error(str(err), row=1, column=column.name) from None
        context.units[column.name] = unit
        canonical = units.canonical_label(column.dimension)
        if unit.label != canonical and not unit.needs_binder:
            context.conversions.append(f"{column.name}: {unit.label} -> {canonical} "
                                       f"(x {unit.factor:.10g}{_offset(unit)})")
    for group in spec.one_of:
        if not any(name in context.headers for name in group):
            raise context.error(f"a {spec.kind} file needs one of the columns "
                                f"{' or '.join(repr(n) for n in group)}", row=1)
    if spec.check_columns is not None:
        spec.check_columns(context)
    context.number_format = _detect_number_format(context)
    if context.number_format.decimal == "," or context.number_format.thousands is not None:
        context.conversions.append(f"numbers written with {context.number_format.describe()} "
                                   f"({context.number_format.evidence})")


_DEFAULT_DECIMAL = {",": (".", "comma-separated file, where a decimal comma would split the cell"),
                    None: (".", "numbers of an XLSX file are stored as binary numbers")}


def _detect_number_format(context: Context) -> NumberFormat:
    """The file's number convention from every cell of its number columns."""
    table = context.table
    columns = {c.name: c for c in context.spec.all_columns()}
    positions = [(header.position, header.raw) for name, header in context.headers.items()
                 if columns[name].parse == "number"]

    def cells():
        for index, (number, row) in enumerate(zip(table.source_rows, table.rows)):
            for position, raw in positions:
                text = row[position].strip()
                if not text:
                    continue
                yield text, _Where(number, raw), (index, position) in table.numeric_cells

    default, reason = _DEFAULT_DECIMAL.get(table.delimiter if table.file_format == "csv"
                                           else None, (None, ""))
    try:
        return detect_format(cells(), default, reason)
    except NumberTextError as err:
        where = err.location
        raise InputError(str(err), file=table.path, row=getattr(where, "row", None),
                         column=getattr(where, "column", None)) from None


@dataclass(frozen=True)
class _Where:
    """Where a number cell is (row number, raw header), shown as in messages."""

    row: int
    column: str

    def __str__(self) -> str:
        return f"row {self.row}, column '{quote_cell(self.column)}'"


def parse_rows(context: Context) -> list[dict]:
    """Parse every row in file order and build the observations."""
    spec, table = context.spec, context.table
    by_position = sorted(context.headers.items(), key=lambda item: item[1].position)
    columns = {c.name: c for c in spec.all_columns()}
    seen_ids: dict[str, int] = {}
    observations: list[dict] = []
    for index, (number, cells) in enumerate(zip(table.source_rows, table.rows)):
        values: dict[str, Any] = {}
        for name, header in by_position:
            column = columns[name]
            if column.parse == "number":
                values[name] = _parse_number(cells[header.position].strip(), column, number,
                                             context, index, header.position)
            else:
                values[name] = _parse_cell(cells[header.position], column, number, context)
            if name == spec.id_column and spec.unique_ids:
                _check_unique(values[name], number, seen_ids, context)
        row = Row(number, values, context, cells=cells)
        for name, header in by_position:
            column = columns[name]
            if column.plausible and values[name] is not None:
                row.check_plausible(column.plausible, values[name], name,
                                    as_given=row.as_given(name),
                                    flags_quantities=column.flags_quantities)
        _check_member_zone(row)
        for group in spec.one_of:
            if all(row[n] is None for n in group):
                present = next(n for n in group if n in context.headers)
                raise row.error(f"empty: give {' or '.join(group)}", column=present)
        observations.extend(spec.build(row))
    if spec.finish is not None:
        observations = spec.finish(observations, context)
    return observations


def _parse_cell(text: str, column: Column, row: int, context: Context) -> Any:
    cell = text.strip()
    if column.parse == "number":
        return _parse_number(cell, column, row, context)
    if column.parse == "bool":
        word = cell.lower()
        if word in TRUE_WORDS or word in FALSE_WORDS:
            return word in TRUE_WORDS
        raise context.error(f"expected yes or no, found '{quote_cell(cell)}'", row=row,
                            column=column.name)
    if column.parse == "choice":
        word = re.sub(r"[\s_]+", "-", cell.lower())
        if not word:
            return column.choices[0]
        if word not in column.choices:
            raise context.error(f"expected one of {', '.join(c for c in column.choices if c)}, "
                                f"found '{quote_cell(cell)}'",
                                row=row, column=column.name)
        return word
    if column.parse == "date":
        if not cell:
            return None
        if _DATE_RE.match(cell):
            try:
                return dt.date.fromisoformat(cell[:10]).isoformat()
            except ValueError:
                pass
        raise context.error(f"bad date '{quote_cell(cell)}': expected an ISO date YYYY-MM-DD",
                            row=row, column=column.name)
    if not cell:
        if column.required:
            raise context.error(f"empty cell: a {column.name} is required", row=row,
                                column=column.name)
        return None
    _check_known(cell, column.name, row, context)
    return cell


def _parse_number(cell: str, column: Column, row: int, context: Context,
                  index: int | None = None, position: int | None = None) -> float | None:
    unit = context.units.get(column.name)
    label = f" [{unit.label}]" if unit else ""
    if not cell:
        if column.required:
            raise context.error(f"empty cell: a {column.what or column.name}{label} is required",
                                row=row, column=column.name)
        return None
    typed = (index, position) in context.table.numeric_cells
    number_format = NumberFormat() if typed else context.number_format
    try:
        value = parse_number(cell, number_format)
    except NumberTextError as err:
        reason = f": {err}" if str(err) else ""
        raise context.error(f"expected a number{label}, found '{quote_cell(cell)}'{reason}",
                            row=row, column=column.name) from None
    if column.lower is not None:
        too_low = value < column.lower if column.lower_inclusive else value <= column.lower
        if too_low:
            bound = "negative" if column.lower_inclusive else "zero or negative"
            raise context.error(f"{column.what or column.name} cannot be {bound}: found "
                                f"{quote_cell(cell)}{label}", row=row, column=column.name)
    canonical = units.to_canonical(value, unit) if unit else value
    if not math.isfinite(canonical):
        raise context.error(f"{column.what or column.name} {quote_cell(cell)}{label} overflows "
                            f"when converted to {units.canonical_label(column.dimension)}",
                            row=row, column=column.name)
    return canonical


def _check_unique(item_id: str, row: int, seen: dict[str, int], context: Context) -> None:
    if item_id in seen:
        raise context.error(f"duplicate {context.spec.id_column} '{quote_cell(item_id)}' in rows "
                            f"{seen[item_id]} and {row}", row=row,
                            column=context.spec.id_column)
    seen[item_id] = row


def _check_known(cell: str, name: str, row: int, context: Context) -> None:
    if name == "zone" and context.known_zones is not None and cell not in context.known_zones:
        raise context.error(f"unknown zone '{quote_cell(cell)}'; zones in the site file: "
                            f"{', '.join(sorted(context.known_zones))}", row=row, column=name)
    members = context.known_members
    if name == "member" and members is not None and cell not in members:
        raise context.error(f"unknown member '{quote_cell(cell)}'; members in the site file: "
                            f"{', '.join(sorted(members))}", row=row, column=name)


def _check_member_zone(row: Row) -> None:
    members = row.context.known_members
    member, zone = row["member"], row["zone"]
    if isinstance(members, Mapping) and member is not None and members[member] != zone:
        raise row.error(f"member '{member}' belongs to zone '{members[member]}' in the site "
                        f"file, not to zone '{zone}'", column="member")


def _unit_hint(column: Column) -> str:
    if column.dimension is None:
        return ""
    return f" (with a unit: {', '.join(units.accepted_units(column.dimension))})"


def _offset(unit: units.Unit) -> str:
    return f", {unit.offset:+g}" if unit.offset else ""
