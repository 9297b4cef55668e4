"""The parts of an XLSX workbook that say how to read a sheet: which sheets there are (and which
the user can see), where their parts are, the date system, which cell styles are dates, and the
shared strings. Every part is parsed as a stream by expat with any DTD or entity declaration
refused (the rule defusedxml applies, without building an element tree) and bounded by the
upload's limits, so no part can make the reader build more than the budget.

Structure per ECMA-376 Part 1 (SpreadsheetML) §18.2 (workbook), §18.4 (shared strings),
§18.8 (styles), and Part 2 (Open Packaging Conventions) for relationships.
"""

from __future__ import annotations

import datetime as dt
import posixpath
import xml.etree.ElementTree as ET  # noqa: S405 - used only after check_prolog refused any DTD
import zipfile
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from xml.parsers import expat

from .table import CellProblem, ReadLimits, TableError

MAX_CELL_CHARS = 32767  # a spreadsheet cell's own limit (Excel specifications and limits)
MAX_STYLES = 65536  # Excel allows about 64,000 cell formats per workbook
MAX_PART_ELEMENTS = 1_000_000  # workbook, relationships, styles: far above any real workbook
EPOCH_1900 = dt.date(1899, 12, 30)
EPOCH_1904 = dt.date(1904, 1, 1)
CHUNK_BYTES = 1 << 20


class ForbiddenXmlError(Exception):
    """A part declares a DTD or entities (the door to entity expansion and external files)."""


class StopParsing(Exception):
    """Everything needed from a part has been read."""


def _forbid(*_args) -> None:
    raise ForbiddenXmlError("DTD or entity declaration")


def local(tag: str) -> str:
    """An element's name without its namespace prefix (transitional and strict files alike)."""
    return tag.rpartition(":")[2]


def stream(src, start: Callable, end: Callable | None = None, chars: Callable | None = None) -> None:
    """Feed a part to expat in chunks, calling ``start(name, attrs)``, ``end(name)`` and
    ``chars(text)``. Any DTD or entity declaration is refused before its content is read (what
    defusedxml does, here without an element tree, so a sheet streams at expat's speed)."""
    parser = expat.ParserCreate()
    parser.buffer_text = True
    parser.StartDoctypeDeclHandler = _forbid
    parser.EntityDeclHandler = _forbid
    parser.ExternalEntityRefHandler = _forbid
    parser.SetParamEntityParsing(expat.XML_PARAM_ENTITY_PARSING_NEVER)
    parser.StartElementHandler = start
    if end is not None:
        parser.EndElementHandler = end
    if chars is not None:
        parser.CharacterDataHandler = chars
    try:
        while chunk := src.read(CHUNK_BYTES):
            parser.Parse(chunk, False)
        parser.Parse(b"", True)
    except StopParsing:
        pass


def check_prolog(archive: zipfile.ZipFile, member: str) -> None:
    """Refuse a part whose prolog declares a DTD. A DTD may only come before the root element
    (XML 1.0 §2.8), so expat reads just the prolog here, in whatever encoding the part uses;
    without a DTD no entity can be declared, and an undeclared one is a parse error."""

    def root(*_args):
        raise StopParsing

    with archive.open(member) as src:
        stream(src, root)


def pull(archive: zipfile.ZipFile, member: str) -> Iterator[tuple[str, ET.Element]]:
    """Start and end events of a large part from the C parser (no Python call per element),
    after :func:`check_prolog`. The caller clears what it has read."""
    check_prolog(archive, member)
    parser = ET.XMLPullParser(events=("start", "end"))
    with archive.open(member) as src:
        while chunk := src.read(CHUNK_BYTES):
            parser.feed(chunk)
            yield from parser.read_events()
        parser.close()
        yield from parser.read_events()


def _attributes(archive: zipfile.ZipFile, member: str, names: set[str]) -> list[tuple[str, dict]]:
    """(element name, attributes) of every element named in ``names``, in document order."""
    out: list[tuple[str, dict]] = []
    count = 0

    def start(tag, attrs):
        nonlocal count
        count += 1
        if count > MAX_PART_ELEMENTS:
            raise TableError(
                f"the workbook's part {member!r} is not a normal spreadsheet part (too many elements)"
            )
        name = local(tag)
        if name in names:
            out.append((name, attrs))

    with archive.open(member) as src:
        stream(src, start)
    return out


@dataclass(frozen=True)
class SheetEntry:
    name: str
    state: str  # visible | hidden | veryHidden
    part: str | None  # zip member of a worksheet; None for chart and dialog sheets


@dataclass(frozen=True)
class WorkbookInfo:
    sheets: list[SheetEntry]
    epoch: dt.date
    shared_strings_part: str | None
    styles_part: str | None

    def first_visible(self) -> SheetEntry:
        for s in self.sheets:
            if s.state == "visible" and s.part is not None:
                return s
        if not any(s.part for s in self.sheets):
            raise TableError("the workbook has no worksheet")
        raise TableError(
            "every worksheet of the workbook is hidden: unhide the sheet to upload and save it again"
        )


def _relationships(archive: zipfile.ZipFile, part: str) -> dict[str, tuple[str, str]]:
    """Relationship id -> (type's last word, target member) of ``part``."""
    folder, name = posixpath.split(part)
    rels_name = posixpath.join(folder, "_rels", name + ".rels")
    if rels_name not in archive.NameToInfo:
        return {}
    out: dict[str, tuple[str, str]] = {}
    for _, a in _attributes(archive, rels_name, {"Relationship"}):
        if a.get("TargetMode") == "External":
            continue
        target = a.get("Target") or ""
        member = target.lstrip("/") if target.startswith("/") else posixpath.join(folder, target)
        out[a.get("Id") or ""] = ((a.get("Type") or "").rpartition("/")[2], posixpath.normpath(member))
    return out


def workbook_info(archive: zipfile.ZipFile, part: str = "xl/workbook.xml") -> WorkbookInfo:
    """Sheets in workbook order with their visibility and parts; the date system; parts."""
    rels = _relationships(archive, part)
    entries: list[tuple[str, str, str]] = []
    date1904 = False
    for name, a in _attributes(archive, part, {"sheet", "workbookPr"}):
        if name == "sheet":
            rid = next((v for k, v in a.items() if local(k) == "id"), "")
            entries.append((a.get("name") or "?", a.get("state") or "visible", rid))
        else:
            date1904 = (a.get("date1904") or "").lower() in ("1", "true")
    by_type = {}
    for kind, member in rels.values():
        by_type.setdefault(kind, member)
    sheets = []
    for sheet_name, state, rid in entries:
        kind, member = rels.get(rid, ("", ""))
        ok = kind == "worksheet" and member in archive.NameToInfo
        sheets.append(
            SheetEntry(
                sheet_name, state if state in ("hidden", "veryHidden") else "visible", member if ok else None
            )
        )
    return WorkbookInfo(
        sheets,
        EPOCH_1904 if date1904 else EPOCH_1900,
        _existing(archive, by_type.get("sharedStrings")),
        _existing(archive, by_type.get("styles")),
    )


def _existing(archive: zipfile.ZipFile, member: str | None) -> str | None:
    return member if member and member in archive.NameToInfo else None


def date_styles(archive: zipfile.ZipFile, part: str | None) -> frozenset[int]:
    """Indexes of the cell formats (``s`` of a cell) whose number format shows a date or time."""
    if part is None:
        return frozenset()
    custom: dict[int, str] = {}
    formats: list[int] = []
    state = {"in_xfs": False, "count": 0}

    def start(tag, a):
        state["count"] += 1
        if state["count"] > MAX_PART_ELEMENTS:
            raise TableError(
                "the workbook's styles part is not a normal spreadsheet part (too many elements)"
            )
        name = local(tag)
        if name == "numFmt":
            try:
                custom[int(a.get("numFmtId") or "")] = a.get("formatCode") or ""
            except ValueError:
                return
        elif name == "cellXfs":
            state["in_xfs"] = True
        elif name == "xf" and state["in_xfs"]:
            try:
                formats.append(int(a.get("numFmtId") or 0))
            except ValueError:
                formats.append(0)
        if len(formats) > MAX_STYLES or len(custom) > MAX_STYLES:
            raise TableError("the workbook has more cell formats than a spreadsheet allows")

    def end(tag):
        if local(tag) == "cellXfs":
            raise StopParsing  # nothing after the cell formats matters here

    with archive.open(part) as src:
        stream(src, start, end)
    # Imported here, when a workbook is read: openpyxl costs every new process about half a
    # second, and CSV uploads and `tankbook analyse` on CSV files never need it (issue 17).
    from openpyxl.styles.numbers import BUILTIN_FORMATS, is_date_format

    dates = set()
    for i, fmt in enumerate(formats):
        code = custom.get(fmt, BUILTIN_FORMATS.get(fmt))
        if code and is_date_format(code):
            dates.add(i)
    return frozenset(dates)


def local_tag(tag) -> str:
    """An element tree tag without its namespace (``{ns}name`` -> ``name``)."""
    return tag.rpartition("}")[2] if isinstance(tag, str) else ""


def text_of(el: ET.Element):
    """The text of a string item (``si``) or inline string (``is``): its ``t`` and its rich-text
    runs' ``t``, without phonetic guides (``rPh``); longer than a cell holds: a cell problem."""
    parts = []
    for child in el:
        name = local_tag(child.tag)
        if name == "t":
            parts.append(child.text or "")
        elif name == "r":
            parts.extend(t.text or "" for t in child if local_tag(t.tag) == "t")
    text = "".join(parts)
    if len(text) > MAX_CELL_CHARS:
        return CellProblem(f"holds more than {MAX_CELL_CHARS:,} characters (a spreadsheet cell's limit)")
    return text


def shared_strings(archive: zipfile.ZipFile, part: str | None, limits: ReadLimits) -> list:
    """The shared-string table, read as a stream. More strings than the cell budget cannot all be
    used by a sheet within the budget, so such a table is refused as soon as that is seen (from
    its declared count, or while counting)."""
    if part is None:
        return []
    out: list = []
    limit = 16 * limits.max_cells + 1000
    root = None
    for n, (event, el) in enumerate(pull(archive, part)):
        if n > limit:
            raise limits.too_many_cells()
        if event == "start":
            if root is None:
                root = el
                declared = el.get("uniqueCount") or ""
                if declared.isdigit() and int(declared) > limits.max_cells:
                    raise TableError(
                        f"the workbook's shared-string table declares {int(declared):,} strings, more than "
                        f"the upload budget of {limits.max_cells:,} cells; it is refused before reading"
                    )
            continue
        if local_tag(el.tag) == "si":
            out.append(text_of(el))
            if len(out) > limits.max_cells:
                raise TableError(
                    f"the workbook's shared-string table holds more than {limits.max_cells:,} strings, "
                    f"more than the upload budget of {limits.max_cells:,} cells; it is refused"
                )
            root.clear()
    return out
