"""The JSON API under /api: read twins of every page (uploads and jobs: web/api/uploads.py)."""

from __future__ import annotations

import dataclasses

from fastapi import APIRouter, HTTPException

from ...engine import ENGINE_VERSION
from ...services.jobs.recompute import current_estimate
from ...services.portfolio.headline import headline
from ...services.portfolio.rows import field_detail, portfolio_totals
from ...services.portfolio.view import describe
from ..auth import Public, Reader
from ..deps import SessionDep
from ..portfolio_query import QueryDep, selected_rows
from ..schemas.common import (
    ErrorRead,
    EstimateRead,
    FieldId,
    FieldRead,
    HealthRead,
    PortfolioRowRead,
    PortfolioTotalsRead,
)
from .fields import field_extras

router = APIRouter(prefix="/api")
NOT_FOUND = {404: {"model": ErrorRead, "description": "no such field (or not in your assets)"}}


@router.get("/health", response_model=HealthRead, tags=["meta"], dependencies=[Public])
def health():
    return {"status": "ok", "engine_version": ENGINE_VERSION}


@router.get("/portfolio", response_model=list[PortfolioRowRead], tags=["portfolio"], name="api_portfolio")
def portfolio(session: SessionDep, user: Reader, query: QueryDep):
    """The portfolio table: the same filters and sorting as the page (by name by default)."""
    _, rows, _ = selected_rows(session, user, query)
    return [_row(r) for r in rows]


@router.get("/portfolio/totals", response_model=PortfolioTotalsRead, tags=["portfolio"])
def portfolio_totals_api(session: SessionDep, user: Reader, query: QueryDep):
    """Totals of the fields that match the filters (means add, percentiles do not)."""
    _, rows, options = selected_rows(session, user, query)
    totals = portfolio_totals(rows)
    return PortfolioTotalsRead(
        n_fields=len(rows),
        filters=describe(query, options),
        volumetric=totals.volumetric,
        dynamic=totals.dynamic,
    )


def _row(r) -> dict:
    d = PortfolioRowRead.model_validate(r).model_dump()
    d["dynamic_to_volumetric"] = r.dynamic_to_volumetric
    d["volumetric_position"] = r.volumetric_position
    d["depletion_frac"] = r.depletion_frac
    d["flag_codes"] = r.flag_codes
    return d


@router.get("/fields/{field_id}", response_model=FieldRead, tags=["fields"], responses=NOT_FOUND)
def field(field_id: FieldId, session: SessionDep, user: Reader):
    detail = field_detail(session, field_id)
    if detail is None:
        raise HTTPException(status_code=404, detail="no such field")
    out = FieldRead.model_validate(detail).model_dump()
    out["summary"] = _row(detail.summary)
    out["headline"] = dataclasses.asdict(headline(detail.summary.estimate, detail.detail))
    return out | field_extras(session, field_id)


@router.get("/fields/{field_id}/estimate", response_model=EstimateRead, tags=["fields"], responses=NOT_FOUND)
def field_estimate(field_id: FieldId, session: SessionDep, user: Reader):
    est = current_estimate(session, field_id)
    if est is None:
        raise HTTPException(status_code=404, detail="no estimate for this field")
    return est
