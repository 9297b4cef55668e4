"""The review's life: create (snapshot every field), refresh one field, submit, return to draft,
approve (four eyes) and reopen (a new revision; the approved one stays as it was)."""

from __future__ import annotations

import datetime as dt

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import AuditEvent, Booking, ReconciliationLine, ReservesReview, ReviewField
from .. import audit
from . import reconcile, sales_gas
from .booking import blockers, fill_computed, new_booking, reasons_against_last
from .rules import FourEyesError, ReservesError, ReviewNotFoundError, require_draft, reserves_settings
from .snapshot import check_scope, copy_estimate, newest_estimates, refresh_production, take_snapshots

SNAPSHOT_COPY = [c.key for c in ReviewField.__table__.columns if c.key not in ("id", "review_id")]
BOOKING_COPY = [c.key for c in Booking.__table__.columns if c.key not in ("id", "review_field_id")]
LINE_COPY = [c.key for c in ReconciliationLine.__table__.columns if c.key not in ("id", "review_id")]


def get_review(session: Session, review_id: int) -> ReservesReview:
    review = session.get(ReservesReview, review_id)
    if review is None:
        raise ReviewNotFoundError(f"no reserves review {review_id}")
    return review


def _text(value: str, what: str, *, required: bool, limit: int = 4000) -> str:
    value = (value or "").strip()
    if required and not value:
        raise ReservesError(f"{what}: required")
    if len(value) > limit:
        raise ReservesError(f"{what}: at most {limit:,} characters")
    if "\x00" in value:
        raise ReservesError(f"{what}: contains a NUL character")
    return value


def create_review(
    session: Session,
    actor: audit.Actor,
    name: str,
    effective_date: dt.date,
    *,
    field_ids=None,
    asset_ids=None,
    permitted_asset_ids=None,
) -> ReservesReview:
    """A draft review as at ``effective_date`` with a snapshot and a booking for every field in
    scope: the whole portfolio, or the fields of ``asset_ids`` and those of ``field_ids`` (a
    field not yet discovered or held at the date stays out, and enters next year's
    reconciliation as new). ``permitted_asset_ids`` (None: every asset) are the assets the user
    may book; a scope reaching outside them is refused (:func:`snapshot.check_scope`)."""
    name = _text(name, "name", required=True, limit=120)
    if not isinstance(effective_date, dt.date):
        raise ReservesError("effective_date: a date (YYYY-MM-DD) is required")
    scope = check_scope(session, field_ids, asset_ids, permitted_asset_ids)
    if session.execute(select(ReservesReview.id).where(ReservesReview.name == name)).first():
        raise ReservesError(f"name: a review called {name!r} exists already; choose another name")
    review = ReservesReview(
        name=name,
        effective_date=effective_date,
        status="draft",
        revision=1,
        reopen_reason="",
        created_by_id=actor.user_id,
        created_by_name=actor.name[:120],
        submitted_by_name="",
        approved_by_name="",
        approval_comment="",
    )
    session.add(review)
    session.flush()
    snaps = take_snapshots(session, review.id, effective_date, scope)
    for snap in snaps:
        session.add(new_booking(snap))
    session.flush()
    reconcile.rebuild(session, review)
    audit.record(
        session,
        actor,
        "create",
        "reserves_review",
        review.id,
        after={"name": name, "effective_date": effective_date, "fields": len(snaps)}
        | ({} if scope is None else {"field_ids": scope}),
        summary=f"created reserves review {name!r} as at {effective_date.isoformat()} "
        f"with {len(snaps)} fields",
    )
    return review


def newer_estimates(session: Session, review: ReservesReview) -> dict[int, int]:
    """Fields whose newest estimate is not the one the review froze: field id -> newer estimate id."""
    snaps = session.execute(select(ReviewField).where(ReviewField.review_id == review.id)).scalars().all()
    newest = newest_estimates(session, [s.field_id for s in snaps])
    return {
        s.field_id: newest[s.field_id].id
        for s in snaps
        if s.field_id in newest and newest[s.field_id].id != s.estimate_id
    }


def refresh_field(session: Session, actor: audit.Actor, review: ReservesReview, field_id: int) -> ReviewField:
    """Copy the field's newest estimate and production into the draft (the overrides are kept)."""
    require_draft(review)
    snap = session.execute(
        select(ReviewField).where(ReviewField.review_id == review.id, ReviewField.field_id == field_id)
    ).scalar_one_or_none()
    if snap is None:
        raise ReservesError(f"field {field_id} is not in review {review.name!r}")
    kept = ("estimate_id", "eur_best_bscf", "produced_gas_bscf", "sales_gas_frac")
    before = {k: getattr(snap, k) for k in kept}
    copy_estimate(snap, newest_estimates(session, [field_id]).get(field_id))
    refresh_production(session, snap, review.effective_date)
    sales_gas.freeze(session, snap)
    booking = session.execute(select(Booking).where(Booking.review_field_id == snap.id)).scalar_one()
    fill_computed(booking, snap)
    after = {k: getattr(snap, k) for k in kept}
    session.flush()
    reconcile.rebuild(session, review)
    audit.record(
        session,
        actor,
        "refresh",
        "reserves_review",
        review.id,
        before=before,
        after=after,
        field_id=field_id,
        summary=f"review {review.name!r} revision {review.revision}: "
        f"{snap.field_name} refreshed from estimate "
        f"{before['estimate_id']} to {after['estimate_id']}",
    )
    return snap


def submission_blockers(session: Session, review: ReservesReview) -> list[str]:
    """Everything that stops the review from being submitted (empty: it can be)."""
    settings = reserves_settings(session)
    prev = reconcile.last_approved(session, review)
    last = reconcile.bookings_of(session, prev.id) if prev else {}
    out = []
    for fid, (snap, booking) in sorted(
        reconcile.bookings_of(session, review.id).items(), key=lambda kv: kv[1][0].field_name
    ):
        out += blockers(snap, booking, reasons_against_last(snap, booking, last.get(fid), settings))
    out += reconcile.balance_problems(reconcile.lines_of(session, review.id))
    return out


def submit(session: Session, actor: audit.Actor, review: ReservesReview) -> ReservesReview:
    require_draft(review)
    reconcile.rebuild(session, review)
    problems = submission_blockers(session, review)
    if problems:
        raise ReservesError("the review cannot be submitted: " + "; ".join(problems))
    review.status, review.submitted_by_id, review.submitted_by_name = (
        "submitted",
        actor.user_id,
        actor.name[:120],
    )
    review.submitted_at = utcnow()
    audit.record(
        session,
        actor,
        "submit",
        "reserves_review",
        review.id,
        before={"status": "draft"},
        after={"status": "submitted"},
        summary=f"submitted reserves review {review.name!r} revision {review.revision} for approval",
    )
    session.flush()
    return review


def return_to_draft(
    session: Session, actor: audit.Actor, review: ReservesReview, reason: str
) -> ReservesReview:
    """Send a submitted review back to its preparers, with a reason."""
    if review.status != "submitted":
        raise ReservesError(
            f"review {review.name!r} is {review.status}: only a submitted review goes back to draft"
        )
    reason = _text(reason, "reason", required=True)
    review.status = "draft"
    audit.record(
        session,
        actor,
        "return",
        "reserves_review",
        review.id,
        before={"status": "submitted"},
        after={"status": "draft", "reason": reason},
        summary=f"returned reserves review {review.name!r} to draft: {reason}",
    )
    session.flush()
    return review


def preparers(session: Session, review: ReservesReview) -> set[int]:
    """Users who prepared this revision: created, refreshed, booked, reconciled or submitted it."""
    ids = set(
        session.execute(
            select(AuditEvent.user_id).where(
                AuditEvent.entity_type == "reserves_review",
                AuditEvent.entity_id == review.id,
                AuditEvent.action.in_(("create", "reopen", "refresh", "book", "reconcile", "submit")),
                AuditEvent.user_id.is_not(None),
            )
        ).scalars()
    )
    return ids | {i for i in (review.created_by_id, review.submitted_by_id) if i is not None}


def approve(session: Session, actor: audit.Actor, review: ReservesReview, comment: str) -> ReservesReview:
    if review.status != "submitted":
        raise ReservesError(
            f"review {review.name!r} is {review.status}: only a submitted review can be approved"
        )
    comment = _text(comment, "comment", required=False)
    if reserves_settings(session).four_eyes and actor.user_id in preparers(session, review):
        raise FourEyesError(
            f"{actor.name} prepared review {review.name!r} revision {review.revision}; "
            "the team asks for four eyes: another approver must approve it"
        )
    review.status, review.approved_by_id, review.approved_by_name = (
        "approved",
        actor.user_id,
        actor.name[:120],
    )
    review.approved_at, review.approval_comment = utcnow(), comment
    audit.record(
        session,
        actor,
        "approve",
        "reserves_review",
        review.id,
        before={"status": "submitted"},
        after={"status": "approved", "comment": comment},
        summary=f"approved reserves review {review.name!r} revision {review.revision}"
        + (f": {comment}" if comment else ""),
    )
    session.flush()
    return review


def reopen(session: Session, actor: audit.Actor, review: ReservesReview, reason: str) -> ReservesReview:
    """A new draft revision copied from the approved one; the approved revision is not touched."""
    if review.status != "approved":
        raise ReservesError(
            f"review {review.name!r} is {review.status}: only an approved review can be reopened"
        )
    reason = _text(reason, "reason", required=True)
    newest = session.execute(
        select(func.max(ReservesReview.revision)).where(ReservesReview.name == review.name)
    ).scalar_one()
    if newest != review.revision:
        raise ReservesError(f"review {review.name!r} has a newer revision ({newest}); reopen that one")
    new = ReservesReview(
        name=review.name,
        effective_date=review.effective_date,
        status="draft",
        revision=review.revision + 1,
        reopened_from_id=review.id,
        reopen_reason=reason,
        created_by_id=actor.user_id,
        created_by_name=actor.name[:120],
        submitted_by_name="",
        approved_by_name="",
        approval_comment="",
    )
    session.add(new)
    session.flush()
    old_snaps = session.execute(select(ReviewField).where(ReviewField.review_id == review.id)).scalars().all()
    for s in old_snaps:
        copy = ReviewField(review_id=new.id, **{k: getattr(s, k) for k in SNAPSHOT_COPY})
        session.add(copy)
        session.flush()
        b = session.execute(select(Booking).where(Booking.review_field_id == s.id)).scalar_one()
        session.add(Booking(review_field_id=copy.id, **{k: getattr(b, k) for k in BOOKING_COPY}))
    for ln in reconcile.lines_of(session, review.id):
        session.add(ReconciliationLine(review_id=new.id, **{k: getattr(ln, k) for k in LINE_COPY}))
    session.flush()
    audit.record(
        session,
        actor,
        "reopen",
        "reserves_review",
        new.id,
        after={"reopened_from_id": review.id, "revision": new.revision, "reason": reason},
        summary=f"reopened reserves review {review.name!r}: revision {new.revision} from approved "
        f"revision {review.revision}: {reason}",
    )
    return new
