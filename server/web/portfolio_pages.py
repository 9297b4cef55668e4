"""The portfolio page, its exports (CSV, XLSX) and the query parameters they share with
``/api/portfolio``: filters (asset, basin, flag) and sorting, all on the server."""

from __future__ import annotations

from typing import Annotated, Literal
from urllib.parse import urlencode

from fastapi import APIRouter, Depends, Query, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import HTMLResponse, Response

from ..services.portfolio import PortfolioRow, portfolio_rows, portfolio_totals
from ..services.portfolio_view import (
    ORDERS,
    SORT_COLUMNS,
    Choices,
    PortfolioQuery,
    PortfolioQueryError,
    apply_query,
    check_against,
    choices,
    describe,
)
from .auth import Reader
from .charts_portfolio import FLAG_STYLE, OKABE_ITO, portfolio_figure
from .deps import SessionDep
from .display import units_for_request
from .pages import render
from .portfolio_export import portfolio_csv, portfolio_xlsx

router = APIRouter(include_in_schema=False)

SortColumn = Literal[SORT_COLUMNS]  # type: ignore[valid-type]
Order = Literal[ORDERS]  # type: ignore[valid-type]


def invalid(error: PortfolioQueryError) -> RequestValidationError:
    """A 422 that names the query parameter (the app's handler renders page or JSON)."""
    return RequestValidationError(
        [{"loc": ("query", error.parameter), "msg": error.message, "type": "value_error"}]
    )


def portfolio_query(
    asset: Annotated[str, Query(max_length=120, description="only fields of this asset (its name)")] = "",
    basin: Annotated[str, Query(max_length=120, description="only fields of this basin")] = "",
    flag: Annotated[
        str,
        Query(
            max_length=60, description="only fields with this flag code; 'any' or 'none' for any or no flag"
        ),
    ] = "",
    sort: Annotated[SortColumn, Query(description="column to sort by")] = "name",
    order: Annotated[Order, Query(description="asc or desc; missing values sort last")] = "asc",
) -> PortfolioQuery:
    try:
        return PortfolioQuery(asset=asset, basin=basin, flag=flag, sort=sort, order=order)
    except PortfolioQueryError as e:
        raise invalid(e) from None


QueryDep = Annotated[PortfolioQuery, Depends(portfolio_query)]


def selected_rows(
    session, user, query: PortfolioQuery
) -> tuple[list[PortfolioRow], list[PortfolioRow], Choices]:
    """(every row the user may see, the filtered and sorted rows, the filter choices)."""
    rows = portfolio_rows(session, user.asset_ids)
    options = choices(rows)
    try:
        check_against(query, options)
    except PortfolioQueryError as e:
        raise invalid(e) from None
    return rows, apply_query(rows, query), options


def _link(query: PortfolioQuery, **changes) -> str:
    params = query.params(**changes)
    return "?" + urlencode(params) if params else "?"


def _sorting(query: PortfolioQuery) -> dict[str, dict]:
    """Per column: the link that sorts by it, and its aria-sort value (or None)."""
    out = {}
    for col in SORT_COLUMNS:
        current = query.sort == col
        nxt = "desc" if current and query.order == "asc" else "asc"
        aria = ("ascending" if query.order == "asc" else "descending") if current else None
        out[col] = {"href": _link(query, sort=col, order=nxt), "aria": aria, "next": nxt}
    return out


@router.get("/", response_class=HTMLResponse, name="portfolio")
def portfolio_page(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    every, rows, options = selected_rows(session, user, query)
    du = units_for_request(request)
    export = urlencode(query.params())
    context = {
        "rows": rows,
        "n_all": len(every),
        "q": query,
        "options": options,
        "filters": describe(query, options),
        "sorting": _sorting(query),
        "totals": portfolio_totals(rows),
        "figure": portfolio_figure(rows, du),
        # one url_for for all rows: it costs about 0.2 ms a call, 100 ms on a 500-field page
        "field_href": str(request.url_for("field_page", field_id=0))[:-1],
        "flag_style": FLAG_STYLE,
        "palette": OKABE_ITO,
        "csv_href": request.url_for("portfolio_csv").path + (f"?{export}" if export else ""),
        "xlsx_href": request.url_for("portfolio_xlsx").path + (f"?{export}" if export else ""),
        "title": "Portfolio",
    }
    return render(request, "portfolio.html", context)


def _download(content: bytes, media_type: str, extension: str, request: Request) -> Response:
    stamp = request.app.state.clock().strftime("%Y%m%d")
    return Response(
        content,
        media_type=media_type,
        headers={
            "Content-Disposition": f'attachment; filename="tankbook-portfolio-{stamp}.{extension}"',
            "Cache-Control": "no-store",
        },
    )


@router.get("/portfolio.csv", name="portfolio_csv")
def portfolio_csv_export(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    _, rows, options = selected_rows(session, user, query)
    body = portfolio_csv(
        rows, units_for_request(request), describe(query, options), request.app.state.clock()
    )
    return _download(body, "text/csv; charset=utf-8", "csv", request)


@router.get("/portfolio.xlsx", name="portfolio_xlsx")
def portfolio_xlsx_export(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    _, rows, options = selected_rows(session, user, query)
    body = portfolio_xlsx(
        rows, units_for_request(request), describe(query, options), request.app.state.clock()
    )
    media = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
    return _download(body, media, "xlsx", request)
