"""Reading XLSX uploads safely.

Before openpyxl sees the bytes, the zip's member count and declared uncompressed size
are checked (Python's zipfile then refuses any member that expands beyond what it
declares). openpyxl parses with defusedxml (no entities, no DTDs), read-only and
data-only: formulas are never evaluated; a formula cell gives the value Excel stored
with it, and a formula without a stored value is refused. Only the first sheet is read.
"""

from __future__ import annotations

import datetime as dt
import io
import logging
import warnings
import zipfile
from dataclasses import dataclass

import defusedxml.ElementTree as SafeET
import openpyxl
from defusedxml import DefusedXmlException
from openpyxl.xml import DEFUSEDXML

from .tabular import MAX_COLUMNS, MAX_ROWS, Table, TableError

log = logging.getLogger(__name__)
_NS = "{http://schemas.openxmlformats.org/spreadsheetml/2006/main}"

if not DEFUSEDXML:  # pragma: no cover - defusedxml is a dependency
    raise ImportError("defusedxml must be installed so that openpyxl parses XML safely")


@dataclass(frozen=True)
class XlsxLimits:
    max_uncompressed_bytes: int = 100 * 1024 * 1024
    max_members: int = 500


def check_zip(data: bytes, limits: XlsxLimits) -> zipfile.ZipFile:
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
    if "xl/workbook.xml" not in {m.filename for m in members}:
        raise TableError("the file is a zip archive but not an XLSX workbook (no xl/workbook.xml)")
    return archive


def _formula_cells_without_values(archive: zipfile.ZipFile, part: str) -> tuple[int, list[str]]:
    """(formula cells, references of those with no stored value) in one sheet part."""
    count, missing = 0, []
    with archive.open(part) as src:
        for _, elem in SafeET.iterparse(src, events=("end",)):
            if elem.tag == f"{_NS}c":
                f = elem.find(f"{_NS}f")
                if f is not None:
                    count += 1
                    v = elem.find(f"{_NS}v")
                    if (v is None or v.text is None) and elem.find(f"{_NS}is") is None:
                        missing.append(elem.get("r", "?"))
                elem.clear()
            elif elem.tag == f"{_NS}row":
                elem.clear()
    return count, missing


def read_xlsx(data: bytes, *, limits: XlsxLimits | None = None) -> Table:
    """The first sheet of a workbook as a :class:`Table` (cells keep their types)."""
    limits = limits or XlsxLimits()
    archive = check_zip(data, limits)
    wb = None
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # openpyxl warns about styles and extensions it skips
            wb = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
            sheets = wb.worksheets
            if not sheets:
                raise TableError("the workbook has no worksheet")
            ws = sheets[0]
            part = getattr(ws, "_worksheet_path", None)
            n_formulas, missing = _formula_cells_without_values(archive, part) if part else (0, [])
            if missing:
                shown = ", ".join(missing[:10]) + (" …" if len(missing) > 10 else "")
                raise TableError(
                    f"{len(missing)} formula cell(s) have no stored value ({shown}); open the file in "
                    "a spreadsheet, let it calculate, save it, and upload it again"
                )
            rows = _rows(ws)
            epoch = wb.epoch.date() if isinstance(wb.epoch, dt.datetime) else wb.epoch
            title, n_sheets = ws.title, len(sheets)
    except TableError:
        raise
    except Exception as exc:  # hostile or damaged XML: any parser failure is the file's fault
        log.info("unreadable workbook: %s: %s", type(exc).__name__, exc)
        raise TableError(_xml_message(exc)) from None
    finally:
        if wb is not None:
            wb.close()
        archive.close()
    if not rows or not any(_filled(c) for c in rows[0]):
        raise TableError("the first sheet is empty or its first row (the header) is blank")
    header = [("" if c is None else str(c)).strip() for c in rows[0]]
    while header and not header[-1]:
        header.pop()
    width = len(header)
    body = []
    for i, r in enumerate(rows[1:]):
        extra = [j for j in range(width, len(r)) if _filled(r[j])]
        if extra:
            raise TableError(
                f"row {i + 2} has a value in column {extra[0] + 1}, which has no header; "
                "remove it or give the column a name"
            )
        body.append(list(r[:width]) + [None] * (width - len(r)))
    while body and not any(_filled(c) for c in body[-1]):
        body.pop()
    notes = [
        f"read as an XLSX workbook: sheet {title!r}" + (f" (the first of {n_sheets})" if n_sheets > 1 else "")
    ]
    if n_formulas:
        notes.append(
            f"{n_formulas} formula cell(s): the values stored with them were read; nothing was calculated"
        )
    return Table(header=header, rows=body, source="xlsx", notes=notes, excel_epoch=epoch)


def _rows(ws) -> list[tuple]:
    out = []
    for r in ws.iter_rows(values_only=True, max_col=MAX_COLUMNS + 1):
        if len(r) > MAX_COLUMNS and _filled(r[MAX_COLUMNS]):
            raise TableError(f"the sheet has more than {MAX_COLUMNS} columns")
        out.append(r[:MAX_COLUMNS])
        if len(out) > MAX_ROWS + 1:
            raise TableError(f"the sheet has more than {MAX_ROWS:,} data rows")
    return out


def _filled(cell) -> bool:
    return cell is not None and not (isinstance(cell, str) and not cell.strip())


def _xml_message(exc: BaseException) -> str:
    seen = 0
    while exc is not None and seen < 10:  # openpyxl wraps the parser's error in its own
        if isinstance(exc, DefusedXmlException):
            return (
                "the workbook contains XML declarations that are not allowed (DTD or entities); it is refused"
            )
        exc, seen = exc.__cause__ or exc.__context__, seen + 1
    return "the file is not a readable XLSX workbook (a part of it is damaged or missing)"
