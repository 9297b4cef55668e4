"""Bytes of an upload to a header and rows of cells: CSV here, XLSX in :mod:`.xlsx`, JSON rows;
:func:`read_table` tells them apart by content."""

from __future__ import annotations

import codecs
import csv
import io
import json
import re

from .table import CONTROL_CHARACTERS, MAX_COLUMNS, ReadLimits, Table, TableError
from .xlsx import read_xlsx

DELIMITERS = {",": "comma", ";": "semicolon", "\t": "tab"}
XLSX_MAGIC = b"PK\x03\x04"
JSON_ROWS_MAGIC = b"\x00tankbook-json-rows\x00"  # never starts a CSV (NUL is refused there)
OLE2_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"


ENCODINGS = {"utf-8": "UTF-8", "cp1252": "Windows-1252"}


def decode_text(data: bytes, chosen: str | None = None) -> tuple[str, str]:
    """The text and the name of its encoding: UTF-8 (with or without BOM), UTF-16 with a
    BOM (Excel's "Unicode text"), else Windows-1252. The preview states which was used; a
    Windows-1252 file that happens to be valid UTF-8 is read as UTF-8 unless ``chosen``."""
    if chosen in ENCODINGS and not data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        body = data[3:] if data.startswith(codecs.BOM_UTF8) else data
        if b"\x00" in body:
            raise TableError("the file contains NUL bytes: it is not a text (CSV) file")
        name, text = (
            f"{ENCODINGS[chosen]} (chosen on the form)",
            _decode(body, chosen, f"valid {ENCODINGS[chosen]}"),
        )
    elif data.startswith(codecs.BOM_UTF8):
        name, text = "UTF-8 with byte-order mark", _decode(data[3:], "utf-8", "valid UTF-8")
    elif data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        name, text = "UTF-16 with byte-order mark", _decode(data, "utf-16", "valid UTF-16")
    elif b"\x00" in data:
        raise TableError("the file contains NUL bytes: it is not a text (CSV) file")
    else:
        try:
            name, text = "UTF-8", data.decode("utf-8")
            if not text.isascii():
                name = "UTF-8 (if the accents look wrong, choose Windows-1252 on the form)"
        except UnicodeDecodeError:
            name, text = (
                "Windows-1252 (the file is not valid UTF-8)",
                _decode(data, "cp1252", "UTF-8 or Windows-1252"),
            )
    bad = CONTROL_CHARACTERS.search(text)
    if bad:
        line = text.count("\n", 0, bad.start()) + 1
        raise TableError(
            f"line {line} contains the control character U+{ord(bad.group()):04X}: "
            "the file is not plain delimited text"
        )
    return text, name


def _decode(data: bytes, encoding: str, label: str) -> str:
    try:
        return data.decode(encoding)
    except UnicodeDecodeError as exc:
        raise TableError(
            f"the file is not {label} text (byte {exc.start + 1} cannot be read); save it as UTF-8"
        ) from None


def sniff_delimiter(header_line: str, chosen: str | None = None) -> str:
    """The delimiter that splits the header into the most cells; refuse a tie or a single cell."""
    if chosen:
        return chosen
    try:
        counts = {d: len(next(csv.reader([header_line], delimiter=d))) for d in DELIMITERS}
    except csv.Error as exc:
        raise TableError(f"the header is not valid delimited text ({exc})") from None
    best = max(counts.values())
    winners = [d for d, n in counts.items() if n == best]
    if best < 2:
        raise TableError(
            "could not tell the delimiter: the header has a single column. Separate columns with "
            "commas, semicolons or tabs"
        )
    if len(winners) > 1:
        names = " and ".join(DELIMITERS[d] for d in winners)
        raise TableError(f"the header splits equally on {names}: choose the delimiter on the form")
    return winners[0]


MAX_HEADER_CHARS = 128 * 1024  # csv's own field limit; a header of 100 real names is far shorter


def read_csv(
    data: bytes,
    *,
    delimiter: str | None = None,
    encoding: str | None = None,
    limits: ReadLimits | None = None,
) -> Table:
    """Parse delimited text; the first line is the header. Rows and cells are counted as they
    are read and the file is refused as soon as it passes the upload budget."""
    limits = limits or ReadLimits()
    text, encoding = decode_text(data, encoding)
    first = re.split(r"\r\n|\r|\n", text, maxsplit=1)[0]
    if not text.strip() or not first.strip():
        raise TableError("the file is empty or its first line (the header) is blank")
    if len(first) > MAX_HEADER_CHARS:
        raise TableError(
            f"the header line is {len(first):,} characters long: too many columns (at most {MAX_COLUMNS} "
            f"are read) or column names far too long; a header line may be at most {MAX_HEADER_CHARS:,} "
            "characters"
        )
    delim = sniff_delimiter(first, delimiter)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim, strict=True)
    try:
        header = [h.strip() for h in next(reader)]
        if len(header) > MAX_COLUMNS:
            raise TableError(f"the header has {len(header)} columns; at most {MAX_COLUMNS} are read")
        rows = []
        cells = len(header)
        for row in reader:
            rows.append(row)
            cells += len(row)
            if cells > limits.max_cells:
                raise limits.too_many_cells()
            if len(rows) > limits.max_rows:
                raise limits.too_many_rows()
    except csv.Error as exc:
        line = reader.line_num
        raise TableError(f"line {line} is not valid delimited text ({exc})") from None
    while rows and not any(c.strip() for c in rows[-1]):
        rows.pop()  # trailing blank lines are common in exports and mean nothing
    notes = [f"read as delimited text: {encoding}, {DELIMITERS[delim]}-separated"]
    return Table(header=header, rows=rows, source="csv", notes=notes, delimiter=delim)


def read_table(
    data: bytes,
    *,
    filename: str = "",
    delimiter: str | None = None,
    limits: ReadLimits | None = None,
    encoding: str | None = None,
) -> Table:
    """CSV or XLSX by content (an XLSX file is a zip archive), never by file name alone;
    JSON rows when ``data`` is the canonical JSON written by :func:`json_rows_bytes`."""
    limits = limits or ReadLimits()
    if data.startswith(JSON_ROWS_MAGIC):
        try:
            rows = json.loads(data[len(JSON_ROWS_MAGIC) :])
        except ValueError:
            raise TableError("the rows are not valid JSON") from None
        return read_json_rows(rows, limits)
    if data.startswith(XLSX_MAGIC):
        return read_xlsx(data, limits=limits)
    if data.startswith(OLE2_MAGIC):
        raise TableError(
            "this is an old .xls workbook or a password-protected one: save the sheet as .xlsx or CSV"
        )
    if filename.lower().endswith((".xlsx", ".xlsm")):
        raise TableError("the file is named .xlsx but is not an XLSX workbook (it is not a zip archive)")
    return read_csv(data, delimiter=delimiter, encoding=encoding, limits=limits)


def read_json_rows(rows: list[dict], limits: ReadLimits | None = None) -> Table:
    """Rows given as JSON objects (API uploads) as a table; keys are column headers."""
    scalar = (str, int, float, bool, type(None))
    if not isinstance(rows, list) or not all(
        isinstance(r, dict) and all(isinstance(v, scalar) for v in r.values()) for r in rows
    ):
        raise TableError("rows must be a list of objects whose values are text, numbers or null")
    header: list[str] = []
    seen: set[str] = set()
    for r in rows:
        for k in r:
            if k not in seen:
                seen.add(k)
                header.append(k)
    if len(header) > MAX_COLUMNS:
        raise TableError(f"the rows have {len(header)} different keys; at most {MAX_COLUMNS} are read")
    limits = limits or ReadLimits()
    if len(rows) > limits.max_rows:
        raise limits.too_many_rows()
    if len(rows) * len(header) > limits.max_cells:
        raise limits.too_many_cells()
    body = [[r.get(k) for k in header] for r in rows]
    return Table(header=header, rows=body, source="json", notes=["read as JSON rows"])


def json_rows_bytes(rows: list[dict]) -> bytes:
    """API rows as bytes, so they are checked, fingerprinted and stored like a file."""
    return JSON_ROWS_MAGIC + json.dumps(rows, sort_keys=False, separators=(",", ":"), default=str).encode()
