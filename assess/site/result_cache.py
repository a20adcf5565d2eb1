"""Reliability results kept under a hash of everything that made them.

A member's reliability run is decided by its model (the site file's entry for the
member, its zone and the site's loads, materials, priors and target; the knowledge
populations it is built on; the reference period and car-park use), the modes, the
method with its options, the seed and the code. `cached_result` hashes all of that
(`assess.updating.cache.content_hash`, with a fingerprint of the source code in place of
the version number, so that an edited model never reads an old result), reads the
stored result when the file exists, and otherwise runs the method and stores the result
atomically in ``results/reliability/<hash>.json``. A warm run with nothing new therefore
samples nothing and reports the same numbers (floats are written with ``repr``, which
reads back exactly). A file that cannot be read is set aside (never deleted) and the
run is made again with a warning, as for the posterior cache.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import importlib
import json
import warnings
from pathlib import Path
from typing import Any, Callable

import numpy as np

from assess.reliability.result import ReliabilityResult
from assess.updating.cache import content_hash, set_aside

RESULT_FOLDER = Path("results") / "reliability"
"""Folder of the stored reliability results, relative to the site folder."""

_LIBRARY_ROOT = Path(__file__).resolve().parents[1]


@functools.lru_cache(maxsize=1)
def code_fingerprint() -> str:
    """SHA-256 of the library's source (``assess`` without ``cli`` and ``report``) [hex]."""
    digest = hashlib.sha256()
    for path in sorted(_LIBRARY_ROOT.rglob("*.py")):
        relative = path.relative_to(_LIBRARY_ROOT)
        if relative.parts[0] in ("cli", "report"):
            continue
        digest.update(str(relative).encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()


def member_payload(site, member, populations, *, local=None, **model_options) -> dict:
    """What the reliability model of ``member`` is built from (for the hash).

    Parameters
    ----------
    site : inspection_io.site.Site
    member : inspection_io.site.Member
    populations : dict
        The knowledge populations the model is built on (`NormalGamma` by quantity).
    local : object, optional
        Local populations of the member's zone (per face or member), if any.
    **model_options
        The other arguments of the model (reference period, car-park use).
    """
    return {
        "member": member,
        "zone": site.zones[member.zone],
        "loads": site.loads,
        "materials": site.materials,
        "priors": getattr(site, "priors", None),
        "target": site.target,
        "site": getattr(site, "site", None),
        "populations": populations,
        "local": local,
        "model_options": model_options,
    }


def result_path(site_folder: Path, digest: str) -> Path:
    """Where the result with input hash ``digest`` is stored (folder made inside the site)."""
    from inspection_io.paths import site_subfolder

    return site_subfolder(site_folder, *RESULT_FOLDER.parts) / f"{digest[:24]}.json"


class _Unstorable(TypeError):
    """A value of a result that this file format does not hold."""


def _encode(value: Any) -> Any:
    if value is None or isinstance(value, (bool, str, int, float)):
        return value
    if isinstance(value, np.ndarray):
        if value.dtype.kind not in "biuf":
            raise _Unstorable(f"array of {value.dtype}")
        return {"__array__": value.tolist(), "dtype": value.dtype.str}
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.floating):
        return float(value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        home = type(value).__module__
        if not home.startswith("assess."):
            raise _Unstorable(f"{type(value).__name__} from {home}")
        fields = {
            f.name: _encode(getattr(value, f.name)) for f in dataclasses.fields(value) if f.init
        }
        return {"__dataclass__": f"{home}:{type(value).__qualname__}", "fields": fields}
    if isinstance(value, tuple):
        return {"__tuple__": [_encode(v) for v in value]}
    if isinstance(value, list):
        return [_encode(v) for v in value]
    if isinstance(value, dict):
        if not all(isinstance(k, str) for k in value):
            raise _Unstorable("dict with keys that are not text")
        if {"__array__", "__tuple__", "__dataclass__"} & set(value):
            raise _Unstorable("dict with a reserved key")
        return {k: _encode(v) for k, v in value.items()}
    raise _Unstorable(type(value).__name__)


def _decode(value: Any) -> Any:
    if isinstance(value, list):
        return [_decode(v) for v in value]
    if isinstance(value, dict):
        if "__array__" in value:
            return np.array(value["__array__"], dtype=np.dtype(value["dtype"]))
        if "__tuple__" in value:
            return tuple(_decode(v) for v in value["__tuple__"])
        if "__dataclass__" in value:
            return _dataclass(value["__dataclass__"])(**_decode(value["fields"]))
        return {k: _decode(v) for k, v in value.items()}
    return value


def _dataclass(where: str) -> type:
    """The class named ``module:qualname``, only from this library's own modules."""
    home, _, name = where.partition(":")
    if not home.startswith("assess."):
        raise ValueError(f"a stored result names a class outside the library: {where!r}")
    found = importlib.import_module(home)
    for part in name.split("."):
        found = getattr(found, part)
    if not (isinstance(found, type) and dataclasses.is_dataclass(found)):
        raise ValueError(f"{where!r} is not a dataclass")
    return found


def encode_result(result: ReliabilityResult) -> str:
    """JSON text of a result, exact for every float (NaN and inf included)."""
    fields = {f.name: _encode(getattr(result, f.name)) for f in dataclasses.fields(result)}
    return json.dumps({"reliability_result": fields}, allow_nan=True)


def decode_result(text: str) -> ReliabilityResult:
    """The result written by `encode_result`."""
    fields = _decode(json.loads(text)["reliability_result"])
    return ReliabilityResult(**fields)


def _write_atomically(text: str, path: Path) -> None:
    from inspection_io.paths import replace_atomically

    replace_atomically(
        path, lambda tmp: Path(tmp).write_text(text, encoding="utf-8"), suffix=".json.tmp"
    )


def cached_value(site_folder: Path | None, kind: str, payload: dict, run: Callable[[], Any]):
    """`cached_result` for any value made of numbers, text, arrays, lists, dicts and this
    library's dataclasses (e.g. the remaining-life curves of a member); ``kind`` names it
    in the hash."""
    if site_folder is None:
        return run()
    digest = content_hash(kind, {"inputs": payload, "code": code_fingerprint()})
    path = result_path(Path(site_folder), digest)
    if path.exists():
        try:
            return _decode(json.loads(path.read_text(encoding="utf-8"))["value"])
        except Exception as exc:  # any unreadable file: set aside and run again
            moved = set_aside(path)
            warnings.warn(
                f"the stored result {path.name} could not be read ({type(exc).__name__}); it "
                f"was set aside as {moved.name} and the analysis was run again",
                UserWarning,
                stacklevel=2,
            )
    value = run()
    try:
        text = json.dumps({"value": _encode(value)}, allow_nan=True)
    except _Unstorable:
        return value
    _write_atomically(text, path)
    return value


def cached_result(
    site_folder: Path | None, payload: dict, run: Callable[[], ReliabilityResult]
) -> ReliabilityResult:
    """The stored result of these inputs, or ``run()`` stored for the next time.

    Parameters
    ----------
    site_folder : Path or None
        Site folder holding ``results/reliability``; None: nothing stored, always run.
    payload : dict
        Everything that decides the result: `member_payload` plus modes, method,
        options and seed.
    run : callable
        Runs the reliability method; called only when no stored result matches.
    """
    if site_folder is None:
        return run()
    digest = content_hash("reliability", {"inputs": payload, "code": code_fingerprint()})
    path = result_path(Path(site_folder), digest)
    if path.exists():
        try:
            return decode_result(path.read_text(encoding="utf-8"))
        except Exception as exc:  # any unreadable file: set aside and run again
            moved = set_aside(path)
            warnings.warn(
                f"the stored reliability result {path.name} could not be read "
                f"({type(exc).__name__}); it was set aside as {moved.name} and the analysis "
                "was run again",
                UserWarning,
                stacklevel=2,
            )
    result = run()
    try:
        text = encode_result(result)
    except _Unstorable:  # an unusual detail: keep the result, do not store it
        return result
    _write_atomically(text, path)
    return result


def clean_stale_temporaries(site_folder: Path, *, older_than: float = 0.0) -> list[Path]:
    """Remove temporary result files left by a run killed while writing (under the lock)."""
    from inspection_io.paths import remove_stale_temporaries

    return remove_stale_temporaries(
        Path(site_folder) / RESULT_FOLDER, ".*.json.tmp", older_than=older_than
    )


__all__ = [
    "RESULT_FOLDER",
    "cached_result",
    "cached_value",
    "clean_stale_temporaries",
    "code_fingerprint",
    "decode_result",
    "encode_result",
    "member_payload",
    "result_path",
]
