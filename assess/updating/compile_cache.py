"""Where PyTensor keeps the C code it compiles for the MCMC models: the user's cache folder.

PyTensor compiles every model's log density to C and keeps the compiled modules on
disk, so that the next run with a model of the same structure links them instead of
compiling again (a first-ever run pays about 25 s more, measured in
benchmarks/main_job.py). By default it keeps them in ``~/.pytensor``; the tool puts
them deliberately in the user's cache folder instead, with the other things that may
be deleted at any time without losing work:

- ``ASSESS_COMPILE_CACHE`` if set;
- else ``$XDG_CACHE_HOME/assess/pytensor`` (XDG Base Directory Specification 0.8),
  ``~/.cache/assess/pytensor`` when ``XDG_CACHE_HOME`` is unset or not absolute;
  ``~/Library/Caches/assess/pytensor`` on macOS and
  ``%LOCALAPPDATA%\\assess\\pytensor`` on Windows (the platforms' cache folders,
  common practice).

A choice the user made already wins: a ``base_compiledir`` or ``compiledir`` in
``PYTENSOR_FLAGS`` is left alone, and nothing changes once PyTensor is imported (its
configuration is read at import). The folder is set through ``PYTENSOR_FLAGS``, so the
worker processes of parallel chains, which inherit the environment, use it too.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

CACHE_VARIABLE = "ASSESS_COMPILE_CACHE"
"""Environment variable naming the folder of PyTensor's compiled modules."""


def compile_cache_dir() -> Path:
    """The folder PyTensor's compiled modules go to (see the module notes)."""
    chosen = os.environ.get(CACHE_VARIABLE, "").strip()
    if chosen:
        return Path(chosen).expanduser()
    if sys.platform == "win32":
        root = Path(os.environ.get("LOCALAPPDATA") or Path.home() / "AppData" / "Local")
    elif sys.platform == "darwin":
        root = Path.home() / "Library" / "Caches"
    else:
        xdg = os.environ.get("XDG_CACHE_HOME", "")
        root = Path(xdg) if xdg and Path(xdg).is_absolute() else Path.home() / ".cache"
    return root / "assess" / "pytensor"


def place_compile_cache() -> Path | None:
    """Point PyTensor at `compile_cache_dir` unless it is imported or told otherwise.

    Returns the folder set, or None when nothing was changed (PyTensor already
    imported, the user's ``PYTENSOR_FLAGS`` naming a compile folder, or the folder
    cannot be made: PyTensor then keeps its own default).
    """
    if "pytensor" in sys.modules:
        return None
    flags = os.environ.get("PYTENSOR_FLAGS", "")
    if "compiledir" in flags:
        return None
    folder = compile_cache_dir()
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError:
        return None
    os.environ["PYTENSOR_FLAGS"] = ",".join(
        part for part in (flags, f"base_compiledir={folder}") if part
    )
    return folder


__all__ = ["CACHE_VARIABLE", "compile_cache_dir", "place_compile_cache"]
