"""Write figures and result files without ever replacing an existing file."""

from __future__ import annotations

import datetime as dt
import io
from pathlib import Path


def unique_path(folder: Path, stem: str, suffix: str, *, now: dt.datetime | None = None) -> Path:
    """First free ``<stem>-<YYYY-MM-DDTHHMM>-NNN<suffix>`` in ``folder``."""
    stamp = (now or dt.datetime.now()).strftime("%Y-%m-%dT%H%M")
    for number in range(1, 10000):
        candidate = folder / f"{stem}-{stamp}-{number:03d}{suffix}"
        if not candidate.exists():
            return candidate
    raise RuntimeError(f"no free file name for {stem} in {folder}")


def write_new_bytes(folder: Path, stem: str, suffix: str, data: bytes) -> Path:
    """Write ``data`` to a new file (exclusive create: an existing file is never replaced)."""
    folder.mkdir(parents=True, exist_ok=True)
    while True:
        path = unique_path(folder, stem, suffix)
        try:
            with open(path, "xb") as handle:
                handle.write(data)
            return path
        except FileExistsError:
            continue


def save_figure(fig, folder: Path, stem: str, *, dpi: int = 120) -> Path:
    """Save a matplotlib figure as a new PNG in ``folder`` and return its path."""
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=dpi, bbox_inches="tight")
    return write_new_bytes(Path(folder), stem, ".png", buffer.getvalue())
