"""Freezing: copy each field's newest estimate and its production to the effective date into a review.

Volumes come from the estimate's stored ``detail`` (the engine's ``FieldAnalysis``): the
forecast's low/best/high cumulative to the commercial limit (``forecast.profiles[].eur_bscf``)
when the estimate carries a forecast, else the headline basis EUR low/best/high
(``basis.eur_low_bscf``, ``eur_bscf``, ``eur_high_bscf``). ``volume_source`` says which.
Production to the effective date is summed from the stored monthly rows of months that have
ended by the end of the effective date.
"""

from __future__ import annotations

import datetime as dt

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Asset, Estimate, Field, ProductionMonth, ReviewField, Well
from . import sales_gas
from .rules import ReservesError

MSCF_PER_BSCF = 1.0e6


def month_cutoff(effective_date: dt.date) -> dt.date:
    """First day of the first month not yet ended at the end of ``effective_date``."""
    d = effective_date + dt.timedelta(days=1)
    return dt.date(d.year, d.month, 1)


def produced_between(
    session: Session, start: dt.date | None, end: dt.date, field_ids=None
) -> dict[int, tuple[float, float, dt.date | None]]:
    """Per field: (gas [Bscf], condensate [stb], last month) of the months ended after ``start``
    (exclusive; None: from the first) and by ``end`` (inclusive), from the stored rows."""
    q = (
        select(
            Well.field_id,
            func.sum(ProductionMonth.gas_mscf),
            func.sum(ProductionMonth.condensate_stb),
            func.max(ProductionMonth.month),
        )
        .join(Well, Well.id == ProductionMonth.well_id)
        .where(ProductionMonth.month < month_cutoff(end))
        .group_by(Well.field_id)
    )
    if start is not None:
        q = q.where(ProductionMonth.month >= month_cutoff(start))
    if field_ids is not None:
        q = q.where(Well.field_id.in_(list(field_ids)))
    return {
        fid: (float(gas or 0.0) / MSCF_PER_BSCF, float(cond or 0.0), last)
        for fid, gas, cond, last in session.execute(q).all()
    }


def newest_estimates(session: Session, field_ids) -> dict[int, Estimate]:
    """The newest stored estimate of each field (the one the portfolio shows)."""
    newest = (
        select(Estimate.field_id, func.max(Estimate.id).label("id"))
        .where(Estimate.field_id.in_(list(field_ids)))
        .group_by(Estimate.field_id)
        .subquery()
    )
    rows = session.execute(select(Estimate).join(newest, newest.c.id == Estimate.id)).scalars()
    return {e.field_id: e for e in rows}


def _num(value) -> float | None:
    return None if value is None else float(value)


def _forecast_summary(forecast: dict | None) -> dict | None:
    if not forecast or not forecast.get("profiles"):
        return None
    cases = {}
    for p in forecast["profiles"]:
        cases[p.get("case")] = {
            "eur_bscf": _num(p.get("eur_bscf")),
            "remaining_bscf": _num(p.get("remaining_bscf")),
            "stop_reason": p.get("stop_reason"),
            "end_t_days": _num(p.get("end_t_days")),
            "yearly": [
                {
                    "year": int(r["year"]),
                    "gas_bscf": _num(r.get("gas_bscf")),
                    "condensate_stb": _num(r.get("condensate_stb")),
                    "cumulative_bscf": _num(r.get("cumulative_bscf")),
                }
                for r in p.get("yearly") or []
                if r.get("year") is not None
            ],
        }
    if not all(c in cases and cases[c]["eur_bscf"] is not None for c in ("low", "best", "high")):
        return None
    return {
        "basis_model": forecast.get("basis_model"),
        "cases": cases,
        "notes": list(forecast.get("notes", [])),
    }


def copy_estimate(snap: ReviewField, estimate: Estimate | None) -> None:
    """Copy what the review books from ``estimate`` into ``snap`` (values, never references)."""
    detail = (estimate.detail or {}) if estimate is not None else {}
    basis = detail.get("basis") or {}
    forecast = _forecast_summary(detail.get("forecast"))
    flags = list(estimate.flags or []) if estimate is not None else []
    snap.estimate_id = estimate.id if estimate is not None else None
    snap.estimate_status = estimate.status if estimate is not None else "none"
    snap.estimate_computed_at = estimate.computed_at if estimate is not None else None
    snap.inputs_fingerprint = estimate.inputs_fingerprint if estimate is not None else ""
    snap.engine_version = estimate.engine_version if estimate is not None else ""
    snap.basis_model = str(basis.get("model") or "")[:40]
    snap.basis_title = str(basis.get("title") or "")[:200]
    snap.basis_source = str(basis.get("source") or "")[:20]
    snap.giip_low_bscf = _num(basis.get("giip_low_bscf"))
    snap.giip_best_bscf = _num(basis.get("giip_bscf"))
    snap.giip_high_bscf = _num(basis.get("giip_high_bscf"))
    snap.forecast = forecast
    if forecast is not None:
        snap.volume_source = "forecast"
        cases = forecast["cases"]
        snap.eur_low_bscf, snap.eur_best_bscf, snap.eur_high_bscf = (
            cases[c]["eur_bscf"] for c in ("low", "best", "high")
        )
    else:
        snap.eur_low_bscf = _num(basis.get("eur_low_bscf"))
        snap.eur_best_bscf = _num(basis.get("eur_bscf"))
        snap.eur_high_bscf = _num(basis.get("eur_high_bscf"))
        snap.volume_source = "basis" if snap.eur_best_bscf is not None else "none"
    snap.flags = [
        {k: f.get(k) for k in ("code", "severity", "title", "reason")} for f in flags if isinstance(f, dict)
    ]
    snap.has_alert = any(f.get("severity") == "alert" for f in snap.flags)
    snap.snapshot_at = utcnow()


def _ids(values, what: str) -> list[int]:
    try:
        return sorted({int(i) for i in values})
    except (TypeError, ValueError):
        raise ReservesError(f"{what}: a list of {what.removesuffix('_ids')} ids is expected") from None


def check_scope(
    session: Session, field_ids=None, asset_ids=None, permitted_asset_ids=None
) -> list[int] | None:
    """The field ids of a review's scope: those of ``field_ids`` and every field of ``asset_ids``;
    None (both None) is the whole portfolio. Refused with a ReservesError naming the key
    (``field_ids``, ``asset_ids``): an id that is not a number, an unknown field or asset, an
    asset without fields, an empty scope, or a field outside ``permitted_asset_ids`` (None:
    every asset is permitted)."""
    if field_ids is None and asset_ids is None:
        if permitted_asset_ids is not None:
            raise ReservesError(
                "scope: a review of the whole portfolio needs access to every asset; choose your fields"
            )
        return None
    fields = _ids(field_ids or [], "field_ids")
    assets = _ids(asset_ids or [], "asset_ids")
    if not fields and not assets:
        raise ReservesError(
            "field_ids: give at least one field or asset (or none at all for the whole portfolio)"
        )
    known_assets = set(session.execute(select(Asset.id).where(Asset.id.in_(assets))).scalars())
    if set(assets) - known_assets:
        raise ReservesError(f"asset_ids: no asset {', '.join(map(str, sorted(set(assets) - known_assets)))}")
    of_field = dict(session.execute(select(Field.id, Field.asset_id).where(Field.id.in_(fields))).all())
    if set(fields) - set(of_field):
        raise ReservesError(f"field_ids: no field {', '.join(map(str, sorted(set(fields) - set(of_field))))}")
    by_asset = session.execute(select(Field.id, Field.asset_id).where(Field.asset_id.in_(assets))).all()
    empty = sorted(known_assets - {a for _, a in by_asset})
    if empty:
        raise ReservesError(f"asset_ids: asset {', '.join(map(str, empty))} has no fields to book")
    if permitted_asset_ids is not None:
        allowed = set(permitted_asset_ids)
        outside_assets = sorted(set(assets) - allowed)
        if outside_assets:
            raise ReservesError(
                f"asset_ids: asset {', '.join(map(str, outside_assets))} is not among the assets you may book"
            )
        outside = sorted(f for f, a in of_field.items() if a not in allowed)
        if outside:
            raise ReservesError(
                f"field_ids: field {', '.join(map(str, outside))} is outside the assets you may book"
            )
    return sorted(set(fields) | {f for f, _ in by_asset})


def scope_choices(session: Session, permitted_asset_ids=None) -> list[tuple[int, str, list[tuple[int, str]]]]:
    """(asset id, asset name, [(field id, field name)]) the user may put in a review's scope."""
    out: dict[int, tuple[int, str, list]] = {}
    for f, a in scope_fields(session):
        if permitted_asset_ids is None or a.id in permitted_asset_ids:
            out.setdefault(a.id, (a.id, a.name, []))[2].append((f.id, f.name))
    return sorted(out.values(), key=lambda t: t[1])


def scope_fields(session: Session, field_ids=None) -> list[tuple[Field, Asset]]:
    """The review's scope with each field's asset: every field of the portfolio, or those of
    ``field_ids`` (e.g. leaving out a field not yet discovered or not yet held at the date)."""
    q = select(Field, Asset).join(Asset, Asset.id == Field.asset_id).order_by(Field.name)
    if field_ids is not None:
        q = q.where(Field.id.in_(list(field_ids)))
    return list(session.execute(q))


def take_snapshots(
    session: Session, review_id: int, effective_date: dt.date, field_ids=None
) -> list[ReviewField]:
    """A snapshot for every field in scope (every field, or those of ``field_ids``)."""
    pairs = scope_fields(session, field_ids)
    ids = [f.id for f, _ in pairs]
    estimates = newest_estimates(session, ids)
    produced = produced_between(session, None, effective_date, ids)
    factors = sales_gas.sales_gas_settings(session)
    out = []
    for f, a in pairs:
        snap = ReviewField(
            review_id=review_id, field_id=f.id, field_name=f.name, asset_id=a.id, asset_name=a.name
        )
        copy_estimate(snap, estimates.get(f.id))
        sales_gas.freeze(session, snap, factors)
        gas, cond, last = produced.get(f.id, (0.0, 0.0, None))
        snap.produced_gas_bscf, snap.produced_condensate_stb, snap.production_last_month = gas, cond, last
        session.add(snap)
        out.append(snap)
    session.flush()
    return out


def refresh_production(session: Session, snap: ReviewField, effective_date: dt.date) -> None:
    gas, cond, last = produced_between(session, None, effective_date, [snap.field_id]).get(
        snap.field_id, (0.0, 0.0, None)
    )
    snap.produced_gas_bscf, snap.produced_condensate_stb, snap.production_last_month = gas, cond, last
