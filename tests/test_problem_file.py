"""Problem files: closed-form reliability indices through the whole loader, and bad input."""

import hashlib
import math
import re
import textwrap
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from assess.errors import AnalysisError, InputError
from assess.problem_file import load_problem
from assess.reliability.dispatch import run_method

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "problems"

LINEAR_NORMAL = """
[problem]
title = "R - S"

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


def write(tmp_path, text, name="problem.toml"):
    path = tmp_path / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def form_beta(loaded):
    return run_method(loaded.problem(), "form").beta


# --- closed-form answers -----------------------------------------------------------------------

def test_linear_normal_problem_gives_the_exact_index(tmp_path):
    # Closed form (Cornell 1969 / Hasofer-Lind 1974): beta = (muR - muS) / sqrt(sR^2 + sS^2)
    # = 150 / 50 = 3.
    loaded = load_problem(write(tmp_path, LINEAR_NORMAL))
    result = run_method(loaded.problem(), "form")
    assert result.beta == pytest.approx((300.0 - 150.0) / math.hypot(30.0, 40.0), abs=1e-6)
    assert result.pf == pytest.approx(stats.norm.cdf(-3.0), rel=1e-5)
    # Design point of a linear normal problem (closed form): x* = mu -/+ beta alpha sigma.
    assert result.design_point_x["resistance"] == pytest.approx(300 - 3 * 0.6 * 30, abs=1e-4)
    assert result.design_point_x["load"] == pytest.approx(150 + 3 * 0.8 * 40, abs=1e-4)
    assert result.importance_factors["load"] == pytest.approx(0.64, abs=1e-6)


def test_correlated_normals_give_the_exact_index(tmp_path):
    # Closed form: beta = (muR - muS) / sqrt(sR^2 + sS^2 - 2 rho sR sS), rho = 0.5:
    # 150 / sqrt(900 + 1600 - 1200) = 150 / sqrt(1300).
    text = LINEAR_NORMAL + """
[[correlations]]
between = ["resistance", "load"]
coefficient = 0.5
"""
    assert form_beta(load_problem(write(tmp_path, text))) == pytest.approx(
        150.0 / math.sqrt(1300.0), abs=1e-6)


def test_lognormal_safety_margin_in_logs_gives_the_exact_index(tmp_path):
    # Closed form for lognormal R and S with g = ln R - ln S:
    # beta = (lambda_R - lambda_S) / sqrt(zeta_R^2 + zeta_S^2), zeta^2 = ln(1 + V^2),
    # lambda = ln(mean) - zeta^2 / 2 (lognormal moments, e.g. JCSS PMC Part 1 Annex).
    text = """
    [constants]
    scale = 1.0
    [variables.r]
    distribution = "lognormal"
    mean = 40.0
    std = 6.0
    [variables.s]
    distribution = "lognormal"
    mean = 20.0
    std = 5.0
    [limit_states.g]
    expression = "log(r * scale) - log(s)"
    """
    zeta_r2, zeta_s2 = math.log(1 + 0.15 ** 2), math.log(1 + 0.25 ** 2)
    expected = ((math.log(40.0) - zeta_r2 / 2) - (math.log(20.0) - zeta_s2 / 2)) / math.sqrt(
        zeta_r2 + zeta_s2)
    assert form_beta(load_problem(write(tmp_path, text))) == pytest.approx(expected, abs=1e-6)


def test_conditional_variable_from_an_expression_parameter(tmp_path):
    # X | M ~ N(2 M - 10, 3) with M ~ N(20, 4): X = 30 + 8 u1 + 3 u2, so for g = c - X the
    # exact index is (c - 30) / sqrt(8^2 + 3^2) (sum of independent normals, closed form).
    text = """
    [constants]
    offset = 10.0
    capacity = 60.0
    [variables.m]
    distribution = "normal"
    mean = 20.0
    std = 4.0
    [variables.x]
    distribution = "normal"
    mean = "2 * m - offset"
    std = 3.0
    [limit_states.g]
    expression = "capacity - x"
    """
    loaded = load_problem(write(tmp_path, text))
    assert loaded.metadata["variables"]["x"]["parents"] == ["m"]
    assert form_beta(loaded) == pytest.approx(30.0 / math.sqrt(73.0), abs=1e-6)


def test_parameter_expressions_of_constants_are_evaluated_on_loading(tmp_path):
    # Gumbel mean and std given as expressions of a constant: the marginal must have
    # exactly those moments (scipy.stats.gumbel_r moments of the built distribution).
    text = """
    [constants]
    q_k = 2.5
    [variables.q]
    distribution = "gumbel"
    mean = "0.6 * q_k"
    std = "0.35 * 0.6 * q_k"
    [limit_states.g]
    expression = "5 - q"
    """
    loaded = load_problem(write(tmp_path, text))
    marginal = loaded.model.marginal("q")
    assert marginal.mean == pytest.approx(1.5, rel=1e-12)
    assert marginal.std == pytest.approx(0.525, rel=1e-12)
    assert loaded.model.parents("q") == ()


def test_series_system_of_two_independent_modes_by_crude_monte_carlo(tmp_path):
    # Two independent linear modes with beta 2.0 and 2.5 (closed form):
    # pf = 1 - (1 - Phi(-2)) (1 - Phi(-2.5)).
    text = """
    [variables.a]
    distribution = "normal"
    mean = 0.0
    std = 1.0
    [variables.b]
    distribution = "normal"
    mean = 0.0
    std = 1.0
    [limit_states.first]
    expression = "2.0 - a"
    [limit_states.second]
    expression = "2.5 - b"
    [analysis]
    method = "crude_monte_carlo"
    seed = 7
    samples = 40000
    """
    loaded = load_problem(write(tmp_path, text))
    assert loaded.mode_names == ["first", "second"]
    x = {"a": np.array([3.0, 0.0]), "b": np.array([0.0, 3.0])}
    np.testing.assert_array_equal(loaded.limit_state(x), [[-1.0, 2.5], [2.0, -0.5]])
    result = run_method(loaded.problem(), loaded.method, seed=loaded.seed,
                        **loaded.run_options())
    expected = 1 - stats.norm.cdf(2.0) * stats.norm.cdf(2.5)
    assert result.settings["n"] == 40000
    assert abs(result.pf - expected) < 3 * result.cov * expected


def test_default_method_is_form_for_one_mode_and_subset_simulation_for_a_system(tmp_path):
    assert load_problem(write(tmp_path, LINEAR_NORMAL)).method == "form"
    two = LINEAR_NORMAL + '\n[limit_states.other]\nexpression = "resistance - 2 * load"\n'
    assert load_problem(write(tmp_path, two)).method == "subset_simulation"


def test_samples_map_to_the_option_of_each_method(tmp_path):
    loaded = load_problem(write(tmp_path, LINEAR_NORMAL + "\n[analysis]\nsamples = 500\n"))
    assert loaded.run_options("subset_simulation") == {"n_per_level": 500}
    assert loaded.run_options("importance_sampling") == {"n": 500}
    assert loaded.run_options("crude_monte_carlo", samples=800) == {"n": 800}
    assert loaded.run_options("form") == {}


def test_metadata_keeps_units_descriptions_and_file_hash(tmp_path):
    path = write(tmp_path, LINEAR_NORMAL)
    loaded = load_problem(path)
    assert loaded.units == {"resistance": "kNm", "load": "kNm"}
    assert loaded.metadata["title"] == "R - S"
    assert loaded.metadata["limit_states"]["capacity"]["expression"] == "resistance - load"
    assert loaded.metadata["sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.mark.parametrize("name", ["deck_strip_bending.toml", "deck_two_span_series.toml"])
def test_demo_problem_files_load(name):
    loaded = load_problem(DEMO / name)
    assert loaded.metadata["title"]
    assert set(loaded.units) == set(loaded.model.names)


def test_limit_state_returning_nan_is_an_analysis_error(tmp_path):
    text = LINEAR_NORMAL.replace('expression = "resistance - load"',
                                 'expression = "log(load - resistance)"')
    loaded = load_problem(write(tmp_path, text))
    with pytest.raises(AnalysisError, match="capacity returned nan"):
        run_method(loaded.problem(), "form")


# --- bad input ---------------------------------------------------------------------------------

def replace(old, new):
    assert old in LINEAR_NORMAL
    return LINEAR_NORMAL.replace(old, new, 1)


BAD_CASES = {
    "unknown distribution": (
        replace('distribution = "normal"', 'distribution = "normall"'),
        "variables.resistance.distribution", "unknown distribution 'normall'"),
    "negative std": (
        replace("std = 30.0", "std = -30.0"),
        "variables.resistance.std", "standard deviation must be positive"),
    "zero std": (
        replace("std = 30.0", "std = 0.0"),
        "variables.resistance.std", "standard deviation must be positive"),
    "mean outside support": (
        replace('distribution = "normal"\nmean = 300.0',
                'distribution = "lognormal"\nmean = -300.0'),
        "variables.resistance.mean", "outside the support of the lognormal"),
    "beta mean outside its bounds": (
        replace("std = 30.0", "std = 30.0\nlower = 0.0\nupper = 100.0").replace(
            'distribution = "normal"', 'distribution = "beta"', 1),
        "variables.resistance", "strictly between the bounds"),
    "parameter the distribution does not take": (
        replace("std = 30.0", "std = 30.0\nshape = 2.0"),
        "variables.resistance", "normal does not take shape"),
    "text where a number is expected": (
        replace("std = 30.0", 'std = "thirty"'),
        "variables.resistance.std", "unknown name 'thirty'"),
    "boolean parameter": (
        replace("std = 30.0", "std = true"),
        "variables.resistance.std", "expected a number, got a boolean"),
    "unknown name in a limit state": (
        replace('expression = "resistance - load"', 'expression = "resistanse - load"'),
        "limit_states.capacity.expression", "unknown name 'resistanse'.*did you mean 'resistance'"),
    "refused construct in a limit state": (
        replace('expression = "resistance - load"', 'expression = "resistance.real - load"'),
        "limit_states.capacity.expression", "attribute access"),
    "parameter depends on a later variable": (
        replace("mean = 300.0", 'mean = "2 * load"'),
        "variables.resistance.mean", "unknown name 'load'"),
    "missing expression": (
        replace('expression = "resistance - load"', 'description = "no formula"'),
        "limit_states.capacity.expression", "missing key 'expression'"),
    "unknown top-level table": (
        LINEAR_NORMAL + "\n[anaylsis]\nmethod = \"form\"\n",
        "anaylsis", "unknown key"),
    "unknown key in a limit state": (
        replace('expression = "resistance - load"',
                'expression = "resistance - load"\nexpresion = "x"'),
        "limit_states.capacity.expresion", "unknown key"),
    "missing distribution": (
        replace('distribution = "normal"\n', ""),
        "variables.resistance.distribution", "missing key 'distribution'"),
    "reserved name": (
        replace("[variables.load]", "[variables.exp]").replace("- load", "- exp"),
        "variables.exp", "built-in function"),
    "name used twice": (
        "[constants]\nload = 3.0\n" + LINEAR_NORMAL,
        "variables.load", "declared twice"),
    "correlation with an unknown variable": (
        LINEAR_NORMAL + '\n[[correlations]]\nbetween = ["resistance", "loads"]\n'
                        "coefficient = 0.3\n",
        r"correlations\[0\].between", "'loads' is not a declared variable"),
    "correlation coefficient of one": (
        LINEAR_NORMAL + '\n[[correlations]]\nbetween = ["resistance", "load"]\n'
                        "coefficient = 1.0\n",
        r"correlations\[0\].coefficient", r"must lie in \(-1, 1\)"),
    "pair given twice": (
        LINEAR_NORMAL + '\n[[correlations]]\nbetween = ["resistance", "load"]\ncoefficient = 0.3\n'
                        '\n[[correlations]]\nbetween = ["load", "resistance"]\ncoefficient = 0.2\n',
        r"correlations\[1\].between", "already given"),
    "unknown method": (
        LINEAR_NORMAL + '\n[analysis]\nmethod = "monte_carlo"\n',
        "analysis.method", "unknown method 'monte_carlo'"),
    "negative seed": (
        LINEAR_NORMAL + "\n[analysis]\nseed = -4\n",
        "analysis.seed", "non-negative integer"),
    "non-numeric constant": (
        '[constants]\nspan = "6 m"\n' + LINEAR_NORMAL,
        "constants.span", "expected a number"),
    "no limit state": (
        LINEAR_NORMAL.split("[limit_states.capacity]")[0],
        "limit_states", "required"),
}


@pytest.mark.parametrize("case", sorted(BAD_CASES))
def test_bad_input_names_file_and_key_path(tmp_path, case):
    text, key, fragment = BAD_CASES[case]
    path = write(tmp_path, text)
    with pytest.raises(InputError, match=fragment) as info:
        load_problem(path)
    assert info.value.file == str(path)
    assert info.value.column is not None
    assert re.fullmatch(key, info.value.column), info.value.column


def test_non_positive_definite_correlation_matrix_is_an_input_error(tmp_path):
    # rho_ab = rho_bc = 0.9 force a and c to be strongly positively correlated, so
    # rho_ac = -0.9 leaves no valid correlation matrix (smallest eigenvalue < 0).
    text = """
    [variables.a]
    distribution = "normal"
    mean = 10.0
    std = 1.0
    [variables.b]
    distribution = "normal"
    mean = 10.0
    std = 1.0
    [variables.c]
    distribution = "normal"
    mean = 10.0
    std = 1.0
    [[correlations]]
    between = ["a", "b"]
    coefficient = 0.9
    [[correlations]]
    between = ["b", "c"]
    coefficient = 0.9
    [[correlations]]
    between = ["a", "c"]
    coefficient = -0.9
    [limit_states.g]
    expression = "a + b + c"
    """
    assert np.linalg.eigvalsh(np.array([[1, .9, -.9], [.9, 1, .9], [-.9, .9, 1]])).min() < 0
    with pytest.raises(InputError, match="not positive definite") as info:
        load_problem(write(tmp_path, text))
    assert info.value.column == "correlations"


def test_malformed_toml_reports_the_parser_line_and_column(tmp_path):
    broken = LINEAR_NORMAL.replace("std = 40.0", "std = = 40.0")
    path = write(tmp_path, broken)
    line = broken.splitlines().index("std = = 40.0") + 1
    with pytest.raises(InputError, match=rf"not valid TOML: .*line {line}, column 7") as info:
        load_problem(path)
    assert info.value.file == str(path)


def test_missing_file_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="no such problem file"):
        load_problem(tmp_path / "absent.toml")


def test_option_the_method_does_not_take_names_its_key(tmp_path):
    path = write(tmp_path, LINEAR_NORMAL + "\n[analysis.options]\np0 = 0.2\n")
    loaded = load_problem(path)
    assert loaded.run_options("subset_simulation") == {"p0": 0.2}
    with pytest.raises(InputError, match="form does not take the option 'p0'") as info:
        loaded.run_options("form")
    assert info.value.column == "analysis.options.p0"
