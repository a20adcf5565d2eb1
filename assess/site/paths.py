"""Where a site's files live: the ledger, stored posteriors, plots and reports.

Every path of a site folder is made here, so that no other module spells a file
name out. Ids of zones and members that become part of a file name go through
`file_stem`, so that no id can lead a file outside the site folder.
"""

from __future__ import annotations

import hashlib
import re
from pathlib import Path

from inspection_io.ledger import LEDGER_NAME

RESULTS = Path("results")
PLOTS = RESULTS / "plots"
REPORTS = RESULTS / "reports"


def ledger_path(folder: Path) -> Path:
    """The site's ledger file."""
    return Path(folder) / LEDGER_NAME


def has_ledger(folder: Path) -> bool:
    """True when the site has a ledger (some campaign was imported or a result recorded)."""
    return ledger_path(folder).exists()


def plots_folder(folder: Path) -> Path:
    return Path(folder) / PLOTS


def reports_folder(folder: Path) -> Path:
    return Path(folder) / REPORTS


_UNSAFE = re.compile(r"[^A-Za-z0-9._-]")


def file_stem(*parts: str) -> str:
    """A file-name stem made of ids: only letters, digits, '.', '_' and '-'.

    Any other character (path separators, control characters, spaces) becomes
    '_', a leading '.' is dropped, and a short hash of the original text is
    added whenever something was changed, so that two different ids never share
    a file name.
    """
    text = "-".join(str(p) for p in parts)
    safe = _UNSAFE.sub("_", text).lstrip(".") or "_"
    if safe != text:
        safe = f"{safe[:80]}-{hashlib.sha256(text.encode()).hexdigest()[:8]}"
    return safe


__all__ = ["file_stem", "has_ledger", "ledger_path", "plots_folder", "reports_folder"]
