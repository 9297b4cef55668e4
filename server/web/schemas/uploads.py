"""Pydantic schemas of the upload and job API (units in every field name)."""

from __future__ import annotations

from typing import Any, Literal

from pydantic import BaseModel, ConfigDict, Field, StrictBool, StrictFloat, StrictInt, StrictStr

from ...services.ingest.parse import ReadOptions
from .common import UtcDatetime

DELIMITER_NAMES = {"comma": ",", "semicolon": ";", "tab": "\t"}
DECIMAL_NAMES = {"point": ".", "comma": ","}


class RequestErrorItem(BaseModel):
    loc: list[str]
    msg: str
    type: str


class RequestErrorRead(BaseModel):
    """A request that could not be understood (query parameters, JSON body)."""

    detail: list[RequestErrorItem]


class ProblemRead(BaseModel):
    row: int | None
    column: str | None
    value: str | None
    message: str
    severity: Literal["error", "warning"]


class ColumnReadingRead(BaseModel):
    header: str
    column: str
    unit: str | None
    unit_from: Literal["header", "form", "default", "none"]
    meaning: str


class ReportRead(BaseModel):
    kind: str
    rows_total: int
    error_count: int
    warning_count: int
    problems: list[ProblemRead]
    problems_not_shown: int
    columns: list[ColumnReadingRead]
    notes: list[str]


class ChangeRead(BaseModel):
    action: Literal["add", "replace"]
    row: int
    what: str
    before: dict[str, Any] | None
    after: dict[str, Any]


class FieldChangesRead(BaseModel):
    field: str
    changes: int


class UploadPreviewRead(BaseModel):
    kind: str
    filename: str
    rows_total: int
    to_insert: int
    to_replace: int
    unchanged: int
    fields: list[int]
    per_field: list[FieldChangesRead]
    changes: list[ChangeRead]
    changes_not_shown: int
    digest: str = Field(
        description="fingerprint of the planned changes; pass it back to commit exactly these"
    )


UploadStatus = Literal[
    "committed", "unchanged", "dry_run", "rejected", "needs_confirmation", "changed_since_preview"
]


class UploadResultRead(BaseModel):
    status: UploadStatus
    upload_id: int | None = None
    job_ids: list[int] = []
    report: ReportRead
    preview: UploadPreviewRead


class UploadQuery(BaseModel):
    """How to read and store the upload (query parameters)."""

    model_config = ConfigDict(extra="forbid")

    dry_run: bool = Field(False, description="check only; nothing is written")
    replace: bool = Field(False, description="replace stored values that the file corrects (history is kept)")
    accept_warnings: bool = Field(False, description="store the file although it has warnings")
    expected_digest: str | None = Field(
        None, max_length=64, description="commit only if the plan still matches"
    )
    pressure_unit: str | None = Field(
        None, max_length=10, description="unit of pressure columns named without one"
    )
    gas_unit: str | None = Field(None, max_length=10)
    liquid_unit: str | None = Field(None, max_length=10)
    depth_unit: str | None = Field(None, max_length=10)
    temperature_unit: str | None = Field(None, max_length=10)
    atmosphere_psia: float | None = Field(None, gt=10, lt=16, description="atmosphere for gauge pressures")
    delimiter: Literal["comma", "semicolon", "tab"] | None = None
    decimal: Literal["point", "comma"] | None = None
    date_order: Literal["iso", "dmy", "mdy"] = "iso"
    encoding: Literal["utf-8", "windows-1252"] | None = Field(
        None, description="default: found from the bytes"
    )

    def read_options(self, *, atmosphere_psia: float, standard_conditions: str) -> ReadOptions:
        units = {
            q: u
            for q, u in (
                ("pressure", self.pressure_unit),
                ("gas", self.gas_unit),
                ("liquid", self.liquid_unit),
                ("depth", self.depth_unit),
                ("temperature", self.temperature_unit),
            )
            if u
        }
        return ReadOptions(
            units=units,
            atmosphere_psia=self.atmosphere_psia or atmosphere_psia,
            standard_conditions=standard_conditions,
            delimiter=DELIMITER_NAMES.get(self.delimiter or ""),
            decimal=DECIMAL_NAMES.get(self.decimal or ""),
            date_order=self.date_order,
            encoding={"utf-8": "utf-8", "windows-1252": "cp1252"}.get(self.encoding or ""),
        )


Cell = StrictStr | StrictInt | StrictFloat | StrictBool | None


class UploadRowsBody(BaseModel):
    """A JSON upload: rows as objects whose keys are column headers, exactly as in a file."""

    rows: list[dict[str, Cell]] = Field(max_length=200_000)
    filename: str = Field(default="api.json", max_length=255)


class JobRead(BaseModel):
    id: int
    kind: str
    status: Literal["queued", "running", "done", "failed"]
    field_id: int | None
    reason: str
    progress_done: int
    progress_total: int
    progress_frac: float
    attempts: int
    error: str | None
    created_at: UtcDatetime
    finished_at: UtcDatetime | None
