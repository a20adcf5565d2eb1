"""Command-line interface: ``assess``. Thin layer over the library.

Each command lives in its own module and registers itself on `app` when
imported here.
"""

# Command modules (import registers their commands).
from assess.cli import history, life, members, portfolio, run, site, solve, worth  # noqa: F401,E402
from assess.cli.app import app  # noqa: F401


def main():  # console-script entry point
    app()
