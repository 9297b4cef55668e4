"""The portfolio's query parameters (filters and sorting), shared by the page, its exports
and the JSON twins: parsed once, refused with a 422 that names the parameter."""

from __future__ import annotations

from typing import Annotated, Literal

from fastapi import Depends, Query
from fastapi.exceptions import RequestValidationError

from ..services.portfolio.rows import PortfolioRow, portfolio_rows
from ..services.portfolio.view import (
    ORDERS,
    SORT_COLUMNS,
    Choices,
    PortfolioQuery,
    PortfolioQueryError,
    apply_query,
    check_against,
    choices,
)

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
