"""Text in square brackets reaches the engineer as written: units such as [MPa] in help and
messages, and console-markup-like text ("[/x]") in ids and file contents (no outside
reference: a behaviour check of the console layer)."""

from __future__ import annotations

from typer.testing import CliRunner

from assess.cli import app


def test_units_in_brackets_survive_in_help():
    result = CliRunner().invoke(app, ["update", "--help"])
    assert result.exit_code == 0
    assert "([MPa], [mm], [-])" in " ".join(result.stdout.split())


def test_brackets_in_a_message_survive_and_markup_never_raises(tmp_path):
    folder = tmp_path / "deck [bold] [x]"
    folder.mkdir()
    result = CliRunner().invoke(app, ["members", str(folder), "--quick"])
    assert result.exit_code == 2
    assert "Traceback" not in result.stdout + result.stderr
    assert "deck [bold] [x]" in " ".join(result.stderr.split())
