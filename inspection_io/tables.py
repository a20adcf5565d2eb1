"""Load a campaign file (CSV or XLSX) into raw string cells and parse its headers.

Nothing is interpreted here beyond the header line: every cell is kept as the
text the engineer sees (``""`` for an empty cell), with the row number a
spreadsheet would show (header = row 1 when it is the first line).

Limits
------
A campaign file is a few hundred rows of lab results. Anything far larger is a
mistake or hostile, and is refused with an `InputError` before it can exhaust
memory or time (each limit is a module constant):

- file size `MAX_FILE_BYTES`; data rows `MAX_ROWS`; columns `MAX_COLUMNS`;
  characters in one cell `MAX_CELL_CHARS` (a CSV cell above Python's csv field
  limit, 131072 characters by default (Python docs, ``csv.field_size_limit``),
  gets the same clean message instead of ``_csv.Error``);
- XLSX is a ZIP package (ECMA-376 Part 2, Open Packaging Conventions). Before
  the workbook is opened, the ZIP central directory's stated uncompressed sizes
  (PKWARE APPNOTE.TXT 4.3.12) are checked: each part at most
  `MAX_XLSX_PART_BYTES`, all parts at most `MAX_XLSX_TOTAL_BYTES`, and no part
  larger than 1 MB may expand more than `MAX_ZIP_RATIO` times (a 0.3 MB file
  holding a 300 MB run of spaces is refused instead of parsed). Python's
  ``zipfile`` stops reading a part at its stated size, so the stated sizes bound
  what is decompressed.
- an XLSX sheet is streamed row by row in read-only mode and only cells that
  exist in the sheet XML are looked at: a stray cell at the last column and row
  (XFD1048576) costs nothing, whatever the sheet's ``<dimension>`` claims; a
  value beyond `MAX_COLUMNS` is refused naming its cell.
"""

from __future__ import annotations

import csv
import datetime as dt
import re
import zipfile
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from inspection_io.console_text import quote_cell
from inspection_io.errors import InputError

__all__ = [
    "MAX_CELL_CHARS",
    "MAX_COLUMNS",
    "MAX_FILE_BYTES",
    "MAX_ROWS",
    "MAX_XLSX_PART_BYTES",
    "MAX_XLSX_TOTAL_BYTES",
    "MAX_ZIP_PARTS",
    "MAX_ZIP_RATIO",
    "Header",
    "RawTable",
    "load_table",
    "parse_header",
]

#: Largest campaign file read [bytes].
MAX_FILE_BYTES = 50 * 1024 * 1024
#: Most data rows in one campaign file [-].
MAX_ROWS = 100_000
#: Most columns in one campaign file [-].
MAX_COLUMNS = 200
#: Most characters in one cell [-] (Python's csv field limit is 131072 by default).
MAX_CELL_CHARS = 10_000
#: Largest uncompressed part of an XLSX package [bytes].
MAX_XLSX_PART_BYTES = 150 * 1024 * 1024
#: Largest sum of uncompressed parts of an XLSX package [bytes].
MAX_XLSX_TOTAL_BYTES = 250 * 1024 * 1024
#: Largest expansion (uncompressed / compressed size) of an XLSX part above 1 MB [-];
#: sheet XML of real workbooks compresses about 5-20 times (common practice).
MAX_ZIP_RATIO = 100.0
#: Most parts in an XLSX package [-].
MAX_ZIP_PARTS = 10_000

_HEADER_RE = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
_PAREN_UNIT_RE = re.compile(r"^(?P<name>[^\[\]()]*?)\s*\((?P<unit>[^\[\]()]*)\)\s*$")


@dataclass(frozen=True)
class Header:
    """One column header: ``"Diameter [in]"`` -> name ``"diameter"``, unit ``"in"``.

    Attributes
    ----------
    raw : str
        The header exactly as in the file.
    name : str
        Lower-case name, surrounding spaces removed, inner spaces as ``_``.
    unit : str or None
        Text inside the square brackets (or, lab style, the trailing
        parentheses: ``"Diameter (mm)"``), stripped; None when there are none.
    position : int
        0-based column position in the file.
    unit_style : str
        ``"brackets"`` for ``name [unit]``, ``"parentheses"`` for ``name (unit)``
        (for a column that takes no unit such a remark is ignored), ``""`` for none.
    """

    raw: str
    name: str
    unit: str | None
    position: int
    unit_style: str = ""


@dataclass
class RawTable:
    """The cells of one sheet or CSV file as strings."""

    path: Path
    headers: list[Header]
    rows: list[list[str]]
    source_rows: list[int]
    file_format: str
    sheet: str | None = None
    ignored_sheets: list[str] = field(default_factory=list)
    delimiter: str | None = None
    numeric_cells: frozenset[tuple[int, int]] = frozenset()
    """(index in `rows`, column position) of XLSX cells stored as binary numbers."""

    def header(self, name: str) -> Header | None:
        """The header with canonical `name`, or None if the file has no such column."""
        for header in self.headers:
            if header.name == name:
                return header
        return None

    def to_frame(self) -> pd.DataFrame:
        """Raw cells as a DataFrame: the file's own headers plus ``source_row``."""
        frame = pd.DataFrame(self.rows, columns=[h.raw for h in self.headers], dtype=object)
        frame.insert(0, "source_row", pd.Series(self.source_rows, dtype="int64"))
        return frame


def parse_header(text: str, *, file: str | Path | None = None, position: int = 0) -> Header:
    """Parse ``name [unit]`` or ``name (unit)`` into a `Header`; `InputError` on a malformed one."""
    stripped = text.strip()
    style = "brackets"
    match = _HEADER_RE.match(stripped)
    if match is not None and match.group("unit") is None:
        paren = _PAREN_UNIT_RE.match(stripped)
        if paren is not None:
            match, style = paren, "parentheses"
    if match is None:
        raise InputError(f"cannot read header '{quote_cell(text)}': write it as 'name' or "
                         "'name [unit]'", file=file, row=1, column=quote_cell(text))
    name = re.sub(r"\s+", "_", match.group("name").strip().lower())
    if not name:
        raise InputError(f"header '{quote_cell(text)}' has no column name", file=file, row=1,
                         column=quote_cell(text))
    unit = match.group("unit")
    return Header(raw=text, name=name, unit=unit.strip() if unit is not None else None,
                  position=position, unit_style=style if unit is not None else "")


def load_table(path: str | Path, preferred_sheets: Sequence[str] = ()) -> RawTable:
    """Read a CSV or XLSX campaign file into a `RawTable`.

    Parameters
    ----------
    path : str or Path
        ``.csv`` (comma, semicolon or tab separated, UTF-8) or ``.xlsx`` file.
    preferred_sheets : sequence of str
        For XLSX: sheet names (case-insensitive) to read instead of the first
        sheet. If several of them exist the file is ambiguous (`InputError`).

    Raises
    ------
    InputError
        Missing file, unsupported format, a file beyond the limits of this module,
        no header, no data rows, duplicate or empty headers, values below no header.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("file not found", file=path)
    size = path.stat().st_size
    if size > MAX_FILE_BYTES:
        raise InputError(f"the file has {size} bytes; a campaign file may have at most "
                         f"{MAX_FILE_BYTES} bytes: split it", file=path)
    suffix = path.suffix.lower()
    numeric: dict[int, set[int]] = {}
    if suffix == ".csv":
        grid, delimiter = _read_csv(path)
        sheet, ignored = None, []
    elif suffix in (".xlsx", ".xlsm"):
        grid, sheet, ignored, numeric = _read_xlsx(path, preferred_sheets)
        delimiter = None
    else:
        raise InputError(f"unsupported file type '{quote_cell(path.suffix)}': give a .csv or "
                         ".xlsx file", file=path)
    table = _grid_to_table(path, grid, suffix.lstrip("."), numeric)
    table.sheet, table.ignored_sheets, table.delimiter = sheet, ignored, delimiter
    return table


# --------------------------------------------------------------------------- CSV
def _read_csv(path: Path) -> tuple[list[tuple[int, list[str]]], str]:
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise InputError(f"the file is not UTF-8 text (byte {err.start}); save it as UTF-8 CSV",
                         file=path) from None
    lines = text.splitlines()
    first = next((line for line in lines if line.strip()), "")
    delimiter = max(",;\t", key=first.count) if first else ","
    reader = csv.reader(lines, delimiter=delimiter)
    grid: list[tuple[int, list[str]]] = []
    number = 0
    try:
        for number, row in enumerate(reader, start=1):
            _check_row(path, number, row)
            grid.append((number, row))
    except csv.Error as err:
        row_number = number + 1
        if "field larger than field limit" in str(err):
            raise InputError(f"a cell is longer than {MAX_CELL_CHARS} characters; a campaign "
                             "file holds short values (an unclosed quote makes the rest of the "
                             "file one cell)", file=path, row=row_number) from None
        raise InputError(f"cannot read the line as CSV ({err})", file=path,
                         row=row_number) from None
    return grid, delimiter


def _check_row(path: Path, number: int, cells: Sequence[str]) -> None:
    if number > MAX_ROWS + 1:
        raise InputError(f"more than {MAX_ROWS} data rows; split the file", file=path, row=number)
    for position, cell in enumerate(cells):
        if len(cell) > MAX_CELL_CHARS:
            raise InputError(f"the cell in column {position + 1} has {len(cell)} characters; at "
                             f"most {MAX_CELL_CHARS} are accepted", file=path, row=number)
    for position in range(MAX_COLUMNS, len(cells)):
        if cells[position].strip():
            raise InputError(f"more than {MAX_COLUMNS} columns (value "
                             f"'{quote_cell(cells[position])}' in column {position + 1}); a "
                             "campaign file has a few columns", file=path, row=number)


# --------------------------------------------------------------------------- XLSX
def _check_zip(path: Path) -> None:
    """Refuse an XLSX package whose ZIP directory announces too much data."""
    try:
        with zipfile.ZipFile(path) as archive:
            infos = archive.infolist()
    except (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, ValueError, EOFError) as err:
        raise InputError(f"cannot open as an Excel workbook: not a valid XLSX (ZIP) package "
                         f"({quote_cell(err, 120)})", file=path) from None
    if len(infos) > MAX_ZIP_PARTS:
        raise InputError(f"the workbook package has {len(infos)} parts; at most {MAX_ZIP_PARTS}",
                         file=path)
    total = 0
    for info in infos:
        total += info.file_size
        name = quote_cell(info.filename, 80)
        if info.file_size > MAX_XLSX_PART_BYTES:
            raise InputError(f"the workbook part '{name}' expands to {info.file_size} bytes; at "
                             f"most {MAX_XLSX_PART_BYTES} bytes are read", file=path)
        ratio = info.file_size / max(info.compress_size, 1)
        if info.file_size > 1024 * 1024 and ratio > MAX_ZIP_RATIO:
            raise InputError(f"the workbook part '{name}' expands {ratio:.0f} times "
                             f"({info.compress_size} -> {info.file_size} bytes); real sheets "
                             f"expand at most {MAX_ZIP_RATIO:g} times: the file looks like a "
                             "compression bomb or holds a huge run of blanks", file=path)
    if total > MAX_XLSX_TOTAL_BYTES:
        raise InputError(f"the workbook expands to {total} bytes; at most "
                         f"{MAX_XLSX_TOTAL_BYTES} bytes are read", file=path)


def _read_xlsx(path: Path, preferred: Sequence[str]):
    _check_zip(path)
    from openpyxl import load_workbook

    try:
        workbook = load_workbook(path, read_only=True, data_only=True)
    except Exception as err:  # noqa: BLE001  (openpyxl raises many types for a damaged file)
        raise InputError(f"cannot open as an Excel workbook ({type(err).__name__}: "
                         f"{quote_cell(err, 200)})", file=path) from None
    try:
        names = list(workbook.sheetnames)
        if not names:
            raise InputError("the workbook has no sheet", file=path)
        wanted = {p.strip().lower() for p in preferred}
        chosen = [n for n in names if n.strip().lower() in wanted]
        if len(chosen) > 1:
            raise InputError(f"several sheets are named after a record kind "
                             f"({', '.join(quote_cell(c) for c in chosen)}); keep one kind per "
                             "file or give the kind explicitly", file=path)
        sheet = chosen[0] if chosen else names[0]
        grid: list[tuple[int, list[str]]] = []
        numeric: dict[int, set[int]] = {}
        try:
            for number, cells in _sheet_rows(workbook, sheet, path):
                row = [""] * (max(cells) if cells else 0)
                for column, value in cells.items():
                    row[column - 1] = _cell_text(value)
                    if isinstance(value, (int, float)) and not isinstance(value, bool):
                        numeric.setdefault(len(grid), set()).add(column - 1)
                _check_row(path, number, row)
                grid.append((number, row))
        except InputError:
            raise
        except Exception as err:  # noqa: BLE001  (malformed sheet XML, unconvertible numbers)
            raise InputError(f"cannot read sheet '{quote_cell(sheet)}' ({type(err).__name__}: "
                             f"{quote_cell(err, 200)})", file=path) from None
    finally:
        workbook.close()
    return grid, sheet, [n for n in names if n != sheet], numeric


def _sheet_rows(workbook, sheet: str, path: Path) -> Iterator[tuple[int, dict[int, object]]]:
    """Rows of a read-only sheet as (row number, {column: value}) for non-empty cells only.

    Streams the sheet XML with openpyxl's worksheet parser, so rows and cells that
    are not in the file are never built (openpyxl's ``iter_rows`` pads every row
    to the sheet's claimed dimension).
    """
    from openpyxl.worksheet._reader import WorkSheetParser

    worksheet = workbook[sheet]
    if not hasattr(worksheet, "_get_source"):
        raise InputError(f"sheet '{quote_cell(sheet)}' is not a worksheet (a chart sheet?)",
                         file=path)
    kept = 0
    with worksheet._get_source() as source:
        parser = WorkSheetParser(source, worksheet._shared_strings, data_only=True,
                                 epoch=workbook.epoch, date_formats=workbook._date_formats,
                                 timedelta_formats=workbook._timedelta_formats)
        for number, cells in parser.parse():
            values = {}
            for cell in cells:
                value = cell["value"]
                if value is None or (isinstance(value, str) and not value.strip()):
                    continue
                column = cell["column"]
                if column > MAX_COLUMNS:
                    raise InputError(f"a value ('{quote_cell(_cell_text(value))}') lies in "
                                     f"column {column}, far outside the table; at most "
                                     f"{MAX_COLUMNS} columns are read", file=path, row=number)
                values[column] = value
            if values:
                kept += 1
                if kept > MAX_ROWS + 1:
                    raise InputError(f"more than {MAX_ROWS} data rows; split the file",
                                     file=path, row=number)
                yield number, values


def _cell_text(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float):
        return format(value, ".15g")
    if isinstance(value, int):
        return str(value) if abs(value) < 10 ** 40 else format(float(value), ".15g")
    if isinstance(value, dt.datetime):
        return value.date().isoformat() if value.time() == dt.time() else value.isoformat()
    if isinstance(value, (dt.date, dt.time)):
        return value.isoformat()
    return str(value)


# --------------------------------------------------------------------------- table
def _grid_to_table(path: Path, grid, file_format: str,
                   numeric: dict[int, set[int]] | None = None) -> RawTable:
    numeric = numeric or {}
    kept = [i for i, (_, row) in enumerate(grid) if any(cell.strip() for cell in row)]
    if not kept:
        raise InputError("the file is empty: expected a header row and data rows", file=path)
    header_row, header_cells = grid[kept[0]]
    while header_cells and not header_cells[-1].strip():
        header_cells = header_cells[:-1]
    if len(header_cells) > MAX_COLUMNS:
        raise InputError(f"the header has {len(header_cells)} columns; at most {MAX_COLUMNS}",
                         file=path, row=header_row)
    headers, seen = [], {}
    for position, cell in enumerate(header_cells):
        if not cell.strip():
            raise InputError(f"column {position + 1} has no header", file=path, row=header_row)
        header = parse_header(cell, file=path, position=position)
        if header.name in seen:
            raise InputError(f"duplicate column '{quote_cell(header.name)}' (columns "
                             f"{seen[header.name] + 1} and {position + 1})", file=path,
                             row=header_row, column=quote_cell(cell))
        seen[header.name] = position
        headers.append(header)
    rows, numbers, typed = [], [], set()
    for index in kept[1:]:
        number, cells = grid[index]
        extra = [c for c in cells[len(headers):] if c.strip()]
        if extra:
            raise InputError(f"value '{quote_cell(extra[0])}' lies in a column without header",
                             file=path, row=number)
        typed.update((len(rows), column) for column in numeric.get(index, ()))
        rows.append(list(cells[:len(headers)]) + [""] * (len(headers) - len(cells)))
        numbers.append(number)
    if not rows:
        raise InputError("no data rows below the header", file=path)
    return RawTable(path=path, headers=headers, rows=rows, source_rows=numbers,
                    file_format=file_format, numeric_cells=frozenset(typed))
