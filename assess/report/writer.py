"""Write a report as a pair of files: self-contained HTML and a JSON of all numbers.

Reports are appended, never overwritten (design decision 7: "results are
appended, never overwritten"). Given a folder, the files get a fresh name
``report-<YYYY-MM-DDTHHMM>-<NNN>.html`` / ``.json`` with the first sequence
number free for both; given a file name that already exists, writing stops with
an `InputError`.

The pair appears together or not at all
---------------------------------------
Both files are first written whole to temporary names in their folders and
flushed to disk; a small marker ``.pending-<stem>.<random>`` then names the pair,
and only then are the JSON and the HTML published under their final names (each
a hard link: atomic, and never replacing a file; `assess.report.files.publish`).
An error between the two steps removes the published JSON again. A kill between
them (SIGKILL, power loss) leaves the marker: the next `write_report` (or
`recover_unfinished_reports`, which the main job calls on start while holding the
site lock) removes the lone half of the pair that the marker names, the marker
and the temporary files of the killed run. The HTML is published last, so an
HTML report never points at a missing JSON.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import json
import os
import secrets
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

import assess
from assess.cautions import CAUTION
from assess.errors import InputError
from assess.json_values import to_json_native
from assess.report.document import ReportDocument
from assess.report.files import (
    TEMP_PATTERN,
    publish,
    remove_stale_temporaries,
    write_temporary,
)

#: Version of the JSON layout written by `write_report`; raise it when keys change meaning.
SCHEMA_VERSION = 1

_STEM_PREFIX = "report"
_PENDING = ".pending-"
#: Leftovers of a run are taken as stale after this long [s] (a report is written in
#: well under a second); call `recover_unfinished_reports` with 0 while holding the site lock.
STALE_SECONDS = 600.0


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


def recover_unfinished_reports(folders: Iterable[str | os.PathLike], *,
                               older_than: float = STALE_SECONDS) -> list[Path]:
    """Undo what a killed report writer left behind in `folders`.

    For each pending marker older than `older_than` seconds: if only one file of the
    pair it names was published, that file is removed (a report pair appears together
    or not at all); then the marker goes. Temporary files of that age go too.

    Parameters
    ----------
    folders : iterable of path
        Folders of the HTML and JSON reports (missing folders are skipped).
    older_than : float
        Age in seconds [s] below which leftovers may belong to a run still writing; use 0
        while holding the site lock (`inspection_io.locking.site_lock`).

    Returns
    -------
    list of Path
        Every file removed.
    """
    removed: list[Path] = []
    for folder in dict.fromkeys(Path(f) for f in folders):
        if not folder.is_dir():
            continue
        for marker in sorted(folder.glob(f"{_PENDING}*")):
            try:
                age = _dt.datetime.now().timestamp() - marker.lstat().st_mtime
                if age < older_than:
                    continue
                names = json.loads(marker.read_text(encoding="utf-8")) if marker.is_file() \
                    and not marker.is_symlink() else []
            except (OSError, ValueError):
                names = []
            pair = [folder / str(name) for name in names[:2]]
            stem = marker.name[len(_PENDING):].rsplit(".", 1)[0]
            ours = (len(pair) == 2 and pair[0].suffix == ".json"
                    and pair[1].name == f"{stem}.html")
            present = [p for p in pair if os.path.lexists(p)]
            if ours and len(present) == 1:
                with contextlib.suppress(OSError):
                    present[0].unlink()
                    removed.append(present[0])
            with contextlib.suppress(OSError):
                marker.unlink()
                removed.append(marker)
        removed.extend(remove_stale_temporaries(folder, TEMP_PATTERN, older_than=older_than))
    return removed


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

    recover_unfinished_reports([html_path.parent, json_path.parent])
    _write_pair(json_path, json_text.encode("utf-8"), html_path, html_text.encode("utf-8"))
    return html_path, json_path


def _write_pair(json_path: Path, json_data: bytes, html_path: Path, html_data: bytes) -> None:
    """Both files or neither (see the module notes); the JSON is published first."""
    temporaries: list[Path] = []
    marker = html_path.parent / f"{_PENDING}{html_path.stem}.{secrets.token_hex(4)}"
    published: list[Path] = []
    try:
        temporaries.append(write_temporary(json_path, json_data))
        temporaries.append(write_temporary(html_path, html_data))
        with open(marker, "x", encoding="utf-8") as handle:
            json.dump([os.path.relpath(json_path, marker.parent),
                       os.path.relpath(html_path, marker.parent)], handle)
            handle.flush()
            os.fsync(handle.fileno())
        for tmp, path in zip(temporaries, (json_path, html_path)):
            try:
                publish(tmp, path)
            except FileExistsError:
                raise InputError("a report with this name appeared while writing; it was left "
                                 "untouched.", file=path) from None
            published.append(path)
    except BaseException:
        for path in published:  # no JSON without its report
            with contextlib.suppress(OSError):
                path.unlink()
        raise
    finally:
        for tmp in temporaries:
            with contextlib.suppress(OSError):
                tmp.unlink()
        with contextlib.suppress(OSError):
            marker.unlink()


__all__ = [
    "SCHEMA_VERSION",
    "STALE_SECONDS",
    "recover_unfinished_reports",
    "report_paths",
    "to_json_native",
    "write_report",
]
