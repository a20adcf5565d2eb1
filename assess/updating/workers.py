"""Worker processes of parallel MCMC chains that die with the process that started them.

PyMC runs parallel chains in worker processes (through a fork server on Linux). When
the run is killed (kill -9, out of memory), its workers used to stay asleep for ever,
holding their memory. `dying_context` wraps a multiprocessing context so that each
worker watches the process that asked for it: a daemon thread checks every
`WATCH_SECONDS` whether that process still exists (signal 0, POSIX kill(2)) and ends
the worker at once when it does not. The fork server between them does not matter.
"""

from __future__ import annotations

import multiprocessing
import os
import threading
import time
from typing import Any

WATCH_SECONDS = 0.5
"""How often a worker checks that its run is still alive [s]."""


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, owned by someone else (cannot happen for our parent)
        return True
    return True


def _watch(run_pid: int) -> None:
    while _alive(run_pid):
        time.sleep(WATCH_SECONDS)
    os._exit(1)


def _run_watched(run_pid: int, target, *args) -> None:
    threading.Thread(target=_watch, args=(run_pid,), daemon=True,
                     name="watch-run").start()
    target(*args)


class DyingContext:
    """A multiprocessing context whose processes end when the run that started them ends."""

    def __init__(self, base: multiprocessing.context.BaseContext):
        self._base = base

    def __getattr__(self, name: str) -> Any:
        return getattr(self._base, name)

    def Process(self, *args, target=None, **kwargs):  # noqa: N802 (multiprocessing's name)
        process_args = kwargs.pop("args", ())
        return self._base.Process(*args, target=_run_watched,
                                  args=(os.getpid(), target, *process_args), **kwargs)


PRELOAD = ("__main__", "assess.updating.worker_preload")
"""Modules the fork server imports once, before it forks any worker: its default
(``__main__``) and PyMC with a warm compile cache (`assess.updating.worker_preload`)."""


def dying_context(method: str | None = None) -> DyingContext:
    """`DyingContext` over ``multiprocessing.get_context(method)`` (default: forkserver).

    The fork server (started at the first use) preloads `PRELOAD`, so each worker starts
    in well under a second instead of importing PyMC itself.
    """
    context = multiprocessing.get_context(method or "forkserver")
    if context.get_start_method() == "forkserver":
        context.set_forkserver_preload(list(PRELOAD))
    return DyingContext(context)


__all__ = ["PRELOAD", "DyingContext", "WATCH_SECONDS", "dying_context"]
