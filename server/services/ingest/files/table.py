"""A table of cells read from an upload (header and rows), the error for an unreadable
file, and the limits every reader keeps."""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass, field

from ..report import Problem

MAX_COLUMNS = 100
MAX_ROWS = 1_000_000  # data rows; the byte limit usually binds first
MAX_CELLS = 3_000_000  # cells of a file (the upload budget; TANKBOOK_UPLOAD_MAX_CELLS)
CONTROL_CHARACTERS = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")


@dataclass(frozen=True)
class ReadLimits:
    """What reading one upload may cost: its rows and cells (the upload budget, for every format)
    and, for XLSX, the zip archive's parts and their expanded size. Settings:
    ``TANKBOOK_UPLOAD_MAX_ROWS``, ``…_MAX_CELLS``, ``TANKBOOK_XLSX_MAX_UNCOMPRESSED_BYTES``,
    ``TANKBOOK_XLSX_MAX_MEMBERS``."""

    max_uncompressed_bytes: int = 100 * 1024 * 1024
    max_members: int = 500
    max_rows: int = MAX_ROWS
    max_cells: int = MAX_CELLS

    def too_many_rows(self) -> TableError:
        return TableError(
            f"the file has more than {self.max_rows:,} data rows (the upload budget); "
            "split it into smaller files"
        )

    def too_many_cells(self) -> TableError:
        return TableError(
            f"the file has more than {self.max_cells:,} cells (the upload budget); "
            "split it into smaller files"
        )


@dataclass
class Table:
    """A header and data rows; ``rows[i]`` is spreadsheet row ``i + 2``.

    CSV cells are strings; XLSX cells may also be numbers, dates or booleans.
    """

    header: list[str]
    rows: list[list]
    source: str  # "csv" or "xlsx"
    notes: list[str] = field(default_factory=list)
    excel_epoch: dt.date = dt.date(1899, 12, 30)  # day zero of Excel serial dates (1900 system)
    delimiter: str | None = None  # CSV only
    row_numbers: list[int] | None = None  # spreadsheet row of each row when not ``i + 2`` (XLSX)
    blank_rows: int = 0  # blank rows left out of ``rows`` (XLSX; CSV keeps them in ``rows``)
    warnings: list[Problem] = field(default_factory=list)  # what the reader saw that the user may not

    def row_number(self, i: int) -> int:
        return self.row_numbers[i] if self.row_numbers is not None else i + 2


@dataclass(frozen=True)
class CellProblem:
    """A cell the reader could not take as a value (e.g. a workbook error such as ``#N/A``, or a
    number the file marks as a date but outside every calendar); every cell parser refuses it
    with ``message``, so the report names its row and column."""

    message: str
    shown: str = ""

    def __str__(self) -> str:
        return self.shown


@dataclass(frozen=True)
class ExcelDate:
    """A number that the workbook formats as a date: ``serial`` days since the workbook's epoch.
    Turned into a date by the date parser (one rule for every source), refused as a number."""

    serial: float

    def __str__(self) -> str:
        return f"{self.serial:g} (a spreadsheet date)"


class IsoDateText(str):
    """A workbook cell stored as ISO 8601 text with the date type (``t="d"``): read by the same
    rule as a date written in a CSV file."""

    __slots__ = ()


class TableError(Exception):
    """The file cannot be read as a table at all."""

    def __init__(self, message: str):
        super().__init__(message)
        self.problem = Problem(None, None, None, message)
