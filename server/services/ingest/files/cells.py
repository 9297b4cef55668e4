"""Cell parsers: each takes a raw cell (text from CSV, or a typed XLSX value) and returns
a value or raises :class:`CellError` with the problem in words. Dates are parsed
explicitly here (never by a library's lax rules)."""

from __future__ import annotations

import datetime as dt
import math
import re
from dataclasses import dataclass

from .names import NameRuleError, clean_name
from .table import CONTROL_CHARACTERS, CellProblem, ExcelDate, IsoDateText


class CellError(ValueError):
    """The cell is not a valid value for its column."""


_NUM = re.compile(r"\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?\s*")
_NUM_COMMA = re.compile(r"\s*[+-]?(?:\d+(?:,\d*)?|,\d+)(?:[eE][+-]?\d{1,3})?\s*")
# Any exponent, so that 1e9999 is named as too large rather than "not a number".
_NUM_ANY_EXPONENT = re.compile(r"\s*[+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)[eE][+-]?\d+\s*")
_NOT_FINITE = re.compile(r"\s*[+-]?(?:nan|inf|infinity|1\.#inf|1\.#qnan|#num!)\s*", re.IGNORECASE)
_NONZERO_DIGIT = re.compile(r"[1-9]")
MAX_NUMBER_CHARS = 100  # a longer cell is not a measured value
_ISO = re.compile(
    r"(\d{4})[-/](\d{1,2})[-/](\d{1,2})"
    r"(?:[T ](\d{1,2}):(\d{2})(?::(\d{2})(?:[.,]\d+)?)?\s*(Z|[+-]\d{2}(?::?\d{2})?)?)?"
)
_ISO_MONTH = re.compile(r"(\d{4})[-/](\d{1,2})")
_DAY_FIRST_OR_MONTH_FIRST = re.compile(r"(\d{1,2})[./-](\d{1,2})[./-](\d{4})")
_SERIAL = re.compile(r"\d{5}(?:\.\d+)?")
_SPREADSHEET_ERRORS = {"#NULL!", "#DIV/0!", "#VALUE!", "#REF!", "#NAME?", "#NUM!", "#N/A", "#GETTING_DATA"}
_SURROGATE = re.compile("[\ud800-\udfff]")
_BREAKS = re.compile(r"[\t\r\n\u2028\u2029\x85]")
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
MIN_DATE = dt.date(1900, 1, 1)
MIN_SERIAL = 10000  # 1927-05-18: smaller numbers in a date column are more likely years or typos
DATE_ORDERS = ("iso", "dmy", "mdy")


def is_blank(cell) -> bool:
    return cell is None or (isinstance(cell, str) and not cell.strip())


def _refuse_marked(cell) -> None:
    if isinstance(cell, CellProblem):
        raise CellError(cell.message)


def _as_text(cell) -> str:
    _refuse_marked(cell)
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not text")
    if isinstance(cell, int):
        if cell.bit_length() > 1024:  # str() of a huge int is slow, and refused past 4,300 digits
            raise CellError("is a number too long to be a name or text")
        return str(cell)
    if isinstance(cell, float):
        if not math.isfinite(cell):
            raise CellError("is not a finite number")
        return str(int(cell)) if cell.is_integer() else repr(cell)
    if isinstance(cell, dt.datetime | dt.date | dt.time | ExcelDate | IsoDateText):
        raise CellError("is a date, not text")
    return str(cell)


def text(cell, *, max_len: int = 120) -> str:
    """Free text: kept as written (formula-like text is neutralised on export)."""
    value = _as_text(cell).strip()
    if not value:
        raise CellError("is empty")
    if len(value) > max_len:
        raise CellError(f"is longer than {max_len} characters")
    if CONTROL_CHARACTERS.search(value) or _BREAKS.search(value):
        raise CellError("contains a control character, tab or line break")
    if _SURROGATE.search(value):
        raise CellError("contains a lone surrogate (U+D800-U+DFFF), which is not a character")
    return value


def name(cell, *, max_len: int = 120) -> str:
    """A name (field, well, asset, basin, compartment) in Unicode NFKC: never formula-like text,
    never a character the reader cannot see (see :mod:`.names`)."""
    value = text(cell, max_len=max_len)
    try:
        value = clean_name(value)
    except NameRuleError as exc:
        raise CellError(str(exc)) from None
    if not value:
        raise CellError("is empty")
    if len(value) > max_len:
        raise CellError(f"is longer than {max_len} characters (in Unicode NFKC form)")
    if value.startswith(FORMULA_START):
        raise CellError(f"begins with {value[0]!r}: a spreadsheet would run it as a formula; names must not")
    return value


TOO_LARGE = "is not a finite number: it is beyond ±1.8e308, the largest a double-precision number holds"
TOO_SMALL = "is too small a number to store: closer to zero than 1e-308, it would be read as 0"


def number(cell, decimal: str = ".") -> float:
    """A finite number; ``decimal`` is "." or "," (thousands separators are never read).

    Infinity and NaN in any spelling, numbers beyond the double-precision range (which would
    overflow to infinity) and non-zero numbers so small they would underflow to zero are
    refused with the reason; a number never raises anything but :class:`CellError`."""
    _refuse_marked(cell)
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not a number")
    if isinstance(cell, int):
        try:
            x = float(cell)
        except OverflowError:
            raise CellError(TOO_LARGE) from None
    elif isinstance(cell, float):
        if math.isnan(cell):
            raise CellError("is not a number (NaN)")
        x = cell
    elif isinstance(cell, dt.datetime | dt.date | dt.time | ExcelDate | IsoDateText):
        raise CellError("is a date, not a number")
    else:
        raw = str(cell)
        if not raw.strip():
            raise CellError("is empty")
        if len(raw) > MAX_NUMBER_CHARS:
            raise CellError(f"is not a number (longer than {MAX_NUMBER_CHARS} characters)")
        if raw.strip().upper() in _SPREADSHEET_ERRORS:
            raise CellError("is a spreadsheet error value")
        if _NOT_FINITE.fullmatch(raw):
            if "nan" in raw.lower():
                raise CellError("is not a number (NaN): infinity and NaN are not values")
            raise CellError("is not a finite number: infinity and NaN are not values")
        pattern = _NUM_COMMA if decimal == "," else _NUM
        long_exponent = _NUM_ANY_EXPONENT.fullmatch(raw) and ("," if decimal == "." else ".") not in raw
        if not pattern.fullmatch(raw) and not long_exponent:
            raise CellError(_number_hint(raw, decimal))
        if decimal == ",":
            raw = raw.replace(",", ".")
        x = float(raw)
        if x == 0.0 and _NONZERO_DIGIT.search(raw.lower().split("e")[0]):
            raise CellError(TOO_SMALL)
    if not math.isfinite(x):
        raise CellError(TOO_LARGE)
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
    """Every cell as a float when all are plain decimal-point numbers in text, else None
    (the slow path then names each problem: overflow, underflow, ...)."""
    if all(type(c) is str for c in cells) and all(map(_NUM.fullmatch, cells)):
        out = list(map(float, cells))
        underflow = any(
            x == 0.0 and _NONZERO_DIGIT.search(c.lower().split("e")[0])
            for x, c in zip(out, cells, strict=True)
        )
        if all(map(math.isfinite, out)) and not underflow:
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


def _from_serial(x: float | int, epoch: dt.date, today: dt.date) -> dt.date:
    """A plain number in a date column, read as an Excel date serial when it is one."""
    if isinstance(x, float) and not math.isfinite(x):
        raise CellError("is not a finite number, so not a date")
    last = (today - epoch).days
    if x < MIN_SERIAL or x > last + 1:  # int or float: no conversion that could overflow
        raise CellError(
            "is a number, not a date (as an Excel date serial it would be out of range); "
            "write dates as YYYY-MM-DD"
        )
    return epoch + dt.timedelta(days=int(x))


EXCEL_1900_EPOCH = dt.date(1899, 12, 30)
MAX_EXCEL_SERIAL = 2958465  # 9999-12-31 in the 1900 date system, the last date a spreadsheet shows


def _from_date_cell(cell: ExcelDate, epoch: dt.date) -> dt.date:
    """A number the workbook formats as a date (its own date system; no range guessing)."""
    x = cell.serial
    if not math.isfinite(x) or x < 0 or x > MAX_EXCEL_SERIAL + 1:
        raise CellError(
            "is formatted as a date but its value is outside the dates a spreadsheet can show "
            "(1900-01-01 to 9999-12-31)"
        )
    if x < 1:
        raise CellError("is a time of day, not a date")
    days = int(x)
    if epoch == EXCEL_1900_EPOCH and days < 61:
        # The 1900 date system counts a 29 February 1900 that never was (serial 60).
        if days == 60:
            raise CellError("is 1900-02-29, a day that does not exist (a spreadsheet's 1900 leap-year error)")
        return dt.date(1899, 12, 31) + dt.timedelta(days=days)
    return epoch + dt.timedelta(days=days)


def _check_time(m: re.Match) -> None:
    """One rule for a time written after a date, in any file: a real time of day, no time zone."""
    if m[4] is None:
        return
    hour, minute, second = int(m[4]), int(m[5]), int(m[6] or 0)
    if hour == 24 and minute == 0 and second == 0:
        raise CellError("has the time 24:00, which is not a time of day: write the next day's date")
    if hour > 23 or minute > 59 or second > 59:
        raise CellError(f"has an impossible time of day ({m[4]}:{m[5]}{':' + m[6] if m[6] else ''})")
    if m[7]:
        raise CellError(
            "has a time zone: dates are calendar dates at the field, without a time zone; "
            "write the local date (YYYY-MM-DD)"
        )


@dataclass(frozen=True)
class DateRules:
    """How text dates are read: ``order`` is "iso" (YYYY-MM-DD), "dmy" or "mdy"."""

    order: str = "iso"
    today: dt.date = dt.date.max
    epoch: dt.date = dt.date(1899, 12, 30)


def date(cell, rules: DateRules) -> dt.date:
    """A calendar date from text, an XLSX date, or an Excel serial number."""
    _refuse_marked(cell)
    if isinstance(cell, bool):
        raise CellError("is TRUE/FALSE, not a date")
    if isinstance(cell, dt.datetime):
        if cell.tzinfo is not None:
            raise CellError("has a time zone: dates are calendar dates at the field, without a time zone")
        return _check_date(cell.date(), rules.today)
    if isinstance(cell, dt.date):
        return _check_date(cell, rules.today)
    if isinstance(cell, dt.time):
        raise CellError("is a time of day, not a date")
    if isinstance(cell, ExcelDate):
        return _check_date(_from_date_cell(cell, rules.epoch), rules.today)
    if isinstance(cell, int | float):
        return _check_date(_from_serial(cell, rules.epoch, rules.today), rules.today)
    raw = str(cell).strip()
    if not raw:
        raise CellError("is empty")
    if len(raw) > MAX_NUMBER_CHARS:
        raise CellError(f"is not a date (longer than {MAX_NUMBER_CHARS} characters)")
    m = _ISO.fullmatch(raw)
    if m:
        day = _ymd(int(m[1]), int(m[2]), int(m[3]))
        _check_time(m)
        return _check_date(day, rules.today)
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
    if isinstance(cell, IsoDateText):
        raise CellError("is a workbook date whose text is not a date in the form YYYY-MM-DD[Thh:mm[:ss]]")
    if _SERIAL.fullmatch(raw):
        return _check_date(_from_serial(float(raw), rules.epoch, rules.today), rules.today)
    raise CellError("is not a date in the form YYYY-MM-DD")


def month(cell, rules: DateRules) -> dt.date:
    """The first day of a calendar month: YYYY-MM, or any date within the month."""
    _refuse_marked(cell)
    if type(cell) is str:
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
