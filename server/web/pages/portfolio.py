"""The portfolio page, its exports (CSV, XLSX) and the query parameters they share with
``/api/portfolio``: filters (asset, basin, flag) and sorting, all on the server."""

from __future__ import annotations

from typing import Annotated
from urllib.parse import urlencode

from fastapi import APIRouter, Query, Request
from fastapi.responses import HTMLResponse, Response

from ...services.portfolio.field_data import Paging
from ...services.portfolio.produced import produced_to_date
from ...services.portfolio.profiles import portfolio_profile, profile_table, yearly_by_field
from ...services.portfolio.rows import portfolio_totals
from ...services.portfolio.view import (
    SORT_COLUMNS,
    PortfolioQuery,
    PortfolioQueryError,
    describe,
)
from ..auth import Reader
from ..charts.forecast import portfolio_profile_figure
from ..charts.portfolio import FLAG_STYLE, OKABE_ITO, portfolio_figure
from ..deps import SessionDep
from ..display import units_for_request
from ..portfolio_query import QueryDep, invalid, selected_rows
from ..templating import render
from .portfolio_export import portfolio_csv, portfolio_xlsx, profiles_csv, profiles_xlsx

router = APIRouter(include_in_schema=False)

#: The table is paged (issue 17: 2,000 rows of 18 cells took 63 % of a 550 ms render);
#: filters, sorting, totals and the chart still cover every field that matches.
DEFAULT_PER_PAGE = 100
MAX_PER_PAGE = 5000  # "all": a portfolio of up to 5,000 fields on one page (to print it)
PER_PAGE_CHOICES = (50, 100, 500)
PageNumber = Annotated[int, Query(ge=1, le=1_000_000, description="page of the table, from 1")]
PerPage = Annotated[
    int,
    Query(
        ge=1,
        le=MAX_PER_PAGE,
        description=f"table rows per page (1-{MAX_PER_PAGE}, default {DEFAULT_PER_PAGE})",
    ),
]


def _link(query: PortfolioQuery, per_page: int = DEFAULT_PER_PAGE, page: int = 1, **changes) -> str:
    params = query.params(**changes)
    if per_page != DEFAULT_PER_PAGE:
        params["per_page"] = str(per_page)
    if page != 1:
        params["page"] = str(page)
    return "?" + urlencode(params) if params else "?"


def _sorting(query: PortfolioQuery, per_page: int) -> dict[str, dict]:
    """Per column: the link that sorts by it (from the first page), and its aria-sort value (or None)."""
    out = {}
    for col in SORT_COLUMNS:
        current = query.sort == col
        nxt = "desc" if current and query.order == "asc" else "asc"
        aria = ("ascending" if query.order == "asc" else "descending") if current else None
        out[col] = {"href": _link(query, per_page, sort=col, order=nxt), "aria": aria, "next": nxt}
    return out


def _pager(query: PortfolioQuery, paging: Paging) -> dict:
    """Links to the previous and next pages and to other page sizes (all keep filters and sorting)."""
    per = paging.per_page
    sizes = [(str(n), _link(query, n), n == per) for n in PER_PAGE_CHOICES]
    sizes.append(("all", _link(query, MAX_PER_PAGE), per == MAX_PER_PAGE))
    return {
        "p": paging,
        "prev": _link(query, per, paging.prev_page) if paging.prev_page else None,
        "next": _link(query, per, paging.next_page) if paging.next_page else None,
        "sizes": sizes,
    }


@router.get("/", response_class=HTMLResponse, name="portfolio")
def portfolio_page(
    request: Request,
    session: SessionDep,
    user: Reader,
    query: QueryDep,
    page: PageNumber = 1,
    per_page: PerPage = DEFAULT_PER_PAGE,
):
    every, rows, options = selected_rows(session, user, query)
    paging = Paging(page, per_page, len(rows))
    if paging.beyond_end and page > 1:
        raise invalid(PortfolioQueryError("page", f"page {page} is past the last page ({paging.n_pages})"))
    shown = rows[paging.offset : paging.offset + per_page]
    du = units_for_request(request)
    export = urlencode(query.params())
    suffix = f"?{export}" if export else ""
    profile = portfolio_profile(rows, yearly_by_field(session, rows))
    context = {
        "profile": profile,
        "profile_figure": portfolio_profile_figure(profile, du) if profile.years else None,
        "profiles_csv_href": request.url_for("portfolio_profiles_csv").path + suffix,
        "profiles_xlsx_href": request.url_for("portfolio_profiles_xlsx").path + suffix,
        "rows": rows,
        "page_rows": shown,
        "pager": _pager(query, paging),
        "per_page": per_page,
        "default_per_page": DEFAULT_PER_PAGE,
        "n_all": len(every),
        "q": query,
        "options": options,
        "filters": describe(query, options),
        "sorting": _sorting(query, per_page),
        "totals": portfolio_totals(rows),
        "figure": portfolio_figure(rows, du),
        # which gas "Produced" is (sums of production only for fields that may count wet gas)
        "produced": produced_to_date(session, _counted(shown), wet_candidates_only=True),
        # one url_for for all rows: it costs about 0.2 ms a call, 100 ms on a 500-field page
        "field_href": str(request.url_for("field_page", field_id=0))[:-1],
        "flag_style": FLAG_STYLE,
        "palette": OKABE_ITO,
        "csv_href": request.url_for("portfolio_csv").path + (f"?{export}" if export else ""),
        "xlsx_href": request.url_for("portfolio_xlsx").path + (f"?{export}" if export else ""),
        "title": "Portfolio",
    }
    return render(request, "portfolio.html", context)


def _counted(rows) -> dict[int, float | None]:
    return {r.field_id: r.estimate.cumulative_gas_bscf if r.estimate else None for r in rows}


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
    produced = produced_to_date(session, _counted(rows))
    body = portfolio_csv(
        rows, produced, units_for_request(request), describe(query, options), request.app.state.clock()
    )
    return _download(body, "text/csv; charset=utf-8", "csv", request)


@router.get("/portfolio.xlsx", name="portfolio_xlsx")
def portfolio_xlsx_export(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    _, rows, options = selected_rows(session, user, query)
    produced = produced_to_date(session, _counted(rows))
    body = portfolio_xlsx(
        rows, produced, units_for_request(request), describe(query, options), request.app.state.clock()
    )
    media = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
    return _download(body, media, "xlsx", request)


def _profiles(request: Request, session, user, query):
    _, rows, options = selected_rows(session, user, query)
    years, table = profile_table(rows, yearly_by_field(session, rows))
    return years, table, units_for_request(request), describe(query, options), request.app.state.clock()


def _profile_download(content: bytes, media_type: str, extension: str, request: Request) -> Response:
    stamp = request.app.state.clock().strftime("%Y%m%d")
    return Response(
        content,
        media_type=media_type,
        headers={
            "Content-Disposition": f'attachment; filename="tankbook-profiles-{stamp}.{extension}"',
            "Cache-Control": "no-store",
        },
    )


@router.get("/portfolio-profiles.csv", name="portfolio_profiles_csv")
def portfolio_profiles_csv(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    """Every (filtered) field's yearly gas per case, with its EUR and why it stops."""
    body = profiles_csv(*_profiles(request, session, user, query))
    return _profile_download(body, "text/csv; charset=utf-8", "csv", request)


@router.get("/portfolio-profiles.xlsx", name="portfolio_profiles_xlsx")
def portfolio_profiles_xlsx(request: Request, session: SessionDep, user: Reader, query: QueryDep):
    body = profiles_xlsx(*_profiles(request, session, user, query))
    media = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
    return _profile_download(body, media, "xlsx", request)
