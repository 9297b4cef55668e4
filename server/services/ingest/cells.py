"""Cell parsers: each takes a raw cell (text from CSV, or a typed XLSX value) and returns
a value or raises :class:`CellError` with the problem in words. Dates are parsed
explicitly here (never by a library's lax rules)."""

from __future__ import annotations

import datetime as dt
import math
import re
from dataclasses import dataclass

from .tabular import _CONTROL


class CellError(ValueError):
    """The cell is not a valid value for its column."""


_NUM = re.compile(r"\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?\s*")
_NUM_COMMA = re.compile(r"\s*[+-]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][+-]?\d{1,3})?\s*")
_ISO = re.compile(r"(\d{4})[-/](\d{1,2})[-/](\d{1,2})(?:[T ](\d{1,2}):(\d{2})(?::\d{2}(?:\.\d+)?)?)?")
_ISO_MONTH = re.compile(r"(\d{4})[-/](\d{1,2})")
_DAY_FIRST_OR_MONTH_FIRST = re.compile(r"(\d{1,2})[./-](\d{1,2})[./-](\d{4})")
_SERIAL = re.compile(r"\d{5}(?:\.\d+)?")
_SPREADSHEET_ERRORS = {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA"}
_BREAKS = re.compile(r"[\t\r\n\u2028\u2029\x85]")
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
MIN_DATE = dt.date(1900, 1, 1)
MIN_SERIAL = 10000  # 1927-05-18: smaller numbers in a date column are more likely years or typos
DATE_ORDERS = ("iso", "dmy", "mdy")


def is_blank(cell) -> bool:
    return cell is None or (isinstance(cell, str) and not cell.strip())


def _as_text(cell) -> str:
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not text")
    if isinstance(cell, int):
        return str(cell)
    if isinstance(cell, float):
        if not math.isfinite(cell):
            raise CellError("is not a finite number")
        return str(int(cell)) if cell.is_integer() else repr(cell)
    if isinstance(cell, dt.datetime | dt.date | dt.time):
        raise CellError("is a date, not text")
    return str(cell)


def text(cell, *, max_len: int = 120) -> str:
    """Free text: kept as written (formula-like text is neutralised on export)."""
    value = _as_text(cell).strip()
    if not value:
        raise CellError("is empty")
    if len(value) > max_len:
        raise CellError(f"is longer than {max_len} characters")
    if _CONTROL.search(value) or _BREAKS.search(value):
        raise CellError("contains a control character, tab or line break")
    return value


def name(cell, *, max_len: int = 120) -> str:
    """A name (field, well, asset, compartment): never formula-like text."""
    value = text(cell, max_len=max_len)
    if value.startswith(FORMULA_START):
        raise CellError(f"begins with {value[0]!r}: a spreadsheet would run it as a formula; names must not")
    return value


def number(cell, decimal: str = ".") -> float:
    """A finite number; ``decimal`` is "." or "," (thousands separators are never read)."""
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not a number")
    if isinstance(cell, int | float):
        x = float(cell)
    elif isinstance(cell, dt.datetime | dt.date | dt.time):
        raise CellError("is a date, not a number")
    else:
        raw = str(cell)
        if not raw.strip():
            raise CellError("is empty")
        if raw.strip().upper() in _SPREADSHEET_ERRORS:
            raise CellError("is a spreadsheet error value")
        if decimal == ",":
            if not _NUM_COMMA.fullmatch(raw):
                raise CellError(_number_hint(raw, decimal))
            raw = raw.replace(",", ".")
        elif not _NUM.fullmatch(raw):
            raise CellError(_number_hint(raw, decimal))
        x = float(raw)
    if not math.isfinite(x):
        raise CellError("is not a finite number")
    return x


def _number_hint(raw: str, decimal: str) -> str:
    if decimal == "." and _NUM_COMMA.fullmatch(raw):
        return (
            "is not a number with a decimal point (thousands separators and decimal commas are not read here)"
        )
    if decimal == "," and _NUM.fullmatch(raw):
        return "has a decimal point but this file uses decimal commas"
    return "is not a number"


def fast_numbers(cells: list) -> list[float] | None:
    """Every cell as a float when all are plain decimal-point numbers in text, else None."""
    if all(isinstance(c, str) for c in cells) and all(map(_NUM.fullmatch, cells)):
        out = list(map(float, cells))
        if all(map(math.isfinite, out)):
            return out
    return None


def _check_date(d: dt.date, today: dt.date) -> dt.date:
    if d > today:
        raise CellError("is in the future")
    if d < MIN_DATE:
        raise CellError("is before 1900")
    return d


def _ymd(y: int, m: int, d: int) -> dt.date:
    try:
        return dt.date(y, m, d)
    except ValueError:
        raise CellError("is not a real calendar date") from None


def _from_serial(x: float, epoch: dt.date, today: dt.date) -> dt.date:
    last = (today - epoch).days
    if x < MIN_SERIAL or x > last + 1:
        raise CellError(
            "is a number, not a date (as an Excel date serial it would be out of range); "
            "write dates as YYYY-MM-DD"
        )
    return epoch + dt.timedelta(days=int(x))


@dataclass(frozen=True)
class DateRules:
    """How text dates are read: ``order`` is "iso" (YYYY-MM-DD), "dmy" or "mdy"."""

    order: str = "iso"
    today: dt.date = dt.date.max
    epoch: dt.date = dt.date(1899, 12, 30)


def date(cell, rules: DateRules) -> dt.date:
    """A calendar date from text, an XLSX date, or an Excel serial number."""
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not a date")
    if isinstance(cell, dt.datetime):
        return _check_date(cell.date(), rules.today)
    if isinstance(cell, dt.date):
        return _check_date(cell, rules.today)
    if isinstance(cell, dt.time):
        raise CellError("is a time of day, not a date")
    if isinstance(cell, int | float):
        return _check_date(_from_serial(float(cell), rules.epoch, rules.today), rules.today)
    raw = str(cell).strip()
    if not raw:
        raise CellError("is empty")
    m = _ISO.fullmatch(raw)
    if m:
        return _check_date(_ymd(int(m[1]), int(m[2]), int(m[3])), rules.today)
    m = _DAY_FIRST_OR_MONTH_FIRST.fullmatch(raw)
    if m:
        a, b, y = int(m[1]), int(m[2]), int(m[3])
        if rules.order == "dmy":
            return _check_date(_ymd(y, b, a), rules.today)
        if rules.order == "mdy":
            return _check_date(_ymd(y, a, b), rules.today)
        raise CellError(
            "is not a date in the form YYYY-MM-DD; for day/month/year or month/day/year dates "
            "choose the date order on the upload form"
        )
    if _SERIAL.fullmatch(raw):
        return _check_date(_from_serial(float(raw), rules.epoch, rules.today), rules.today)
    raise CellError("is not a date in the form YYYY-MM-DD")


def month(cell, rules: DateRules) -> dt.date:
    """The first day of a calendar month: YYYY-MM, or any date within the month."""
    if isinstance(cell, str):
        m = _ISO_MONTH.fullmatch(cell.strip())
        if m:
            y, mo = int(m[1]), int(m[2])
            if not 1 <= mo <= 12:
                raise CellError("is not a real calendar month")
            return _check_date(dt.date(y, mo, 1), rules.today)
    try:
        d = date(cell, rules)
    except CellError as exc:
        if "YYYY-MM-DD" in str(exc) and "choose" not in str(exc):
            raise CellError("is not a month in the form YYYY-MM") from None
        raise
    return d.replace(day=1)


def choice(cell, options: tuple[str, ...], aliases: dict[str, str] | None = None) -> str:
    value = _as_text(cell).strip().lower().replace("-", "_").replace(" ", "_")
    value = (aliases or {}).get(value, value)
    if value not in options:
        raise CellError(f"is not one of {', '.join(options)}")
    return value
