"""``assess solve``: results on stdout, caution on stderr, clean exit codes for bad input."""

import json
import math
import textwrap
from pathlib import Path

import pytest
from scipy import stats
from typer.testing import CliRunner

import assess.cli.solve
from assess.cautions import CAUTION
from assess.cli.app import app

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "problems"
runner = CliRunner()

LINEAR_NORMAL = """
[about]
title = "Linear safety margin"

[uncertain.resistance]
kind = "normal"
mean = 300.0
std = 30.0
unit = "kNm"

[uncertain.load]
kind = "normal"
mean = 150.0
std = 40.0
unit = "kNm"

[modes.capacity]
margin = "resistance - load"
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


def test_json_output_is_the_result_block_in_our_words(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--approach", "form", "--json")
    assert result.exit_code == 0, result.output
    block = json.loads(result.stdout)  # nothing but JSON on stdout
    for key in ("case", "approach", "answer", "design_point", "design_point_standard_normal",
                "importance_factors", "which_uncertainty_drives_the_risk",
                "independent_check", "warnings"):
        assert key in block
    answer = block["answer"]
    assert block["approach"] == "form"
    assert answer["reliability_index"] == pytest.approx(EXACT_BETA, abs=1e-6)
    assert answer["probability_of_failure"] == pytest.approx(stats.norm.cdf(-EXACT_BETA),
                                                             rel=1e-5)
    assert answer["cov_of_estimate"] is None  # FORM is not a sampling estimate
    assert answer["limit_state_evaluations"] > 0
    assert set(block["design_point"]) == {"resistance", "load"}
    assert block["case"]["title"] == "Linear safety margin"
    assert block["case"]["uncertain"]["load"]["unit"] == "kNm"
    # importance factors alpha^2 of a linear normal margin (closed form): 0.36 and 0.64
    rows = {r["variable"]: r for r in block["which_uncertainty_drives_the_risk"]}
    assert rows["load"]["importance_factor"] == pytest.approx(0.64, abs=1e-6)
    assert block["independent_check"]["agree"] is True
    assert CAUTION.split()[0] in result.stderr


def test_human_output_is_a_table_with_units_and_the_caution_on_stderr(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--approach", "form")
    assert result.exit_code == 0, result.output
    assert "reliability index beta" in result.stdout
    assert "probability of failure" in result.stdout
    assert f"{EXACT_BETA:.4g}" in result.stdout  # "3" for the exact index 3.000000
    assert f"{stats.norm.cdf(-EXACT_BETA):.4g}" in result.stdout
    assert "kNm" in result.stdout and "Which uncertainty drives the risk" in result.stdout
    assert "independent check" in result.stdout
    assert "Decision support only" in result.stderr
    assert "Decision support only" not in result.stdout


def test_default_approach_auto_on_the_closed_form(tmp_path):
    # auto (the default): closed form pf = Phi(-3) within 3 CoV of the estimate.
    result = solve(write(tmp_path, LINEAR_NORMAL), "--seed", 3, "--json")
    assert result.exit_code == 0, result.output
    answer = json.loads(result.stdout)["answer"]
    exact = stats.norm.cdf(-EXACT_BETA)
    assert json.loads(result.stdout)["approach"] == "auto"
    assert abs(answer["probability_of_failure"] - exact) < 3 * answer["cov_of_estimate"] * exact


def test_method_seed_and_samples_options_override_the_file(tmp_path):
    path = write(tmp_path, LINEAR_NORMAL + "\n[solve]\napproach = \"form\"\nseed = 1\n")
    first = solve(path, "--method", "importance_sampling", "--seed", 123, "--samples", 3000,
                  "--json")
    second = solve(path, "--approach", "importance_sampling", "--seed", 123, "--samples", 3000,
                   "--json")
    assert first.exit_code == 0, first.output
    a, b = json.loads(first.stdout), json.loads(second.stdout)
    assert a["approach"] == "importance_sampling"
    assert a["answer"]["seed"] == 123
    assert a["settings"]["n"] == 3000
    assert a["answer"]["probability_of_failure"] == b["answer"]["probability_of_failure"]
    # Importance sampling estimate against the closed form, tolerance 3 CoV of the estimate.
    exact_pf = stats.norm.cdf(-EXACT_BETA)
    pf, cov = a["answer"]["probability_of_failure"], a["answer"]["cov_of_estimate"]
    assert abs(pf - exact_pf) < 3 * cov * exact_pf


def test_subset_simulation_samples_per_level(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--method", "subset_simulation",
                   "--samples", 500, "--seed", 5, "--json")
    assert result.exit_code == 0, result.output
    block = json.loads(result.stdout)
    assert block["settings"]["n_per_level"] == 500
    assert block["answer"]["seed"] == 5


def test_a_seed_is_drawn_and_reported_when_none_is_given(tmp_path):
    result = solve(write(tmp_path, LINEAR_NORMAL), "--method", "crude_monte_carlo",
                   "--samples", 2000, "--json")
    assert result.exit_code == 0, result.output
    assert isinstance(json.loads(result.stdout)["answer"]["seed"], int)


@pytest.mark.parametrize("name, low, high", [
    # The invented demo problems are tuned to a reliability index between 3.2 and 5
    # (the range of ULS targets of EN 1990 Annex B / JCSS PMC Part 1 for RC members).
    ("deck_strip_bending.toml", 3.2, 5.0),
    ("deck_two_span_series.toml", 3.2, 5.0),
])
def test_demo_problem_files_solve(name, low, high):
    result = solve(DEMO / name, "--json")
    assert result.exit_code == 0, result.output
    block = json.loads(result.stdout)
    assert low < block["answer"]["reliability_index"] < high
    assert block["answer"]["stopping_rule_met"] is True
    assert block["approach"] == "auto"


def test_form_disagreeing_with_its_check_names_the_method_to_trust(tmp_path):
    # Issue 14: g = R - S/(S - 40), R lognormal (100, 10), S Gumbel (40, 8); the exact index
    # is 2.04 (one-dimensional quadrature, tests/reference_problems.form_trap). FORM's answer
    # is far off; the CLI says which method to trust.
    text = """
[uncertain.R]
kind = "lognormal"
mean = 100.0
std = 10.0
[uncertain.S]
kind = "gumbel"
mean = 40.0
std = 8.0
[modes.trap]
margin = "R - S / (S - 40)"
"""
    result = solve(write(tmp_path, text), "--approach", "form", "--seed", 2)
    assert result.exit_code == 0, result.output
    assert "DISAGREES" in result.stdout
    assert "Method to trust:" in result.stderr


def test_huge_samples_are_an_input_error(tmp_path):
    # Issue 16: --samples 10**12 must be refused cleanly (exit 2), before any work.
    for approach in ("subset_simulation", "crude_monte_carlo", "importance_sampling", "auto"):
        result = solve(write(tmp_path, LINEAR_NORMAL), "--approach", approach,
                       "--samples", 10**12)
        assert_clean_failure(result, 2, "must be an int in the range")


def test_earlier_layout_exits_2_and_shows_the_new_layout(tmp_path):
    old = """
[variables.resistance]
distribution = "normal"
mean = 300.0
std = 30.0
[limit_states.capacity]
expression = "resistance - 100"
"""
    result = solve(write(tmp_path, old))
    assert_clean_failure(result, 2, "earlier layout")
    assert "[uncertain.resistance]" in result.stderr and "[modes.capacity]" in result.stderr
    assert 'margin = "resistance - 100"' in result.stderr


# --- bad input and failed analyses -------------------------------------------------------------

def replace(old, new):
    assert old in LINEAR_NORMAL
    return LINEAR_NORMAL.replace(old, new, 1)


@pytest.mark.parametrize("text, fragment", [
    (replace('kind = "normal"', 'kind = "weibul"'),
     "unknown kind 'weibul'"),
    (replace("std = 30.0", "std = -30.0"), "standard deviation must be positive"),
    (replace('kind = "normal"\nmean = 300.0', 'kind = "gamma"\nmean = 0.0'),
     "outside the support of the gamma"),
    (replace('margin = "resistance - load"', 'margin = "resistance - load - wind"'),
     "unknown name 'wind'"),
    (replace('margin = "resistance - load"', 'margin = "__import__(\'os\')"'),
     "the function '__import__'"),
    (LINEAR_NORMAL.replace("[uncertain.load]", "[uncertain.load"), "not valid TOML"),
    (LINEAR_NORMAL + '\n[[correlated]]\npair = ["load", "load"]\nrho = 0.5\n',
     "correlated with itself"),
])
def test_bad_problem_files_exit_2_with_a_message(tmp_path, text, fragment):
    assert_clean_failure(solve(write(tmp_path, text)), 2, fragment)


def test_non_positive_definite_correlations_exit_2(tmp_path):
    text = LINEAR_NORMAL + """
[uncertain.extra]
kind = "normal"
mean = 0.0
std = 1.0

[[correlated]]
pair = ["resistance", "load"]
rho = 0.9

[[correlated]]
pair = ["load", "extra"]
rho = 0.9

[[correlated]]
pair = ["resistance", "extra"]
rho = -0.9
"""
    assert_clean_failure(solve(write(tmp_path, text)), 2, "not positive definite")


def test_malformed_toml_exit_2_names_line_and_column(tmp_path):
    result = solve(write(tmp_path, "[uncertain.a]\nkind = normal\n"))
    assert_clean_failure(result, 2, "line 2, column 8")


def test_nan_from_a_margin_is_a_warning_with_the_count(tmp_path):
    # Issue 16: sqrt(load - resistance) is undefined wherever the structure is safe; the run
    # finishes and the warning gives the count (those points counted as failed).
    text = replace('margin = "resistance - load"', 'margin = "sqrt(load - resistance)"')
    result = solve(write(tmp_path, text), "--approach", "crude_monte_carlo", "--samples",
                   1000, "--seed", 1)
    assert result.exit_code == 0, result.output
    assert "undefined (NaN) at" in result.stderr and "counted as failed" in result.stderr


def test_missing_file_exits_2(tmp_path):
    assert_clean_failure(solve(tmp_path / "absent.toml"), 2, "no such problem file")


@pytest.mark.parametrize("args, fragment", [
    (["--approach", "form", "--samples", "100"], "--samples does not apply to form"),
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
    text = replace('[uncertain.load]\nkind = "normal"',
                   '[uncertain.load]\nkind = "truncated_normal"\nlower = 0.0\nupper = inf')
    result = solve(write(tmp_path, text), "--approach", "form", "--json")
    assert result.exit_code == 0, result.output
    parameters = json.loads(result.stdout)["case"]["uncertain"]["load"]["parameters"]
    assert parameters["lower"] == 0.0 and parameters["upper"] is None
    # Truncating N(150, 40) at 0 (3.75 std below the mean) barely moves the index: the
    # FORM index stays within 1e-3 of the untruncated closed form 3.0.
    assert json.loads(result.stdout)["answer"]["reliability_index"] == pytest.approx(
        EXACT_BETA, abs=1e-3)


def test_series_system_by_form_lists_each_mode(tmp_path):
    text = LINEAR_NORMAL + '\n[modes.doubled]\nmargin = "resistance - 1.5 * load"\n'
    result = solve(write(tmp_path, text), "--method", "form")
    assert result.exit_code == 0, result.output
    assert "series system" in result.stdout
    assert "Failure modes" in result.stdout and "doubled" in result.stdout
    # Each mode alone has a closed-form index (Cornell 1969): capacity 150 / 50 = 3,
    # doubled (300 - 1.5 x 150) / sqrt(30^2 + (1.5 x 40)^2) = 75 / sqrt(4500).
    for beta in (EXACT_BETA, 75.0 / math.sqrt(4500.0)):
        assert f"{beta:.4g}" in result.stdout
        assert f"{stats.norm.cdf(-beta):.4g}" in result.stdout


def test_approach_choices_are_the_engine_methods():
    from assess.problem_file import METHODS
    assert [m.value for m in assess.cli.solve.Approach] == list(METHODS)
