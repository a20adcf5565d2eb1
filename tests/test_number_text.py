"""Numbers in campaign files: the grammar, per-file convention detection and refusals.

References
----------
- ISO 80000-1:2009, 7.3.1 (from memory): the decimal sign is a comma or a point on the
  line; long numbers may be split into groups of three digits by a small space.
- Python's format mini-language, ``","`` option (PEP 378): ``format(1234.5, ",.1f")`` is
  ``"1,234.5"``; swapping the two separators gives the continental ``"1.234,5"``.
- Python's ``repr`` of a float is the shortest text that reads back to the same float
  (Python docs, "Floating Point Arithmetic"): our grammar must read it back exactly.
"""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from inspection_io.number_text import (
    MAX_DIGITS,
    NumberFormat,
    NumberTextError,
    detect_format,
    parse_number,
)

FUZZ = settings(deadline=None, database=None, derandomize=True)
COMMA = NumberFormat(decimal=",", thousands=".")


@pytest.mark.parametrize("text, value", [
    ("30", 30.0), ("30.5", 30.5), ("-0.350", -0.35), ("+5", 5.0), (".5", 0.5), ("5.", 5.0),
    ("1e-3", 1e-3), ("1.5E3", 1500.0), ("0", 0.0), ("-0", 0.0), ("1 234", 1234.0),
    ("1\u202f234.5", 1234.5), ("1'234", 1234.0), ("1,234,567", 1234567.0), ("1,234.5", 1234.5),
])
def test_reads_numbers_with_a_decimal_point(text, value):
    assert parse_number(text) == value


@pytest.mark.parametrize("text, value", [
    ("3,5", 3.5), ("1.234,5", 1234.5), ("1.234", 1234.0), ("1 234,5", 1234.5),
    ("1.234.567", 1234567.0), ("-0,35", -0.35),
])
def test_reads_numbers_with_a_decimal_comma(text, value):
    assert parse_number(text, COMMA) == value


@pytest.mark.parametrize("text, words", [
    ("3_5", "'_'"), ("\u0663\u0665", "digits other than 0-9"), ("\uff13\uff15", "0-9"),
    ("inf", "infinite"), ("-Infinity", "infinite"), ("nan", "not-a-number"), ("NaN", "infinite"),
    ("1e309", "overflows"), ("-1e999", "overflows"), ("1e-400", "underflows"),
    ("0x10", "decimal"), ("\u22125", "minus"), ("1" * 5000, "5000 digits"),
    ("1.2.3", "thousands"), ("1,23,4", "thousands"), ("12 34", "spaces"), ("30 MPa", ""),
    ("30%", ""), ("--5", ""), ("1e", ""), ("e5", ""), (".", ""), ("1,234.5.6", "separators"),
])
def test_refuses_python_only_and_malformed_literals(text, words):
    # each of these is accepted or half-accepted by Python's float() or int() (or is plain
    # junk); the grammar refuses them with a reason
    with pytest.raises(NumberTextError) as info:
        parse_number(text)
    assert words in str(info.value)


def test_python_float_accepts_what_the_grammar_refuses():
    # the reason for an own grammar: float() reads all of these (Python docs, float())
    assert float("3_5") == 35 and float("\u0663\u0665") == 35 and math.isinf(float("inf"))
    assert math.isinf(float("1e309"))


def test_separator_against_the_file_convention_is_refused():
    with pytest.raises(NumberTextError, match="decimal separator"):
        parse_number("3,5", NumberFormat(decimal="."))
    with pytest.raises(NumberTextError, match="decimal separator"):
        parse_number("30.5", COMMA)
    with pytest.raises(NumberTextError, match="groups digits"):
        parse_number("1,234,567", COMMA)


def cells(*texts):
    return [(text, f"row {i + 2}, column 'x'") for i, text in enumerate(texts)]


def test_detection_settles_the_decimal_separator_from_any_unambiguous_cell():
    fmt = detect_format(cells("1.234", "2,5", "12"), None)
    assert (fmt.decimal, fmt.thousands) == (",", ".")
    assert "'2,5'" in fmt.evidence and "row 3" in fmt.evidence
    assert fmt.describe() == "decimal comma, thousands separator '.'"
    assert parse_number("1.234", fmt) == 1234.0 and parse_number("2,5", fmt) == 2.5
    fmt = detect_format(cells("1,234", "0.25"), None)
    assert (fmt.decimal, fmt.thousands) == (".", ",")
    assert parse_number("1,234", fmt) == 1234.0
    fmt = detect_format(cells("1.234.567"), None)        # two dots: thousands, so decimal comma
    assert (fmt.decimal, fmt.thousands) == (",", ".")
    fmt = detect_format(cells("1 234,5", "7"), None)
    assert (fmt.decimal, fmt.thousands) == (",", " ")
    assert detect_format(cells("12", "-3"), None).describe() == \
        "decimal point, no thousands separator"


def test_ambiguous_file_is_refused_unless_the_format_settles_it():
    # "1.234" in a semicolon-separated file: European thousands or a decimal?
    with pytest.raises(NumberTextError) as info:
        detect_format(cells("1.234", "2.345"), None)
    assert "cannot tell" in str(info.value) and "'1.234'" in str(info.value)
    assert info.value.location == "row 2, column 'x'"
    # a comma-separated CSV cannot hold decimal commas: the same cells read as decimals
    fmt = detect_format(cells("1.234", "2.345"), ".", "comma-separated file")
    assert fmt.decimal == "." and fmt.evidence == "comma-separated file"
    assert parse_number("1.234", fmt) == 1.234
    # a number stored as a binary number in XLSX is a decimal, never thousands
    fmt = detect_format([("1.234", "row 2", True), ("1.500", "row 3", False)], None)
    assert fmt.decimal == "."


def test_mixed_conventions_are_refused_naming_both_cells():
    with pytest.raises(NumberTextError) as info:
        detect_format(cells("3,5", "30.5"), None)
    assert "'3,5'" in str(info.value) and "'30.5'" in str(info.value)
    with pytest.raises(NumberTextError, match="several thousands separators"):
        detect_format(cells("1 234.5", "1,234,567"), None)
    with pytest.raises(NumberTextError, match="mix conventions"):
        detect_format([("3,5", "row 2"), ("1.234", "row 3", True)], None)


@st.composite
def written_numbers(draw):
    """(value, decimals, texts in the four conventions), built with Python's format."""
    decimals = draw(st.integers(0, 4))
    value = round(draw(st.floats(-1e7, 1e7, allow_nan=False)), decimals)
    plain = format(value, f".{decimals}f")
    grouped = format(value, f",.{decimals}f")                 # PEP 378: "1,234.5"
    continental = grouped.translate(str.maketrans(",.", ".,"))   # "1.234,5"
    spaced = grouped.replace(",", "\u202f")                     # ISO 80000-1: "1 234.5"
    return value, decimals, {"plain": plain, "grouped": grouped, "continental": continental,
                             "spaced": spaced, "spaced comma": spaced.replace(".", ",")}


@settings(FUZZ, max_examples=300)
@given(written_numbers(), st.sampled_from(["plain", "grouped", "continental", "spaced",
                                           "spaced comma"]))
def test_round_trip_in_every_convention(number, convention):
    _, _, texts = number
    text = texts[convention]
    decimal = "," if convention in ("continental", "spaced comma") else "."
    # a file whose other cell settles the convention ("0,5" or "0.5")
    fmt = detect_format([(text, "row 2"), ("0" + decimal + "5", "row 3")], None)
    assert fmt.decimal == decimal
    assert parse_number(text, fmt) == float(texts["plain"])


@settings(FUZZ, max_examples=300)
@given(st.floats(allow_nan=False, allow_infinity=False))
def test_python_repr_reads_back_exactly(value):
    text = repr(value)
    assert sum(ch.isdigit() for ch in text.split("e")[0]) <= MAX_DIGITS
    assert parse_number(text) == value


@settings(FUZZ, max_examples=300)
@given(st.text(max_size=12) | st.text(alphabet="0123456789.,-+eE _'\u00a0", max_size=14))
def test_any_text_is_a_finite_number_or_a_number_text_error(text):
    text = text.strip()
    try:
        value = parse_number(text)
    except NumberTextError:
        return
    assert math.isfinite(value)
    assert set(text) <= set("0123456789.,-+eE '\u00a0\u202f")
