"""Errors raised on bad input.

`InputError` is what a user sees when a file or an argument is wrong: it names
the file, the row, the column (or key path) and what was expected. The CLI turns
it into a one-paragraph message and exit code 2, never a traceback.
"""

from __future__ import annotations

from pathlib import Path


class InputError(ValueError):
    """Bad input from the user: a file, a key, a row or an argument.

    Parameters
    ----------
    message : str
        What is wrong and what was expected, in plain words.
    file : str or Path, optional
        The file the problem is in.
    row : int, optional
        1-based data row number as the engineer sees it in a spreadsheet
        (the header is row 1, the first data row is row 2).
    column : str, optional
        Column header, or a dotted key path for TOML files (``members.B1.span``).
    """

    def __init__(self, message: str, *, file: str | Path | None = None,
                 row: int | None = None, column: str | None = None):
        self.message = message
        self.file = str(file) if file is not None else None
        self.row = row
        self.column = column
        super().__init__(self.__str__())

    def __str__(self) -> str:
        where = []
        if self.file:
            where.append(f"file {self.file}")
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column/key '{self.column}'")
        prefix = ", ".join(where)
        return f"{prefix}: {self.message}" if prefix else self.message
