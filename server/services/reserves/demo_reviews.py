"""The demo's two reserves reviews (an invented scenario), made through the real services so the
audit trail shows every step: last year's review approved, this year's in draft.

- Last year, as at 31 December 2024: every demo field but two. Dunmarrow had not come on
  stream (first gas April 2025) and Juniper Knoll was not yet the company's (acquired from a
  partner with effect from 1 January 2025). Cindervale's 2P and 3P were held at its 1P until
  the CDV-1 build-up that reads far below the trend was re-tested. The demo engineer prepared
  and submitted it; the demo approver approved it (four eyes: a different person).
- This year, as at 31 December 2025, in draft: every field. Cindervale is booked as computed
  again (an upward revision of 2P and 3P, justified); Dunmarrow, too young for a p/z estimate
  (its computed volumes rest on the volumetric basis, a closed tank down to the abandonment
  pressure), is booked from its static GIIP times the recovery factor its asset's analogue
  fields achieve (an override with a reason and a justification) and reconciled as a discovery;
  Juniper Knoll is reconciled as an acquisition. The other fields' change is production alone
  (no justification: the team's 2P threshold is held against the change net of production).
  The justifications that need an engineer's
  judgement (alert flags, an engineer-chosen basis) are left for the coordinator to write.

Both reviews freeze the demo's one set of estimates (a real team's last-year review froze the
estimates of its own day); production is the stored monthly gas to each effective date.
The two demo accounts have no password: nobody can log in as them.
"""

from __future__ import annotations

import datetime as dt
import statistics

from sqlalchemy import select
from sqlalchemy.orm import Session

from ...db.models import Field, ReservesReview, User, VolumetricEstimate
from ..access.accounts import create_user
from ..audit import Actor
from . import reconcile, workflow
from .booking import BookingChange, change_booking
from .rules import ReservesError

LAST_DATE, THIS_DATE = dt.date(2024, 12, 31), dt.date(2025, 12, 31)
LAST_NAME, THIS_NAME = "Annual review 2024", "Annual review 2025"
NEW_FIELD, ACQUIRED, HELD_BACK = "Dunmarrow", "Juniper Knoll", "Cindervale"
ENGINEER = ("demo.engineer", "engineer", "Demo reserves engineer")
APPROVER = ("demo.approver", "approver", "Demo reserves approver")
LOADER = Actor(None, "demo portfolio")

LAST_YEAR_JUSTIFICATIONS = {
    "Emberline": "Overpressured: the rock and water expansion basis (ce fitted) follows the early "
    "bend of p/z; the volumetric-tank line would overstate GIIP. Agreed in the technical review.",
    "Fallowmere": "Aquifer support is visible in the water and the flattening p/z; the basis is "
    "kept and the aquifer's reach will be re-assessed next year.",
    "Gorsewick": "The connected volume is the West compartment; the East compartment is not "
    "booked until a well produces it.",
    HELD_BACK: "2P and 3P held at 1P until the CDV-1 build-up is re-tested.",
}


def _person(session: Session, username: str, role: str, display: str) -> Actor:
    user = session.execute(select(User).where(User.username == username)).scalar_one_or_none()
    if user is None:
        user = create_user(session, LOADER, username=username, role=role, display_name=display)
    return Actor(user.id, user.display_name or user.username)


def _book(session, actor, review, field_id: int, change: BookingChange) -> None:
    snap, booking = reconcile.bookings_of(session, review.id)[field_id]
    change_booking(session, actor, review, snap, booking, change)


def _analogue_recovery_frac(session: Session, review, asset_name: str) -> float:
    """Mean 2P EUR / best GIIP of the asset's fields booked from a forecast without an alert."""
    fracs = [
        snap.eur_best_bscf / snap.giip_best_bscf
        for snap, _ in reconcile.bookings_of(session, review.id).values()
        if snap.asset_name == asset_name
        and snap.volume_source == "forecast"
        and not snap.has_alert
        and snap.giip_best_bscf
    ]
    if not fracs:
        raise ReservesError(
            f"no analogue field of {asset_name} has a forecast to take a recovery factor from"
        )
    return statistics.fmean(fracs)


def _last_year(session: Session, eng: Actor, appr: Actor, ids: dict[str, int]) -> int:
    scope = [i for n, i in ids.items() if n not in (NEW_FIELD, ACQUIRED)]
    review = workflow.create_review(session, eng, LAST_NAME, LAST_DATE, field_ids=scope)
    snap, booking = reconcile.bookings_of(session, review.id)[ids[HELD_BACK]]
    low = booking.computed_low_bscf
    _book(
        session,
        eng,
        review,
        ids[HELD_BACK],
        BookingChange(
            override_best_bscf=low,
            override_high_bscf=low,
            override_reason="The CDV-1 build-up reads about 320 psi below the trend of the other "
            "surveys; 2P and 3P are held at 1P until a re-test.",
        ),
    )
    for name, text in LAST_YEAR_JUSTIFICATIONS.items():
        _book(session, eng, review, ids[name], BookingChange(justification=text))
    workflow.submit(session, eng, review)
    workflow.approve(session, appr, review, "Approved: reconciles, justifications read.")
    return review.id


def _this_year(session: Session, eng: Actor, ids: dict[str, int]) -> int:
    review = workflow.create_review(session, eng, THIS_NAME, THIS_DATE)
    _book(
        session,
        eng,
        review,
        ids[HELD_BACK],
        BookingChange(
            justification="The CDV-1 re-test (2025) confirmed the trend of the other surveys: the "
            "low build-up was a gauge fault. 2P and 3P are booked as computed again (upward "
            "revision)."
        ),
    )
    snap, _ = reconcile.bookings_of(session, review.id)[ids[NEW_FIELD]]
    rf = _analogue_recovery_frac(session, review, snap.asset_name)
    static = (
        session.execute(
            select(VolumetricEstimate)
            .where(VolumetricEstimate.field_id == ids[NEW_FIELD])
            .order_by(VolumetricEstimate.estimate_date.desc())
        )
        .scalars()
        .first()
    )
    if static is None:
        raise ReservesError(f"{NEW_FIELD} has no static GIIP to book from")
    giip = (static.giip_low_bscf, static.giip_best_bscf, static.giip_high_bscf)
    low, best, high = (round(max(g * rf - snap.produced_gas_bscf, 0.0), 3) for g in giip)
    reason = (
        f"Too little depletion for a p/z estimate, and the computed volumetric basis assumes a "
        f"closed tank down to the abandonment pressure: booked instead as the static GIIP "
        f"({giip[0]:g}/{giip[1]:g}/{giip[2]:g} Bscf) times the recovery factor of the "
        f"{snap.asset_name} analogue fields ({rf:.2f}, their 2P EUR over GIIP), less the gas "
        f"produced to the date."
    )
    _book(
        session,
        eng,
        review,
        ids[NEW_FIELD],
        BookingChange(
            override_low_bscf=low,
            override_best_bscf=best,
            override_high_bscf=high,
            override_reason=reason,
            justification="First gas April 2025; booked for the first time. Replace by the p/z "
            "estimate once the pressure has fallen enough to judge.",
        ),
    )
    lines = reconcile.rebuild(session, review)
    for ln in lines:
        line = {NEW_FIELD: "extensions_discoveries_bscf", ACQUIRED: "acquisitions_bscf"}
        if ln.field_name in line:
            values = {"revisions_bscf": 0.0, line[ln.field_name]: ln.closing_bscf + ln.production_bscf}
            reconcile.assign(session, eng, review, ln.field_id, ln.category, values)
    return review.id


def load_demo_reviews(session: Session) -> tuple[int, int] | None:
    """Add the demo's two reviews (after the demo's estimates are computed); None when a review
    of either name exists already or a demo field is missing (nothing is added then)."""
    names = (LAST_NAME, THIS_NAME)
    if session.execute(select(ReservesReview.id).where(ReservesReview.name.in_(names))).first():
        return None
    ids = dict(session.execute(select(Field.name, Field.id)).all())
    if not {NEW_FIELD, ACQUIRED, HELD_BACK, *LAST_YEAR_JUSTIFICATIONS} <= set(ids):
        return None
    eng, appr = _person(session, *ENGINEER), _person(session, *APPROVER)
    return _last_year(session, eng, appr, ids), _this_year(session, eng, ids)
