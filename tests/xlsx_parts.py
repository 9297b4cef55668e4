"""Hand-built XLSX packages for hostile-file tests: every part written here, so a test can put
into a workbook what no spreadsheet program would (hidden first sheets, duplicate zip members,
cells far away, time zones on date cells, numbers beyond any float).

The structure follows ECMA-376 Part 1 (SpreadsheetML) and Part 2 (Open Packaging Conventions):
``[Content_Types].xml``, ``_rels/.rels`` pointing at ``xl/workbook.xml``, whose relationships
name each sheet part, the shared strings and the styles.
"""

from __future__ import annotations

import io
import warnings
import zipfile
from dataclasses import dataclass, field

MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG_REL_NS = "http://schemas.openxmlformats.org/package/2006/relationships"


def cell_ref(col: int, row: int) -> str:
    letters = ""
    while col:
        col, rem = divmod(col - 1, 26)
        letters = chr(65 + rem) + letters
    return f"{letters}{row}"


def text_cell(ref: str, value: str) -> str:
    esc = value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    return f'<c r="{ref}" t="inlineStr"><is><t xml:space="preserve">{esc}</t></is></c>'


def number_cell(ref: str, value, style: int | None = None) -> str:
    s = f' s="{style}"' if style is not None else ""
    return f'<c r="{ref}"{s}><v>{value}</v></c>'


def row_xml(number: int, values: list, extra: str = "") -> str:
    """A row of values: str -> inline string, other -> number text as given; None -> no cell."""
    cells = []
    for i, v in enumerate(values, start=1):
        if v is None:
            continue
        ref = cell_ref(i, number)
        cells.append(text_cell(ref, v) if isinstance(v, str) else number_cell(ref, v))
    return f'<row r="{number}"{extra}>{"".join(cells)}</row>'


def sheet_xml(rows: list[str] | str, *, dimension: str | None = None, cols: str = "") -> str:
    body = rows if isinstance(rows, str) else "".join(rows)
    dim = f'<dimension ref="{dimension}"/>' if dimension else ""
    return (
        f'<?xml version="1.0" encoding="UTF-8"?><worksheet xmlns="{MAIN_NS}">{dim}{cols}'
        f"<sheetData>{body}</sheetData></worksheet>"
    )


def table_sheet(rows: list[list]) -> str:
    """Rows of values from row 1 (the header)."""
    return sheet_xml([row_xml(i, r) for i, r in enumerate(rows, start=1)])


@dataclass
class Sheet:
    name: str
    xml: str
    state: str | None = None  # None (visible), "hidden" or "veryHidden"


@dataclass
class Package:
    sheets: list[Sheet]
    shared_strings: str | None = None
    styles: str | None = None
    date1904: bool = False
    extra: list[tuple[str, bytes]] = field(default_factory=list)  # members added as they are

    def build(self) -> bytes:
        rels = [
            f'<Relationship Id="rId{i}" Type="{REL_NS}/worksheet" Target="worksheets/sheet{i}.xml"/>'
            for i in range(1, len(self.sheets) + 1)
        ]
        if self.shared_strings is not None:
            rels.append(f'<Relationship Id="rIdS" Type="{REL_NS}/sharedStrings" Target="sharedStrings.xml"/>')
        if self.styles is not None:
            rels.append(f'<Relationship Id="rIdT" Type="{REL_NS}/styles" Target="styles.xml"/>')
        sheets = "".join(
            f'<sheet name="{s.name}" sheetId="{i}" r:id="rId{i}"'
            + (f' state="{s.state}"' if s.state else "")
            + "/>"
            for i, s in enumerate(self.sheets, start=1)
        )
        pr = '<workbookPr date1904="1"/>' if self.date1904 else ""
        workbook = (
            f'<?xml version="1.0" encoding="UTF-8"?><workbook xmlns="{MAIN_NS}" xmlns:r="{REL_NS}">'
            f"{pr}<sheets>{sheets}</sheets></workbook>"
        )
        ct = "application/vnd.openxmlformats-officedocument.spreadsheetml."
        overrides = [("/xl/workbook.xml", "sheet.main+xml")]
        n = len(self.sheets)
        overrides += [(f"/xl/worksheets/sheet{i}.xml", "worksheet+xml") for i in range(1, n + 1)]
        if self.shared_strings is not None:
            overrides.append(("/xl/sharedStrings.xml", "sharedStrings+xml"))
        if self.styles is not None:
            overrides.append(("/xl/styles.xml", "styles+xml"))
        types = (
            '<?xml version="1.0" encoding="UTF-8"?><Types xmlns="http://schemas.openxmlformats.org/'
            'package/2006/content-types"><Default Extension="rels" ContentType="application/'
            'vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" '
            'ContentType="application/xml"/>'
            + "".join(f'<Override PartName="{n}" ContentType="{ct}{t}"/>' for n, t in overrides)
            + "</Types>"
        )
        root_rels = (
            f'<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="{PKG_REL_NS}"><Relationship '
            f'Id="rId1" Type="{REL_NS}/officeDocument" Target="xl/workbook.xml"/></Relationships>'
        )
        out = io.BytesIO()
        with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as z:
            z.writestr("[Content_Types].xml", types)
            z.writestr("_rels/.rels", root_rels)
            z.writestr("xl/workbook.xml", workbook)
            z.writestr(
                "xl/_rels/workbook.xml.rels",
                f'<?xml version="1.0" encoding="UTF-8"?><Relationships xmlns="{PKG_REL_NS}">'
                + "".join(rels)
                + "</Relationships>",
            )
            for i, s in enumerate(self.sheets, start=1):
                z.writestr(f"xl/worksheets/sheet{i}.xml", s.xml)
            if self.shared_strings is not None:
                z.writestr("xl/sharedStrings.xml", self.shared_strings)
            if self.styles is not None:
                z.writestr("xl/styles.xml", self.styles)
            for name, data in self.extra:
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")  # zipfile warns on a duplicate name
                    z.writestr(name, data)
        return out.getvalue()


def workbook(rows: list[list], **kw) -> bytes:
    """One visible sheet of ``rows`` (from row 1)."""
    return Package([Sheet("Data", table_sheet(rows))], **kw).build()


DATE_STYLES = (
    f'<?xml version="1.0" encoding="UTF-8"?><styleSheet xmlns="{MAIN_NS}">'
    '<numFmts count="1"><numFmt numFmtId="164" formatCode="yyyy-mm-dd"/></numFmts>'
    '<cellXfs count="3"><xf numFmtId="0"/><xf numFmtId="14"/><xf numFmtId="164"/></cellXfs></styleSheet>'
)
"""Styles whose cell format 1 is the built-in date (14) and 2 a custom yyyy-mm-dd (164)."""
