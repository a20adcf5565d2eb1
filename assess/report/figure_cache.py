"""PNG images of the report's figures, kept under a hash of what draws them.

A figure of the report is decided by its plotting function, the numbers and words
given to it, the resolution and the code that draws it (the report's modules, the
library and the matplotlib version). `png_of` hashes all of that, reads the stored
PNG when ``results/figures/<hash>.png`` exists, and otherwise draws the figure and
stores its PNG atomically. A warm run whose results did not change therefore draws
nothing and embeds the same bytes; any changed number, word or line of code gives
another hash and a new drawing. A stored file that is not a PNG is set aside (never
deleted) and the figure drawn again.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import functools
import hashlib
import io
import warnings
from collections.abc import Mapping
from pathlib import Path
from typing import Any, Callable

import numpy as np

FIGURE_FOLDER = Path("results") / "figures"
"""Folder of the stored figure images, relative to the site folder."""

_PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
_REPORT_ROOT = Path(__file__).resolve().parent


@dataclasses.dataclass(frozen=True)
class Drawing:
    """A figure not drawn yet: ``plot(*args, **kwargs)`` returns a matplotlib Figure."""

    plot: Callable
    args: tuple = ()
    kwargs: dict = dataclasses.field(default_factory=dict)

    def figure(self):
        """Draw it: the matplotlib Figure."""
        return self.plot(*self.args, **self.kwargs)


class Unhashable(TypeError):
    """A value that `drawing_hash` does not know how to hash (the figure is drawn uncached)."""


def _feed(digest, value: Any) -> None:
    """Feed a tagged, order-preserving encoding of ``value`` to ``digest``."""
    if value is None or isinstance(value, (bool, int, float, str)):
        digest.update(f"{type(value).__name__}:{value!r};".encode())
    elif isinstance(value, np.ndarray):
        if value.dtype.kind not in "biufcmM":
            raise Unhashable(f"array of {value.dtype}")
        array = np.ascontiguousarray(value)
        digest.update(f"array:{array.dtype.str}:{array.shape};".encode())
        digest.update(array.tobytes())
    elif isinstance(value, np.generic):
        _feed(digest, np.asarray(value))
    elif isinstance(value, (dt.date, dt.datetime)):
        digest.update(f"{type(value).__name__}:{value.isoformat()};".encode())
    elif isinstance(value, Mapping):
        digest.update(f"map:{len(value)};".encode())
        for key, item in value.items():  # order kept: it is the order of legends and panels
            _feed(digest, key)
            _feed(digest, item)
    elif isinstance(value, (list, tuple)):
        digest.update(f"{type(value).__name__}:{len(value)};".encode())
        for item in value:
            _feed(digest, item)
    else:
        raise Unhashable(type(value).__name__)


@functools.lru_cache(maxsize=1)
def drawing_code_fingerprint() -> str:
    """SHA-256 of the code that draws a figure: the report's modules, the library's source
    (`assess.site.result_cache.code_fingerprint`) and the matplotlib version [hex]."""
    import matplotlib

    from assess.site.result_cache import code_fingerprint

    digest = hashlib.sha256()
    for path in sorted(_REPORT_ROOT.glob("*.py")):
        digest.update(path.name.encode())
        digest.update(path.read_bytes())
    digest.update(code_fingerprint().encode())
    digest.update(matplotlib.__version__.encode())
    return digest.hexdigest()


def drawing_hash(drawing: Drawing, dpi: int) -> str:
    """SHA-256 of a drawing (function, arguments), its resolution and the code [hex].

    Raises `Unhashable` for an argument that is not numbers, text, dates, arrays,
    lists, tuples or mappings of them.
    """
    digest = hashlib.sha256()
    plot = drawing.plot
    _feed(digest, f"{plot.__module__}.{plot.__qualname__}")
    _feed(digest, drawing.args)
    _feed(digest, sorted(drawing.kwargs.items()))
    _feed(digest, int(dpi))
    _feed(digest, drawing_code_fingerprint())
    return digest.hexdigest()


def render_png(figure, dpi: int) -> bytes:
    """The PNG bytes of a matplotlib Figure on a white background."""
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=dpi, facecolor="white")
    return buffer.getvalue()


def png_width(png: bytes) -> int:
    """Width of a PNG image from its header [px]."""
    if png[:8] != _PNG_SIGNATURE or png[12:16] != b"IHDR":
        raise ValueError("not a PNG image")
    return int.from_bytes(png[16:20], "big")


def png_of(drawing: Drawing, *, dpi: int, site_folder: Path | None = None) -> bytes:
    """The PNG of ``drawing`` at ``dpi``: read from the site's figure store when the same
    drawing was stored before, else drawn (and stored when ``site_folder`` is given)."""
    if site_folder is None:
        return render_png(drawing.figure(), dpi)
    try:
        digest = drawing_hash(drawing, dpi)
    except Unhashable:
        return render_png(drawing.figure(), dpi)
    from assess.updating.cache import set_aside
    from inspection_io.paths import replace_atomically, site_subfolder

    path = site_subfolder(Path(site_folder), *FIGURE_FOLDER.parts) / f"{digest[:24]}.png"
    if path.exists():
        png = path.read_bytes()
        try:
            png_width(png)
            return png
        except ValueError:
            moved = set_aside(path)
            warnings.warn(f"the stored figure {path.name} is not a PNG image; it was set aside "
                          f"as {moved.name} and the figure drawn again", UserWarning, stacklevel=2)
    png = render_png(drawing.figure(), dpi)
    replace_atomically(path, lambda tmp: Path(tmp).write_bytes(png), suffix=".png.tmp")
    return png


def clean_stale_temporaries(site_folder: Path, *, older_than: float = 0.0) -> list[Path]:
    """Remove temporary figure files left by a run killed while writing (under the lock)."""
    from inspection_io.paths import remove_stale_temporaries

    return remove_stale_temporaries(Path(site_folder) / FIGURE_FOLDER, ".*.png.tmp",
                                    older_than=older_than)


__all__ = ["Drawing", "FIGURE_FOLDER", "clean_stale_temporaries", "drawing_hash", "png_of",
           "png_width", "render_png"]
