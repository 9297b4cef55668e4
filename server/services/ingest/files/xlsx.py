"""Reading XLSX uploads safely.

Before any part is decompressed, the zip directory is checked: the number of parts, their
declared uncompressed size (Python's zipfile then refuses a part that expands beyond what it
declares), encryption, and parts that appear twice (a zip may hold two members of one name, of
which a reader silently takes one; OPC part names are compared without case). The workbook's
parts are then read as streams (``xlsx_parts``): the first *visible* worksheet is read, and the
report says which; hidden rows and columns that hold values are read with a warning. Formulas
are never evaluated: a formula cell gives the value the spreadsheet stored with it, and a
formula without a stored value is refused.

Rows are streamed, never padded: a cell at row 1,000,000 costs one row, not a million. The
declared dimension of the sheet is checked against the upload budget before any cell is read,
and rows and cells are counted as they stream, so a file over the budget is refused as soon as
that is known (``ReadLimits``).
"""

from __future__ import annotations

import io
import logging
import re
import zipfile

from .table import MAX_COLUMNS, CellProblem, ExcelDate, IsoDateText, Problem, ReadLimits, Table, TableError
from .xlsx_parts import (
    MAX_CELL_CHARS,
    ForbiddenXmlError,
    date_styles,
    local_tag,
    pull,
    shared_strings,
    text_of,
    workbook_info,
)

log = logging.getLogger(__name__)
XlsxLimits = ReadLimits  # the name callers used before the budget covered CSV too
MAX_SHEET_ROW = 1_048_576  # the largest row number a spreadsheet has (Excel specifications and limits)
MAX_SHEET_COLUMN = 16_384  # column XFD
_REF = re.compile(r"\$?([A-Za-z]{1,3})\$?(\d{1,7})")
_INT = re.compile(r"\s*[+-]?\d{1,300}\s*")
_SHOWN = 10


def check_zip(data: bytes, limits: ReadLimits) -> zipfile.ZipFile:
    """Open the archive and refuse it before any member is decompressed if it is too big."""
    try:
        archive = zipfile.ZipFile(io.BytesIO(data))
        members = archive.infolist()
    except Exception:  # zipfile raises many types on damaged input
        raise TableError("the file is not a readable XLSX workbook (the zip archive is damaged)") from None
    if len(members) > limits.max_members:
        raise TableError(
            f"the workbook has {len(members)} parts; more than {limits.max_members} is not a normal "
            "spreadsheet and is refused"
        )
    total = sum(m.file_size for m in members)
    if total > limits.max_uncompressed_bytes:
        raise TableError(
            f"the workbook expands to {total / 2**20:,.0f} MiB, more than the limit of "
            f"{limits.max_uncompressed_bytes / 2**20:,.0f} MiB; it is refused unopened"
        )
    if any(m.flag_bits & 0x1 for m in members):
        raise TableError("the workbook is encrypted: save it without a password")
    seen: dict[str, str] = {}
    for m in members:
        key = m.filename.replace("\\", "/").lstrip("/").casefold()
        if key in seen:
            raise TableError(
                f"the workbook holds two parts named {m.filename!r}: a damaged or altered file, in which "
                "programs may read different contents; it is refused"
            )
        seen[key] = m.filename
    if "xl/workbook.xml" not in archive.NameToInfo:
        raise TableError("the file is a zip archive but not an XLSX workbook (no xl/workbook.xml)")
    return archive


def read_xlsx(data: bytes, *, limits: ReadLimits | None = None) -> Table:
    """The first visible worksheet of a workbook as a :class:`Table` (cells keep their types)."""
    limits = limits or ReadLimits()
    archive = check_zip(data, limits)
    try:
        book = workbook_info(archive)
        sheet = book.first_visible()
        reader = _SheetReader(
            shared_strings(archive, book.shared_strings_part, limits),
            date_styles(archive, book.styles_part),
            limits,
        )
        reader.read(pull(archive, sheet.part))
    except TableError:
        raise
    except Exception as exc:  # hostile or damaged XML: any parser failure is the file's fault
        log.info("unreadable workbook: %s: %s", type(exc).__name__, exc)
        raise TableError(_xml_message(exc)) from None
    finally:
        archive.close()
    table = reader.table(book.epoch)
    hidden = [s.name for s in book.sheets if s.state != "visible"]
    note = f"read as an XLSX workbook: sheet {sheet.name!r}"
    if len(book.sheets) > 1:
        note += f" (the first visible sheet of {len(book.sheets)})"
    if hidden:
        shown = ", ".join(repr(h) for h in hidden[:_SHOWN]) + (" …" if len(hidden) > _SHOWN else "")
        note += f"; hidden sheet(s) not read: {shown}"
    table.notes.insert(0, note)
    return table


def _column(letters: str) -> int:
    n = 0
    for ch in letters.upper():
        n = n * 26 + ord(ch) - 64
    return n


class _SheetReader:
    """One worksheet part, streamed row by row within the budget: each row is read when its
    element ends, then removed from the tree."""

    def __init__(self, strings: list, dates: frozenset[int], limits: ReadLimits):
        self.strings, self.dates, self.limits = strings, dates, limits
        self.header: list[str] | None = None
        self.rows: list[list] = []
        self.numbers: list[int] = []
        self.blank = 0
        self.formulas = 0
        self.missing: list[str] = []
        self.hidden_rows: list[int] = []
        self.hidden_columns: list[tuple[int, int]] = []  # (first, last) column ranges
        self.last_row = 0

    def read(self, events) -> None:
        limit = 8 * self.limits.max_cells + 10_000  # XML elements: v, f, is, t per cell, and some more
        cells = 0
        sheet_data = None
        for n, (event, el) in enumerate(events):
            if n > limit:
                raise self.limits.too_many_cells()
            name = local_tag(el.tag)
            if event == "start":
                if name == "sheetData":
                    sheet_data = el
                continue
            if name == "c":
                cells += 1
                if cells > self.limits.max_cells:
                    raise self.limits.too_many_cells()
            elif name == "row":
                self._row(el)
                if sheet_data is not None:
                    sheet_data.clear()
            elif name == "dimension":
                self._dimension(el.get("ref") or "")
            elif name == "col":
                self._col(el)
            elif name == "sheetData":
                return  # nothing after the cells is read

    def _dimension(self, ref: str) -> None:
        """The sheet's declared extent (``A1:D200``): refused before any cell when over the budget."""
        last = _REF.fullmatch(ref.rpartition(":")[2])
        if last is None:
            return  # optional and often wrong; the streamed counts still bind
        rows = int(last[2])
        if rows > self.limits.max_rows + 1:
            raise TableError(
                f"the sheet declares {rows:,} rows ({ref}), more than the upload budget of "
                f"{self.limits.max_rows:,} data rows; it is refused before reading"
            )

    def _col(self, el) -> None:
        if (el.get("hidden") or "").lower() in ("1", "true") or el.get("width") in ("0", "0.0"):
            try:
                self.hidden_columns.append((int(el.get("min") or 0), int(el.get("max") or 0)))
            except ValueError:
                return

    def _row(self, el) -> None:
        r = el.get("r")
        number = int(r) if r and r.isdigit() and len(r) < 9 else self.last_row + 1
        if number <= self.last_row or number > MAX_SHEET_ROW:
            raise TableError(
                f"row {number} follows row {self.last_row} in the sheet: the rows are out of order or "
                "repeated, which no spreadsheet program writes; the file is refused as damaged"
            )
        if number > self.limits.max_rows + 1:
            raise self.limits.too_many_rows()
        self.last_row = number
        values: dict[int, object] = {}
        col = 0
        for c in el:
            if local_tag(c.tag) != "c":
                continue
            ref = c.get("r")
            m = _REF.fullmatch(ref) if ref else None
            if ref and (m is None or int(m[2]) != number):
                raise TableError(f"cell {ref!r} is in row {number} of the sheet: the file is damaged")
            at = _column(m[1]) if m else col + 1
            if at <= col or at > MAX_SHEET_COLUMN:
                raise TableError(
                    f"cell {ref or '?'} in row {number} is out of order or repeated: the file is damaged"
                )
            col = at
            value = self._value(c, ref or f"row {number}")
            if value is None:
                continue
            if at > MAX_COLUMNS:
                raise TableError(f"the sheet has more than {MAX_COLUMNS} columns")
            values[at] = value
        hidden = (el.get("hidden") or "").lower() in ("1", "true") or el.get("ht") in ("0", "0.0")
        self._keep(number, values, hidden)

    def _keep(self, number: int, values: dict, hidden: bool) -> None:
        filled = {k: v for k, v in values.items() if not (isinstance(v, str) and not v.strip())}
        if self.header is None:
            if number != 1 or not filled:
                raise TableError("the first sheet is empty or its first row (the header) is blank")
            width = max(filled)
            self.header = [str(values.get(i, "") or "").strip() for i in range(1, width + 1)]
            while self.header and not self.header[-1]:
                self.header.pop()
            return
        if not filled:
            self.blank += 1
            return
        width = len(self.header)
        extra = [k for k in filled if k > width]
        if extra:
            raise TableError(
                f"row {number} has a value in column {min(extra)}, which has no header; "
                "remove it or give the column a name"
            )
        if hidden:
            self.hidden_rows.append(number)
        self.rows.append([values.get(i) for i in range(1, width + 1)])
        self.numbers.append(number)

    def _value(self, c, ref: str):
        t = c.get("t") or "n"
        v = f = inline = None
        for child in c:
            name = local_tag(child.tag)
            if name == "v":
                v = child.text or None  # <v/> holds nothing
            elif name == "f":
                f = child
            elif name == "is":
                inline = child
        if f is not None:
            self.formulas += 1
            if v is None and inline is None:
                self.missing.append(ref)
                return None
        if t == "inlineStr":
            return None if inline is None else text_of(inline)
        if v is None:
            return None
        if len(v) > MAX_CELL_CHARS:
            return CellProblem(f"holds more than {MAX_CELL_CHARS:,} characters (a spreadsheet cell's limit)")
        if t == "n":
            try:
                style = int(c.get("s") or 0)
            except ValueError:
                style = 0
            if style in self.dates:
                try:
                    return ExcelDate(float(v))
                except ValueError:
                    return CellProblem("is formatted as a date but holds no number", v[:40])
            return _number(v)
        if t == "s":
            try:
                return self.strings[int(v)]
            except (ValueError, IndexError):
                raise TableError(
                    f"cell {ref} refers to a shared string that the workbook does not have: "
                    "the file is damaged"
                ) from None
        if t == "str":
            return v
        if t == "b":
            flag = v.strip().lower()
            if flag in ("1", "true", "0", "false"):
                return flag in ("1", "true")
            return CellProblem("is marked TRUE/FALSE but holds neither", v[:40])
        if t == "e":
            return CellProblem(f"is a spreadsheet error value ({v.strip()[:20]})", v[:20])
        if t == "d":
            return IsoDateText(v.strip()[:100])
        return CellProblem(f"has an unknown cell type {t[:10]!r}", v[:40])

    def table(self, epoch) -> Table:
        if self.missing:
            shown = ", ".join(self.missing[:_SHOWN]) + (" …" if len(self.missing) > _SHOWN else "")
            raise TableError(
                f"{len(self.missing)} formula cell(s) have no stored value ({shown}); open the file in "
                "a spreadsheet, let it calculate, save it, and upload it again"
            )
        if self.header is None:
            raise TableError("the first sheet is empty or its first row (the header) is blank")
        notes = []
        if self.formulas:
            notes.append(
                f"{self.formulas} formula cell(s): the values stored with them were read; "
                "nothing was calculated"
            )
        warnings = [
            Problem(
                n,
                None,
                None,
                "is hidden in the workbook; its values were read (unhide it to see them)",
                "warning",
            )
            for n in self.hidden_rows
        ]
        for first, last in self.hidden_columns:
            for k in range(max(first, 1), min(last, len(self.header)) + 1):
                if self.header[k - 1] and any(r[k - 1] is not None for r in self.rows):
                    warnings.append(
                        Problem(
                            1,
                            self.header[k - 1],
                            None,
                            "is a hidden column in the workbook; its values were read "
                            "(unhide it to see them)",
                            "warning",
                        )
                    )
        return Table(
            header=self.header,
            rows=self.rows,
            source="xlsx",
            notes=notes,
            excel_epoch=epoch,
            row_numbers=self.numbers,
            blank_rows=self.blank,
            warnings=warnings,
        )


def _number(v: str):
    """A number cell's text as int (exact, for names written as numbers) or float; text that is
    not a number is a cell problem, not a damaged file."""
    if _INT.fullmatch(v):
        return int(v)
    try:
        return float(v)
    except ValueError:
        return CellProblem("is marked as a number but holds text that is not one", v[:40])


def _xml_message(exc: BaseException) -> str:
    seen = 0
    while exc is not None and seen < 10:  # a parser's error may be wrapped in another
        if isinstance(exc, ForbiddenXmlError):
            return (
                "the workbook contains XML declarations that are not allowed (DTD or entities); it is refused"
            )
        exc, seen = exc.__cause__ or exc.__context__, seen + 1
    return "the file is not a readable XLSX workbook (a part of it is damaged or missing)"
