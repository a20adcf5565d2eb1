"""The portfolio's own append-only record: one JSON line per site run and per portfolio run.

The file ``results/portfolio-record.jsonl`` in the portfolio folder is only
ever appended to (one ``write`` of one whole line on a file opened for
appending, then flushed to disk), never rewritten. Each site line holds the
site's content hash (`assess.portfolio.hashing`), its outcome (``done`` or
``failed`` with the reason) and its summary numbers; the latest line of a site
decides whether its next run can be skipped.

Floats that are not finite (beta = +inf when no sample failed) are stored as
``{"non_finite": "inf"}`` so that every line is strict JSON, and read back as
floats.
"""

from __future__ import annotations

import datetime as dt
import json
import math
import os
import warnings
from pathlib import Path

RECORD_NAME = "portfolio-record.jsonl"

#: Failure kinds that a re-run with the same inputs and seed would repeat.
REPEATABLE_FAILURES = ("input", "analysis")


def encode(value):
    """JSON-ready copy of ``value`` with non-finite floats tagged."""
    if isinstance(value, float):
        if math.isfinite(value):
            return value
        return {"non_finite": "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")}
    if isinstance(value, dict):
        return {str(k): encode(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [encode(v) for v in value]
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):  # numpy scalars
        return encode(value.item())
    return value


def decode(value):
    """Inverse of `encode`."""
    if isinstance(value, dict):
        if set(value) == {"non_finite"}:
            return float(value["non_finite"])
        return {k: decode(v) for k, v in value.items()}
    if isinstance(value, list):
        return [decode(v) for v in value]
    return value


class Record:
    """Append-only JSON-lines record of a portfolio (``<folder>/results/portfolio-record.jsonl``)."""

    def __init__(self, portfolio_folder: str | Path):
        self.path = Path(portfolio_folder) / "results" / RECORD_NAME

    def append(self, entry: dict) -> dict:
        """Append one entry (a time stamp is added) as one line; returns the entry written."""
        entry = {"time": dt.datetime.now().astimezone().isoformat(timespec="seconds"), **entry}
        line = (json.dumps(encode(entry), ensure_ascii=False, allow_nan=False,
                           sort_keys=True) + "\n").encode()
        self.path.parent.mkdir(parents=True, exist_ok=True)
        fd = os.open(self.path, os.O_WRONLY | os.O_APPEND | os.O_CREAT, 0o644)
        try:
            written = os.write(fd, line)
            if written != len(line):  # pragma: no cover - a full disk
                raise OSError(f"only {written} of {len(line)} bytes appended to {self.path}")
            os.fsync(fd)
        finally:
            os.close(fd)
        return entry

    def entries(self) -> list[dict]:
        """Every entry, oldest first. A torn last line (a crash mid-write) is skipped."""
        if not self.path.exists():
            return []
        text = self.path.read_text(encoding="utf-8")
        lines = text.split("\n")
        out = []
        for number, line in enumerate(lines, start=1):
            if not line.strip():
                continue
            try:
                out.append(decode(json.loads(line)))
            except json.JSONDecodeError:
                if number == len(lines):  # no newline after it: an unfinished append
                    warnings.warn(f"{self.path}: incomplete last line ignored", stacklevel=2)
                    continue
                raise
        return out

    def latest_sites(self) -> dict[str, dict]:
        """Latest site entry per site key."""
        latest: dict[str, dict] = {}
        for entry in self.entries():
            if entry.get("kind") == "site":
                latest[entry["site_key"]] = entry
        return latest


def can_skip(entry: dict | None, content_hash: str) -> bool:
    """True when the latest entry ran on the same content hash and a re-run would repeat it.

    A finished run, or a failure due to the input or to the analysis (same
    inputs and seed give the same failure), is not repeated; a site whose
    worker was lost or that met an unexpected error runs again.
    """
    if entry is None or entry.get("hash") != content_hash:
        return False
    return entry.get("status") == "done" or entry.get("error_kind") in REPEATABLE_FAILURES
