"""Bookings: the computed remaining volumes at the effective date, overrides with reasons, and
when a written justification is required."""

from __future__ import annotations

import math
from dataclasses import dataclass

from sqlalchemy.orm import Session

from ...db.base import utcnow
from ...db.models import Booking, ReservesReview, ReviewField
from ...db.models.reserves import CONTINGENT_STATUSES, RESERVES_STATUSES
from .. import audit
from .categories import CategoryOrderError, category_names, check_order
from .rules import ReservesError, ReservesSettings, field_ref, require_draft

CASES = ("low", "best", "high")
MMSCF_PER_BSCF = 1000.0


def computed_remaining(snap: ReviewField) -> tuple[float | None, float | None, float | None]:
    """Remaining at the effective date per case [Bscf]: the case's EUR less the gas produced to the
    date, never below zero (PRMS: reserves are remaining quantities as of a given date)."""
    eurs = (snap.eur_low_bscf, snap.eur_best_bscf, snap.eur_high_bscf)
    return tuple(None if e is None else max(float(e) - snap.produced_gas_bscf, 0.0) for e in eurs)


def condensate_gas_ratio(snap: ReviewField) -> float | None:
    """Condensate produced per gas produced to the date [stb/MMscf]; None without gas."""
    if snap.produced_gas_bscf <= 0:
        return None
    return snap.produced_condensate_stb / (snap.produced_gas_bscf * MMSCF_PER_BSCF)


def fill_computed(booking: Booking, snap: ReviewField) -> None:
    booking.computed_low_bscf, booking.computed_best_bscf, booking.computed_high_bscf = computed_remaining(
        snap
    )
    booking.condensate_gas_ratio_stb_per_mmscf = condensate_gas_ratio(snap)


def new_booking(snap: ReviewField) -> Booking:
    producing = snap.produced_gas_bscf > 0
    b = Booking(
        review_field_id=snap.id,
        resource_class="reserves",
        status="developed_producing" if producing else "undeveloped",
        override_reason="",
        justification="",
        updated_by_name="",
    )
    fill_computed(b, snap)
    return b


def booked(booking: Booking) -> tuple[float | None, float | None, float | None]:
    """The booked low/best/high [Bscf]: each override where given, else the computed value."""
    pairs = (
        (booking.override_low_bscf, booking.computed_low_bscf),
        (booking.override_best_bscf, booking.computed_best_bscf),
        (booking.override_high_bscf, booking.computed_high_bscf),
    )
    return tuple(o if o is not None else c for o, c in pairs)


def booked_condensate_stb(booking: Booking) -> tuple[float | None, ...]:
    """Condensate with each booked gas case, at the condensate-gas ratio to date [stb]."""
    cgr = booking.condensate_gas_ratio_stb_per_mmscf or 0.0
    return tuple(None if g is None else g * MMSCF_PER_BSCF * cgr for g in booked(booking))


def booked_sales_gas_bscf(booking: Booking, sales_gas_frac: float | None) -> tuple[float | None, ...]:
    """Sales gas with each booked separator-gas case [Bscf]: the booked gas times the share
    delivered for sale (the frozen factor); None where either is unknown."""
    if sales_gas_frac is None:
        return (None, None, None)
    return tuple(None if g is None else g * sales_gas_frac for g in booked(booking))


def reserves_2p(booking: Booking | None) -> float:
    """The booking's 2P reserves [Bscf] (zero for contingent resources or no volume)."""
    if booking is None or booking.resource_class != "reserves":
        return 0.0
    return booked(booking)[1] or 0.0


def justification_reasons(
    snap: ReviewField,
    booking: Booking,
    last_2p_bscf: float | None,
    settings: ReservesSettings,
    produced_since_bscf: float = 0.0,
) -> list[str]:
    """Why this booking needs a written justification (empty: it does not).

    The 2P change is measured net of the gas produced since last year's effective date
    (``produced_since_bscf``): a field that only produced its booked gas changed no estimate,
    so 2P − (last 2P − produced) is what the team's threshold is held against."""
    reasons = []
    if snap.has_alert:
        codes = ", ".join(f["code"] for f in snap.flags if f.get("severity") == "alert")
        reasons.append(f"the estimate carries an alert flag ({codes})")
    if snap.basis_source and snap.basis_source != "automatic":
        reasons.append(f"the booked basis ({snap.basis_title or snap.basis_model}) is not the automatic one")
    if any(
        v is not None
        for v in (booking.override_low_bscf, booking.override_best_bscf, booking.override_high_bscf)
    ):
        reasons.append("a volume is overridden")
    if last_2p_bscf is not None and last_2p_bscf > 0:
        produced = max(produced_since_bscf, 0.0)
        change = abs(reserves_2p(booking) - (last_2p_bscf - produced)) / last_2p_bscf
        if change > settings.justify_2p_change_frac:
            reasons.append(
                f"2P changes by {change:.0%} of last year's {last_2p_bscf:.3f} Bscf beyond the "
                f"{produced:.3f} Bscf produced since "
                f"(the team asks for a justification above {settings.justify_2p_change_frac:.0%})"
            )
    return reasons


def reasons_against_last(
    snap: ReviewField, booking: Booking, last_pair, settings: ReservesSettings
) -> list[str]:
    """:func:`justification_reasons` against last year's (snapshot, booking) pair, or None
    when the field was not in the last approved review."""
    if last_pair is None:
        return justification_reasons(snap, booking, None, settings)
    last_snap, last_booking = last_pair
    since = snap.produced_gas_bscf - last_snap.produced_gas_bscf
    return justification_reasons(snap, booking, reserves_2p(last_booking), settings, since)


def blockers(snap: ReviewField, booking: Booking, reasons: list[str]) -> list[str]:
    """What stops this field's booking from being submitted."""
    out = []
    if reasons and not booking.justification.strip():
        out.append(f"{snap.field_name}: a justification is required ({'; '.join(reasons)})")
    if any(v is None for v in booked(booking)):
        out.append(f"{snap.field_name}: no computed volume for every case; override each case with a reason")
    return out


@dataclass(frozen=True)
class BookingChange:
    """What an engineer may set; None leaves a value as it is. ``clear_overrides`` removes them."""

    resource_class: str | None = None
    status: str | None = None
    override_low_bscf: float | None = None
    override_best_bscf: float | None = None
    override_high_bscf: float | None = None
    override_reason: str | None = None
    clear_overrides: bool = False
    justification: str | None = None


def _check(change: BookingChange, booking: Booking, field_name: str) -> dict:
    problems = {}
    cls = change.resource_class or booking.resource_class
    if cls not in ("reserves", "contingent"):
        problems["resource_class"] = "must be reserves or contingent"
    status = change.status or booking.status
    allowed = RESERVES_STATUSES if cls == "reserves" else CONTINGENT_STATUSES
    if status not in allowed:
        if change.status is None and change.resource_class is not None:
            status = allowed[0] if cls == "contingent" else "undeveloped"
        else:
            problems["status"] = f"for {cls} choose one of {', '.join(allowed)}"
    values = {}
    for case in CASES:
        key = f"override_{case}_bscf"
        v = getattr(change, key)
        if v is not None:
            if not (isinstance(v, int | float) and math.isfinite(v) and 0 <= v < 1e6):
                problems[key] = "must be a number of Bscf from 0 to 1,000,000"
            values[key] = v
    for text in ("override_reason", "justification"):
        v = getattr(change, text)
        if v is not None and len(v) > 4000:
            problems[text] = "at most 4,000 characters"
        elif v is not None and "\x00" in v:
            problems[text] = "contains a NUL character"
    if problems:
        raise ReservesError(f"{field_name}: " + "; ".join(f"{k}: {v}" for k, v in problems.items()))
    return {"resource_class": cls, "status": status, **values}


def change_booking(
    session: Session,
    actor: audit.Actor,
    review: ReservesReview,
    snap: ReviewField,
    booking: Booking,
    change: BookingChange,
) -> Booking:
    """Apply ``change`` to a draft's booking; checks everything first and changes nothing on error."""
    require_draft(review)
    checked = _check(change, booking, snap.field_name)
    fields = (
        "resource_class",
        "status",
        "override_low_bscf",
        "override_best_bscf",
        "override_high_bscf",
        "override_reason",
        "justification",
    )
    before = audit.snapshot(booking, fields)
    new = dict(before)
    new.update(resource_class=checked["resource_class"], status=checked["status"])
    if change.clear_overrides:
        new.update(
            override_low_bscf=None, override_best_bscf=None, override_high_bscf=None, override_reason=""
        )
    for case in CASES:
        key = f"override_{case}_bscf"
        if key in checked:
            new[key] = float(checked[key])
    if change.override_reason is not None:
        new["override_reason"] = change.override_reason.strip()
    if change.justification is not None:
        new["justification"] = change.justification.strip()
    overridden = any(new[f"override_{c}_bscf"] is not None for c in CASES)
    if overridden and not new["override_reason"]:
        raise ReservesError(f"{snap.field_name}: override_reason: an overridden volume needs a reason")
    if not overridden:
        new["override_reason"] = ""
    trial = [booking.computed_low_bscf, booking.computed_best_bscf, booking.computed_high_bscf]
    for i, c in enumerate(CASES):
        if new[f"override_{c}_bscf"] is not None:
            trial[i] = new[f"override_{c}_bscf"]
    if all(v is not None for v in trial):
        try:
            check_order(*trial)
        except CategoryOrderError as e:
            raise ReservesError(f"{snap.field_name}: {e}") from None
    old, after = audit.changed(before, new)
    if not after:
        return booking
    for k, v in new.items():
        setattr(booking, k, v)
    booking.updated_by_id, booking.updated_by_name, booking.updated_at = (
        actor.user_id,
        actor.name[:120],
        utcnow(),
    )
    names = category_names(new["resource_class"])
    words = ", ".join(f"{k} {old.get(k)!r} → {after[k]!r}" for k in after if k not in ("justification",))
    if "justification" in after:
        words = (words + "; " if words else "") + "justification written"
    audit.record(
        session,
        actor,
        "book",
        "reserves_review",
        review.id,
        before=old,
        after=after,
        field_id=field_ref(session, snap.field_id),
        summary=f"review {review.name!r} revision {review.revision}: booking of {snap.field_name} "
        f"({'/'.join(names)}): {words}",
    )
    session.flush()
    return booking
