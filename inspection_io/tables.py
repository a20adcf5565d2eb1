"""Load a campaign file (CSV or XLSX) into raw string cells and parse its headers.

Nothing is interpreted here beyond the header line: every cell is kept as the
text the engineer sees (``""`` for an empty cell), with the row number a
spreadsheet would show (header = row 1 when it is the first line).
"""

from __future__ import annotations

import csv
import datetime as dt
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Sequence

import pandas as pd

from inspection_io.errors import InputError

__all__ = ["Header", "RawTable", "parse_header", "load_table"]

_HEADER_RE = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")


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
        Text inside the square brackets, stripped; None when there are none.
    position : int
        0-based column position in the file.
    """

    raw: str
    name: str
    unit: str | None
    position: int


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
    """Parse ``name [unit]`` into a `Header`; raise `InputError` on a malformed one."""
    match = _HEADER_RE.match(text.strip())
    if match is None:
        raise InputError(f"cannot read header '{text}': write it as 'name' or 'name [unit]'",
                         file=file, row=1, column=text)
    name = re.sub(r"\s+", "_", match.group("name").strip().lower())
    if not name:
        raise InputError(f"header '{text}' has no column name", file=file, row=1, column=text)
    unit = match.group("unit")
    return Header(raw=text, name=name, unit=unit.strip() if unit is not None else None,
                  position=position)


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
        Missing file, unsupported format, no header, no data rows, duplicate or
        empty headers, values below no header.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("file not found", file=path)
    suffix = path.suffix.lower()
    if suffix == ".csv":
        grid, delimiter = _read_csv(path)
        sheet, ignored = None, []
    elif suffix in (".xlsx", ".xlsm"):
        grid, sheet, ignored = _read_xlsx(path, preferred_sheets)
        delimiter = None
    else:
        raise InputError(f"unsupported file type '{path.suffix}': give a .csv or .xlsx file",
                         file=path)
    table = _grid_to_table(path, grid, suffix.lstrip("."))
    table.sheet, table.ignored_sheets, table.delimiter = sheet, ignored, delimiter
    return table


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
    return [(number, row) for number, row in enumerate(reader, start=1)], delimiter


def _read_xlsx(path: Path, preferred: Sequence[str]):
    from openpyxl import load_workbook

    try:
        workbook = load_workbook(path, read_only=True, data_only=True)
    except Exception as err:  # openpyxl raises several types for a damaged file
        raise InputError(f"cannot open as an Excel workbook ({type(err).__name__}: {err})",
                         file=path) from None
    try:
        names = list(workbook.sheetnames)
        wanted = {p.strip().lower() for p in preferred}
        chosen = [n for n in names if n.strip().lower() in wanted]
        if len(chosen) > 1:
            raise InputError(f"several sheets are named after a record kind ({', '.join(chosen)}); "
                             "keep one kind per file or give the kind explicitly", file=path)
        sheet = chosen[0] if chosen else names[0]
        grid = [(number, [_cell_text(v) for v in values]) for number, values in
                enumerate(workbook[sheet].iter_rows(values_only=True), start=1)]
    finally:
        workbook.close()
    return grid, sheet, [n for n in names if n != sheet]


def _cell_text(value) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, float):
        return format(value, ".15g")
    if isinstance(value, dt.datetime):
        return value.date().isoformat() if value.time() == dt.time() else value.isoformat()
    if isinstance(value, (dt.date, dt.time)):
        return value.isoformat()
    return str(value)


def _grid_to_table(path: Path, grid, file_format: str) -> RawTable:
    grid = [(n, row) for n, row in grid if any(cell.strip() for cell in row)]
    if not grid:
        raise InputError("the file is empty: expected a header row and data rows", file=path)
    header_row, header_cells = grid[0]
    while header_cells and not header_cells[-1].strip():
        header_cells = header_cells[:-1]
    headers, seen = [], {}
    for position, cell in enumerate(header_cells):
        if not cell.strip():
            raise InputError(f"column {position + 1} has no header", file=path, row=header_row)
        header = parse_header(cell, file=path, position=position)
        if header.name in seen:
            raise InputError(f"duplicate column '{header.name}' (columns {seen[header.name] + 1} "
                             f"and {position + 1})", file=path, row=header_row, column=cell)
        seen[header.name] = position
        headers.append(header)
    rows, numbers = [], []
    for number, cells in grid[1:]:
        extra = [c for c in cells[len(headers):] if c.strip()]
        if extra:
            raise InputError(f"value '{extra[0]}' lies in a column without header", file=path,
                             row=number)
        rows.append(list(cells[:len(headers)]) + [""] * (len(headers) - len(cells)))
        numbers.append(number)
    if not rows:
        raise InputError("no data rows below the header", file=path)
    return RawTable(path=path, headers=headers, rows=rows, source_rows=numbers,
                    file_format=file_format)
