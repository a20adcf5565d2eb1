"""The package installs and its console script answers."""

from typer.testing import CliRunner

import assess
from assess.cli import app


def test_version_option_prints_package_version():
    result = CliRunner().invoke(app, ["--version"])
    assert result.exit_code == 0
    assert assess.__version__ in result.output
