"""Console-safe text: `escape_markup` against rich's own markup parser, and `quote_cell`.

Reference: rich's console-markup parser (``rich.markup.render``, the code that
interprets the text on the engineer's screen) and its documented escape rule
(``rich.markup.escape``: a backslash before a tag-like ``[...]``).
"""

import io

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from rich.console import Console
from rich.errors import MarkupError
from rich.markup import escape as rich_escape
from rich.markup import render

from inspection_io.console_text import CELL_PREVIEW_CHARS, escape_markup, quote_cell

HOSTILE = ["[/x]", "diameter [unit]", "[bold]zone[/bold]", "C:\\data\\", "a\\[b]", "[[/]]",
           "[link=file:///etc/passwd]x[/link]", "[@click=quit]", "50 [% binder]", "\\", "[#ff0000]",
           "[red", "]", "[/]", "campaigns/[2009]/cover.csv"]


def printed(markup: str) -> str:
    """What a rich console prints for `markup` (plain text, no colour)."""
    out = io.StringIO()
    Console(file=out, width=1000, color_system=None, highlight=False).print(markup, end="")
    return out.getvalue()


@pytest.mark.parametrize("text", HOSTILE)
def test_rich_breaks_or_loses_text_without_escaping_and_not_with_it(text):
    # without escaping, rich either raises or changes the text for most of these cases
    try:
        unescaped = render(text).plain
    except MarkupError:
        unescaped = None
    if text in ("[/x]", "diameter [unit]", "[/]"):
        assert unescaped != text  # the failure the issue reports: raise or lost "[unit]"
    # with escaping, the text comes back exactly when a tag follows it ...
    assert render(f"[bold]{escape_markup(text)}[/bold]").plain == text
    # ... or plain text, except that a trailing backslash shows doubled (it is doubled so
    # that a tag after it stays a tag)
    assert render(f"Input error: {escape_markup(text)} (row 2)").plain == \
        f"Input error: {with_trailing_backslashes_doubled(text)} (row 2)"
    # and a console prints it without raising
    assert printed(f"[bold red]Input error:[/] {escape_markup(text)}").startswith(
        "Input error: " + text)


def with_trailing_backslashes_doubled(text: str) -> str:
    run = len(text) - len(text.rstrip("\\"))
    return text + "\\" * run


def test_same_escape_as_rich_where_rich_is_exact_and_exact_where_it_is_not():
    # rich.markup.escape is the documented rule; ours gives the same text for tags ...
    for text in ("[/x]", "diameter [unit]", "[bold]zone[/bold]", "\\[/x]", "C:\\data\\"):
        assert escape_markup(text) == rich_escape(text)
    # ... and also keeps "\\[" (rich: plain "\\[" renders as "[") and trailing "\\\\"
    for text in ("\\[", "a\\\\"):
        assert render(f"[b]{rich_escape(text)}[/b]").plain != text
        assert render(f"[b]{escape_markup(text)}[/b]").plain == text


@settings(max_examples=300, deadline=None, database=None, derandomize=True)
@given(st.text(alphabet=st.sampled_from(list("[]/\\ab#@=x ")), max_size=24)
       | st.text(alphabet=st.characters(blacklist_categories=("Cc", "Cs"),
                                        blacklist_characters=":"), max_size=24))
def test_escaped_text_round_trips_through_rich_markup(text):
    # control characters (dropped by rich.text.Text) and ":" (emoji codes) are not markup
    assert render(f"[bold]{escape_markup(text)}[/bold]").plain == text
    assert render(f"[b]{escape_markup(text)}[/]").plain == text
    assert render(escape_markup(text) + " end").plain == \
        with_trailing_backslashes_doubled(text) + " end"


def test_quote_cell_shows_control_characters_and_cuts_long_cells():
    assert quote_cell("abc") == "abc"
    assert quote_cell("a\x00b\x1b[31mc\n") == "a\\x00b\\x1b[31mc\\x0a"
    assert quote_cell("a\u202eb") == "a\\u202eb"          # right-to-left override made visible
    long = "x" * 200_000
    shown = quote_cell(long)
    assert shown.startswith("x" * CELL_PREVIEW_CHARS) and shown.endswith("(200000 characters)")
    assert len(shown) < CELL_PREVIEW_CHARS + 40
    assert quote_cell(12.5) == "12.5"


# ---------------------------------------------------------------- through the CLI
# The CLI prints InputError messages with its consoles set to markup=False (assess/cli/app.py).

def _import_with_cover_file(tmp_path, text):
    from pathlib import Path

    from typer.testing import CliRunner

    import assess.cli.site  # noqa: F401  (registers the sub-application)
    from assess.cli import app
    templates = Path(__file__).resolve().parents[1] / "inspection_io" / "templates"
    campaign = tmp_path / "site" / "campaigns" / "c1"
    campaign.mkdir(parents=True)
    (tmp_path / "site" / "site.toml").write_text((templates / "site.toml").read_text())
    (campaign / "campaign.toml").write_text('name = "C1"\ndate = 2026-01-01\n')
    (campaign / "cover.csv").write_text(text)
    return CliRunner().invoke(app, ["site", "import", str(tmp_path / "site")])


@pytest.mark.parametrize("text, shown", [
    ("zone,location_id,cover [mm]\n[/x],P1,30\n", "'[/x]'"),
    ("zone,location_id,cover [unit]\nZ1,P1,30\n", "'cover [unit]'"),
])
def test_cli_shows_bracketed_text_in_messages(tmp_path, text, shown):
    result = _import_with_cover_file(tmp_path, text)
    assert result.exit_code == 2 and result.stderr.startswith("Input error:")
    assert shown in result.stderr.replace("\n", "")
