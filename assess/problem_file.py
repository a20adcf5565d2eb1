"""Problem files: uncertain quantities, failure modes and how to solve them, in TOML.

A problem file states one reliability problem in plain text, so that it can be
reviewed, archived next to the assessment report and run again. Expressions in
the file go through the whitelist parser of `assess.expressions`; nothing in
the file is executed.

File layout
-----------
All tables but ``[uncertain]`` and ``[modes]`` are optional. Names of fixed values and
uncertain quantities are identifiers (letters, digits, underscore; not starting with
a digit) and may not be a function name of the expression language or ``pi``. Unknown
keys are an error, so that a typo is never ignored. The words are those of the site
file and the report (``kind``, ``mean``, ``std``, ``cov``, failure modes, safety
margin); docs/problem-file.md has two worked examples.

.. code-block:: toml

    [about]                         # free text, copied into the results
    title = "Deck strip, midspan bending"
    description = "..."

    [fixed]                         # fixed values: name = number
    width = 1000.0                  # [mm]

    [uncertain.fc]                  # one table per uncertain quantity, in dependency order
    kind = "lognormal"              # normal | lognormal | gumbel | weibull | gamma | uniform |
                                    # beta | truncated_normal | student_t | deterministic
    mean = 38.0                     # mean and std (or cov), or the kind's own parameters
    std = 5.0                       # or: cov = 0.13 (std = cov x |mean|)
    unit = "MPa"                    # optional, shown with the design point
    description = "in-situ compressive strength"   # optional

    [uncertain.fc_core]             # a parameter may be an expression of fixed values and of
    kind = "normal"                 # quantities declared above it: the quantity is then
    mean = "0.9 * fc"               # conditional on them (Rosenblatt)
    std = 2.0

    [[correlated]]                  # one entry per correlated pair (Nataf)
    pair = ["fc", "fy"]
    rho = 0.3

    [modes.bending]                 # failure modes; several form a series system
    margin = "theta * As * fy * (d - 0.5 * As * fy / (fc * width)) / 1e6 - M"
    description = "..."             # optional; the mode fails when margin <= 0

    [solve]                         # all optional; the command line overrides
    approach = "auto"               # auto | form | sorm | importance_sampling |
                                    # subset_simulation | crude_monte_carlo | polynomial_chaos
    seed = 12345                    # int >= 0
    samples = 2000                  # per level (subset simulation, auto) or in total
    [solve.settings]                # further keyword options of the approach

Files in the earlier layout (``[variables]``, ``[limit_states]``, ``[analysis]`` ...)
are refused; the message shows the same file in this layout.
"""

from __future__ import annotations

import dataclasses
import hashlib
import inspect
import json
import keyword
import math
import re
from collections.abc import Callable
from numbers import Real
from pathlib import Path
from typing import Any

import numpy as np
import tomllib

from assess.distributions import KINDS, make_distribution
from assess.errors import AnalysisError, InputError
from assess.expressions import RESERVED_NAMES, Expression
from assess.json_values import to_json_native
from assess.model import ProbabilisticModel
from assess.reliability.dispatch import METHODS as METHOD_FUNCTIONS

__all__ = [
    "DISTRIBUTIONS",
    "METHODS",
    "SAMPLES_OPTION",
    "LoadedProblem",
    "load_problem",
    "parse_problem",
    "result_block",
]

METHODS = tuple(METHOD_FUNCTIONS)
"""Valid approach names: auto, form, sorm, importance_sampling, cross_entropy,
subset_simulation, crude_monte_carlo, polynomial_chaos."""

DISTRIBUTIONS = KINDS

#: Keyword option of each method that `samples` sets (None: the method does not sample).
SAMPLES_OPTION = {
    "auto": "n_per_level",
    "form": None,
    "sorm": None,
    "importance_sampling": "n",
    "cross_entropy": "n_per_level",
    "subset_simulation": "n_per_level",
    "crude_monte_carlo": "n",
    "polynomial_chaos": "n_samples",
}

# Distributions whose support is (0, inf): a mean at or below zero is outside it.
_POSITIVE_SUPPORT = {"lognormal", "weibull", "gamma"}

_TOP_KEYS = {"about", "fixed", "uncertain", "correlated", "modes", "solve"}
_ABOUT_KEYS = {"title", "description"}
_VARIABLE_META_KEYS = {"kind", "unit", "description"}
_MODE_KEYS = {"margin", "description"}
_CORRELATION_KEYS = {"pair", "rho"}
_SOLVE_KEYS = {"approach", "seed", "samples", "settings"}
# The earlier layout: table -> its name now (the keys inside are renamed by `_translate`).
_OLD_TABLES = {"problem": "about", "constants": "fixed", "variables": "uncertain",
               "correlations": "correlated", "limit_states": "modes", "analysis": "solve"}
_BOUND_KEYS = {"lower", "upper"}  # may be -inf / inf (truncated normal)
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")


@dataclasses.dataclass
class LoadedProblem:
    """A problem file, checked and turned into a probabilistic model and failure modes.

    Attributes
    ----------
    model : ProbabilisticModel
        The uncertain quantities, their dependencies and correlations.
    limit_state : callable
        ``limit_state(x)`` with ``x`` a dict name -> array (n,) of physical values
        returns the safety margins g, shape (n,) for one mode or (n, m) for m modes
        [units of g].
    mode_names : list of str
        Names of the failure modes, in file order.
    method : str
        Approach named in ``[solve]`` (default ``auto``).
    seed : int or None
        Seed named in ``[solve]``.
    samples : int or None
        Sample size named in ``[solve]`` (per level for subset simulation and auto).
    options : dict
        Further options of the approach from ``[solve.settings]``.
    metadata : dict
        Title, description, file path and SHA-256, fixed values, uncertain
        quantities (kind, unit, description, parents, parameters) and modes
        (margin, description), all JSON-ready.
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
        """Unit of each uncertain quantity that states one, by name."""
        return {name: info["unit"] for name, info in self.metadata["uncertain"].items()
                if info.get("unit")}

    def problem(self):
        """A fresh `StandardNormalProblem` (its call counter starts at zero); it carries the
        model as ``problem.model`` (polynomial families matched to the marginals)."""
        problem = self.model.problem(self.limit_state, mode_names=self.mode_names)
        problem.model = self.model
        return problem

    def run_options(self, method: str | None = None, samples: int | None = None) -> dict:
        """Keyword options for `run_method`.

        The file's ``[solve.settings]``, then `samples` (argument, else the file's)
        under the option name of `method` (argument, else the file's). A sample
        size is ignored for FORM and SORM, which do not sample.

        Raises
        ------
        InputError
            A setting of the file that `method` does not take (names the key).
        """
        method = method or self.method
        if method not in METHODS:
            raise InputError(f"unknown approach '{method}'; expected one of: "
                             f"{', '.join(METHODS)}")
        accepted = set(inspect.signature(METHOD_FUNCTIONS[method]).parameters) - {"problem", "seed"}
        for option in self.options:
            if option not in accepted:
                raise InputError(f"{method} does not take the setting '{option}'; its settings "
                                 f"are: {', '.join(sorted(accepted))}", file=self.file,
                                 column=f"solve.settings.{option}")
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
        the file and the dotted key path (``uncertain.fc.std``) and says what was
        expected. Malformed TOML reports the parser's line and column. A file in
        the earlier layout is refused with the same file shown in the new one.
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
            raise self.error(f"'{name}' is declared twice (fixed values and uncertain "
                             "quantities share one set of names)", key)

    # -- sections -----------------------------------------------------------------------------

    def build(self) -> LoadedProblem:
        document = self.table(self.document, "", required=True)
        old = sorted(set(document) & set(_OLD_TABLES))
        if old:
            raise self.error(
                "this problem file uses the earlier layout (" + ", ".join(f"[{t}]" for t in old)
                + "), which is no longer read. The same file in the current layout "
                "(docs/problem-file.md):\n\n" + _translate(document), old[0])
        self.known_keys(document, _TOP_KEYS, None)
        info = self.table(document.get("about"), "about")
        self.known_keys(info, _ABOUT_KEYS, "about")
        metadata = {key: self.text(info[key], f"about.{key}") for key in sorted(info)}
        metadata.setdefault("title", "")
        metadata.setdefault("description", "")

        self.parse_constants(self.table(document.get("fixed"), "fixed"))
        self.model = ProbabilisticModel()
        variables = self.table(document.get("uncertain"), "uncertain", required=True)
        if not variables:
            raise self.error("declare at least one uncertain quantity, e.g. [uncertain.fc] "
                             "with kind, mean and std", "uncertain")
        for name, spec in variables.items():
            self.parse_variable(name, spec)
        self.parse_correlations(document.get("correlated"))
        expressions, descriptions = self.parse_modes(
            self.table(document.get("modes"), "modes", required=True))
        analysis = self.parse_solve(self.table(document.get("solve"), "solve"))

        metadata["fixed"] = dict(self.constants)
        metadata["uncertain"] = {name: {k: v for k, v in spec.items() if k != "model_name"}
                                 for name, spec in self.variables.items()}
        metadata["modes"] = {name: {"margin": expressions[name].text,
                                    "description": descriptions[name]}
                             for name in expressions}
        loaded = LoadedProblem(model=self.model, limit_state=self.limit_state(expressions),
                               mode_names=list(expressions), metadata=metadata,
                               file=None if self.file is None else str(self.file), **analysis)
        self.check_model(loaded)
        return loaded

    def parse_constants(self, constants: dict):
        for name, value in constants.items():
            key = f"fixed.{name}"
            self.name(name, key)
            self.constants[name] = self.number(value, key)

    def parse_variable(self, name: str, spec):
        base = f"uncertain.{name}"
        self.name(name, base)
        spec = self.table(spec, base)
        if "kind" not in spec:
            raise self.error("missing key 'kind'; expected one of: " + ", ".join(DISTRIBUTIONS),
                             f"{base}.kind")
        kind = self.text(spec["kind"], f"{base}.kind")
        if kind not in DISTRIBUTIONS:
            raise self.error(f"unknown kind '{kind}'; expected one of: "
                             + ", ".join(DISTRIBUTIONS), f"{base}.kind")
        unit = self.text(spec["unit"], f"{base}.unit") if "unit" in spec else ""
        description = (self.text(spec["description"], f"{base}.description")
                       if "description" in spec else "")
        spec = self.cov_to_std(spec, base)

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
            raise self.error(f"no parameters given; give 'mean' and 'std' (or 'cov') or the "
                             f"parameters of the {kind} kind", base)
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
            raise self.error(f"invalid parameters for the {kind} kind: {exc}", base) from None
        self.variables[name] = {"kind": kind, "unit": unit, "description": description,
                                "parents": parents,
                                "parameters": {**fixed,
                                               **{p: e.text for p, e in dependent.items()}}}

    def cov_to_std(self, spec: dict, base: str) -> dict:
        """``cov`` (coefficient of variation, the site file's word) becomes
        std = cov x |mean|."""
        if "cov" not in spec:
            return spec
        if "std" in spec:
            raise self.error("give 'std' or 'cov', not both", f"{base}.cov")
        if "mean" not in spec:
            raise self.error("'cov' needs a 'mean' (std = cov x |mean|)", f"{base}.cov")
        spec = dict(spec)
        cov, mean = spec.pop("cov"), spec["mean"]
        if isinstance(cov, str) or isinstance(mean, str):
            spec["std"] = f"({cov}) * abs({mean})"
        else:
            cov = self.number(cov, f"{base}.cov")
            if cov <= 0:
                raise self.error(f"the coefficient of variation must be positive, got {cov:g}",
                                 f"{base}.cov")
            spec["std"] = cov * abs(self.number(mean, f"{base}.mean"))
        return spec

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
                             "kind (0, inf); expected a positive mean", f"{base}.mean")

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
        if column and not column.startswith("uncertain."):
            column = f"{base}.{column}"
        return self.error(getattr(exc, "message", str(exc)), column or base)

    def parse_correlations(self, correlations):
        if correlations is None:
            return
        if not isinstance(correlations, list):
            raise self.error("expected an array of tables ([[correlated]]), "
                             f"got {_describe(correlations)}", "correlated")
        seen: dict[frozenset, int] = {}
        for index, entry in enumerate(correlations):
            base = f"correlated[{index}]"
            entry = self.table(entry, base)
            self.known_keys(entry, _CORRELATION_KEYS, base)
            for required in sorted(_CORRELATION_KEYS):
                if required not in entry:
                    raise self.error(f"missing key '{required}'", f"{base}.{required}")
            pair = entry["pair"]
            if (not isinstance(pair, list) or len(pair) != 2
                    or not all(isinstance(n, str) for n in pair)):
                raise self.error("expected two names, e.g. pair = [\"fc\", \"fy\"]; "
                                 f"got {_describe(pair)}", f"{base}.pair")
            for name in pair:
                if name not in self.variables:
                    raise self.error(f"'{name}' is not a declared uncertain quantity; declared: "
                                     + ", ".join(self.variables), f"{base}.pair")
            if pair[0] == pair[1]:
                raise self.error("a quantity cannot be correlated with itself", f"{base}.pair")
            if frozenset(pair) in seen:
                raise self.error(f"the pair {pair[0]}, {pair[1]} is already given in "
                                 f"correlated[{seen[frozenset(pair)]}]", f"{base}.pair")
            seen[frozenset(pair)] = index
            rho = self.number(entry["rho"], f"{base}.rho")
            if not -1.0 < rho < 1.0:
                raise self.error(f"a correlation coefficient must lie in (-1, 1), got {rho:g}",
                                 f"{base}.rho")
            try:
                self.model.set_correlation(pair[0], pair[1], rho)
            except InputError as exc:
                raise self.error(getattr(exc, "message", str(exc)), base) from None
            except (TypeError, ValueError) as exc:
                raise self.error(str(exc), base) from None

    def parse_modes(self, modes: dict):
        if not modes:
            raise self.error("declare at least one failure mode, e.g. [modes.bending] "
                             "with margin = \"...\"", "modes")
        known = list(self.constants) + list(self.variables)
        expressions: dict[str, Expression] = {}
        descriptions: dict[str, str] = {}
        for name, spec in modes.items():
            base = f"modes.{name}"
            spec = self.table(spec, base)
            self.known_keys(spec, _MODE_KEYS, base)
            if "margin" not in spec:
                raise self.error("missing key 'margin' (the safety margin; the mode fails when "
                                 "it is <= 0)", f"{base}.margin")
            text = self.text(spec["margin"], f"{base}.margin")
            expressions[name] = Expression(text, known, file=self.file, key=f"{base}.margin")
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

    def parse_solve(self, solve: dict) -> dict:
        self.known_keys(solve, _SOLVE_KEYS, "solve")
        method = self.text(solve.get("approach", "auto"), "solve.approach")
        if method not in METHODS:
            raise self.error(f"unknown approach '{method}'; expected one of: "
                             f"{', '.join(METHODS)}", "solve.approach")
        seed = solve.get("seed")
        if seed is not None and (isinstance(seed, bool) or not isinstance(seed, int) or seed < 0):
            raise self.error(f"expected a non-negative integer seed, got {_describe(seed)}",
                             "solve.seed")
        samples = solve.get("samples")
        if samples is not None and (isinstance(samples, bool) or not isinstance(samples, int)
                                    or samples < 1):
            raise self.error(f"expected a positive integer, got {_describe(samples)}",
                             "solve.samples")
        options = self.table(solve.get("settings"), "solve.settings")
        for option in ("seed", "method", "approach"):
            if option in options:
                raise self.error(f"give '{option}' directly in [solve], not in its settings",
                                 f"solve.settings.{option}")
        return {"method": method, "seed": seed, "samples": samples, "options": dict(options)}

    def check_model(self, loaded: LoadedProblem):
        """Build the standard normal problem once and evaluate g at the median point, so
        that a non-positive-definite correlation matrix or a broken margin shows up on
        loading."""
        try:
            problem = loaded.problem()
        except InputError as exc:
            column = exc.column or "correlated"
            raise self.error(getattr(exc, "message", str(exc)), column) from None
        except (ValueError, np.linalg.LinAlgError) as exc:
            raise self.error(str(exc), "correlated") from None
        try:
            problem.g_modes(np.zeros((1, problem.dim)))
        except AnalysisError:
            # A non-finite g is reported with its point by the analysis itself.
            pass
        except InputError as exc:
            # e.g. an expression parameter that gives an invalid value (std <= 0)
            message = getattr(exc, "message", str(exc))
            raise self.error(f"at the median point of the quantities: {message}",
                             exc.column or "uncertain") from None


# -- the result block --------------------------------------------------------------------------

def result_block(result, loaded: LoadedProblem | None = None) -> dict:
    """The result of an analysis in the words of the report, JSON-ready (no NaN or inf).

    Parameters
    ----------
    result : ReliabilityResult
    loaded : LoadedProblem, optional
        The problem file, shown as ``case``.

    Returns
    -------
    dict
        ``case`` (the problem file's content), ``approach``, ``answer``
        (reliability_index, probability_of_failure, cov_of_estimate, method_used,
        limit_state_evaluations, seed, stopping_rule_met and, when nothing failed,
        beta_lower_bound), ``design_point`` (physical values) and
        ``design_point_standard_normal``, ``importance_factors``,
        ``which_uncertainty_drives_the_risk`` (importance factors and Sobol indices
        side by side, `assess.surrogate.sensitivity.drivers`), ``independent_check``,
        ``modes`` and ``design_points`` (FORM, SORM), ``warnings``, ``settings`` and
        ``engine_details`` (everything else the method reported).
    """
    from assess.surrogate.sensitivity import drivers

    plain = result.to_dict()
    details = plain.get("details") or {}
    answer = {"reliability_index": plain["beta"], "probability_of_failure": plain["pf"],
              "cov_of_estimate": plain["cov"],
              "method_used": details.get("chosen") or result.method,
              "limit_state_evaluations": plain["n_calls"], "seed": plain["seed"],
              "stopping_rule_met": plain["converged"]}
    if details.get("beta_lower") is not None:
        answer["beta_lower_bound"] = details["beta_lower"]
        answer["pf_upper_bound"] = details.get("pf_upper")
    block = {"case": to_json_native(loaded.metadata, "case") if loaded is not None else {},
             "approach": result.method, "answer": answer,
             "design_point": plain["design_point_x"],
             "design_point_standard_normal": plain["design_point_u"],
             "importance_factors": plain["importance_factors"],
             "which_uncertainty_drives_the_risk": drivers(plain["importance_factors"],
                                                          details.get("sobol")),
             "independent_check": _check_block(details.get("check")),
             "modes": details.get("modes"),
             "design_points": [
                 {"mode": p.get("mode"), "reliability_index": p.get("beta"),
                  "probability_of_failure": p.get("pf"), "converged": p.get("converged"),
                  "design_point": p.get("design_point_x")}
                 for p in details.get("design_points") or []],
             "warnings": plain["warnings"], "settings": plain["settings"],
             "engine_details": {k: v for k, v in details.items()
                                if k not in ("check", "modes", "design_points", "history")}}
    if "curvatures" in details:
        block["curvatures"] = details["curvatures"]
    return block


def _check_block(check: dict | None) -> dict | None:
    """The independent check in plain words (both shapes: FORM/SORM/importance sampling
    with their subset-simulation check, and the auto method's comparison)."""
    if not check:
        return None
    if "check_pf" in check:     # auto: importance sampling against subset simulation
        return {"by": "subset simulation against importance sampling",
                "probability_of_failure": check.get("check_pf"),
                "cov_of_estimate": check.get("check_cov"), "agree": bool(check["agree"]),
                "trust": check.get("trust"), "note": check.get("note")}
    return {"by": "subset simulation", "probability_of_failure": check.get("pf"),
            "cov_of_estimate": check.get("cov"), "agree": bool(check["agree"]),
            "trust": check.get("trust"), "note": check.get("note"),
            "importance_sampling": check.get("importance_sampling")}


# -- the earlier layout, shown in the current one ------------------------------------------------

_OLD_KEYS = {"distribution": "kind", "expression": "margin", "between": "pair",
             "coefficient": "rho", "method": "approach", "options": "settings"}


def _translate(document: dict) -> str:
    """The TOML text of a file in the earlier layout, written in the current one."""
    lines: list[str] = []

    def emit_table(header: str, table: dict):
        simple = {k: v for k, v in table.items() if not isinstance(v, dict)}
        nested = {k: v for k, v in table.items() if isinstance(v, dict)}
        if simple or not nested:
            lines.append(f"[{header}]")
            for key, value in simple.items():
                lines.append(f"{_OLD_KEYS.get(key, key)} = {_toml_value(value)}")
            lines.append("")
        for key, value in nested.items():
            emit_table(f"{header}.{_OLD_KEYS.get(key, key)}", value)

    for old, new in _OLD_TABLES.items():
        if old not in document:
            continue
        value = document[old]
        if old == "correlations" and isinstance(value, list):
            for entry in value:
                lines.append("[[correlated]]")
                for key, item in (entry.items() if isinstance(entry, dict) else []):
                    lines.append(f"{_OLD_KEYS.get(key, key)} = {_toml_value(item)}")
                lines.append("")
        elif old in ("variables", "limit_states") and isinstance(value, dict):
            for name, spec in value.items():
                emit_table(f"{new}.{name}", spec if isinstance(spec, dict) else {})
        elif isinstance(value, dict):
            emit_table(new, value)
    for key, value in document.items():
        if key not in _OLD_TABLES and isinstance(value, dict):
            emit_table(key, value)
    return "\n".join(lines).rstrip() + "\n"


def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        if math.isnan(value):
            return "nan"
        return repr(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    return json.dumps(str(value))


def _describe(value) -> str:
    kind = {bool: "a boolean", int: "an integer", float: "a number", str: "a text string",
            list: "an array", dict: "a table"}.get(type(value), type(value).__name__)
    return f"{kind} {value!r}" if not isinstance(value, (dict, list)) else kind
