"""The JSON conversion of engine results: every type it meets, NaN and infinities to None.

The reference is Python's own ``json`` module (common practice: JSON has no NaN, so a
missing number is ``null``)."""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np

from server.services.serialize import fingerprint, to_jsonable


@dataclasses.dataclass(frozen=True)
class _Inner:
    x: float
    arr: np.ndarray


@dataclasses.dataclass(frozen=True)
class _Outer:
    name: str
    inner: _Inner
    items: tuple
    table: dict


def test_nested_dataclasses_arrays_and_scalars_become_plain_json():
    v = _Outer(
        name="a",
        inner=_Inner(x=np.float64(1.5), arr=np.array([[1.0, np.nan], [np.inf, -2.0]])),
        items=(np.int64(3), np.bool_(True), float("nan"), None, 2, True),
        table={1: np.array([1, 2]), "b": np.array([True, False]), "c": np.array([0.5, 0.25])},
    )
    out = to_jsonable(v)
    assert out == {
        "name": "a",
        "inner": {"x": 1.5, "arr": [[1.0, None], [None, -2.0]]},
        "items": [3, True, None, None, 2, True],
        "table": {"1": [1, 2], "b": [True, False], "c": [0.5, 0.25]},
    }
    text = json.dumps(out, allow_nan=False)  # strict JSON: no NaN or Infinity left
    assert json.loads(text) == out
    assert type(out["items"][0]) is int and type(out["items"][1]) is bool
    assert type(out["inner"]["x"]) is float


def test_float_subclasses_and_infinities():
    assert to_jsonable(np.float32(0.5)) == 0.5
    assert to_jsonable(-math.inf) is None
    assert to_jsonable(np.array([], float)) == []
    assert to_jsonable(np.array([1.0, 2.0], dtype=object)) == [1.0, 2.0]


def test_fingerprint_is_stable_and_order_free():
    a = fingerprint({"b": np.array([1.0, np.nan]), "a": 1})
    b = fingerprint({"a": 1, "b": [1.0, None]})
    assert a == b and len(a) == 64
    assert fingerprint({"a": 2}) != fingerprint({"a": 1})
