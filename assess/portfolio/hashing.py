"""Content hash of a site: what decides whether its main job must run again.

The hash covers the bytes of ``site.toml``, ``decisions.toml`` (when present)
and every file under ``campaigns/`` (by relative path, so a renamed or moved
file counts as a change), plus the run settings and the code version. Files
the main job writes itself (``ledger.sqlite``, ``results/``) are not part of
it, so a finished run does not change its own hash.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import assess

#: Files of a site folder, besides campaigns/, that are inputs of the main job.
INPUT_FILES = ("site.toml", "decisions.toml")


def input_files(folder: Path) -> list[Path]:
    """The site's input files, sorted by relative path (hidden files left out)."""
    folder = Path(folder)
    files = [folder / name for name in INPUT_FILES if (folder / name).is_file()]
    campaigns = folder / "campaigns"
    if campaigns.is_dir():
        files += sorted(p for p in campaigns.rglob("*") if p.is_file()
                        and not any(part.startswith((".", "~$"))
                                    for part in p.relative_to(campaigns).parts))
    return files


def site_hash(folder: str | Path, settings: dict, *, code_version: str | None = None) -> str:
    """SHA-256 (hex) of the site's inputs, the run settings and the code version."""
    folder = Path(folder)
    digest = hashlib.sha256()
    header = {"code_version": code_version or assess.__version__, "settings": settings}
    digest.update(json.dumps(header, sort_keys=True, default=str).encode())
    for path in input_files(folder):
        relative = path.relative_to(folder).as_posix()
        digest.update(b"\0file\0" + relative.encode() + b"\0")
        digest.update(hashlib.sha256(path.read_bytes()).digest())
    return digest.hexdigest()
