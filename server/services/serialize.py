"""Turn engine results (frozen dataclasses with numpy values) into JSON-ready data."""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math

import numpy as np

_FIELD_NAMES: dict[type, tuple[str, ...]] = {}


def _field_names(cls: type) -> tuple[str, ...]:
    """A dataclass's field names, looked up once per class."""
    names = _FIELD_NAMES.get(cls)
    if names is None:
        names = _FIELD_NAMES[cls] = tuple(f.name for f in dataclasses.fields(cls))
    return names


def _array(a: np.ndarray) -> list:
    """An array as nested lists; NaN and ±inf become None (finite numeric arrays in one C pass)."""
    kind = a.dtype.kind
    if kind in "biu" or (kind == "f" and np.isfinite(a).all()):
        return a.tolist()
    return to_jsonable(a.tolist())


def to_jsonable(value):
    """Recursively convert dataclasses, numpy arrays and scalars to JSON types (NaN and ±inf -> None)."""
    t = type(value)
    if t is float:
        return value if math.isfinite(value) else None
    if value is None or t is str or t is int or t is bool:
        return value
    if t is list or t is tuple:
        return [to_jsonable(v) for v in value]
    if t is dict:
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if t is np.ndarray:
        return _array(value)
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {name: to_jsonable(getattr(value, name)) for name in _field_names(t)}
    if isinstance(value, dict):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [to_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return _array(value)
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        f = float(value)
        return f if math.isfinite(f) else None
    return value


def fingerprint(payload) -> str:
    """SHA-256 of a canonical JSON rendering of ``payload``."""
    text = json.dumps(to_jsonable(payload), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()
