"""Write figures and result files without ever replacing an existing file.

Every file is written whole to a temporary name in its folder (``.<name>.<random>.tmp``),
flushed to disk, then published under its final name with a hard link, which is atomic
and fails if the name is taken (link(2)); so a reader never sees half a file and an
existing file is never replaced. A run killed while writing leaves at most a temporary
file, which `remove_stale_temporaries` clears later. Stems built from ids (member, zone,
mode) go through `inspection_io.paths.safe_file_stem`, so an id such as ``../../x`` can
never place a file outside its folder.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import errno
import io
import os
import secrets
from pathlib import Path

from inspection_io.paths import remove_stale_temporaries, safe_file_stem

__all__ = [
    "TEMP_PATTERN",
    "publish",
    "remove_stale_temporaries",
    "safe_file_stem",
    "save_figure",
    "unique_path",
    "write_new_bytes",
    "write_temporary",
]

#: Glob pattern of the temporary files written here.
TEMP_PATTERN = ".*.tmp"
_NO_LINKS = (errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.EXDEV, errno.EMLINK,
             errno.ENOSYS)


def unique_path(folder: Path, stem: str, suffix: str, *, now: dt.datetime | None = None) -> Path:
    """First free ``<safe stem>-<YYYY-MM-DDTHHMM>-NNN<suffix>`` in ``folder``."""
    stem = safe_file_stem(stem)
    stamp = (now or dt.datetime.now()).strftime("%Y-%m-%dT%H%M")
    for number in range(1, 10000):
        candidate = Path(folder) / f"{stem}-{stamp}-{number:03d}{suffix}"
        if not os.path.lexists(candidate):
            return candidate
    raise RuntimeError(f"no free file name for {stem} in {folder}")


def write_temporary(path: Path, data: bytes) -> Path:
    """Write `data` to a new temporary file beside `path`, flushed to disk; return it."""
    tmp = path.parent / f".{path.name}.{secrets.token_hex(8)}.tmp"
    # Mode "x" creates the file with the usual permissions (umask), unlike mkstemp.
    try:
        with open(tmp, "xb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    return tmp


def publish(tmp: Path, path: Path) -> None:
    """Give the temporary file `tmp` its final name `path`, never replacing a file.

    Raises
    ------
    FileExistsError
        `path` exists (it is left untouched).
    """
    try:
        # A hard link publishes atomically and fails if the name is taken, so a file
        # written at the same moment by another run is never replaced.
        os.link(tmp, path)
    except FileExistsError:
        raise
    except OSError as exc:
        if exc.errno not in _NO_LINKS:
            raise
        # File systems without hard links: check, then atomic rename.
        if os.path.lexists(path):
            raise FileExistsError(errno.EEXIST, "file exists", str(path)) from None
        os.replace(tmp, path)


def write_new_bytes(folder: Path, stem: str, suffix: str, data: bytes) -> Path:
    """Write ``data`` to a new file ``<safe stem>-<stamp>-NNN<suffix>``; never replaces one."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    while True:
        path = unique_path(folder, stem, suffix)
        tmp = write_temporary(path, data)
        try:
            publish(tmp, path)
            return path
        except FileExistsError:
            continue
        finally:
            with contextlib.suppress(OSError):
                tmp.unlink()


def save_figure(fig, folder: Path, stem: str, *, dpi: int = 120) -> Path:
    """Save a matplotlib figure as a new PNG in ``folder`` and return its path.

    `stem` may hold ids (member, zone): it is made safe with
    `inspection_io.paths.safe_file_stem`.
    """
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=dpi, bbox_inches="tight")
    return write_new_bytes(Path(folder), stem, ".png", buffer.getvalue())
