"""The command line starts without the heavy libraries; what it lists instead of importing
them matches the library. (Start-up time itself is measured in benchmarks/cli_startup.py,
never asserted here.)"""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
from scipy import stats

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("pymc", "pytensor", "arviz", "pandas", "matplotlib", "dask", "scipy.stats")


def test_importing_the_command_line_loads_no_heavy_library():
    code = (
        "import json, sys; import assess.cli; "
        f"print(json.dumps(sorted(m for m in {list(HEAVY)!r} if m in sys.modules)))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True
    )
    assert json.loads(out.stdout.strip().splitlines()[-1]) == []


def test_record_kinds_of_the_help_text_are_the_readers_kinds():
    from assess.cli.site import RECORD_KINDS
    from inspection_io.readers import KINDS

    assert RECORD_KINDS == KINDS


def test_method_names_are_the_dispatch_table():
    from assess.method_names import METHOD_NAMES
    from assess.reliability.dispatch import METHODS

    assert tuple(METHODS) == METHOD_NAMES


def test_beta_and_pf_conversions_equal_scipy_norm():
    # reference: scipy.stats.norm.isf / norm.sf, including the ends pf = 0 and pf = 1
    from assess.reliability.result import beta_from_pf, pf_from_beta

    for pf in [0.0, 1e-300, 1e-12, 1e-6, 0.2, 0.5, 0.9, 1.0]:
        assert beta_from_pf(pf) == stats.norm.isf(pf)
    for beta in [-np.inf, -3.0, 0.0, 1.5, 4.2, 9.0, 38.0, np.inf]:
        assert pf_from_beta(beta) == stats.norm.sf(beta)


def test_help_of_the_command_line_and_of_solve_loads_no_heavy_library():
    # the --help paths run typer's parser and help formatter; neither may pull the heavy
    # libraries (issue 17: these paths are the ones an engineer starts with)
    for argv in (["--help"], ["solve", "--help"], ["site", "--help"]):
        code = (
            "import json, sys; from assess.cli import main; sys.argv = ['assess', *"
            f"{argv!r}]\ntry:\n    main()\nexcept SystemExit:\n    pass\n"
            f"print(json.dumps(sorted(m for m in {list(HEAVY)!r} if m in sys.modules)))"
        )
        out = subprocess.run(
            [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True
        )
        assert "Usage" in out.stdout, argv
        assert json.loads(out.stdout.strip().splitlines()[-1]) == [], argv
