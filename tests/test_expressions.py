"""The whitelist expression parser: values against numpy/scipy, refusals of everything else."""

import math

import numpy as np
import pytest
from scipy import special, stats

from assess.errors import InputError
from assess.expressions import FUNCTIONS, RESERVED_NAMES, Expression

X = np.array([-9.0, -2.5, -0.3, 0.0, 0.7, 1.9, 6.0])
POSITIVE = np.array([1e-3, 0.2, 1.0, 2.5, 40.0])


# --- values ------------------------------------------------------------------------------------

def test_arithmetic_precedence_follows_ordinary_algebra():
    # Reference: numpy evaluation of the same formula written in Python.
    a, b, c = np.array([1.0, 2.0, -3.0]), np.array([4.0, 0.5, 2.0]), 3.0
    value = Expression("-a + b * c ** 2 / (a - 7) - +b").evaluate({"a": a, "b": b, "c": c})
    np.testing.assert_allclose(value, -a + b * c ** 2 / (a - 7) - b, rtol=1e-15)


def test_power_is_right_associative_and_binds_tighter_than_unary_minus():
    # Python's (and ordinary mathematical) convention: -2**2 = -4, 2**3**2 = 2**9.
    assert Expression("-2**2").evaluate({}) == -4.0
    assert Expression("2**3**2").evaluate({}) == 512.0


def test_flexural_capacity_formula_against_hand_value():
    # EN 1992-1-1 rectangular block, M = As fy d (1 - 0.5 As fy / (fc b d)); hand calculation:
    # As=565 mm2, fy=560 MPa, d=160 mm, fc=38 MPa, b=1000 mm: As fy = 316400 N,
    # As fy d = 50.624 kNm, 0.5 As fy / (fc b d) = 158200/6080000 = 0.026020 -> 49.307 kNm
    expected = 565 * 560 * 160 * (1 - 0.5 * 565 * 560 / (38 * 1000 * 160)) / 1e6
    value = Expression("As * fy * d * (1 - 0.5 * As * fy / (fc * b * d)) / 1e6").evaluate(
        {"As": 565.0, "fy": 560.0, "d": 160.0, "fc": 38.0, "b": 1000.0})
    assert value == pytest.approx(expected, rel=1e-14)
    assert value == pytest.approx(49.307, abs=1e-3)  # hand value, 3 decimals


@pytest.mark.parametrize("text, reference", [
    ("abs(x)", np.abs(X)),
    ("exp(x)", np.exp(X)),
    ("sin(x)", np.sin(X)),
    ("cos(x)", np.cos(X)),
    ("tan(x)", np.tan(X)),
    ("erf(x)", special.erf(X)),
    ("erfc(x)", special.erfc(X)),
    ("Phi(x)", stats.norm.cdf(X)),
    ("min(x, 0.5, -x)", np.minimum(np.minimum(X, 0.5), -X)),
    ("max(x, 0.5, -x)", np.maximum(np.maximum(X, 0.5), -X)),
    ("if_else(x > 0, x, 2 * x)", np.where(X > 0, X, 2 * X)),
])
def test_functions_match_numpy_and_scipy(text, reference):
    # References: numpy, scipy.special and scipy.stats.norm.
    np.testing.assert_allclose(Expression(text).evaluate({"x": X}), reference, rtol=1e-13, atol=0)


@pytest.mark.parametrize("text, reference", [
    ("sqrt(p)", np.sqrt(POSITIVE)),
    ("log(p)", np.log(POSITIVE)),
    ("log10(p)", np.log10(POSITIVE)),
    ("p ** 0.5 * pi", np.sqrt(POSITIVE) * math.pi),
])
def test_functions_of_positive_values(text, reference):
    np.testing.assert_allclose(Expression(text).evaluate({"p": POSITIVE}), reference, rtol=1e-14)


def test_phi_keeps_precision_in_the_far_lower_tail():
    # scipy.stats.norm.cdf(-30) = 4.906713927148187e-198; a 1 - cdf(30) form would give 0.
    value = Expression("Phi(-z)").evaluate({"z": np.array([30.0, 8.0])})
    np.testing.assert_allclose(value, stats.norm.cdf([-30.0, -8.0]), rtol=1e-12)
    assert value[0] > 0.0


def test_comparisons_give_one_and_zero_and_chains_mean_and():
    a = np.array([1.0, 2.0, 3.0])
    np.testing.assert_array_equal(Expression("a < 2").evaluate({"a": a}), [1.0, 0.0, 0.0])
    np.testing.assert_array_equal(Expression("a <= 2").evaluate({"a": a}), [1.0, 1.0, 0.0])
    np.testing.assert_array_equal(Expression("a > 2").evaluate({"a": a}), [0.0, 0.0, 1.0])
    np.testing.assert_array_equal(Expression("a >= 2").evaluate({"a": a}), [0.0, 1.0, 1.0])
    np.testing.assert_array_equal(Expression("a == 2").evaluate({"a": a}), [0.0, 1.0, 0.0])
    np.testing.assert_array_equal(Expression("a != 2").evaluate({"a": a}), [1.0, 0.0, 1.0])
    np.testing.assert_array_equal(Expression("1 < a <= 2").evaluate({"a": a}), [0.0, 1.0, 0.0])
    assert Expression("a < 2").evaluate({"a": a}).dtype == np.float64


def test_scalars_and_arrays_broadcast():
    value = Expression("a * b").evaluate({"a": np.array([1.0, 2.0]), "b": 3.0})
    np.testing.assert_array_equal(value, [3.0, 6.0])
    assert Expression("2 * 3").evaluate({}).shape == ()


def test_names_in_order_of_first_use_without_pi_or_functions():
    assert Expression("fc * b + max(fc, M) - pi * sqrt(d)").names == ("fc", "b", "M", "d")


def test_division_by_zero_and_log_of_negative_give_non_finite_values_quietly():
    with np.errstate(all="raise"):  # the expression must shield its own warnings
        value = Expression("1 / a + log(a)").evaluate({"a": np.array([0.0, -1.0])})
    assert not np.isfinite(value).any()


def test_huge_integer_powers_are_float_overflow_not_a_hang():
    assert Expression("10 ** 10 ** 10").evaluate({}) == np.inf


def test_evaluating_without_a_value_for_a_name_is_an_input_error():
    with pytest.raises(InputError, match="no value given for 'b'"):
        Expression("a + b").evaluate({"a": 1.0})


def test_reserved_names_are_the_function_table_and_pi():
    assert RESERVED_NAMES == set(FUNCTIONS) | {"pi"}


# --- refusals ----------------------------------------------------------------------------------

@pytest.mark.parametrize("text, fragment", [
    ("__import__('os')", "the function '__import__'"),
    ("().__class__", "attribute access"),
    ("a.real", "attribute access"),
    ("np.exp(a)", "calling anything but a listed function"),
    ("a[0]", "indexing"),
    ("(lambda: 1)()", "calling anything but a listed function"),
    ("lambda: 1", "a lambda"),
    ("'text'", "the constant 'text'"),
    ("b'x'", "the constant b'x'"),
    ("f'{a}'", "a string"),
    ("True", "the constant True"),
    ("None", "the constant None"),
    ("1j", "the constant 1j"),
    ("open('x')", "the function 'open'"),
    ("foo(a)", "the function 'foo'"),
    ("a if a > 0 else 0", "if_else"),
    ("a and b", "'and'/'or'"),
    ("not a", "'not'"),
    ("~a", "'~'"),
    ("a ^ 2", "write '\\*\\*' for a power"),
    ("a // 2", "floor division"),
    ("a % 2", "remainder"),
    ("a @ b", "matrix product"),
    ("a in b", "comparison In"),
    ("a is b", "comparison Is"),
    ("[a, b]", "a list"),
    ("(a, b)", "a tuple"),
    ("{a: b}", "a dict"),
    ("[x for x in a]", "a comprehension"),
    ("(y := 3)", "an assignment"),
    ("max(*a, b)", "unpacking"),
    ("max(a, b, key=a)", "keyword argument"),
    ("exp", "it is a function"),
    ("min(a)", "takes at least 2 argument"),
    ("sqrt(a, b)", "takes 1 argument"),
    ("if_else(a, b)", "takes 3 argument"),
])
def test_non_whitelisted_constructs_are_refused(text, fragment):
    with pytest.raises(InputError, match=fragment) as info:
        Expression(text)
    message = str(info.value)
    assert repr(text) in message  # the message names the expression
    assert "column" in message


def test_refusal_lists_what_is_allowed():
    with pytest.raises(InputError, match="allowed are numbers, names .* Phi, if_else"):
        Expression("a.b")


@pytest.mark.parametrize("text, column", [
    ("a + b.c", 5),
    ("  a + b.c", 7),
    ("(a + b)^2", 8),
    ("a + b + foo(1)", 9),
])
def test_refusal_reports_the_one_based_column(text, column):
    with pytest.raises(InputError, match=f"at column {column} "):
        Expression(text)


@pytest.mark.parametrize("text, fragment", [
    ("a +", "syntax error at the end"),
    ("a + (b", "syntax error"),
    ("a b", "syntax error at column 3"),
    ("", "empty"),
    ("   ", "empty"),
    ("a +\n b", "one line"),
    ("a\x00", "null bytes|not valid text"),
    ("(" * 300 + "a" + ")" * 300, "nested|syntax error"),
])
def test_malformed_text_is_an_input_error(text, fragment):
    with pytest.raises(InputError, match=fragment):
        Expression(text)


def test_non_string_is_an_input_error():
    with pytest.raises(InputError, match="must be a string"):
        Expression(3.0)


def test_unknown_name_is_refused_with_a_suggestion_and_the_known_names():
    with pytest.raises(InputError, match=r"unknown name 'fcm' at column 1 \(did you mean 'fc'\?\); "
                                         r"known names are: M, fc"):
        Expression("fcm * 2 - M", known_names=["fc", "M"])


def test_error_names_file_and_key_path():
    with pytest.raises(InputError) as info:
        Expression("a.b", file="deck.toml", key="limit_states.bending.expression")
    assert info.value.file == "deck.toml"
    assert info.value.column == "limit_states.bending.expression"
    assert "deck.toml" in str(info.value) and "limit_states.bending.expression" in str(info.value)
