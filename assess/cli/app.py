"""The Typer application and the guard that turns errors into clean exits.

Command modules import `app` from here and register with ``@app.command()``
(or add a sub-application with ``app.add_typer``). Every command body runs
inside `guarded`, so that:
- `InputError` (bad input) prints a message to stderr and exits 2,
- `AnalysisError` (analysis failed) prints a message and exits 1,
and no traceback reaches the engineer.
"""

from __future__ import annotations

import contextlib
import functools
import warnings

import typer
from rich.console import Console
from rich.text import Text

import assess
from assess.cautions import CAUTION
from assess.errors import AnalysisError, InputError

app = typer.Typer(
    name="assess",
    help=("Reliability assessment of existing reinforced-concrete structures.\n\n"
          + CAUTION),
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    add_completion=False,
    rich_markup_mode=None,  # help text is plain: units in brackets such as [MPa] stay visible
)

err_console = Console(stderr=True, markup=False, emoji=False)
out_console = Console(markup=False, emoji=False)


def _version_callback(value: bool):
    if value:
        typer.echo(f"assess {assess.__version__}")
        raise typer.Exit()


@app.callback()
def _root(version: bool = typer.Option(False, "--version", callback=_version_callback,
                                        is_eager=True, help="Print the version and exit.")):
    """Reliability assessment of existing reinforced-concrete structures."""
    quiet_libraries()


_shown_warnings: set = set()


def plain(label: str, style: str, text: str) -> Text:
    """A styled label and plain text: nothing in ``text`` is read as console markup."""
    return Text.assemble((label, style), str(text))


def _show_warning(message, category, filename, lineno, file=None, line=None):
    text = str(message)
    if text not in _shown_warnings:
        _shown_warnings.add(text)
        err_console.print(plain("Warning: ", "yellow", text), highlight=False, soft_wrap=True)


def quiet_libraries() -> None:
    """Show our warnings once each as plain lines; silence library chatter.

    PyTensor's note about a missing optimised BLAS and PyMC's progress logging
    say nothing about the structure; they are dropped from the engineer's screen.
    """
    import logging

    warnings.showwarning = _show_warning
    warnings.filterwarnings("ignore", message=".*could not link to a BLAS.*")
    warnings.filterwarnings("ignore", category=DeprecationWarning)
    warnings.filterwarnings("ignore", category=FutureWarning)
    for name in ("pymc", "pytensor", "arviz"):
        logging.getLogger(name).setLevel(logging.ERROR)


@contextlib.contextmanager
def guarded():
    """Turn known errors into a message on stderr and an exit code (2 input, 1 analysis)."""
    try:
        yield
    except InputError as exc:
        err_console.print(plain("Input error: ", "bold red", str(exc)), highlight=False,
                          soft_wrap=True)
        raise typer.Exit(code=2)
    except AnalysisError as exc:
        err_console.print(plain("Analysis failed: ", "bold red", str(exc)), highlight=False,
                          soft_wrap=True)
        raise typer.Exit(code=1)


def guard(func):
    """Decorator form of `guarded` for command functions."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with guarded():
            return func(*args, **kwargs)

    return wrapper


def print_caution():
    """Print the standing caution to stderr (results stay clean on stdout)."""
    err_console.print(plain("", "dim", CAUTION), style="dim", highlight=False, soft_wrap=True)


def emit_json(payload) -> None:
    """Print ``payload`` as strict JSON on stdout (inf and NaN become null)."""
    import json

    from assess.json_values import to_json_native

    typer.echo(json.dumps(to_json_native(payload, "output"), indent=2, ensure_ascii=False,
                          allow_nan=False))
