"""One strict JSON normaliser for every number the tool writes (CLI --json, report JSON, ledger).

`to_json_native` turns nested results into JSON-native values: numpy scalars and
arrays become numbers and lists, NaN and +-inf become null (strict JSON has no
such numbers), dates become ISO 8601 text, dataclasses and objects with
``to_dict()`` are converted field by field.
"""

from __future__ import annotations

import dataclasses
import datetime as _dt
import json
import math
import os
from collections.abc import Mapping
from typing import Any

import numpy as np

from assess.errors import InputError


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




__all__ = ["to_json_native"]
