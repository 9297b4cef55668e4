"""Validation problems and reports."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

MAX_PROBLEMS_SHOWN = 200


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


class UploadRejectedError(Exception):
    """Raised when an upload has errors; carries the full report."""

    def __init__(self, report: ValidationReport):
        super().__init__(f"{len(report.errors)} error(s) in the upload")
        self.report = report


@dataclass
class ValidationReport:
    kind: str
    rows_total: int = 0
    problems: list[Problem] = field(default_factory=list)

    def add(self, row, column, value, message, severity="error") -> None:
        self.problems.append(Problem(row, column, None if value is None else str(value), message, severity))

    @property
    def errors(self) -> list[Problem]:
        return [p for p in self.problems if p.severity == "error"]

    @property
    def warnings(self) -> list[Problem]:
        return [p for p in self.problems if p.severity == "warning"]

    @property
    def ok(self) -> bool:
        return not self.errors

    def as_dict(self) -> dict:
        ordered = sorted(self.problems, key=lambda p: p.row if p.row is not None else 0)
        shown = ordered[:MAX_PROBLEMS_SHOWN]
        return {
            "kind": self.kind,
            "rows_total": self.rows_total,
            "error_count": len(self.errors),
            "warning_count": len(self.warnings),
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
            "problems_not_shown": max(0, len(self.problems) - MAX_PROBLEMS_SHOWN),
        }
