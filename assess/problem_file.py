"""Reliability problem files: random variables, limit states and analysis settings in TOML.

A problem file states one reliability problem in plain text, so that it can be
reviewed, archived next to the assessment report and run again. Expressions in
the file go through the whitelist parser of `assess.expressions`; nothing in
the file is executed.

File layout
-----------
All tables but ``[variables]`` and ``[limit_states]`` are optional. Names of
constants and variables are identifiers (letters, digits, underscore; not
starting with a digit) and may not be a function name of the expression
language or ``pi``. Unknown keys are an error, so that a typo is never ignored.

.. code-block:: toml

    [problem]                       # free text, copied into the results
    title = "Deck strip, midspan bending"
    description = "..."

    [constants]                     # name = number
    width = 1000.0                  # [mm]

    [variables.fc]                  # one table per random variable, in dependency order
    distribution = "lognormal"      # normal | lognormal | gumbel | weibull | gamma | uniform |
                                    # beta | truncated_normal | student_t | deterministic
    mean = 38.0                     # mean and std, or the distribution's own parameters
    std = 5.0
    unit = "MPa"                    # optional, shown with the design point
    description = "in-situ compressive strength"   # optional

    [variables.fc_core]             # a parameter may be an expression of constants and of
    distribution = "normal"         # variables declared above it: the variable is then
    mean = "0.9 * fc"               # conditional on those variables (Rosenblatt)
    std = 2.0

    [[correlations]]                # one entry per correlated pair (Nataf)
    between = ["fc", "fy"]
    coefficient = 0.3

    [limit_states.bending]          # one or more; several form a series system
    expression = "theta * As * fy * (d - 0.5 * As * fy / (fc * width)) / 1e6 - M"
    description = "..."             # optional; g <= 0 is failure

    [analysis]                      # all optional; the command line overrides
    method = "form"                 # form | importance_sampling | subset_simulation |
                                    # crude_monte_carlo
    seed = 12345                    # int >= 0
    samples = 2000                  # per level (subset simulation) or in total
    [analysis.options]              # further keyword options of the method
"""

from __future__ import annotations

import dataclasses
import hashlib
import inspect
import keyword
import math
import re
from numbers import Real
from pathlib import Path
from typing import Any, Callable

import numpy as np
import tomllib

from assess.distributions import KINDS, make_distribution
from assess.errors import AnalysisError, InputError
from assess.expressions import RESERVED_NAMES, Expression
from assess.model import ProbabilisticModel
from assess.reliability.dispatch import METHODS as METHOD_FUNCTIONS

__all__ = ["LoadedProblem", "load_problem", "parse_problem", "METHODS", "DISTRIBUTIONS",
           "SAMPLES_OPTION"]

METHODS = tuple(METHOD_FUNCTIONS)
"""Valid method names: form, importance_sampling, subset_simulation, crude_monte_carlo."""

DISTRIBUTIONS = KINDS

#: Keyword option of each method that `samples` sets (None: the method does not sample).
SAMPLES_OPTION = {
    "form": None,
    "importance_sampling": "n",
    "subset_simulation": "n_per_level",
    "crude_monte_carlo": "n",
}

# Distributions whose support is (0, inf): a mean at or below zero is outside it.
_POSITIVE_SUPPORT = {"lognormal", "weibull", "gamma"}

_TOP_KEYS = {"problem", "constants", "variables", "correlations", "limit_states", "analysis"}
_PROBLEM_KEYS = {"title", "description"}
_VARIABLE_META_KEYS = {"distribution", "unit", "description"}
_LIMIT_STATE_KEYS = {"expression", "description"}
_CORRELATION_KEYS = {"between", "coefficient"}
_ANALYSIS_KEYS = {"method", "seed", "samples", "options"}
_BOUND_KEYS = {"lower", "upper"}  # may be -inf / inf (truncated normal)
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")


@dataclasses.dataclass
class LoadedProblem:
    """A problem file, checked and turned into a probabilistic model and limit states.

    Attributes
    ----------
    model : ProbabilisticModel
        The random variables, their dependencies and correlations.
    limit_state : callable
        ``limit_state(x)`` with ``x`` a dict name -> array (n,) of physical values
        returns g, shape (n,) for one limit state or (n, m) for m modes [units of g].
    mode_names : list of str
        Names of the limit states, in file order.
    method : str
        Method named in ``[analysis]`` (default: form for one limit state,
        subset_simulation for a series system).
    seed : int or None
        Seed named in ``[analysis]``.
    samples : int or None
        Sample size named in ``[analysis]`` (per level for subset simulation).
    options : dict
        Further method options from ``[analysis.options]``.
    metadata : dict
        Title, description, file path and SHA-256, constants, variables (with
        distribution, unit, description, parents, parameters) and limit states
        (expression, description), all JSON-ready.
    file : str or None
        The problem file, for error messages.
    """

    model: Any
    limit_state: Callable[[dict], np.ndarray]
    mode_names: list[str]
    method: str
    seed: int | None
    samples: int | None
    options: dict
    metadata: dict
    file: str | None = None

    @property
    def units(self) -> dict[str, str]:
        """Unit of each variable that states one, by name."""
        return {name: info["unit"] for name, info in self.metadata["variables"].items()
                if info.get("unit")}

    def problem(self):
        """A fresh `StandardNormalProblem` (its call counter starts at zero)."""
        return self.model.problem(self.limit_state, mode_names=self.mode_names)

    def run_options(self, method: str | None = None, samples: int | None = None) -> dict:
        """Keyword options for `run_method`.

        The file's ``[analysis.options]``, then `samples` (argument, else the
        file's) under the option name of `method` (argument, else the file's).
        A sample size is ignored for FORM, which does not sample.

        Raises
        ------
        InputError
            An option of the file that `method` does not take (names the key).
        """
        method = method or self.method
        if method not in METHODS:
            raise InputError(f"unknown method '{method}'; expected one of: {', '.join(METHODS)}")
        accepted = set(inspect.signature(METHOD_FUNCTIONS[method]).parameters) - {"problem", "seed"}
        for option in self.options:
            if option not in accepted:
                raise InputError(f"{method} does not take the option '{option}'; its options "
                                 f"are: {', '.join(sorted(accepted))}", file=self.file,
                                 column=f"analysis.options.{option}")
        options = dict(self.options)
        samples = samples if samples is not None else self.samples
        option = SAMPLES_OPTION[method]
        if samples is not None and option is not None:
            options[option] = samples
        return options


def load_problem(path: str | Path) -> LoadedProblem:
    """Read, check and build a problem file.

    Parameters
    ----------
    path : str or Path
        The TOML problem file (layout in the module docstring).

    Returns
    -------
    LoadedProblem

    Raises
    ------
    InputError
        The file is missing, not TOML, or breaks the layout; the message names
        the file and the dotted key path (``variables.fc.std``) and says what was
        expected. Malformed TOML reports the parser's line and column.
    """
    path = Path(path)
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError("no such problem file", file=path) from None
    except OSError as exc:
        raise InputError(f"cannot read the problem file: {exc.strerror}", file=path) from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"the file is not UTF-8 text (byte {exc.start})", file=path) from None
    try:
        document = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=path) from None
    loaded = parse_problem(document, file=path)
    loaded.metadata["file"] = str(path)
    loaded.metadata["sha256"] = hashlib.sha256(raw).hexdigest()
    return loaded


def parse_problem(document: dict, *, file: str | Path | None = None) -> LoadedProblem:
    """Check and build a problem from an already parsed TOML document.

    Parameters
    ----------
    document : dict
        The parsed file.
    file : str or Path, optional
        File name for error messages.

    Returns
    -------
    LoadedProblem
    """
    return _Builder(document, file).build()


class _Builder:
    def __init__(self, document: dict, file):
        self.document = document
        self.file = file
        self.constants: dict[str, float] = {}
        self.variables: dict[str, dict] = {}

    def error(self, message: str, key: str | None) -> InputError:
        return InputError(message, file=self.file, column=key)

    # -- generic checks -----------------------------------------------------------------------

    def table(self, value, key: str, required: bool = False) -> dict:
        if value is None:
            if required:
                raise self.error("this table is required", key)
            return {}
        if not isinstance(value, dict):
            raise self.error(f"expected a table ([{key}]), got {_describe(value)}", key)
        return value

    def known_keys(self, table: dict, allowed: set, key: str | None):
        unknown = sorted(set(table) - allowed)
        if unknown:
            where = f"{key}." if key else ""
            raise self.error(f"unknown key(s) {', '.join(unknown)}; expected one of: "
                             f"{', '.join(sorted(allowed))}", where + unknown[0])

    def number(self, value, key: str, allow_infinite: bool = False) -> float:
        if isinstance(value, bool) or not isinstance(value, Real):
            raise self.error(f"expected a number, got {_describe(value)}", key)
        value = float(value)
        if math.isnan(value) or (math.isinf(value) and not allow_infinite):
            raise self.error(f"expected a finite number, got {value}", key)
        return value

    def text(self, value, key: str) -> str:
        if not isinstance(value, str):
            raise self.error(f"expected a text string, got {_describe(value)}", key)
        return value

    def name(self, name: str, key: str):
        if not _NAME.match(name) or keyword.iskeyword(name):
            raise self.error(f"'{name}' is not a usable name: use letters, digits and "
                             "underscores, not starting with a digit", key)
        if name in RESERVED_NAMES:
            raise self.error(f"'{name}' is the name of a built-in function or constant of "
                             "expressions; choose another name", key)
        if name in self.constants or name in self.variables:
            raise self.error(f"'{name}' is declared twice (constants and variables share "
                             "one set of names)", key)

    # -- sections -----------------------------------------------------------------------------

    def build(self) -> LoadedProblem:
        document = self.table(self.document, "", required=True)
        self.known_keys(document, _TOP_KEYS, None)
        info = self.table(document.get("problem"), "problem")
        self.known_keys(info, _PROBLEM_KEYS, "problem")
        metadata = {key: self.text(info[key], f"problem.{key}") for key in sorted(info)}
        metadata.setdefault("title", "")
        metadata.setdefault("description", "")

        self.parse_constants(self.table(document.get("constants"), "constants"))
        self.model = ProbabilisticModel()
        variables = self.table(document.get("variables"), "variables", required=True)
        if not variables:
            raise self.error("declare at least one random variable", "variables")
        for name, spec in variables.items():
            self.parse_variable(name, spec)
        self.parse_correlations(document.get("correlations"))
        expressions, descriptions = self.parse_limit_states(
            self.table(document.get("limit_states"), "limit_states", required=True))
        analysis = self.parse_analysis(self.table(document.get("analysis"), "analysis"),
                                       n_modes=len(expressions))

        metadata["constants"] = dict(self.constants)
        metadata["variables"] = {name: {k: v for k, v in spec.items() if k != "model_name"}
                                  for name, spec in self.variables.items()}
        metadata["limit_states"] = {name: {"expression": expressions[name].text,
                                           "description": descriptions[name]}
                                    for name in expressions}
        loaded = LoadedProblem(model=self.model, limit_state=self.limit_state(expressions),
                               mode_names=list(expressions), metadata=metadata,
                               file=None if self.file is None else str(self.file), **analysis)
        self.check_model(loaded)
        return loaded

    def parse_constants(self, constants: dict):
        for name, value in constants.items():
            key = f"constants.{name}"
            self.name(name, key)
            self.constants[name] = self.number(value, key)

    def parse_variable(self, name: str, spec):
        base = f"variables.{name}"
        self.name(name, base)
        spec = self.table(spec, base)
        if "distribution" not in spec:
            raise self.error("missing key 'distribution'; expected one of: "
                             + ", ".join(DISTRIBUTIONS), f"{base}.distribution")
        kind = self.text(spec["distribution"], f"{base}.distribution")
        if kind not in DISTRIBUTIONS:
            raise self.error(f"unknown distribution '{kind}'; expected one of: "
                             + ", ".join(DISTRIBUTIONS), f"{base}.distribution")
        unit = self.text(spec["unit"], f"{base}.unit") if "unit" in spec else ""
        description = (self.text(spec["description"], f"{base}.description")
                       if "description" in spec else "")

        known = list(self.constants) + list(self.variables)
        fixed: dict[str, float] = {}
        dependent: dict[str, Expression] = {}
        for parameter, value in spec.items():
            if parameter in _VARIABLE_META_KEYS:
                continue
            key = f"{base}.{parameter}"
            if isinstance(value, str):
                expression = Expression(value, known, file=self.file, key=key)
                if any(n in self.variables for n in expression.names):
                    dependent[parameter] = expression
                else:
                    fixed[parameter] = self.constant_value(expression, key)
            else:
                fixed[parameter] = self.number(value, key,
                                               allow_infinite=parameter in _BOUND_KEYS)
        if not fixed and not dependent:
            raise self.error(f"no parameters given; give 'mean' and 'std' or the parameters of "
                             f"the {kind} distribution", base)
        self.check_fixed_parameters(kind, fixed, base)

        parents = []
        for expression in dependent.values():
            parents += [n for n in expression.names if n in self.variables and n not in parents]
        try:
            if dependent:
                self.model.add_conditional(name, kind, parents,
                                           self.conditional_parameters(fixed, dependent))
            else:
                self.model.add(name, make_distribution(kind, name=name, **fixed))
        except InputError as exc:
            raise self.rekey(exc, base) from None
        except (TypeError, ValueError) as exc:
            raise self.error(f"invalid parameters for a {kind} distribution: {exc}", base) from None
        self.variables[name] = {"distribution": kind, "unit": unit, "description": description,
                                "parents": parents,
                                "parameters": {**fixed,
                                               **{p: e.text for p, e in dependent.items()}}}

    def constant_value(self, expression: Expression, key: str) -> float:
        value = expression.evaluate(self.constants)
        if value.ndim != 0 or not np.isfinite(value):
            raise self.error(f"the expression '{expression.text}' gives {value}, "
                             "expected a finite number", key)
        return float(value)

    def check_fixed_parameters(self, kind: str, fixed: dict, base: str):
        if "std" in fixed and fixed["std"] <= 0.0 and kind != "deterministic":
            raise self.error(f"the standard deviation must be positive, got {fixed['std']:g}",
                             f"{base}.std")
        if "mean" in fixed and kind in _POSITIVE_SUPPORT and fixed["mean"] <= 0.0:
            raise self.error(f"the mean {fixed['mean']:g} is outside the support of the {kind} "
                             "distribution (0, inf); expected a positive mean", f"{base}.mean")

    def conditional_parameters(self, fixed: dict, dependent: dict[str, Expression]):
        constants = self.constants

        def parameters(parent_values: dict) -> dict:
            env = {**constants, **parent_values}
            values = dict(fixed)
            for parameter, expression in dependent.items():
                values[parameter] = expression.evaluate(env)
            return values

        return parameters

    def rekey(self, exc: InputError, base: str) -> InputError:
        """Attach the file and key path to an error raised by the model layer."""
        column = exc.column
        if column and not column.startswith("variables."):
            column = f"{base}.{column}"
        return self.error(getattr(exc, "message", str(exc)), column or base)

    def parse_correlations(self, correlations):
        if correlations is None:
            return
        if not isinstance(correlations, list):
            raise self.error("expected an array of tables ([[correlations]]), "
                             f"got {_describe(correlations)}", "correlations")
        seen: dict[frozenset, int] = {}
        for index, entry in enumerate(correlations):
            base = f"correlations[{index}]"
            entry = self.table(entry, base)
            self.known_keys(entry, _CORRELATION_KEYS, base)
            for required in sorted(_CORRELATION_KEYS):
                if required not in entry:
                    raise self.error(f"missing key '{required}'", f"{base}.{required}")
            pair = entry["between"]
            if (not isinstance(pair, list) or len(pair) != 2
                    or not all(isinstance(n, str) for n in pair)):
                raise self.error("expected two variable names, e.g. between = [\"fc\", \"fy\"]; "
                                 f"got {_describe(pair)}", f"{base}.between")
            for name in pair:
                if name not in self.variables:
                    raise self.error(f"'{name}' is not a declared variable; declared: "
                                     + ", ".join(self.variables), f"{base}.between")
            if pair[0] == pair[1]:
                raise self.error("a variable cannot be correlated with itself",
                                 f"{base}.between")
            if frozenset(pair) in seen:
                raise self.error(f"the pair {pair[0]}, {pair[1]} is already given in "
                                 f"correlations[{seen[frozenset(pair)]}]", f"{base}.between")
            seen[frozenset(pair)] = index
            rho = self.number(entry["coefficient"], f"{base}.coefficient")
            if not -1.0 < rho < 1.0:
                raise self.error(f"a correlation coefficient must lie in (-1, 1), got {rho:g}",
                                 f"{base}.coefficient")
            try:
                self.model.set_correlation(pair[0], pair[1], rho)
            except InputError as exc:
                raise self.error(getattr(exc, "message", str(exc)), base) from None
            except (TypeError, ValueError) as exc:
                raise self.error(str(exc), base) from None

    def parse_limit_states(self, limit_states: dict):
        if not limit_states:
            raise self.error("declare at least one limit state, e.g. [limit_states.bending] "
                             "with expression = \"...\"", "limit_states")
        known = list(self.constants) + list(self.variables)
        expressions: dict[str, Expression] = {}
        descriptions: dict[str, str] = {}
        for name, spec in limit_states.items():
            base = f"limit_states.{name}"
            spec = self.table(spec, base)
            self.known_keys(spec, _LIMIT_STATE_KEYS, base)
            if "expression" not in spec:
                raise self.error("missing key 'expression' (g <= 0 is failure)",
                                 f"{base}.expression")
            text = self.text(spec["expression"], f"{base}.expression")
            expressions[name] = Expression(text, known, file=self.file, key=f"{base}.expression")
            descriptions[name] = (self.text(spec["description"], f"{base}.description")
                                  if "description" in spec else "")
        return expressions, descriptions

    def limit_state(self, expressions: dict[str, Expression]):
        constants = dict(self.constants)
        ordered = list(expressions.values())

        def limit_state(x: dict) -> np.ndarray:
            env = {**constants, **x}
            n = max((np.shape(v)[0] for v in x.values() if np.ndim(v) > 0), default=1)
            columns = [np.array(np.broadcast_to(e.evaluate(env), (n,)), dtype=float)
                       for e in ordered]
            return columns[0] if len(columns) == 1 else np.column_stack(columns)

        return limit_state

    def parse_analysis(self, analysis: dict, n_modes: int) -> dict:
        self.known_keys(analysis, _ANALYSIS_KEYS, "analysis")
        method = analysis.get("method", "form" if n_modes == 1 else "subset_simulation")
        method = self.text(method, "analysis.method")
        if method not in METHODS:
            raise self.error(f"unknown method '{method}'; expected one of: {', '.join(METHODS)}",
                             "analysis.method")
        seed = analysis.get("seed")
        if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int) or seed < 0):
            raise self.error(f"expected a non-negative integer seed, got {_describe(seed)}",
                             "analysis.seed")
        samples = analysis.get("samples")
        if samples is not None and (isinstance(samples, bool) or not isinstance(samples, int)
                                    or samples < 1):
            raise self.error(f"expected a positive integer, got {_describe(samples)}",
                             "analysis.samples")
        options = self.table(analysis.get("options"), "analysis.options")
        for option in ("seed", "method"):
            if option in options:
                raise self.error(f"give '{option}' directly in [analysis], not in its options",
                                 f"analysis.options.{option}")
        return {"method": method, "seed": seed, "samples": samples, "options": dict(options)}

    def check_model(self, loaded: LoadedProblem):
        """Build the standard normal problem once and evaluate g at the median point, so
        that a non-positive-definite correlation matrix or a broken limit state shows up
        on loading."""
        try:
            problem = loaded.problem()
        except InputError as exc:
            column = exc.column or "correlations"
            raise self.error(getattr(exc, "message", str(exc)), column) from None
        except (ValueError, np.linalg.LinAlgError) as exc:
            raise self.error(str(exc), "correlations") from None
        try:
            problem.g_modes(np.zeros((1, problem.dim)))
        except AnalysisError:
            # A non-finite g is reported with its point by the analysis itself (exit 1).
            pass
        except InputError as exc:
            # e.g. an expression parameter that gives an invalid value (std <= 0)
            message = getattr(exc, "message", str(exc))
            raise self.error(f"at the median point of the variables: {message}",
                             exc.column or "variables") from None


def _describe(value) -> str:
    kind = {bool: "a boolean", int: "an integer", float: "a number", str: "a text string",
            list: "an array", dict: "a table"}.get(type(value), type(value).__name__)
    return f"{kind} {value!r}" if not isinstance(value, (dict, list)) else kind
