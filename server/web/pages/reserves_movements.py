"""The year-on-year dashboard of a reserves review (issue 15): the waterfall for the portfolio or
an asset in one category, fields ranked by their change, the reserves replacement ratio, and a
field's 2P over the reviews. GET parameters (a form that works without JavaScript): ``asset``
(an asset's name; blank: the portfolio), ``category`` (1P, 2P, 3P; default 2P), ``field`` (a
field id for the history). JSON twin: ``/api/reserves/reviews/{id}/movements``."""

from __future__ import annotations

import re
from typing import Literal

from fastapi import APIRouter, HTTPException, Query, Request
from fastapi.responses import HTMLResponse

from ...services.reserves import movements as mv
from ...services.reserves import rules, workflow
from ..auth import Reader
from ..charts.reserves import reserves_history_figure, reserves_waterfall_figure
from ..data_params import invalid
from ..deps import SessionDep
from ..templating import render

router = APIRouter(include_in_schema=False)


def _review_or_404(session, review_id: int):
    if not 1 <= review_id <= 2**31 - 1:
        raise HTTPException(status_code=404, detail="no such review")
    try:
        return workflow.get_review(session, review_id)
    except rules.ReviewNotFoundError:
        raise HTTPException(status_code=404, detail="no such review") from None


def _field_id(text: str) -> int | None:
    text = text.strip()
    if not text:
        return None
    if not re.fullmatch(r"[0-9]{1,10}", text) or not 1 <= int(text) <= 2**31 - 1:
        raise invalid("field", "must be a field id from the list", text)
    return int(text)


@router.get("/reserves/{review_id}/movements", response_class=HTMLResponse, name="reserves_movements")
def movements_page(
    request: Request,
    review_id: int,
    session: SessionDep,
    user: Reader,
    asset: str = Query("", max_length=120),
    category: Literal["1P", "2P", "3P", ""] = "2P",
    field: str = Query("", max_length=12),
):
    review = _review_or_404(session, review_id)
    m = mv.movements(session, review, user.asset_ids)
    category = category or "2P"
    group = "asset " + asset if asset else mv.PORTFOLIO
    if m.previous_id is not None and group not in m.groups:
        raise invalid("asset", f"{asset!r} is not an asset of this review", asset)
    wanted = _field_id(field)
    choices = {c.field_id: c for c in m.fields}
    if wanted is not None and wanted not in choices:
        raise invalid("field", f"field {wanted} is not booked in this review or the earlier ones", field)
    chosen = choices[wanted] if wanted is not None else mv.default_field(m, category)
    history = (
        mv.field_history(session, mv.history_reviews(session, review), chosen.field_id) if chosen else []
    )
    waterfall = next((w for w in m.waterfalls if w.group == group and w.category == category), None)
    context = {
        "title": f"Reserves movements: {review.name}",
        "m": m,
        "chosen_asset": asset,
        "category": category,
        "group": group,
        "waterfall": waterfall,
        "waterfall_figure": reserves_waterfall_figure(waterfall) if waterfall else None,
        "ranking": [
            c
            for c in m.ranking
            if c.category == category and (group == mv.PORTFOLIO or "asset " + c.asset_name == group)
        ],
        "replacement": [r for r in m.replacement if r.category == category],
        "chosen": chosen,
        "history": history,
        "history_limit": mv.HISTORY_REVIEWS,
        "history_figure": reserves_history_figure(history, chosen.field_name) if chosen else None,
        "restricted": user.asset_ids is not None,
    }
    return render(request, "reserves_movements.html", context)
