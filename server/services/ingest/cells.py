"""Cell parsers: each takes the raw text and returns a value or raises CellError."""

from __future__ import annotations

import datetime as dt
import math
import re


class CellError(ValueError):
    """The text in a cell is not a valid value for its column."""


_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")
_ISO_MONTH = re.compile(r"^\d{4}-\d{2}(-01)?$")


def text(raw: str, *, max_len: int = 120) -> str:
    value = raw.strip()
    if not value:
        raise CellError("is empty")
    if len(value) > max_len:
        raise CellError(f"is longer than {max_len} characters")
    return value


def number(raw: str) -> float:
    value = raw.strip()
    if not value:
        raise CellError("is empty")
    try:
        x = float(value)
    except ValueError:
        raise CellError("is not a number") from None
    if not math.isfinite(x):
        raise CellError("is not a finite number")
    return x


def iso_date(raw: str, *, today: dt.date | None = None) -> dt.date:
    value = raw.strip()
    if not _ISO_DATE.match(value):
        raise CellError("is not a date in the form YYYY-MM-DD")
    try:
        d = dt.date.fromisoformat(value)
    except ValueError:
        raise CellError("is not a real calendar date") from None
    return _check_date(d, today)


def iso_month(raw: str, *, today: dt.date | None = None) -> dt.date:
    value = raw.strip()
    if not _ISO_MONTH.match(value):
        raise CellError("is not a month in the form YYYY-MM")
    try:
        d = dt.date(int(value[:4]), int(value[5:7]), 1)
    except ValueError:
        raise CellError("is not a real calendar month") from None
    return _check_date(d, today)


def _check_date(d: dt.date, today: dt.date | None) -> dt.date:
    today = today or dt.date.today()
    if d > today:
        raise CellError("is in the future")
    if d.year < 1900:
        raise CellError("is before 1900")
    return d


def choice(raw: str, options: tuple[str, ...]) -> str:
    value = raw.strip().lower().replace("-", "_").replace(" ", "_")
    if value not in options:
        raise CellError(f"is not one of {', '.join(options)}")
    return value
