"""``assess solve``: results on stdout, caution on stderr, clean exit codes for bad input."""

import json
import math
import textwrap
from pathlib import Path

import pytest
from scipy import stats
from typer.testing import CliRunner

import assess.cli.solve  # noqa: F401  (registers the command)
from assess.cautions import CAUTION
from assess.cli.app import app

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "problems"
runner = CliRunner()

LINEAR_NORMAL = """
[problem]
title = "Linear safety margin"

[variables.resistance]
distribution = "normal"
mean = 300.0
std = 30.0
unit = "kNm"

[variables.load]
distribution = "normal"
mean = 150.0
std = 40.0
unit = "kNm"

[limit_states.capacity]
expression = "resistance - load"
"""
EXACT_BETA = (300.0 - 150.0) / math.hypot(30.0, 40.0)  # closed form (Cornell 1969) = 3


def write(tmp_path, text):
    path = tmp_path / "problem.toml"
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return str(path)


def solve(*args):
    return runner.invoke(app, ["solve", *map(str, args)])


def assert_clean_failure(result, code, fragment):
    assert result.exit_code == code, result.output
    assert "Traceback" not in result.output
    assert "Traceback" not in result.stderr
    assert fragment in result.stderr
    assert result.stdout == ""


def test_json_output_parses_and_has_the_result_and_the_problem(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--json")
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)  # nothing but JSON on stdout
    for key in ("pf", "beta", "cov", "n_calls", "method", "seed", "design_point_x",
                "design_point_u", "importance_factors"):
        assert key in payload
    assert payload["method"] == "form"
    assert payload["beta"] == pytest.approx(EXACT_BETA, abs=1e-6)
    assert payload["pf"] == pytest.approx(stats.norm.cdf(-EXACT_BETA), rel=1e-5)
    assert payload["cov"] is None  # FORM is not a sampling estimate
    assert payload["n_calls"] > 0
    assert set(payload["design_point_x"]) == {"resistance", "load"}
    assert payload["problem"]["title"] == "Linear safety margin"
    assert payload["problem"]["variables"]["load"]["unit"] == "kNm"
    assert CAUTION.split()[0] in result.stderr


def test_human_output_is_a_table_with_units_and_the_caution_on_stderr(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL))
    assert result.exit_code == 0, result.output
    assert "reliability index beta" in result.stdout
    assert f"{EXACT_BETA:.4g}" in result.stdout  # "3" for the exact index 3.000000
    assert f"{stats.norm.cdf(-EXACT_BETA):.4g}" in result.stdout
    assert "kNm" in result.stdout and "importance factor" in result.stdout
    assert "Decision support only" in result.stderr
    assert "Decision support only" not in result.stdout


def test_method_seed_and_samples_options_override_the_file(tmp_path):
    path = write(tmp_path, LINEAR_NORMAL + "\n[analysis]\nmethod = \"form\"\nseed = 1\n")
    first = solve(path, "--method", "importance_sampling", "--seed", 123, "--samples", 3000,
                  "--json")
    second = solve(path, "--method", "importance_sampling", "--seed", 123, "--samples", 3000,
                   "--json")
    assert first.exit_code == 0, first.output
    a, b = json.loads(first.stdout), json.loads(second.stdout)
    assert a["method"] == "importance_sampling"
    assert a["seed"] == 123
    assert a["settings"]["n"] == 3000
    assert a["pf"] == b["pf"]  # same seed, same numbers
    # Importance sampling estimate against the closed form, tolerance 3 CoV of the estimate.
    exact_pf = stats.norm.cdf(-EXACT_BETA)
    assert abs(a["pf"] - exact_pf) < 3 * a["cov"] * exact_pf


def test_subset_simulation_samples_per_level(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--method", "subset_simulation",
                   "--samples", 500, "--seed", 5, "--json")
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)
    assert payload["settings"]["n_per_level"] == 500
    assert payload["seed"] == 5


def test_a_seed_is_drawn_and_reported_when_none_is_given(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--method", "crude_monte_carlo",
                   "--samples", 2000, "--json")
    assert result.exit_code == 0, result.output
    assert isinstance(json.loads(result.stdout)["seed"], int)


@pytest.mark.parametrize("name, low, high", [
    # The invented demo problems are tuned to a reliability index between 3.5 and 5
    # (the range of ULS targets of EN 1990 Annex B / JCSS PMC Part 1 for RC members).
    ("deck_strip_bending.toml", 3.5, 5.0),
    ("deck_two_span_series.toml", 3.5, 5.0),
])
def test_demo_problem_files_solve_with_form(name, low, high):
    result = solve(DEMO / name, "--method", "form", "--json")
    assert result.exit_code == 0, result.output
    payload = json.loads(result.stdout)
    assert low < payload["beta"] < high
    assert payload["converged"] is True


# --- bad input and failed analyses -------------------------------------------------------------

def replace(old, new):
    assert old in LINEAR_NORMAL
    return LINEAR_NORMAL.replace(old, new, 1)


@pytest.mark.parametrize("text, fragment", [
    (replace('distribution = "normal"', 'distribution = "weibul"'),
     "unknown distribution 'weibul'"),
    (replace("std = 30.0", "std = -30.0"), "standard deviation must be positive"),
    (replace('distribution = "normal"\nmean = 300.0', 'distribution = "gamma"\nmean = 0.0'),
     "outside the support of the gamma"),
    (replace('expression = "resistance - load"', 'expression = "resistance - load - wind"'),
     "unknown name 'wind'"),
    (replace('expression = "resistance - load"', 'expression = "__import__(\'os\')"'),
     "the function '__import__'"),
    (LINEAR_NORMAL.replace("[variables.load]", "[variables.load"), "not valid TOML"),
    (LINEAR_NORMAL + '\n[[correlations]]\nbetween = ["load", "load"]\ncoefficient = 0.5\n',
     "correlated with itself"),
])
def test_bad_problem_files_exit_2_with_a_message(tmp_path, text, fragment):
    assert_clean_failure(solve(write(tmp_path, text)), 2, fragment)


def test_non_positive_definite_correlations_exit_2(tmp_path):
    text = LINEAR_NORMAL + """
[variables.extra]
distribution = "normal"
mean = 0.0
std = 1.0

[[correlations]]
between = ["resistance", "load"]
coefficient = 0.9

[[correlations]]
between = ["load", "extra"]
coefficient = 0.9

[[correlations]]
between = ["resistance", "extra"]
coefficient = -0.9
"""
    assert_clean_failure(solve(write(tmp_path, text)), 2, "not positive definite")


def test_malformed_toml_exit_2_names_line_and_column(tmp_path):
    result = solve(write(tmp_path, "[variables.a]\ndistribution = normal\n"))
    assert_clean_failure(result, 2, "line 2, column 16")


def test_nan_from_a_limit_state_exits_1(tmp_path):
    text = replace('expression = "resistance - load"', 'expression = "sqrt(load - resistance)"')
    assert_clean_failure(solve(write(tmp_path, text)), 1, "not a finite number")


def test_missing_file_exits_2(tmp_path):
    assert_clean_failure(solve(tmp_path / "absent.toml"), 2, "no such problem file")


@pytest.mark.parametrize("args, fragment", [
    (["--samples", "100"], "--samples does not apply to form"),
    (["--seed", "-3"], "--seed must be a non-negative integer"),
    (["--method", "subset_simulation", "--samples", "0"], "--samples must be a positive"),
])
def test_bad_options_exit_2(tmp_path, args, fragment):
    assert_clean_failure(solve(write(tmp_path, LINEAR_NORMAL), *args), 2, fragment)


def test_unknown_method_is_a_usage_error(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--method", "guess")
    assert result.exit_code == 2
    assert "Traceback" not in result.output


def test_unbounded_truncation_is_valid_json(tmp_path):
    # A load truncated at zero with no upper bound: the infinite bound becomes null in JSON.
    text = replace('[variables.load]\ndistribution = "normal"',
                   '[variables.load]\ndistribution = "truncated_normal"\nlower = 0.0\nupper = inf')
    result = solve(write(tmp_path, text), "--json")
    assert result.exit_code == 0, result.output
    parameters = json.loads(result.stdout)["problem"]["variables"]["load"]["parameters"]
    assert parameters["lower"] == 0.0 and parameters["upper"] is None
    # Truncating N(150, 40) at 0 (3.75 std below the mean) barely moves the index: the
    # FORM index stays within 1e-3 of the untruncated closed form 3.0.
    assert json.loads(result.stdout)["beta"] == pytest.approx(EXACT_BETA, abs=1e-3)


def test_series_system_by_form_lists_each_mode(tmp_path):
    text = LINEAR_NORMAL + '\n[limit_states.doubled]\nexpression = "resistance - 1.5 * load"\n'
    result = solve(write(tmp_path, text), "--method", "form")
    assert result.exit_code == 0, result.output
    assert "series system" in result.stdout
    assert "Failure modes" in result.stdout and "doubled" in result.stdout
    # Each mode alone has a closed-form index (Cornell 1969): capacity 150 / 50 = 3,
    # doubled (300 - 1.5 x 150) / sqrt(30^2 + (1.5 x 40)^2) = 75 / sqrt(4500).
    for beta in (EXACT_BETA, 75.0 / math.sqrt(4500.0)):
        assert f"{beta:.4g}" in result.stdout
        assert f"{stats.norm.cdf(-beta):.4g}" in result.stdout


def test_method_choices_are_the_engine_methods():
    from assess.problem_file import METHODS
    assert [m.value for m in assess.cli.solve.Method] == list(METHODS)
