"""Login throttling: failed logins are stored, so the limits hold across restarts and processes.

After a number of free failures within a window, per account name and per client address, each
further attempt must wait twice as long as the one before (2 s, 4 s, 8 s, ...), up to a cap.
While a wait runs the password is not even checked, so guessing cannot go faster than the wait.
The free count per address is higher because an office shares one address.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from sqlalchemy import delete, func, select
from sqlalchemy.orm import Session

from ...db.models import LoginAttempt


@dataclass(frozen=True)
class ThrottlePolicy:
    free_per_account: int = 5
    free_per_address: int = 20
    window: dt.timedelta = dt.timedelta(minutes=15)
    max_delay_s: float = 900.0

    @classmethod
    def from_settings(cls, settings) -> ThrottlePolicy:
        return cls(
            settings.login_free_failures_per_account,
            settings.login_free_failures_per_address,
            dt.timedelta(minutes=settings.login_throttle_window_minutes),
            float(settings.login_max_delay_seconds),
        )


def as_utc(t: dt.datetime) -> dt.datetime:
    """SQLite hands back naive datetimes; everything Tankbook stores is UTC."""
    return t if t.tzinfo is not None else t.replace(tzinfo=dt.UTC)


def delay_after(failures: int, free: int, max_delay_s: float) -> float:
    """Seconds to wait after the last of ``failures`` failures (0 while within the free count)."""
    if failures < free:
        return 0.0
    return min(max_delay_s, 2.0 ** (failures - free + 1))


def retry_after_s(
    session: Session, username: str, address: str, now: dt.datetime, policy: ThrottlePolicy
) -> float:
    """Seconds until the next login attempt for this account or address may be checked."""
    since = now - policy.window
    wait = 0.0
    for column, key, free in (
        (LoginAttempt.username, username, policy.free_per_account),
        (LoginAttempt.client_address, address, policy.free_per_address),
    ):
        n, last = session.execute(
            select(func.count(LoginAttempt.id), func.max(LoginAttempt.at)).where(
                column == key, LoginAttempt.at >= since
            )
        ).one()
        if n and last is not None:
            due = as_utc(last) + dt.timedelta(seconds=delay_after(n, free, policy.max_delay_s))
            wait = max(wait, (due - now).total_seconds())
    return max(0.0, wait)


def record_failure(
    session: Session, username: str, address: str, now: dt.datetime, policy: ThrottlePolicy
) -> None:
    session.execute(
        delete(LoginAttempt)
        .where(LoginAttempt.at < now - policy.window)
        .execution_options(synchronize_session=False)  # SQLite's naive times do not compare in Python
    )
    session.add(LoginAttempt(at=now, username=username[:80], client_address=address[:64]))
    session.flush()


def clear_account(session: Session, username: str) -> None:
    """A successful login forgives the account's failures (not the address's)."""
    session.execute(delete(LoginAttempt).where(LoginAttempt.username == username))
