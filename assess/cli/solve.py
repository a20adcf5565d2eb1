"""``assess solve``: solve the failure modes stated in a problem file.

Results go to stdout (tables, or the result block as JSON with ``--json``); the standing
caution, warnings and error messages go to stderr. The words of the tables and of the
JSON block are those of the report (`assess.problem_file.result_block`).
"""

import json
import math
from enum import Enum
from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer
from rich.table import Table

from assess.cli.app import app, err_console, guard, out_console, plain, print_caution
from assess.errors import InputError
from assess.method_names import METHOD_NAMES

if TYPE_CHECKING:
    from assess.problem_file import LoadedProblem

Approach = Enum("Approach", {name: name for name in METHOD_NAMES}, type=str)
Approach.__doc__ = "Approaches selectable on the command line (the engine's methods)."


@app.command()
@guard
def solve(
    problem_file: Annotated[Path, typer.Argument(
        help="Problem file (TOML): uncertain quantities, failure modes, how to solve.",
        dir_okay=False)],
    approach: Annotated[Approach | None, typer.Option(
        "--approach", "--method",
        help="How to solve; overrides [solve] approach in the file. 'auto' lets the tool "
             "choose and cross-check.")] = None,
    seed: Annotated[int | None, typer.Option(
        help="Random seed (int >= 0) of the sampling and of the checks; overrides the file. "
             "Without one, a seed is drawn and reported.")] = None,
    samples: Annotated[int | None, typer.Option(
        help="Number of samples [-]: per level for subset simulation and auto, in total for "
             "importance sampling and crude Monte Carlo, the first design for "
             "polynomial_chaos; overrides the file.")] = None,
    json_output: Annotated[bool, typer.Option(
        "--json", help="Print the result block and the case as JSON on stdout.")] = False,
):
    """Solve the failure modes in PROBLEM_FILE: probability of failure, reliability index,
    design point and which uncertainty drives the risk."""
    from assess.problem_file import SAMPLES_OPTION, load_problem, result_block
    from assess.reliability.dispatch import run_method

    if seed is not None and seed < 0:
        raise InputError(f"--seed must be a non-negative integer, got {seed}")
    if samples is not None and samples < 1:
        raise InputError(f"--samples must be a positive integer, got {samples}")
    try:
        loaded = load_problem(problem_file)
    except InputError as exc:
        # printed without markup: the message may show TOML tables such as [about]
        err_console.print(plain("Input error: ", "bold red", str(exc)), highlight=False,
                          soft_wrap=True)
        raise typer.Exit(code=2) from None
    method_name = approach.value if approach is not None else loaded.method
    if samples is not None and SAMPLES_OPTION[method_name] is None:
        raise InputError(f"--samples does not apply to {method_name} (it does not sample)")
    run_seed = seed if seed is not None else loaded.seed
    result = run_method(loaded.problem(), method_name, seed=run_seed,
                        **loaded.run_options(method_name, samples))
    block = result_block(result, loaded)

    if json_output:
        typer.echo(json.dumps(block, indent=2, allow_nan=False))
    else:
        out_console.print(_answer_table(block, loaded))
        for table in (_modes_table(block), _design_point_table(block, loaded),
                      _drivers_table(block)):
            if table is not None:
                out_console.print(table)
    for warning in result.warnings:
        err_console.print(plain("Warning: ", "yellow", warning), highlight=False,
                          soft_wrap=True)
    trust = (block.get("independent_check") or {}).get("trust")
    if trust and not block["independent_check"].get("agree", True):
        err_console.print(plain("Method to trust: ", "yellow", trust.replace("_", " ")),
                          highlight=False, soft_wrap=True)
    print_caution()


def _number(value, digits: int = 4) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "-"
    if isinstance(value, float) and math.isinf(value):
        return "inf" if value > 0 else "-inf"
    return f"{value:.{digits}g}"


def _answer_table(block: dict, loaded: "LoadedProblem") -> Table:
    case = block["case"]
    title = case.get("title") or Path(case.get("file", "")).name
    answer = block["answer"]
    table = Table(title=f"Reliability of: {(title)}", show_header=False,
                  title_justify="left")
    table.add_column("quantity", style="bold")
    table.add_column("value")
    table.add_row("failure modes", (", ".join(loaded.mode_names))
                  + (" (series system)" if len(loaded.mode_names) > 1 else ""))
    table.add_row("approach", block["approach"])
    if answer["method_used"] != block["approach"]:
        table.add_row("answer from", answer["method_used"].replace("_", " "))
    table.add_row("reliability index beta", _number(answer["reliability_index"], 4))
    table.add_row("probability of failure", _number(answer["probability_of_failure"], 4))
    cov = answer["cov_of_estimate"]
    table.add_row("CoV of the estimate",
                  _number(cov, 3) if cov is not None
                  else "- (not a sampling estimate)" if block["approach"] in ("form", "sorm")
                  else "-")
    bound = answer.get("beta_lower_bound")
    if bound is not None:
        table.add_row("no failure observed", f"beta > {bound:.2f} (a bound, not an estimate)")
    table.add_row("limit-state evaluations", str(answer["limit_state_evaluations"]))
    table.add_row("seed", "-" if answer["seed"] is None else str(answer["seed"]))
    table.add_row("stopping rule met", "yes" if answer["stopping_rule_met"] else "NO")
    check = block.get("independent_check")
    if check:
        verdict = "agrees" if check["agree"] else "DISAGREES"
        table.add_row("independent check", f"{check['by']}: {verdict} - trust "
                      f"{check['trust'].replace('_', ' ')}")
    return table


def _modes_table(block: dict) -> Table | None:
    """Per-mode indices of a series system solved by FORM or SORM."""
    modes = block.get("modes")
    if not modes or len(modes) < 2:
        return None
    table = Table(title="Failure modes (FORM, each mode alone)", title_justify="left")
    table.add_column("mode")
    table.add_column("beta", justify="right")
    table.add_column("pf", justify="right")
    table.add_column("converged")
    for mode in modes:
        table.add_row((str(mode.get("mode", ""))), _number(mode.get("beta")),
                      _number(mode.get("pf")), "yes" if mode.get("converged", True) else "NO")
    return table


def _design_point_table(block: dict, loaded: "LoadedProblem") -> Table | None:
    x = block.get("design_point") or {}
    if not x:
        return None
    units = loaded.units
    table = Table(title="Design point (most likely failure point)", title_justify="left")
    table.add_column("quantity")
    table.add_column("design value", justify="right")
    table.add_column("unit")
    for name, value in x.items():
        table.add_row((name), _number(value, 5), (units.get(name, "")))
    return table


def _drivers_table(block: dict) -> Table | None:
    rows = block.get("which_uncertainty_drives_the_risk") or []
    if not rows:
        return None
    table = Table(title="Which uncertainty drives the risk", title_justify="left")
    table.add_column("quantity")
    table.add_column("importance factor alpha^2", justify="right")
    has_sobol = any(r["sobol_total"] is not None for r in rows)
    if has_sobol:
        table.add_column("Sobol first order", justify="right")
        table.add_column("Sobol total", justify="right")
    for row in rows:
        cells = [(row["variable"]), _number(row["importance_factor"], 3)]
        if has_sobol:
            cells += [_number(row["sobol_first"], 3), _number(row["sobol_total"], 3)]
        table.add_row(*cells)
    return table
