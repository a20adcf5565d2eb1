"""Whitelist parser for user-written limit-state and parameter expressions.

An expression such as ``theta * As * fy * (d - 0.5 * As * fy / (fc * b)) - M``
is parsed with Python's own grammar (``ast.parse(text, mode="eval")``), then
every node of the syntax tree is checked against a short whitelist and
compiled into a tree of small numpy closures. The user's text is never
executed: nothing but ``ast.parse`` ever sees it.

The language
------------
- numbers (``3``, ``2.5``, ``1e-6``) and names (variables and constants of the
  problem; ``pi`` is built in),
- unary ``+`` and ``-``; binary ``+ - * /`` and ``**`` (power),
- comparisons ``< <= > >= == !=``, which give 1.0 (true) or 0.0 (false);
  a chain ``a < b < c`` means ``a < b and b < c``,
- parentheses,
- the functions of `FUNCTIONS`: ``min`` and ``max`` (element by element, two or
  more arguments), ``abs``, ``sqrt``, ``exp``, ``log`` (natural), ``log10``,
  ``sin``, ``cos``, ``tan`` (radians), ``erf``, ``erfc``, ``Phi`` (standard
  normal CDF) and ``if_else(condition, value_if_true, value_if_false)``.

``^`` is refused with a hint to write ``**``: Python's grammar gives ``^`` a
lower precedence than ``+``, so ``a + b^2`` would silently mean ``(a + b)^2``.

Evaluation is vectorised: every name may be bound to a numpy array (one entry
per sample) or a float, and the result broadcasts like numpy arithmetic. All
arithmetic is in float64 (a power of huge numbers gives ``inf``, never a hang).
Division by zero, ``log`` of a negative value and the like give ``inf``/``nan``
without a numpy warning; the reliability layer counts them: a NaN margin counts as a
failed point and the result carries one warning with the number of such points (e.g.
``log(S - 10)`` undefined only in the far tail of S), see
`assess.reliability.problem.StandardNormalProblem`.
"""

from __future__ import annotations

import ast
import difflib
import functools
import math
from collections.abc import Callable, Iterable, Mapping
from pathlib import Path

import numpy as np
from scipy import special

from assess.errors import InputError

__all__ = ["ALLOWED_SUMMARY", "BUILTIN_CONSTANTS", "FUNCTIONS", "RESERVED_NAMES", "Expression"]

_Node = Callable[[Mapping[str, object]], np.ndarray]

MAX_EXPRESSION_LENGTH = 10_000


def _min(*args):
    return functools.reduce(np.minimum, args)


def _max(*args):
    return functools.reduce(np.maximum, args)


def _if_else(condition, if_true, if_false):
    return np.where(np.asarray(condition) != 0.0, if_true, if_false)


# name -> (function, minimum number of arguments, maximum number of arguments or None)
FUNCTIONS: dict[str, tuple[Callable, int, int | None]] = {
    "min": (_min, 2, None),
    "max": (_max, 2, None),
    "abs": (np.abs, 1, 1),
    "sqrt": (np.sqrt, 1, 1),
    "exp": (np.exp, 1, 1),
    "log": (np.log, 1, 1),
    "log10": (np.log10, 1, 1),
    "sin": (np.sin, 1, 1),
    "cos": (np.cos, 1, 1),
    "tan": (np.tan, 1, 1),
    "erf": (special.erf, 1, 1),
    "erfc": (special.erfc, 1, 1),
    # ndtr keeps full relative precision far in the lower tail (no 1 - cdf).
    "Phi": (special.ndtr, 1, 1),
    "if_else": (_if_else, 3, 3),
}

BUILTIN_CONSTANTS: dict[str, float] = {"pi": math.pi}

#: Names a problem may not use for its own variables or constants.
RESERVED_NAMES = frozenset(FUNCTIONS) | frozenset(BUILTIN_CONSTANTS)

ALLOWED_SUMMARY = (
    "allowed are numbers, names of variables and constants, pi, unary + and -, "
    "+ - * / ** (power), comparisons < <= > >= == != (giving 1.0 or 0.0), parentheses and "
    "the functions " + ", ".join(FUNCTIONS)
)

_BINARY = {
    ast.Add: np.add,
    ast.Sub: np.subtract,
    ast.Mult: np.multiply,
    ast.Div: np.divide,
    ast.Pow: np.power,
}

_COMPARE = {
    ast.Lt: np.less,
    ast.LtE: np.less_equal,
    ast.Gt: np.greater,
    ast.GtE: np.greater_equal,
    ast.Eq: np.equal,
    ast.NotEq: np.not_equal,
}

# operator -> (what, hint)
_REFUSED_BINARY = {
    ast.BitXor: ("'^'", "write '**' for a power (e.g. 'x**2')"),
    ast.FloorDiv: ("'//' (floor division)", "write '/'"),
    ast.Mod: ("'%' (remainder)", ALLOWED_SUMMARY),
    ast.MatMult: ("'@' (matrix product)", ALLOWED_SUMMARY),
    ast.BitAnd: ("'&'", ALLOWED_SUMMARY),
    ast.BitOr: ("'|'", ALLOWED_SUMMARY),
    ast.LShift: ("'<<'", ALLOWED_SUMMARY),
    ast.RShift: ("'>>'", ALLOWED_SUMMARY),
}

_NODE_WORDS = {
    ast.Attribute: "attribute access ('.name')",
    ast.Subscript: "indexing or slicing ('[...]')",
    ast.Lambda: "a lambda",
    ast.BoolOp: "'and'/'or' (use min/max or if_else on comparisons)",
    ast.IfExp: "'... if ... else ...' (use if_else(condition, a, b))",
    ast.List: "a list", ast.Tuple: "a tuple", ast.Set: "a set", ast.Dict: "a dict",
    ast.ListComp: "a comprehension", ast.SetComp: "a comprehension",
    ast.DictComp: "a comprehension", ast.GeneratorExp: "a generator expression",
    ast.JoinedStr: "a string", ast.FormattedValue: "a string",
    ast.NamedExpr: "an assignment (':=')", ast.Starred: "'*' unpacking",
    ast.Await: "'await'", ast.Yield: "'yield'", ast.YieldFrom: "'yield'",
    ast.Slice: "a slice",
}


class Expression:
    """A parsed, checked and compiled arithmetic expression.

    Parameters
    ----------
    text : str
        The expression, in the language described in the module docstring.
    known_names : iterable of str, optional
        Names the expression may use (variables and constants). If given, any
        other name is an error; if None, every name is accepted and listed in
        `names`.
    file : str or Path, optional
        File the expression comes from, named in error messages.
    key : str, optional
        Dotted key path of the expression in that file, named in error messages.

    Attributes
    ----------
    text : str
        The expression as given.
    names : tuple of str
        Free names the expression uses, in order of first appearance
        (``pi`` is not listed).

    Raises
    ------
    InputError
        Syntax error or a construct outside the whitelist; the message names
        the expression, the column (1-based) and what is allowed.

    Examples
    --------
    >>> Expression("max(a, 2) * b").evaluate({"a": np.array([1.0, 3.0]), "b": 2.0})
    array([4., 6.])
    """

    def __init__(self, text: str, known_names: Iterable[str] | None = None, *,
                 file: str | Path | None = None, key: str | None = None):
        self._file = file
        self._key = key
        if not isinstance(text, str):
            raise self._error(f"an expression must be a string, got {type(text).__name__} "
                              f"{text!r}", text=repr(text))
        self.text = text
        self._known = None if known_names is None else frozenset(known_names)
        if not text.strip():
            raise self._error("the expression is empty")
        if len(text) > MAX_EXPRESSION_LENGTH:
            raise self._error(f"the expression is longer than {MAX_EXPRESSION_LENGTH} characters")
        if "\n" in text.strip() or "\r" in text:
            # Python would accept line breaks inside parentheses; keep one line so that
            # the reported column is unambiguous.
            raise self._error("write the expression on one line")
        self._offset = len(text) - len(text.lstrip())
        stripped = text.strip()
        try:
            tree = ast.parse(stripped, mode="eval")
        except SyntaxError as exc:
            if exc.offset and 0 < exc.offset <= len(stripped):
                where = f"at column {exc.offset + self._offset}"
            else:
                where = "at the end of the expression"
            raise self._error(f"syntax error {where}: {exc.msg}; " + ALLOWED_SUMMARY) from None
        except (RecursionError, MemoryError, ValueError):
            raise self._error("the expression is too deeply nested or not valid text") from None
        names: list[str] = []
        try:
            self._root = self._compile(tree.body, names)
        except RecursionError:
            raise self._error("the expression is too deeply nested") from None
        self.names = tuple(names)

    def __repr__(self) -> str:
        return f"Expression({self.text!r})"

    # -- evaluation ---------------------------------------------------------------------------

    def evaluate(self, env: Mapping[str, object]) -> np.ndarray:
        """Evaluate element by element over arrays.

        Parameters
        ----------
        env : mapping of str to ndarray or float
            Value of every name in `names` (arrays broadcast against each other).

        Returns
        -------
        ndarray
            Float array with the broadcast shape of the inputs (0-d if all inputs
            are scalars) [units of the expression].

        Raises
        ------
        InputError
            A name of the expression is missing from `env`.
        """
        missing = [name for name in self.names if name not in env]
        if missing:
            raise self._error(f"no value given for {', '.join(map(repr, missing))}")
        with np.errstate(all="ignore"):
            return np.asarray(self._root(env), dtype=float)

    # -- compilation --------------------------------------------------------------------------

    def _error(self, message: str, text: str | None = None) -> InputError:
        shown = self.text if text is None and hasattr(self, "text") else text
        return InputError(f"expression {shown!r}: {message}", file=self._file, column=self._key)

    def _refuse(self, node: ast.AST, what: str, hint: str = ALLOWED_SUMMARY,
                column: int | None = None) -> InputError:
        if column is None:
            column = getattr(node, "col_offset", None)
        where = f" at column {column + 1 + self._offset}" if column is not None else ""
        return self._error(f"{what}{where} is not allowed; {hint}")

    def _operator_column(self, node: ast.BinOp) -> int | None:
        """0-based column of a binary operator: the first non-blank after the left operand."""
        end = getattr(node.left, "end_col_offset", None)
        if end is None:
            return None
        rest = self.text.strip()[end:]
        # Skip blanks and closing parentheses of a parenthesised left operand.
        skipped = len(rest) - len(rest.lstrip(" )\t"))
        return end + skipped

    def _compile(self, node: ast.AST, names: list[str]) -> _Node:
        if isinstance(node, ast.Constant):
            value = node.value
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise self._refuse(node, f"the constant {value!r}")
            number = float(value)
            return lambda env: number
        if isinstance(node, ast.Name):
            return self._compile_name(node, names)
        if isinstance(node, ast.UnaryOp):
            operand = self._compile(node.operand, names)
            if isinstance(node.op, ast.USub):
                return lambda env: np.negative(operand(env))
            if isinstance(node.op, ast.UAdd):
                return lambda env: np.positive(operand(env))
            word = "'not'" if isinstance(node.op, ast.Not) else "'~'"
            raise self._refuse(node, word)
        if isinstance(node, ast.BinOp):
            operation = _BINARY.get(type(node.op))
            if operation is None:
                what, hint = _REFUSED_BINARY.get(
                    type(node.op), (f"the operator {type(node.op).__name__}", ALLOWED_SUMMARY))
                raise self._refuse(node, what, hint, column=self._operator_column(node))
            left = self._compile(node.left, names)
            right = self._compile(node.right, names)
            return lambda env: operation(left(env), right(env))
        if isinstance(node, ast.Compare):
            return self._compile_compare(node, names)
        if isinstance(node, ast.Call):
            return self._compile_call(node, names)
        what = _NODE_WORDS.get(type(node), f"the construct {type(node).__name__}")
        raise self._refuse(node, what)

    def _compile_name(self, node: ast.Name, names: list[str]) -> _Node:
        name = node.id
        if name in BUILTIN_CONSTANTS:
            constant = BUILTIN_CONSTANTS[name]
            return lambda env: constant
        if name in FUNCTIONS:
            raise self._refuse(node, f"'{name}' without parentheses (it is a function)")
        if self._known is not None and name not in self._known:
            close = difflib.get_close_matches(name, sorted(self._known), n=1)
            hint = f" (did you mean '{close[0]}'?)" if close else ""
            known = ", ".join(sorted(self._known)) or "none"
            column = node.col_offset + 1 + self._offset
            raise self._error(f"unknown name '{name}' at column {column}{hint}; "
                              f"known names are: {known}")
        if name not in names:
            names.append(name)
        return lambda env: env[name]

    def _compile_compare(self, node: ast.Compare, names: list[str]) -> _Node:
        operands = [self._compile(node.left, names)]
        operations = []
        for op, comparator in zip(node.ops, node.comparators):
            operation = _COMPARE.get(type(op))
            if operation is None:
                raise self._refuse(node, f"the comparison {type(op).__name__} ('is', 'in')")
            operations.append(operation)
            operands.append(self._compile(comparator, names))

        def compare(env):
            values = [operand(env) for operand in operands]
            result = operations[0](values[0], values[1])
            for k in range(1, len(operations)):
                result = np.logical_and(result, operations[k](values[k], values[k + 1]))
            return result.astype(float) if isinstance(result, np.ndarray) else float(result)

        return compare

    def _compile_call(self, node: ast.Call, names: list[str]) -> _Node:
        if not isinstance(node.func, ast.Name):
            raise self._refuse(node, "calling anything but a listed function by name")
        name = node.func.id
        if name not in FUNCTIONS:
            raise self._refuse(node, f"the function '{name}'")
        if node.keywords:
            raise self._refuse(node, f"a keyword argument in '{name}(...)'")
        for argument in node.args:
            if isinstance(argument, ast.Starred):
                raise self._refuse(argument, _NODE_WORDS[ast.Starred])
        function, least, most = FUNCTIONS[name]
        count = len(node.args)
        if count < least or (most is not None and count > most):
            wanted = f"{least}" if least == most else f"at least {least}"
            column = node.col_offset + 1 + self._offset
            raise self._error(f"'{name}' at column {column} takes {wanted} argument(s), "
                              f"got {count}")
        arguments = [self._compile(argument, names) for argument in node.args]
        return lambda env: function(*(argument(env) for argument in arguments))
