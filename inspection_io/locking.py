"""One process at a time on a site: an advisory lock on a file in the site folder.

`site_lock` takes an exclusive ``flock`` (see flock(2)) on ``<site>/.assess-lock``. A
second process asking for the same site waits up to ``wait_seconds`` and then gets a
`SiteBusyError` naming the process that holds the lock. The operating system releases
the lock when its holder exits for any reason, SIGKILL included, so a killed run never
leaves a site locked; the lock file itself stays (it is never deleted: deleting a lock
file lets two processes lock two different files).

The lock is re-entrant within one process: a function holding it may call another that
takes it again (the main job holds it while the import takes it too).
"""

from __future__ import annotations

import contextlib
import datetime as dt
import errno
import os
import threading
import time
from collections.abc import Iterator
from pathlib import Path

from inspection_io.errors import InputError
from inspection_io.paths import inside_site

try:  # POSIX only; elsewhere the lock is a no-op with a clear note
    import fcntl
except ImportError:  # pragma: no cover - not on Linux/macOS
    fcntl = None

__all__ = ["DEFAULT_WAIT_SECONDS", "LOCK_NAME", "SiteBusyError", "site_lock"]

LOCK_NAME = ".assess-lock"
#: How long a second process waits for the site by default [s].
DEFAULT_WAIT_SECONDS = 10.0
_POLL_SECONDS = 0.05

_held: dict[str, list] = {}  # resolved lock path -> [fd, depth]
_guard = threading.Lock()


class SiteBusyError(InputError):
    """Another process is working on the same site folder."""


def _holder(fd: int) -> str:
    try:
        text = os.pread(fd, 200, 0).decode("utf-8", "replace").strip()
    except OSError:
        return ""
    return text.splitlines()[0] if text else ""


@contextlib.contextmanager
def site_lock(folder: str | os.PathLike, *,
              wait_seconds: float = DEFAULT_WAIT_SECONDS) -> Iterator[Path]:
    """Hold the site's lock for the duration of the ``with`` block.

    Parameters
    ----------
    folder : path
        The site folder.
    wait_seconds : float
        How long to wait for another process to release the site [s]; 0 refuses at once.

    Yields
    ------
    Path
        The lock file.

    Raises
    ------
    SiteBusyError
        (an `InputError`) the site is still locked after `wait_seconds`; the message
        names the holder's process id and start time.
    InputError
        The folder does not exist, or the lock file is a link leading outside it.
    """
    folder = Path(folder)
    if not folder.is_dir():
        raise InputError("site folder not found", file=folder)
    path = folder / LOCK_NAME
    if os.path.lexists(path):
        inside_site(folder, path, what="the lock file")
    key = os.path.realpath(path)
    with _guard:
        entry = _held.get(key)
        if entry is not None:
            entry[1] += 1
    if entry is not None:
        try:
            yield path
        finally:
            with _guard:
                entry[1] -= 1
        return
    if fcntl is None:  # pragma: no cover
        yield path
        return
    flags = os.O_RDWR | os.O_CREAT | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        fd = os.open(path, flags, 0o644)
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            raise InputError("the lock file is a link; refused", file=path) from None
        raise InputError(f"cannot open the site's lock file: {exc.strerror}",
                         file=path) from None
    try:
        deadline = time.monotonic() + max(0.0, float(wait_seconds))
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except OSError as exc:
                if exc.errno not in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
                    raise InputError(f"cannot lock the site: {exc.strerror}",
                                     file=path) from None
                if time.monotonic() >= deadline:
                    holder = _holder(fd)
                    raise SiteBusyError(
                        "another assess process is working on this site"
                        + (f" ({holder})" if holder else "")
                        + f"; waited {wait_seconds:g} s. Let it finish, then try again",
                        file=folder) from None
                time.sleep(_POLL_SECONDS)
        stamp = dt.datetime.now().astimezone().isoformat(timespec="seconds")
        os.ftruncate(fd, 0)
        os.pwrite(fd, f"process {os.getpid()} since {stamp}\n".encode(), 0)
        with _guard:
            _held[key] = [fd, 1]
        try:
            yield path
        finally:
            with _guard:
                _held.pop(key, None)
            with contextlib.suppress(OSError):
                os.ftruncate(fd, 0)
            fcntl.flock(fd, fcntl.LOCK_UN)
    finally:
        os.close(fd)
