"""``assess solve``: run the reliability analysis stated in a problem file.

Results go to stdout (a table, or JSON with ``--json``); the standing caution,
warnings and error messages go to stderr.
"""

import json
import math
from enum import Enum
from pathlib import Path
from typing import Annotated, Optional

import typer
from rich.table import Table

from assess.cli.app import app, err_console, guard, out_console, print_caution
from assess.errors import InputError
from assess.problem_file import SAMPLES_OPTION, LoadedProblem, load_problem


class Method(str, Enum):
    """Reliability methods selectable on the command line."""

    form = "form"
    importance_sampling = "importance_sampling"
    subset_simulation = "subset_simulation"
    crude_monte_carlo = "crude_monte_carlo"


@app.command()
@guard
def solve(
    problem_file: Annotated[Path, typer.Argument(
        help="Problem file (TOML): variables, limit states, analysis settings.",
        dir_okay=False)],
    method: Annotated[Optional[Method], typer.Option(
        help="Reliability method; overrides the method named in the file.")] = None,
    seed: Annotated[Optional[int], typer.Option(
        help="Random seed (int >= 0) of a sampling method; overrides the file. "
             "Without one, a seed is drawn and reported.")] = None,
    samples: Annotated[Optional[int], typer.Option(
        help="Number of samples [-]: per level for subset simulation, in total for "
             "importance sampling and crude Monte Carlo; overrides the file.")] = None,
    json_output: Annotated[bool, typer.Option(
        "--json", help="Print the result and the problem description as JSON on stdout.")]
        = False,
):
    """Solve the reliability problem in PROBLEM_FILE: probability of failure, reliability
    index, design point and importance factors."""
    from assess.reliability.dispatch import run_method

    if seed is not None and seed < 0:
        raise InputError(f"--seed must be a non-negative integer, got {seed}")
    if samples is not None and samples < 1:
        raise InputError(f"--samples must be a positive integer, got {samples}")
    loaded = load_problem(problem_file)
    method_name = method.value if method is not None else loaded.method
    if samples is not None and SAMPLES_OPTION[method_name] is None:
        raise InputError(f"--samples does not apply to {method_name} (it does not sample)")
    run_seed = seed if seed is not None else loaded.seed
    result = run_method(loaded.problem(), method_name, seed=run_seed,
                        **loaded.run_options(method_name, samples))

    if json_output:
        payload = result.to_dict()
        payload["problem"] = _json_ready(loaded.metadata)
        typer.echo(json.dumps(payload, indent=2, allow_nan=False))
    else:
        out_console.print(_result_table(result, loaded))
        modes = _modes_table(result)
        if modes is not None:
            out_console.print(modes)
        factors = _design_point_table(result, loaded)
        if factors is not None:
            out_console.print(factors)
    for warning in result.warnings:
        err_console.print(f"[yellow]Warning:[/] {warning}", highlight=False, soft_wrap=True)
    print_caution()


def _json_ready(value):
    """Metadata with non-finite numbers (e.g. an unbounded truncation) as None, like
    `ReliabilityResult.to_dict`."""
    if isinstance(value, dict):
        return {key: _json_ready(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_ready(item) for item in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _number(value, digits: int = 4) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    if isinstance(value, float) and math.isinf(value):
        return "inf" if value > 0 else "-inf"
    return f"{value:.{digits}g}"


def _result_table(result, loaded: LoadedProblem) -> Table:
    title = loaded.metadata.get("title") or Path(loaded.metadata.get("file", "")).name
    table = Table(title=f"Reliability of: {title}", show_header=False, title_justify="left")
    table.add_column("quantity", style="bold")
    table.add_column("value")
    table.add_row("limit states", ", ".join(loaded.mode_names)
                  + (" (series system)" if len(loaded.mode_names) > 1 else ""))
    table.add_row("method", result.method)
    table.add_row("probability of failure pf", _number(result.pf, 4))
    table.add_row("reliability index beta", _number(result.beta, 4))
    table.add_row("CoV of pf", _number(result.cov, 3) if not math.isnan(result.cov)
                  else "- (not a sampling estimate)" if result.method == "form" else "-")
    table.add_row("limit-state evaluations", str(result.n_calls))
    table.add_row("seed", "-" if result.seed is None else str(result.seed))
    table.add_row("converged", "yes" if result.converged else "NO")
    return table


def _modes_table(result) -> Table | None:
    """Per-mode indices of a series system solved by FORM."""
    modes = result.details.get("modes") if isinstance(result.details, dict) else None
    if not modes or len(modes) < 2:
        return None
    table = Table(title="Failure modes (FORM, each mode alone)", title_justify="left")
    table.add_column("limit state")
    table.add_column("beta", justify="right")
    table.add_column("pf", justify="right")
    table.add_column("converged")
    for mode in modes:
        table.add_row(str(mode.get("mode", "")), _number(mode.get("beta")),
                      _number(mode.get("pf")), "yes" if mode.get("converged", True) else "NO")
    return table


def _design_point_table(result, loaded: LoadedProblem) -> Table | None:
    if result.design_point_x is None and result.importance_factors is None:
        return None
    units = loaded.units
    x = result.design_point_x or {}
    factors = result.importance_factors or {}
    names = list(x) + [name for name in factors if name not in x]
    table = Table(title="Design point and importance factors", title_justify="left")
    table.add_column("variable")
    table.add_column("design value", justify="right")
    table.add_column("unit")
    table.add_column("importance factor alpha^2", justify="right")
    for name in names:
        table.add_row(name, _number(x.get(name), 5), units.get(name, ""),
                      _number(factors.get(name), 3) if name in factors else "-")
    return table
