"""Numbers as written in campaign files: one convention per file, detected and stated.

A lab sheet writes ``30.5`` or ``30,5``, ``1,234.5`` or ``1.234,5`` or
``1 234,5``. Python's ``float`` reads none of the comma forms and reads far too
much else (``3_5``, Arabic-Indic digits, ``inf``, ``nan``, ``1e999``). This
module has its own small grammar:

    [+|-] digits [group digits ...] [decimal digits] [e|E [+|-] digits]

with ASCII digits only, at most `MAX_DIGITS` digits, a decimal separator
(``.`` or ``,``) and an optional thousands separator (``,``, ``.``, space,
no-break space, narrow no-break space or apostrophe; groups of three digits).

`detect_format` decides a file's convention from all its number cells at once:

- a cell such as ``3,5``, ``0.25``, ``1.234,5`` or ``1,234,567`` settles the
  decimal separator; two cells that settle it differently refuse the file;
- ``1.234`` or ``1,234`` alone is ambiguous (decimal or thousands?). It takes the
  file's settled decimal separator, else the default of the format (a
  comma-separated CSV cannot use decimal commas, an XLSX stores binary numbers
  written with ``.``), else the file is refused: a semicolon- or tab-separated
  file whose only evidence is ``1.234`` could be European thousands or a
  decimal; the message says so and names the cell.

The detected `NumberFormat` is returned so that the import message can state it.
"""

from __future__ import annotations

import math
import re
import unicodedata
from collections.abc import Iterable
from dataclasses import dataclass

__all__ = [
    "GROUP_SPACES",
    "MAX_DIGITS",
    "NumberFormat",
    "NumberTextError",
    "classify",
    "detect_format",
    "parse_number",
]

#: Most digits accepted in one number (mantissa) [-]; a measured value has a handful.
MAX_DIGITS = 30
#: Characters accepted as a thousands separator that can never be a decimal separator.
GROUP_SPACES = (" ", "\u00a0", "\u202f", "'")

_SHAPE = re.compile(r"^[+-]?(?P<mantissa>[0-9.,' \u00a0\u202f]*[0-9][0-9.,' \u00a0\u202f]*|"
                    r"[.,][0-9]+)(?:[eE](?P<exponent>[+-]?[0-9]{1,4}))?$")
_NON_FINITE = re.compile(r"^[+-]?(inf|infinity|nan|snan|qnan)$", re.IGNORECASE)

DECIMAL = "decimal"          # the separator is a decimal separator
THOUSANDS = "thousands"      # the separator is a thousands separator
AMBIGUOUS = "ambiguous"      # "1.234": either
PLAIN = "plain"              # no "." or ","
BOTH = "both"                # "1.234,5": thousands "." and decimal ","


class NumberTextError(ValueError):
    """A cell that is not a number in the accepted grammar.

    The message says why without repeating the cell (it may be empty when there
    is nothing more specific to say than "not a number"); the caller names the cell.

    ``location`` is the `where` object of the cell at fault when `detect_format` raises.
    """

    def __init__(self, message: str, location: object = None):
        super().__init__(message)
        self.location = location


@dataclass(frozen=True)
class NumberFormat:
    """How a file writes its numbers.

    Attributes
    ----------
    decimal : str
        ``"."`` or ``","``.
    thousands : str or None
        Thousands separator seen in the file (``","``, ``"."``, ``" "``...), None if none.
    evidence : str
        Why: the cell that settled it, or the default of the file format.
    """

    decimal: str = "."
    thousands: str | None = None
    evidence: str = "default"

    def describe(self) -> str:
        """``"decimal comma, thousands separator '.'"`` and the like."""
        decimal = "decimal point" if self.decimal == "." else "decimal comma"
        if self.thousands is None:
            return f"{decimal}, no thousands separator"
        name = {" ": "space", "\u00a0": "no-break space", "\u202f": "narrow no-break space",
                "'": "apostrophe"}.get(self.thousands, repr(self.thousands))
        return f"{decimal}, thousands separator {name}"

    def to_dict(self) -> dict:
        return {"decimal": self.decimal, "thousands": self.thousands,
                "description": self.describe(), "evidence": self.evidence}


@dataclass(frozen=True)
class _Token:
    kind: str
    separator: str | None = None     # the "." or "," the kind refers to
    thousands: str | None = None     # for BOTH, and space groups


def _explain(cell: str) -> str:
    """Why a cell is not a number (the specific hint, or the general one)."""
    if _NON_FINITE.match(cell):
        return "infinite or not-a-number values are not measurements"
    if "_" in cell and re.fullmatch(r"[+-]?[0-9_.,]+([eE][+-]?[0-9]+)?", cell):
        return "'_' is not accepted inside a number"
    if any(ch.isdigit() and not ("0" <= ch <= "9") for ch in cell) or \
            any(unicodedata.category(ch) == "Nd" and not ("0" <= ch <= "9") for ch in cell):
        return "it holds digits other than 0-9; write numbers with the digits 0-9"
    if "\u2212" in cell or "\u2013" in cell:
        return "write a minus sign as '-' (hyphen-minus)"
    if re.match(r"^[+-]?0[xob]", cell, re.IGNORECASE):
        return "not a decimal number"
    return ""


def _grouped(text: str, separator: str) -> bool:
    """True if `text` is digits in groups of three split by `separator` (``1.234.567``)."""
    return re.fullmatch(rf"[0-9]{{1,3}}(?:{re.escape(separator)}[0-9]{{3}})+", text) is not None


def _space_groups(integer: str) -> tuple[str, str | None] | None:
    """Strip space-like group separators from an integer part; None if badly grouped."""
    spaces = {ch for ch in integer if ch in GROUP_SPACES}
    if not spaces:
        return integer, None
    if len(spaces) > 1:
        return None
    space = spaces.pop()
    if not _grouped(integer, space):
        return None
    return integer.replace(space, ""), space


def classify(cell: str) -> _Token:
    """Classify one non-empty, stripped cell; raise `NumberTextError` if it is no number."""
    match = _SHAPE.match(cell)
    if match is None:
        raise NumberTextError(_explain(cell))
    mantissa = match.group("mantissa")
    digits = sum(ch.isdigit() for ch in mantissa)
    if digits > MAX_DIGITS:
        raise NumberTextError(f"a number with {digits} digits is not a measured value "
                              f"(at most {MAX_DIGITS} digits)")
    exponent = match.group("exponent") is not None
    dots, commas = mantissa.count("."), mantissa.count(",")
    if dots and commas:
        decimal = "." if mantissa.rfind(".") > mantissa.rfind(",") else ","
        group = "," if decimal == "." else "."
        integer, _, fraction = mantissa.rpartition(decimal)
        if mantissa.count(decimal) != 1 or not fraction.isdigit() or not _grouped(integer, group):
            raise NumberTextError("its separators do not form thousands groups and one "
                                  "decimal separator")
        return _Token(BOTH, decimal, group)
    separator = "." if dots else "," if commas else None
    if separator is None:
        stripped = _space_groups(mantissa)
        if stripped is None:
            raise NumberTextError("spaces inside it do not form thousands groups")
        return _Token(PLAIN, None, stripped[1])
    count = mantissa.count(separator)
    if count > 1:
        if exponent or not _grouped(mantissa, separator):
            raise NumberTextError(f"'{separator}' appears {count} times but not as a thousands "
                                  "separator")
        return _Token(THOUSANDS, separator)
    integer, _, fraction = mantissa.partition(separator)
    stripped = _space_groups(integer)
    if stripped is None or (fraction and not fraction.isdigit()) or not (stripped[0] or fraction):
        raise NumberTextError("")
    if stripped[1] is None and not exponent and re.fullmatch(r"[1-9][0-9]{0,2}", integer) \
            and re.fullmatch(r"[0-9]{3}", fraction):
        return _Token(AMBIGUOUS, separator)
    return _Token(DECIMAL, separator, stripped[1])


def detect_format(cells: Iterable[tuple[str, str]], default_decimal: str | None,
                  default_reason: str = "") -> NumberFormat:
    """Decide the number convention of one file from all its number cells.

    Parameters
    ----------
    cells : iterable of (text, where) or (text, where, typed)
        Stripped, non-empty cell texts of the columns read as numbers, with
        where each is: any object whose ``str`` reads like
        ``"row 3, column 'cover [mm]'"`` (returned as the error's ``location``).
        ``typed`` marks a cell that was stored as a binary number (XLSX) and
        written with a decimal point: its ``"1.234"`` is a decimal, never ambiguous.
    default_decimal : str or None
        Decimal separator to assume when no cell settles it (``"."`` for a
        comma-separated CSV or an XLSX file); None = no default (refuse ambiguity).
    default_reason : str
        Why the default applies, for the evidence text.

    Returns
    -------
    NumberFormat

    Raises
    ------
    NumberTextError
        Cells that are not numbers are left to `parse_number`; raised here for
        cells that settle the decimal separator differently, or an ambiguous
        cell with no evidence and no default. The message names the cells.
    """
    settled: dict[str, tuple[str, object]] = {}       # decimal -> first cell settling it
    groups: dict[str, tuple[str, object]] = {}        # thousands -> first cell using it
    ambiguous: list[tuple[str, object, str]] = []
    for text, where, *typed in cells:
        try:
            token = classify(text)
        except NumberTextError:
            continue
        if token.kind == AMBIGUOUS and typed and typed[0]:
            token = _Token(DECIMAL, token.separator)       # a stored binary number "1.234"
        if token.kind in (DECIMAL, BOTH):
            settled.setdefault(token.separator, (text, where))
        elif token.kind == THOUSANDS:
            settled.setdefault(_other(token.separator), (text, where))
            groups.setdefault(token.separator, (text, where))
        elif token.kind == AMBIGUOUS:
            ambiguous.append((text, where, token.separator))
        if token.thousands is not None:
            groups.setdefault(token.thousands, (text, where))
    if len(settled) > 1:
        (point, at_point), (comma, at_comma) = settled["."], settled[","]
        later = max((at_point, at_comma), key=lambda w: getattr(w, "row", 0))
        raise NumberTextError(
            f"the numbers of this file mix conventions: '{point}' ({at_point}) reads with a "
            f"decimal point, '{comma}' ({at_comma}) with a decimal comma; write every number "
            "the same way", later)
    if settled:
        decimal = next(iter(settled))
        text, where = settled[decimal]
        evidence = f"seen in '{text}', {where}"
    elif ambiguous and default_decimal is None:
        text, where, separator = ambiguous[0]
        raise NumberTextError(
            f"cannot tell whether '{separator}' in '{text}' ({where}) is a decimal separator or "
            f"a thousands separator, and no other number in the file settles it; write e.g. "
            f"'{text.replace(separator, '')}' for a whole number, or give a value with a "
            f"different number of decimals", where)
    elif ambiguous:
        decimal, evidence = default_decimal, default_reason or "default"
    else:
        decimal = default_decimal or "."
        evidence = default_reason if default_decimal else "no number in the file has a fraction"
    for text, where, separator in ambiguous:
        if separator != decimal:
            groups.setdefault(separator, (text, where))
    groups.pop(decimal, None)
    if len(groups) > 1:
        shown = ", ".join(f"'{text}' ({where})" for text, where in groups.values())
        raise NumberTextError(f"the numbers of this file use several thousands separators "
                              f"({shown}); write every number the same way",
                              list(groups.values())[1][1])
    thousands = next(iter(groups), None)
    return NumberFormat(decimal=decimal, thousands=thousands, evidence=evidence)


def _other(separator: str) -> str:
    return "," if separator == "." else "."


def parse_number(cell: str, number_format: NumberFormat | None = None) -> float:
    """One stripped, non-empty cell as a finite float under the file's convention.

    Parameters
    ----------
    cell : str
        The cell text (surrounding spaces already removed).
    number_format : NumberFormat, optional
        The file's convention (default: decimal point, no thousands separator).

    Raises
    ------
    NumberTextError
        Not a number in the grammar, a separator used against the file's
        convention, or a value that overflows (``1e999``) or underflows to zero.
    """
    fmt = number_format or NumberFormat()
    token = classify(cell)
    text = cell
    for space in GROUP_SPACES:
        text = text.replace(space, "")
    if token.kind in (DECIMAL, AMBIGUOUS) and token.separator != fmt.decimal:
        if token.kind == DECIMAL:
            raise NumberTextError(
                f"it uses '{token.separator}' as a decimal separator but this file writes "
                f"numbers with {fmt.describe()} ({fmt.evidence})")
        text = text.replace(token.separator, "")          # "1.234" with decimal ",": 1234
    elif token.kind == THOUSANDS:
        if token.separator == fmt.decimal:
            raise NumberTextError(f"it groups digits with '{token.separator}', the decimal "
                                  f"separator of this file ({fmt.describe()})")
        text = text.replace(token.separator, "")
    elif token.kind == BOTH:
        if token.separator != fmt.decimal:
            raise NumberTextError(f"it uses '{token.separator}' as a decimal separator but "
                                  f"this file writes numbers with {fmt.describe()} "
                                  f"({fmt.evidence})")
        text = text.replace(token.thousands, "")
    text = text.replace(",", ".")
    value = float(text)
    if not math.isfinite(value):
        raise NumberTextError("too large: it overflows")
    if value == 0.0 and re.search(r"[1-9]", text.split("e")[0].split("E")[0]):
        raise NumberTextError("too small: it underflows to 0")
    return value
