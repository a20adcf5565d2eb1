"""Safe file names from ids, and paths that must stay inside the site folder.

Zone and member ids come from the site file and campaign files, which the engineer may
have received from someone else. An id such as ``../../x`` or ``a/b`` must never make
the tool write a file outside the site folder, and a campaign file, a campaign folder,
the ledger or a results folder that is a link to somewhere outside the site folder must
never be read or written through.

- `safe_file_stem` maps any id to a file-name stem without separators, control
  characters or a leading dot. An id that is already safe is kept as it is; any other
  id gets a short hash of the original text, so two different ids never give the same
  stem (``a/b`` and ``a_b`` differ).
- `inside_site` resolves links and refuses a path that ends up outside the site folder.
- `site_subfolder` creates (or checks) a folder such as ``results/reports`` inside the
  site folder, refusing links that lead out of it.
- `remove_stale_temporaries` removes temporary files left by a killed run.

Error messages name the path inside the site folder only; nothing is ever read from a
file outside it, so no message can show a line of such a file.
"""

from __future__ import annotations

import hashlib
import os
import re
import tempfile
import time
from pathlib import Path
from typing import Callable

from inspection_io.errors import InputError

__all__ = [
    "HASH_DIGITS",
    "MAX_STEM_LENGTH",
    "inside_site",
    "is_inside",
    "remove_stale_temporaries",
    "safe_file_stem",
    "site_subfolder",
]

#: Hex digits of SHA-256 appended to a changed id (40 bits).
HASH_DIGITS = 10
#: Longest part of the id kept in a stem (characters), before the hash.
MAX_STEM_LENGTH = 80

_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")
_LOOKS_HASHED = re.compile(rf"-[0-9a-f]{{{HASH_DIGITS}}}$")
# Device names that Windows refuses as file names, whatever the extension (common practice).
_RESERVED = {"CON", "PRN", "AUX", "NUL", *(f"COM{i}" for i in range(1, 10)),
             *(f"LPT{i}" for i in range(1, 10))}


def safe_file_stem(text: str) -> str:
    """A file-name stem for an id (zone, member, mode, ...), safe on any file system.

    The stem holds only ASCII letters, digits, ``.``, ``_`` and ``-``; it starts with a
    letter, digit or ``_`` (never a dot or a dash), is at most
    ``MAX_STEM_LENGTH + 1 + HASH_DIGITS`` characters long and is never a reserved device
    name (such a name gets a leading ``_``). An id that already has this form is returned unchanged. Any other id (and an id
    that merely looks like a hashed stem) becomes its cleaned text plus ``-`` and the
    first `HASH_DIGITS` hex digits of the SHA-256 of the original text, so different ids
    give different stems (up to a 40-bit hash collision).

    Parameters
    ----------
    text : str
        The id.

    Returns
    -------
    str
        The stem (no suffix).

    Examples
    --------
    >>> safe_file_stem("S1-03")
    'S1-03'
    >>> safe_file_stem("../../etc/passwd").startswith("etc_passwd-")
    True
    """
    if not isinstance(text, str):
        raise InputError(f"an id must be text, got {type(text).__name__}")
    cleaned = _UNSAFE.sub("_", text).lstrip(".-")[:MAX_STEM_LENGTH].rstrip(".")
    if cleaned.split(".")[0].upper() in _RESERVED:
        cleaned = "_" + cleaned
    changed = cleaned != text or not cleaned or _LOOKS_HASHED.search(text) is not None
    if not changed:
        return cleaned
    digest = hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()[:HASH_DIGITS]
    return f"{cleaned or 'id'}-{digest}"


def _resolved(path: Path) -> Path:
    try:
        return Path(os.path.realpath(path))
    except (OSError, RuntimeError, ValueError):
        raise InputError("this path cannot be resolved (a loop of links?)", file=path) from None


def is_inside(folder: str | os.PathLike, path: str | os.PathLike) -> bool:
    """True if `path`, with every link resolved, is `folder` or lies inside it.

    A dangling link counts by where it points; a path that cannot be resolved (a loop
    of links) is not inside.
    """
    try:
        base = _resolved(Path(folder))
        target = _resolved(Path(path))
    except InputError:
        return False
    return target == base or base in target.parents


def inside_site(folder: str | os.PathLike, path: str | os.PathLike, *,
                what: str = "this path") -> Path:
    """Check that `path` stays inside the site folder once links are resolved.

    Parameters
    ----------
    folder : path
        The site folder (may itself be reached through a link).
    path : path
        A path that should lie in the site folder: a campaign file or folder, the ledger
        (also when it is a dangling link), a results folder.
    what : str
        How to call the path in the message (``"campaign file"``, ``"the ledger"``).

    Returns
    -------
    Path
        The resolved path (links followed), inside the site folder.

    Raises
    ------
    InputError
        The path, or a link on the way to it, leads outside the site folder. The message
        names the path as given; nothing is read from the place it leads to.
    """
    path = Path(path)
    base = _resolved(Path(folder))
    target = _resolved(path)
    if target != base and base not in target.parents:
        raise InputError(f"{what} leads outside the site folder through a link; refused "
                         f"(nothing is read or written outside {Path(folder)})", file=path)
    return target


def site_subfolder(folder: str | os.PathLike, *parts: str) -> Path:
    """Create (if missing) ``folder/part1/part2/...`` and check it stays in the site folder.

    Parameters
    ----------
    folder : path
        The site folder.
    *parts : str
        Plain folder names (no separators), e.g. ``"results", "reports"``.

    Returns
    -------
    Path
        The folder (as ``folder/parts...``, not resolved).

    Raises
    ------
    InputError
        A part is not a plain name, exists as a file, or is a link leading outside the
        site folder.
    """
    path = Path(folder)
    for part in parts:
        if not part or part in (".", "..") or "/" in part or "\\" in part or "\x00" in part:
            raise InputError(f"expected a plain folder name, got {part!r}")
        path = path / part
        if os.path.lexists(path):
            inside_site(folder, path, what=f"the folder {part}")
            if not path.is_dir():
                raise InputError("expected a folder, found a file", file=path)
        else:
            try:
                path.mkdir()
            except FileExistsError:  # made by another process meanwhile: check it again
                inside_site(folder, path, what=f"the folder {part}")
            except OSError as exc:
                raise InputError(f"cannot create the folder: {exc.strerror}",
                                 file=path) from None
    return path


def replace_atomically(path: str | os.PathLike, write: Callable[[str], object], *,
                       suffix: str) -> None:
    """Write a file all at once: ``write(tmp)`` fills a temporary file beside ``path``,
    which then replaces ``path`` (`os.replace`); a killed run leaves ``.<stem>-*<suffix>``,
    which `remove_stale_temporaries` clears later.

    Parameters
    ----------
    path : path
        The file to write (its folder is made when missing).
    write : callable
        ``write(tmp_name)`` writes the whole content to the file named ``tmp_name``.
    suffix : str
        Ending of the temporary name, e.g. ``".nc.tmp"``.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.stem}-", suffix=suffix, dir=path.parent)
    os.close(fd)
    try:
        write(tmp)
        os.replace(tmp, path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def remove_stale_temporaries(folder: str | os.PathLike, pattern: str, *,
                             older_than: float = 600.0) -> list[Path]:
    """Remove temporary files left by an earlier, killed run.

    Parameters
    ----------
    folder : path
        Folder to look in (not recursive). Nothing happens if it does not exist.
    pattern : str
        Glob pattern of the temporary names, e.g. ``".*.tmp"``.
    older_than : float
        Only files last modified more than this many seconds ago [s]; a file of a run
        still writing is younger. Use 0 while holding the site lock.

    Returns
    -------
    list of Path
        The files removed (a link is removed itself, never what it points to).
    """
    folder = Path(folder)
    if not folder.is_dir():
        return []
    removed, now = [], time.time()
    for path in sorted(folder.glob(pattern)):
        try:
            info = path.lstat()
        except FileNotFoundError:
            continue
        if os.path.isdir(path) and not path.is_symlink():
            continue
        if now - info.st_mtime < older_than:
            continue
        try:
            path.unlink()
        except FileNotFoundError:
            continue
        removed.append(path)
    return removed
