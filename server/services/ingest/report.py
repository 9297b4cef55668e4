"""Validation problems, how the file was read, and the report a user sees."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

MAX_PROBLEMS_SHOWN = 200
MAX_PROBLEMS_KEPT = 5000  # beyond this only the counts grow (a hostile file cannot fill memory)
MAX_ERRORS_CHECKED = 10_000  # past this many errors a file's check stops (the rest is not read)


@dataclass(frozen=True)
class Problem:
    """One thing wrong with an upload. ``row`` is the spreadsheet row (header = 1)."""

    row: int | None
    column: str | None
    value: str | None
    message: str
    severity: Literal["error", "warning"] = "error"

    def describe(self) -> str:
        where = []
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column:
            where.append(f"column {self.column!r}")
        shown = "" if self.value is None else f" (value {self.value!r})"
        prefix = ", ".join(where)
        return f"{prefix}: {self.message}{shown}" if prefix else f"{self.message}{shown}"


@dataclass(frozen=True)
class ColumnReading:
    """How one header of the file was understood (shown in the preview)."""

    header: str  # as written in the file
    column: str  # Tankbook's column
    unit: str | None  # canonical unit, if the column has one
    unit_from: Literal["header", "form", "default", "none"]
    meaning: str  # in words, e.g. "bar gauge, converted to psia with an atmosphere of 14.696 psia"


def _row_order(p: Problem) -> int:
    return p.row if p.row is not None else 0


class UploadRejectedError(Exception):
    """Raised when an upload has errors (or unconfirmed warnings); carries the full report."""

    def __init__(self, report: ValidationReport):
        super().__init__(f"{report.error_count} error(s) in the upload")
        self.report = report


def _short(value, limit: int = 80) -> str | None:
    if value is None:
        return None
    if isinstance(value, int) and value.bit_length() > 1024:  # str() would refuse past 4,300 digits
        return f"a number of about {int(value.bit_length() * 0.30103) + 1:,} digits"
    text = str(value)
    return text if len(text) <= limit else text[: limit - 1] + "…"


@dataclass
class ValidationReport:
    kind: str
    rows_total: int = 0
    problems: list[Problem] = field(default_factory=list)
    error_count: int = 0
    warning_count: int = 0
    columns: list[ColumnReading] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)  # file-level readings: encoding, delimiter, ...

    def add(self, row, column, value, message, severity: Literal["error", "warning"] = "error") -> None:
        if severity == "error":
            self.error_count += 1
        else:
            self.warning_count += 1
        if len(self.problems) < MAX_PROBLEMS_KEPT:
            self.problems.append(Problem(row, column, _short(value), message, severity))

    @property
    def full(self) -> bool:
        """So many errors that checking the rest of the file would only cost time."""
        return self.error_count >= MAX_ERRORS_CHECKED

    def stop(self, where: str) -> None:
        """Say that checking stopped (kept even past :data:`MAX_PROBLEMS_KEPT`: it is shown first)."""
        self.error_count += 1
        message = (
            f"checking stopped after {MAX_ERRORS_CHECKED:,} errors at {where}; the rest of the file was "
            "not checked: correct these and upload it again"
        )
        self.problems.append(Problem(None, None, None, message))

    def note(self, text: str) -> None:
        if text not in self.notes:
            self.notes.append(text)

    @property
    def errors(self) -> list[Problem]:
        """Errors in row order (file-level problems first)."""
        return sorted((p for p in self.problems if p.severity == "error"), key=_row_order)

    @property
    def warnings(self) -> list[Problem]:
        return sorted((p for p in self.problems if p.severity == "warning"), key=_row_order)

    @property
    def ok(self) -> bool:
        return self.error_count == 0

    def shown(self) -> list[Problem]:
        """Errors before warnings, each by row; capped at :data:`MAX_PROBLEMS_SHOWN`."""
        return (self.errors + self.warnings)[:MAX_PROBLEMS_SHOWN]

    def as_dict(self) -> dict:
        shown = self.shown()
        return {
            "kind": self.kind,
            "rows_total": self.rows_total,
            "error_count": self.error_count,
            "warning_count": self.warning_count,
            "problems": [
                {
                    "row": p.row,
                    "column": p.column,
                    "value": p.value,
                    "message": p.message,
                    "severity": p.severity,
                }
                for p in shown
            ],
            "problems_not_shown": self.error_count + self.warning_count - len(shown),
            "columns": [
                {
                    "header": c.header,
                    "column": c.column,
                    "unit": c.unit,
                    "unit_from": c.unit_from,
                    "meaning": c.meaning,
                }
                for c in self.columns
            ],
            "notes": list(self.notes),
        }
