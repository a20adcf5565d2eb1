"""Problem files: closed-form reliability indices through the whole loader, and bad input."""

import hashlib
import math
import re
import textwrap
from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from assess.errors import InputError
from assess.problem_file import load_problem
from assess.reliability.dispatch import run_method

DEMO = Path(__file__).resolve().parents[1] / "demo_sites" / "problems"

LINEAR_NORMAL = """
[about]
title = "R - S"

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
[[correlated]]
pair = ["resistance", "load"]
rho = 0.5
"""
    assert form_beta(load_problem(write(tmp_path, text))) == pytest.approx(
        150.0 / math.sqrt(1300.0), abs=1e-6)


def test_lognormal_safety_margin_in_logs_gives_the_exact_index(tmp_path):
    # Closed form for lognormal R and S with g = ln R - ln S:
    # beta = (lambda_R - lambda_S) / sqrt(zeta_R^2 + zeta_S^2), zeta^2 = ln(1 + V^2),
    # lambda = ln(mean) - zeta^2 / 2 (lognormal moments, e.g. JCSS PMC Part 1 Annex).
    text = """
    [fixed]
    scale = 1.0
    [uncertain.r]
    kind = "lognormal"
    mean = 40.0
    std = 6.0
    [uncertain.s]
    kind = "lognormal"
    mean = 20.0
    std = 5.0
    [modes.g]
    margin = "log(r * scale) - log(s)"
    """
    zeta_r2, zeta_s2 = math.log(1 + 0.15 ** 2), math.log(1 + 0.25 ** 2)
    expected = ((math.log(40.0) - zeta_r2 / 2) - (math.log(20.0) - zeta_s2 / 2)) / math.sqrt(
        zeta_r2 + zeta_s2)
    assert form_beta(load_problem(write(tmp_path, text))) == pytest.approx(expected, abs=1e-6)


def test_conditional_variable_from_an_expression_parameter(tmp_path):
    # X | M ~ N(2 M - 10, 3) with M ~ N(20, 4): X = 30 + 8 u1 + 3 u2, so for g = c - X the
    # exact index is (c - 30) / sqrt(8^2 + 3^2) (sum of independent normals, closed form).
    text = """
    [fixed]
    offset = 10.0
    capacity = 60.0
    [uncertain.m]
    kind = "normal"
    mean = 20.0
    std = 4.0
    [uncertain.x]
    kind = "normal"
    mean = "2 * m - offset"
    std = 3.0
    [modes.g]
    margin = "capacity - x"
    """
    loaded = load_problem(write(tmp_path, text))
    assert loaded.metadata["uncertain"]["x"]["parents"] == ["m"]
    assert form_beta(loaded) == pytest.approx(30.0 / math.sqrt(73.0), abs=1e-6)


def test_parameter_expressions_of_constants_are_evaluated_on_loading(tmp_path):
    # Gumbel mean and std given as expressions of a constant: the marginal must have
    # exactly those moments (scipy.stats.gumbel_r moments of the built distribution).
    text = """
    [fixed]
    q_k = 2.5
    [uncertain.q]
    kind = "gumbel"
    mean = "0.6 * q_k"
    std = "0.35 * 0.6 * q_k"
    [modes.g]
    margin = "5 - q"
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
    [uncertain.a]
    kind = "normal"
    mean = 0.0
    std = 1.0
    [uncertain.b]
    kind = "normal"
    mean = 0.0
    std = 1.0
    [modes.first]
    margin = "2.0 - a"
    [modes.second]
    margin = "2.5 - b"
    [solve]
    approach = "crude_monte_carlo"
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


def test_default_approach_is_auto(tmp_path):
    assert load_problem(write(tmp_path, LINEAR_NORMAL)).method == "auto"
    two = LINEAR_NORMAL + '\n[modes.other]\nmargin = "resistance - 2 * load"\n'
    assert load_problem(write(tmp_path, two)).method == "auto"


def test_samples_map_to_the_option_of_each_method(tmp_path):
    loaded = load_problem(write(tmp_path, LINEAR_NORMAL + "\n[solve]\nsamples = 500\n"))
    assert loaded.run_options("subset_simulation") == {"n_per_level": 500}
    assert loaded.run_options("importance_sampling") == {"n": 500}
    assert loaded.run_options("crude_monte_carlo", samples=800) == {"n": 800}
    assert loaded.run_options("auto") == {"n_per_level": 500}
    assert loaded.run_options("polynomial_chaos") == {"n_samples": 500}
    assert loaded.run_options("form") == {}
    assert loaded.run_options("sorm") == {}


def test_metadata_keeps_units_descriptions_and_file_hash(tmp_path):
    path = write(tmp_path, LINEAR_NORMAL)
    loaded = load_problem(path)
    assert loaded.units == {"resistance": "kNm", "load": "kNm"}
    assert loaded.metadata["title"] == "R - S"
    assert loaded.metadata["modes"]["capacity"]["margin"] == "resistance - load"
    assert loaded.metadata["sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.mark.parametrize("name", ["deck_strip_bending.toml", "deck_two_span_series.toml"])
def test_demo_problem_files_load(name):
    loaded = load_problem(DEMO / name)
    assert loaded.metadata["title"]
    assert set(loaded.units) == set(loaded.model.names)


def test_margin_undefined_in_part_of_the_space_gives_a_warning_with_the_count(tmp_path):
    # Issue 16: log(S - 10) is undefined for S <= 10 (far in the tail of S ~ N(150, 40),
    # 3.5 std below the mean): the analysis finishes and says how many points were undefined.
    text = LINEAR_NORMAL.replace('margin = "resistance - load"',
                                 'margin = "resistance - load * log(load - 10) / log(140)"')
    loaded = load_problem(write(tmp_path, text))
    result = run_method(loaded.problem(), "crude_monte_carlo", seed=3, n=200_000)
    undefined = [w for w in result.warnings if "undefined (NaN)" in w]
    assert len(undefined) == 1 and "capacity returned nan" in undefined[0]
    count = int(undefined[0].split("undefined (NaN) at ")[1].split(" of ")[0])
    # P(S <= 10) = Phi(-3.5) (closed form): the count is binomial around n Phi(-3.5).
    expected = 200_000 * stats.norm.cdf(-3.5)
    assert abs(count - expected) <= 4 * math.sqrt(expected)


def test_coefficient_of_variation_gives_the_standard_deviation(tmp_path):
    # cov = std / |mean| (the site file's word): cov = 0.1 of mean 300 is std 30, so the
    # closed-form index (Cornell 1969) is still 150 / 50 = 3.
    text = LINEAR_NORMAL.replace("mean = 300.0\nstd = 30.0", "mean = 300.0\ncov = 0.1")
    assert form_beta(load_problem(write(tmp_path, text))) == pytest.approx(3.0, abs=1e-6)
    both = LINEAR_NORMAL.replace("std = 30.0", "std = 30.0\ncov = 0.1")
    with pytest.raises(InputError, match="'std' or 'cov', not both"):
        load_problem(write(tmp_path, both))


def test_earlier_layout_is_refused_with_the_file_in_the_new_layout(tmp_path):
    old = """
[problem]
title = "R - S"
[variables.resistance]
distribution = "normal"
mean = 300.0
std = 30.0
[variables.load]
distribution = "normal"
mean = 150.0
std = 40.0
[[correlations]]
between = ["resistance", "load"]
coefficient = 0.5
[limit_states.capacity]
expression = "resistance - load"
[analysis]
method = "form"
[analysis.options]
tol = 1e-8
"""
    path = write(tmp_path, old)
    with pytest.raises(InputError, match="earlier layout") as info:
        load_problem(path)
    message = str(info.value)
    for line in ("[about]", "[uncertain.resistance]", 'kind = "normal"', "[[correlated]]",
                 'pair = ["resistance", "load"]', "rho = 0.5", "[modes.capacity]",
                 'margin = "resistance - load"', "[solve]", 'approach = "form"',
                 "[solve.settings]", "tol = 1e-08"):
        assert line in message, line
    # The translated text is itself a valid problem file with the same closed-form answer:
    # beta = 150 / sqrt(900 + 1600 - 1200) (Cornell 1969, correlated normals).
    new_text = message.split("(docs/problem-file.md):")[1]
    translated = write(tmp_path, new_text, name="translated.toml")
    assert form_beta(load_problem(translated)) == pytest.approx(150 / math.sqrt(1300), abs=1e-6)


# --- bad input ---------------------------------------------------------------------------------

def replace(old, new):
    assert old in LINEAR_NORMAL
    return LINEAR_NORMAL.replace(old, new, 1)


BAD_CASES = {
    "unknown kind": (
        replace('kind = "normal"', 'kind = "normall"'),
        "uncertain.resistance.kind", "unknown kind 'normall'"),
    "negative std": (
        replace("std = 30.0", "std = -30.0"),
        "uncertain.resistance.std", "standard deviation must be positive"),
    "zero std": (
        replace("std = 30.0", "std = 0.0"),
        "uncertain.resistance.std", "standard deviation must be positive"),
    "mean outside support": (
        replace('kind = "normal"\nmean = 300.0',
                'kind = "lognormal"\nmean = -300.0'),
        "uncertain.resistance.mean", "outside the support of the lognormal"),
    "beta mean outside its bounds": (
        replace("std = 30.0", "std = 30.0\nlower = 0.0\nupper = 100.0").replace(
            'kind = "normal"', 'kind = "beta"', 1),
        "uncertain.resistance", "strictly between the bounds"),
    "parameter the kind does not take": (
        replace("std = 30.0", "std = 30.0\nshape = 2.0"),
        "uncertain.resistance", "normal does not take shape"),
    "text where a number is expected": (
        replace("std = 30.0", 'std = "thirty"'),
        "uncertain.resistance.std", "unknown name 'thirty'"),
    "boolean parameter": (
        replace("std = 30.0", "std = true"),
        "uncertain.resistance.std", "expected a number, got a boolean"),
    "unknown name in a limit state": (
        replace('margin = "resistance - load"', 'margin = "resistanse - load"'),
        "modes.capacity.margin", "unknown name 'resistanse'.*did you mean 'resistance'"),
    "refused construct in a limit state": (
        replace('margin = "resistance - load"', 'margin = "resistance.real - load"'),
        "modes.capacity.margin", "attribute access"),
    "parameter depends on a later variable": (
        replace("mean = 300.0", 'mean = "2 * load"'),
        "uncertain.resistance.mean", "unknown name 'load'"),
    "missing margin": (
        replace('margin = "resistance - load"', 'description = "no formula"'),
        "modes.capacity.margin", "missing key 'margin'"),
    "unknown top-level table": (
        LINEAR_NORMAL + "\n[sovle]\napproach = \"form\"\n",
        "sovle", "unknown key"),
    "unknown key in a limit state": (
        replace('margin = "resistance - load"',
                'margin = "resistance - load"\nexpresion = "x"'),
        "modes.capacity.expresion", "unknown key"),
    "missing kind": (
        replace('kind = "normal"\n', ""),
        "uncertain.resistance.kind", "missing key 'kind'"),
    "reserved name": (
        replace("[uncertain.load]", "[uncertain.exp]").replace("- load", "- exp"),
        "uncertain.exp", "built-in function"),
    "name used twice": (
        "[fixed]\nload = 3.0\n" + LINEAR_NORMAL,
        "uncertain.load", "declared twice"),
    "correlation with an unknown variable": (
        LINEAR_NORMAL + '\n[[correlated]]\npair = ["resistance", "loads"]\n'
                        "rho = 0.3\n",
        r"correlated\[0\].pair", "'loads' is not a declared uncertain quantity"),
    "correlation coefficient of one": (
        LINEAR_NORMAL + '\n[[correlated]]\npair = ["resistance", "load"]\n'
                        "rho = 1.0\n",
        r"correlated\[0\].rho", r"must lie in \(-1, 1\)"),
    "pair given twice": (
        LINEAR_NORMAL + '\n[[correlated]]\npair = ["resistance", "load"]\nrho = 0.3\n'
                        '\n[[correlated]]\npair = ["load", "resistance"]\nrho = 0.2\n',
        r"correlated\[1\].pair", "already given"),
    "unknown method": (
        LINEAR_NORMAL + '\n[solve]\napproach = "monte_carlo"\n',
        "solve.approach", "unknown approach 'monte_carlo'"),
    "negative seed": (
        LINEAR_NORMAL + "\n[solve]\nseed = -4\n",
        "solve.seed", "non-negative integer"),
    "non-numeric constant": (
        '[fixed]\nspan = "6 m"\n' + LINEAR_NORMAL,
        "fixed.span", "expected a number"),
    "no limit state": (
        LINEAR_NORMAL.split("[modes.capacity]")[0],
        "modes", "required"),
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
    [uncertain.a]
    kind = "normal"
    mean = 10.0
    std = 1.0
    [uncertain.b]
    kind = "normal"
    mean = 10.0
    std = 1.0
    [uncertain.c]
    kind = "normal"
    mean = 10.0
    std = 1.0
    [[correlated]]
    pair = ["a", "b"]
    rho = 0.9
    [[correlated]]
    pair = ["b", "c"]
    rho = 0.9
    [[correlated]]
    pair = ["a", "c"]
    rho = -0.9
    [modes.g]
    margin = "a + b + c"
    """
    assert np.linalg.eigvalsh(np.array([[1, .9, -.9], [.9, 1, .9], [-.9, .9, 1]])).min() < 0
    with pytest.raises(InputError, match="not positive definite") as info:
        load_problem(write(tmp_path, text))
    assert info.value.column == "correlated"


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
    path = write(tmp_path, LINEAR_NORMAL + "\n[solve.settings]\np0 = 0.2\n")
    loaded = load_problem(path)
    assert loaded.run_options("subset_simulation") == {"p0": 0.2}
    with pytest.raises(InputError, match="form does not take the setting 'p0'") as info:
        loaded.run_options("form")
    assert info.value.column == "solve.settings.p0"
