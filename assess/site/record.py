"""One way into the ledger for every site step: `LedgerRow` and `record_rows`.

A step's result says which rows it leaves (``ledger_rows``); the run step
(`assess.site.run.run_step`) writes them, the same from the main job and from
the single commands. Every row carries the run settings and the SHA-256 of the
site file it was computed from.
"""

from __future__ import annotations

import dataclasses
import hashlib
from pathlib import Path
from typing import Any, Iterable

from assess.site.paths import ledger_path
from inspection_io.ledger import Ledger


@dataclasses.dataclass(frozen=True)
class LedgerRow:
    """One result row: kind, payload and what it belongs to."""

    kind: str
    payload: dict
    member: str | None = None
    mode: str | None = None
    seed: int | None = None
    settings: dict = dataclasses.field(default_factory=dict)


def site_file_hash(site) -> str:
    """SHA-256 of the site file's bytes (hex)."""
    return hashlib.sha256(Path(site.path).read_bytes()).hexdigest()


def record_rows(site, rows: Iterable[LedgerRow], *, step: str, settings: dict[str, Any]) -> int:
    """Append ``rows`` to the site's ledger; returns how many were written.

    Each row's settings hold the step name, the run settings and the site-file hash,
    besides its own settings.
    """
    rows = list(rows)
    if not rows:
        return 0
    common = {"step": step, "run": settings, "site_file_sha256": site_file_hash(site)}
    with Ledger(ledger_path(site.folder)) as ledger:
        for row in rows:
            ledger.append_result(
                row.kind,
                row.payload,
                member=row.member,
                mode=row.mode,
                seed=row.seed,
                settings={**common, **row.settings},
            )
    return len(rows)


__all__ = ["LedgerRow", "record_rows", "site_file_hash"]
