"""Write a report as a pair of files: self-contained HTML and a JSON of all numbers.

Reports are appended, never overwritten (design decision 7: "results are
appended, never overwritten"). Given a folder, the files get a fresh name
``report-<YYYY-MM-DDTHHMM>-<NNN>.html`` / ``.json`` with the first sequence
number free for both; given a file name that already exists, writing stops with
an `InputError`. Each file is written to a temporary file in the same folder,
flushed to disk and then published under its final name in one step, so a
reader never sees half a report.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import errno
import json
import math
import os
import secrets
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

import assess
from assess.cautions import CAUTION
from assess.errors import InputError
from assess.report.document import ReportDocument

#: Version of the JSON layout written by `write_report`; raise it when keys change meaning.
SCHEMA_VERSION = 1

_STEM_PREFIX = "report"


def to_json_native(value: Any, path: str = "numbers") -> Any:
    """Convert a nested structure to JSON-native types.

    numpy scalars and arrays become Python numbers and lists; NaN and +-inf
    become None (JSON null); tuples and sets become lists; dict keys become
    strings; dates become ISO 8601 strings; pandas objects become lists of
    records (DataFrame) or dicts (Series); objects with ``to_dict()`` (such as
    `ReliabilityResult`) and dataclasses are converted field by field.

    Parameters
    ----------
    value : any
        The structure to convert.
    path : str
        Key path of `value`, used in error messages.

    Raises
    ------
    InputError
        For a value that has no JSON form; the message names its key path.
    """
    if value is None or isinstance(value, (bool, str)):
        return value
    if isinstance(value, np.generic):
        if isinstance(value, np.datetime64):
            return None if np.isnat(value) else str(value)
        return to_json_native(value.item(), path)
    if isinstance(value, int):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, (_dt.datetime, _dt.date, _dt.time)):
        return value.isoformat()
    if isinstance(value, os.PathLike):
        return os.fspath(value)
    if isinstance(value, np.ndarray):
        return [to_json_native(v, f"{path}[{i}]") for i, v in enumerate(value.tolist())]
    if isinstance(value, Mapping):
        return {_key(k, path): to_json_native(v, f"{path}.{k}") for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [to_json_native(v, f"{path}[{i}]") for i, v in enumerate(value)]
    if isinstance(value, (set, frozenset)):
        return [to_json_native(v, f"{path}[{i}]") for i, v in enumerate(sorted(value, key=str))]
    if hasattr(value, "to_dict") and hasattr(value, "columns"):  # pandas DataFrame
        return to_json_native(value.to_dict("records"), path)
    if hasattr(value, "to_dict") and callable(value.to_dict):
        return to_json_native(value.to_dict(), path)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return to_json_native(dataclasses.asdict(value), path)
    raise InputError(f"value of type {type(value).__name__} cannot be written to JSON; "
                     "give numbers, text, lists or dicts.", column=path)


def _key(key: Any, path: str) -> str:
    if isinstance(key, str):
        return key
    if isinstance(key, np.generic):
        key = key.item()
    if isinstance(key, (bool, int, float)) or key is None:
        return json.dumps(key)
    if isinstance(key, (_dt.date, _dt.datetime)):
        return key.isoformat()
    raise InputError(f"dict key {key!r} of type {type(key).__name__} cannot be a JSON key.",
                     column=path)


def report_paths(folder: str | os.PathLike, *, now: _dt.datetime | None = None,
                 prefix: str = _STEM_PREFIX, json_folder: str | os.PathLike | None = None,
                 ) -> tuple[Path, Path]:
    """First free pair of report file names.

    Parameters
    ----------
    folder : path
        Folder of the HTML report (and of the JSON unless `json_folder` is given).
    now : datetime, optional
        Time stamp in the name (default: now, local time).
    prefix : str, default "report"
        Start of the file name.
    json_folder : path, optional
        Folder of the JSON file, if not the same.

    Returns
    -------
    (Path, Path)
        ``<folder>/<prefix>-YYYY-MM-DDTHHMM-NNN.html`` and the ``.json`` with the
        same stem; NNN is the lowest sequence number for which neither exists.
    """
    folder = Path(folder)
    json_folder = folder if json_folder is None else Path(json_folder)
    stamp = (now or _dt.datetime.now()).strftime("%Y-%m-%dT%H%M")
    for seq in range(1, 100_000):
        stem = f"{prefix}-{stamp}-{seq:03d}"
        html_path, json_path = folder / f"{stem}.html", json_folder / f"{stem}.json"
        if not html_path.exists() and not json_path.exists():
            return html_path, json_path
    raise InputError(f"no free report name left for time stamp {stamp}.", file=folder)


def _resolve(path: str | os.PathLike, suffix: str, stem: str | None,
             now: _dt.datetime) -> Path:
    path = Path(path)
    if path.is_dir():
        if stem is None:
            return report_paths(path, now=now)[0 if suffix == ".html" else 1]
        return path / f"{stem}{suffix}"
    if path.exists():
        raise InputError("a report with this name already exists; reports are never "
                         "overwritten. Give a folder to get a new dated name.", file=path)
    if not path.parent.is_dir():
        raise InputError("the folder for the report does not exist.", file=path)
    return path


def _write_new(path: Path, text: str) -> None:
    """Write `text` to a temp file beside `path`, then publish it without overwriting."""
    # Mode "x" creates the file with the usual permissions (umask), unlike mkstemp.
    tmp = path.parent / f".{path.name}.{secrets.token_hex(8)}.tmp"
    try:
        with open(tmp, "x", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        try:
            # A hard link publishes atomically and fails if the name is taken, so a
            # report written at the same moment by another run is never replaced.
            os.link(tmp, path)
        except FileExistsError:
            raise InputError("a report with this name appeared while writing; it was left "
                             "untouched.", file=path) from None
        except OSError as exc:
            if exc.errno not in (errno.EPERM, errno.ENOTSUP, errno.EOPNOTSUPP, errno.EXDEV,
                                 errno.EMLINK, errno.ENOSYS):
                raise
            # File systems without hard links: check, then atomic rename.
            if path.exists():
                raise InputError("a report with this name already exists; reports are never "
                                 "overwritten.", file=path) from None
            os.replace(tmp, path)
    finally:
        tmp.unlink(missing_ok=True)


def write_report(path_html: str | os.PathLike, path_json: str | os.PathLike,
                 document: ReportDocument, numbers: Mapping[str, Any], *,
                 now: _dt.datetime | None = None) -> tuple[Path, Path]:
    """Write the HTML report and the JSON of all its numbers, never overwriting.

    Parameters
    ----------
    path_html, path_json : path
        Either folders (the files get a new dated name ``report-...-NNN``, the
        same stem for both when both are the same folder) or file names that
        must not exist yet.
    document : ReportDocument
        The report to render.
    numbers : mapping
        Every number shown in the report (and more), nested freely; converted
        with `to_json_native` (NaN and inf become null).
    now : datetime, optional
        Creation time (default: now, local time zone).

    Returns
    -------
    (Path, Path)
        Paths of the HTML and JSON files written.

    Raises
    ------
    InputError
        If a named file exists, its folder is missing, or a value in `numbers`
        has no JSON form (nothing is written then).
    """
    if not isinstance(numbers, Mapping):
        raise InputError(f"numbers must be a dict, got {type(numbers).__name__}.", column="numbers")
    now = now or _dt.datetime.now().astimezone()
    stem = None
    if Path(path_html).is_dir() and Path(path_json).is_dir():
        stem = report_paths(path_html, now=now, json_folder=path_json)[0].stem
    html_path = _resolve(path_html, ".html", stem, now)
    json_path = _resolve(path_json, ".json", stem, now)
    if html_path.resolve() == json_path.resolve():
        raise InputError("the HTML and JSON report paths are the same file.", file=html_path)

    payload = {
        "schema_version": SCHEMA_VERSION,
        "code_version": assess.__version__,
        "created": now.isoformat(timespec="seconds"),
        "title": document.title,
        "report_html": html_path.name,
        "caution": CAUTION,
        "warnings": list(document.warnings),
        "numbers": to_json_native(numbers),
    }
    json_text = json.dumps(payload, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
    html_text = document.to_html(created=now, numbers_file=json_path.name)

    _write_new(json_path, json_text)
    try:
        _write_new(html_path, html_text)
    except BaseException:
        json_path.unlink(missing_ok=True)  # no JSON without its report
        raise
    return html_path, json_path


__all__ = ["write_report", "report_paths", "to_json_native", "SCHEMA_VERSION"]
