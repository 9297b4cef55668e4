"""Query parameters of the data pages and their JSON twins (paging and search).

Empty values (what a GET form sends for a blank box) mean "not given". Dates are read
strictly as YYYY-MM-DD: pydantic's lax parsing would take ``0`` for 1970-01-01.
A bad value is a 422 naming the parameter (the error handler words it for pages).
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass
from typing import Annotated, Literal
from urllib.parse import urlencode

from fastapi import Query
from fastapi.exceptions import RequestValidationError
from pydantic import BeforeValidator

from ..services.portfolio.field_data import ListFilter, Paging

DEFAULT_PER_PAGE = 50
MAX_PER_PAGE = 200
PER_PAGE_CHOICES = (25, 50, 100, 200)
MAX_SEARCH_CHARS = 120
_ISO = re.compile(r"\d{4}-\d{2}-\d{2}")


def _blank(v):
    return None if isinstance(v, str) and v.strip() == "" else v


def _search_text(v):
    v = _blank(v)
    if isinstance(v, str) and any(ord(ch) < 32 for ch in v):
        raise ValueError("must not contain control characters")
    if isinstance(v, str) and len(v) > MAX_SEARCH_CHARS:
        raise ValueError(f"is longer than {MAX_SEARCH_CHARS} characters")
    return v


def _iso_date(v):
    v = _blank(v)
    if v is None or isinstance(v, dt.date):
        return v
    if not isinstance(v, str) or not _ISO.fullmatch(v.strip()):
        raise ValueError(f"{v!r} is not a date: write it as YYYY-MM-DD")
    try:
        return dt.date.fromisoformat(v.strip())
    except ValueError as exc:
        raise ValueError(f"{v!r} is not a calendar date ({exc})") from None


# "" is "not given" (GET forms send empty fields): the schema says so, as the handlers do.
IsoDate = Annotated[dt.date | Literal[""] | None, BeforeValidator(_iso_date)]
Page = Annotated[int, Query(ge=1, le=1_000_000, description="page number, from 1")]
PerPage = Annotated[
    int,
    Query(ge=1, le=MAX_PER_PAGE, description=f"rows per page (1-{MAX_PER_PAGE}, default {DEFAULT_PER_PAGE})"),
]
WellSearch = Annotated[
    str | None,
    BeforeValidator(_search_text),
    Query(
        description=f"part of the well name (not case-sensitive; at most {MAX_SEARCH_CHARS} characters);"
        ' in double quotes, the whole name ("W-1" does not match W-10)'
    ),
]
DateFrom = Annotated[IsoDate, Query(description="first date to include, YYYY-MM-DD (inclusive)")]
DateTo = Annotated[IsoDate, Query(description="last date to include, YYYY-MM-DD (inclusive)")]
Status = Annotated[
    Literal["all", "included", "excluded"],
    BeforeValidator(lambda v: _blank(v) or "all"),
    Query(description="surveys the engineer set aside (excluded), the others (included), or all"),
]
Quality = Annotated[
    Literal["good", "fair", "poor"] | None,
    BeforeValidator(_blank),
    Query(description="survey quality"),
]


def invalid(parameter: str, message: str, value=None) -> RequestValidationError:
    """A 422 naming a query parameter, shaped like FastAPI's own."""
    return RequestValidationError(
        [{"type": "value_error", "loc": ("query", parameter), "msg": message, "input": value}]
    )


@dataclass(frozen=True)
class ListQuery:
    page: int
    per_page: int
    filter: ListFilter

    def check_dates(self) -> ListQuery:
        f = self.filter
        if f.date_from and f.date_to and f.date_from > f.date_to:
            raise invalid("date_to", f"date_to {f.date_to} is before date_from {f.date_from}", str(f.date_to))
        return self

    def query_string(self, **override) -> str:
        """The canonical query of this search (defaults left out), with ``override`` applied."""
        f = self.filter
        values = {
            "well": f.well,
            "date_from": f.date_from.isoformat() if f.date_from else None,
            "date_to": f.date_to.isoformat() if f.date_to else None,
            "status": None if f.status == "all" else f.status,
            "quality": f.quality,
            "per_page": None if self.per_page == DEFAULT_PER_PAGE else self.per_page,
            "page": self.page,
        } | override
        if values["page"] == 1:
            values["page"] = None
        return urlencode({k: v for k, v in values.items() if v is not None})


def check_page(q: ListQuery, paging: Paging, what: str) -> None:
    if paging.beyond_end:
        raise invalid(
            "page",
            f"page {q.page} is past the last page ({paging.n_pages}) of {paging.total} {what}",
            str(q.page),
        )


def survey_query(
    page: Page = 1,
    per_page: PerPage = DEFAULT_PER_PAGE,
    well: WellSearch = None,
    date_from: DateFrom = None,
    date_to: DateTo = None,
    status: Status = "all",
    quality: Quality = None,
) -> ListQuery:
    return ListQuery(page, per_page, ListFilter(well, date_from, date_to, status, quality)).check_dates()


def production_query(
    page: Page = 1,
    per_page: PerPage = DEFAULT_PER_PAGE,
    well: WellSearch = None,
    date_from: DateFrom = None,
    date_to: DateTo = None,
) -> ListQuery:
    return ListQuery(page, per_page, ListFilter(well, date_from, date_to)).check_dates()
