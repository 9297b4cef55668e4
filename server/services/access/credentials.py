"""Login sessions and API tokens: random secrets handed out once, stored only as SHA-256 hashes.

The secrets carry 256 bits of randomness, so a fast hash is enough: a stolen database does not
give working cookies or tokens, and a lookup costs one indexed query.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import secrets
from dataclasses import dataclass

from sqlalchemy import delete, select, update
from sqlalchemy.exc import OperationalError
from sqlalchemy.orm import Session
from sqlalchemy.orm.attributes import set_committed_value

from ...db.models import ApiToken, AuthSession, User
from ..audit import Actor, record
from .permissions import TOKEN_SCOPES
from .throttle import as_utc

TOKEN_PREFIX = "tbk_"  # noqa: S105 - a public marker that makes leaked tokens easy to scan for
TOUCH_EVERY = dt.timedelta(minutes=1)  # last-seen/last-used times are kept to the minute
KEEP_ENDED_SESSIONS = dt.timedelta(days=31)  # longer than any absolute timeout the settings allow


class CredentialError(ValueError):
    """A token request that cannot be granted; the message says why."""


def token_hash(raw: str) -> str:
    return hashlib.sha256(raw.encode()).hexdigest()


@dataclass(frozen=True)
class SessionTimeouts:
    idle: dt.timedelta
    absolute: dt.timedelta

    @classmethod
    def from_settings(cls, settings) -> SessionTimeouts:
        return cls(
            dt.timedelta(minutes=settings.session_idle_minutes),
            dt.timedelta(hours=settings.session_absolute_hours),
        )


def start_session(
    session: Session, user: User, *, now: dt.datetime, client_address: str = "", user_agent: str = ""
) -> tuple[str, AuthSession]:
    """A new session with a fresh token and form token; returns the raw token for the cookie.

    The user's sessions older than any allowed lifetime are deleted on the way."""
    session.execute(
        delete(AuthSession)
        .where(AuthSession.user_id == user.id, AuthSession.created_at < now - KEEP_ENDED_SESSIONS)
        .execution_options(synchronize_session=False)  # SQLite's naive times do not compare in Python
    )
    raw = secrets.token_urlsafe(32)
    auth = AuthSession(
        token_hash=token_hash(raw),
        user_id=user.id,
        csrf_token=secrets.token_urlsafe(32),
        created_at=now,
        last_seen_at=now,
        client_address=client_address[:64],
        user_agent=user_agent[:200],
    )
    session.add(auth)
    session.flush()
    return raw, auth


def live_session(
    session: Session, raw: str, *, now: dt.datetime, timeouts: SessionTimeouts
) -> tuple[AuthSession, User] | None:
    """The session and its user for a cookie value, or None if unknown, revoked or timed out."""
    if not raw or len(raw) > 200:
        return None
    found = session.execute(
        select(AuthSession, User)
        .join(User, User.id == AuthSession.user_id)
        .where(AuthSession.token_hash == token_hash(raw))
    ).first()
    if found is None:
        return None
    auth, user = found
    if auth.revoked_at is not None or not user.is_active:
        return None
    if now - as_utc(auth.created_at) >= timeouts.absolute or now - as_utc(auth.last_seen_at) >= timeouts.idle:
        auth.revoked_at = now
        return None
    if now - as_utc(auth.last_seen_at) > TOUCH_EVERY:
        _touch(session, AuthSession, auth.id, last_seen_at=now)
    return auth, user


def revoke_session(auth: AuthSession, now: dt.datetime) -> None:
    if auth.revoked_at is None:
        auth.revoked_at = now


def revoke_user_tokens(session: Session, user_id: int, now: dt.datetime) -> int:
    """Revoke every live API token of a user (their password changed); returns how many."""
    return session.execute(
        update(ApiToken)
        .where(ApiToken.user_id == user_id, ApiToken.revoked_at.is_(None))
        .values(revoked_at=now)
    ).rowcount


def revoke_user_sessions(session: Session, user_id: int, now: dt.datetime) -> None:
    """End every session of a user (logout everywhere, disabling, password change)."""
    session.execute(
        update(AuthSession)
        .where(AuthSession.user_id == user_id, AuthSession.revoked_at.is_(None))
        .values(revoked_at=now)
    )


@dataclass(frozen=True)
class TokenRow:
    id: int
    name: str
    prefix: str
    scopes: list[str]
    created_at: dt.datetime
    last_used_at: dt.datetime | None
    expires_at: dt.datetime | None
    revoked_at: dt.datetime | None


def _token_row(t: ApiToken) -> TokenRow:
    return TokenRow(
        t.id, t.name, t.token_prefix, list(t.scopes), t.created_at, t.last_used_at, t.expires_at, t.revoked_at
    )


def create_api_token(
    session: Session,
    user: User,
    *,
    name: str,
    scopes: list[str],
    now: dt.datetime,
    expires_days: int | None = None,
) -> tuple[str, TokenRow]:
    """A new token; the raw value is returned once and never stored."""
    name = name.strip()
    if not name or len(name) > 120:
        raise CredentialError("give the token a name of 1 to 120 characters")
    unknown = sorted(set(scopes) - set(TOKEN_SCOPES))
    if unknown or not scopes:
        raise CredentialError(
            f"choose scopes among {', '.join(TOKEN_SCOPES)} (got {', '.join(unknown) or 'none'})"
        )
    if expires_days is not None and not 1 <= expires_days <= 3660:
        raise CredentialError("a token expires after 1 to 3660 days, or never")
    raw = TOKEN_PREFIX + secrets.token_urlsafe(32)
    token = ApiToken(
        user_id=user.id,
        name=name,
        token_hash=token_hash(raw),
        scopes=sorted(set(scopes)),
        created_at=now,
        token_prefix=raw[:12],
        expires_at=None if expires_days is None else now + dt.timedelta(days=expires_days),
    )
    session.add(token)
    session.flush()
    record(
        session,
        Actor(user.id, user.username),
        "create",
        "api_token",
        token.id,
        after={"name": token.name, "scopes": token.scopes, "expires_at": token.expires_at},
        summary=f"API token {token.name!r} created",
    )
    return raw, _token_row(token)


def live_api_token(session: Session, raw: str, *, now: dt.datetime) -> tuple[ApiToken, User] | None:
    """The token and its user for a bearer value, or None if unknown, revoked, expired or disabled."""
    if not raw.startswith(TOKEN_PREFIX) or len(raw) > 200:
        return None
    found = session.execute(
        select(ApiToken, User)
        .join(User, User.id == ApiToken.user_id)
        .where(ApiToken.token_hash == token_hash(raw))
    ).first()
    if found is None:
        return None
    token, user = found
    if token.revoked_at is not None or not user.is_active:
        return None
    if token.expires_at is not None and now >= as_utc(token.expires_at):
        return None
    if token.last_used_at is None or now - as_utc(token.last_used_at) > TOUCH_EVERY:
        _touch(session, ApiToken, token.id, last_used_at=now)
    return token, user


def user_tokens(session: Session, user_id: int) -> list[TokenRow]:
    stmt = select(ApiToken).where(ApiToken.user_id == user_id).order_by(ApiToken.id.desc())
    return [_token_row(t) for t in session.execute(stmt).scalars()]


def revoke_api_token(session: Session, actor: Actor, user_id: int, token_id: int, now: dt.datetime) -> bool:
    """Revoke one of the user's tokens; False if the user has no such live token."""
    token = session.get(ApiToken, token_id)
    if token is None or token.user_id != user_id:
        return False
    if token.revoked_at is None:
        token.revoked_at = now
        record(
            session,
            actor,
            "revoke",
            "api_token",
            token.id,
            before={"name": token.name},
            summary=f"API token {token.name!r} revoked",
        )
    return True


def _touch(session: Session, model, row_id: int, **values) -> None:
    """Keep a last-seen/last-used time, best effort: a read-only request (a deferred SQLite
    transaction) may find another connection's commit between its read and this write,
    which SQLite refuses at once; the time is then kept by the next request instead of
    failing this one. The write is a savepoint, so a refusal leaves the request's reads."""
    try:
        with session.begin_nested():
            session.execute(update(model).where(model.id == row_id).values(**values))
    except OperationalError:
        return
    obj = session.get(model, row_id)
    for key, value in values.items():
        set_committed_value(obj, key, value)
