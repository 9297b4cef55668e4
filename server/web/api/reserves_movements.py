"""The JSON twin of the reserves movements dashboard (issue 15): every waterfall (each asset and
the portfolio, 1P/2P/3P), the ranked field changes, the reserves replacement ratios and one
field's booked 2P over the reviews. Volumes in Bscf; definitions in services/reserves/movements.py
and docs/reserves.md."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Query

from ...services.reserves import movements as mv
from ..auth import Reader
from ..data_params import invalid
from ..deps import SessionDep
from .reserves import NOT_FOUND, ReviewId, _plain, _review

router = APIRouter(prefix="/api/reserves", tags=["reserves"])

DEFINITIONS = {
    "change_bscf": "revisions + extensions and discoveries + improved recovery + acquisitions - disposals "
    "(closing - opening + production)",
    "organic_ratio": "(revisions + extensions and discoveries + improved recovery) / production",
    "ratio_with_acquisitions": "(organic additions + acquisitions - disposals) / production",
    "ratio_null": "no production in the period (production: between the two effective dates)",
    "steps": "signed Bscf: production and disposals are negative",
}


@router.get(
    "/reviews/{review_id}/movements",
    responses=NOT_FOUND,
    summary="the year's movements: waterfalls, ranked changes, replacement ratios, a field's 2P history",
)
def get_movements(
    review_id: ReviewId,
    session: SessionDep,
    user: Reader,
    field_id: Annotated[
        int | None,
        Query(ge=1, le=2**31 - 1, description="the field of the 2P history (default: largest 2P change)"),
    ] = None,
):
    review = _review(session, review_id)
    m = mv.movements(session, review, user.asset_ids)
    choices = {c.field_id: c for c in m.fields}
    if field_id is not None and field_id not in choices:
        raise invalid(
            "field_id", f"field {field_id} is not booked in this review or the earlier ones", field_id
        )
    chosen = choices[field_id] if field_id is not None else mv.default_field(m)
    history = (
        mv.field_history(session, mv.history_reviews(session, review), chosen.field_id) if chosen else []
    )
    return _plain(m) | {
        "history_field_id": chosen.field_id if chosen else None,
        "history": _plain(history),
        "definitions": DEFINITIONS,
    }
