"""Turn engine results (frozen dataclasses with numpy values) into JSON-ready data."""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math

import numpy as np


def to_jsonable(value):
    """Recursively convert dataclasses, numpy arrays and scalars to JSON types (NaN -> None)."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: to_jsonable(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): to_jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [to_jsonable(v) for v in value]
    if isinstance(value, np.ndarray):
        return [to_jsonable(v) for v in value.tolist()]
    if isinstance(value, np.bool_):
        return bool(value)
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        f = float(value)
        return None if math.isnan(f) or math.isinf(f) else f
    return value


def fingerprint(payload) -> str:
    """SHA-256 of a canonical JSON rendering of ``payload``."""
    text = json.dumps(to_jsonable(payload), sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode()).hexdigest()
