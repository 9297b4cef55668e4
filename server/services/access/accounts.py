"""User accounts: creation, roles, asset access, passwords and logging in.

Every change is recorded in the audit trail (never a password or a hash: only that it changed).
"""

from __future__ import annotations

import datetime as dt
import re
import secrets
from dataclasses import dataclass

from sqlalchemy import delete, func, select
from sqlalchemy.orm import Session

from ...db.models import Asset, User, UserAsset
from ..audit import Actor, changed, record
from . import throttle
from .credentials import revoke_user_sessions, revoke_user_tokens
from .passwords import check_password, hash_password, needs_rehash, verify_password
from .permissions import role_permissions

USERNAME_RE = re.compile(r"^[a-z0-9][a-z0-9._-]{1,79}$")
FIRST_ADMIN = "admin"
_AUDITED = (
    "username",
    "display_name",
    "role",
    "is_active",
    "all_assets",
    "asset_ids",
    "must_change_password",
)


class AccountError(ValueError):
    """A user change that cannot be made; the message says why."""


@dataclass(frozen=True)
class UserRow:
    id: int
    username: str
    display_name: str
    role: str
    is_active: bool
    all_assets: bool
    asset_ids: frozenset[int]
    asset_names: tuple[str, ...]
    must_change_password: bool
    failed_logins: int
    created_at: dt.datetime
    last_login_at: dt.datetime | None


def normalize_username(name: str) -> str:
    """User names are compared case-insensitively and stored in lower case."""
    name = name.strip().lower()
    if not USERNAME_RE.match(name):
        raise AccountError(
            "a user name has 2 to 80 characters: lower-case letters, digits, '.', '_' or '-', "
            "starting with a letter or digit"
        )
    return name


def one_time_password() -> str:
    """A random password to hand over once (about 100 bits), e.g. ``k7d2m-qx9fp-...``."""
    alphabet = "abcdefghjkmnpqrstuvwxyz23456789"  # no look-alikes (0/o, 1/l/i)
    return "-".join("".join(secrets.choice(alphabet) for _ in range(5)) for _ in range(4))


def asset_ids_of(session: Session, user: User) -> frozenset[int]:
    return frozenset(
        session.execute(select(UserAsset.asset_id).where(UserAsset.user_id == user.id)).scalars()
    )


def allowed_assets(session: Session, user: User) -> frozenset[int] | None:
    """None when the user may see every asset, else the ids they may see."""
    return None if user.all_assets else asset_ids_of(session, user)


def _state(session: Session, user: User) -> dict:
    state = {k: getattr(user, k) for k in _AUDITED if k != "asset_ids"}
    state["asset_ids"] = sorted(asset_ids_of(session, user))
    return state


def _set_assets(session: Session, user: User, asset_ids) -> None:
    wanted = set(asset_ids)
    known = set(session.execute(select(Asset.id).where(Asset.id.in_(wanted))).scalars()) if wanted else set()
    if wanted - known:
        raise AccountError(f"unknown asset id(s): {', '.join(map(str, sorted(wanted - known)))}")
    session.execute(delete(UserAsset).where(UserAsset.user_id == user.id))
    session.add_all(UserAsset(user_id=user.id, asset_id=a) for a in sorted(wanted))
    session.flush()


def _check_role(role: str) -> None:
    role_permissions(role)  # raises UnknownRoleError (a ValueError) for a name it does not know


def create_user(
    session: Session,
    actor: Actor,
    *,
    username: str,
    role: str,
    password: str | None = None,
    display_name: str = "",
    all_assets: bool = True,
    asset_ids=(),
    must_change_password: bool = False,
    min_length: int = 12,
    now: dt.datetime | None = None,
) -> User:
    """Create an account. ``password=None`` leaves it without one (no login until it is set)."""
    name = normalize_username(username)
    _check_role(role)
    if session.execute(select(User.id).where(User.username == name)).first():
        raise AccountError(f"the user name {name!r} is taken")
    if password is not None:
        check_password(password, username=name, min_length=min_length)
    user = User(
        username=name,
        display_name=display_name.strip()[:120],
        role=role,
        is_active=True,
        all_assets=all_assets,
        must_change_password=must_change_password,
        password_hash=None if password is None else hash_password(password),
        password_changed_at=None if password is None else now,
        failed_logins=0,
    )
    session.add(user)
    session.flush()
    if not all_assets:
        _set_assets(session, user, asset_ids)
    record(
        session, actor, "create", "user", user.id, after=_state(session, user), summary=f"user {name} created"
    )
    return user


def update_user(
    session: Session,
    actor: Actor,
    user: User,
    *,
    now: dt.datetime,
    role: str | None = None,
    display_name: str | None = None,
    is_active: bool | None = None,
    all_assets: bool | None = None,
    asset_ids=None,
) -> dict:
    """Change a user's role, name, status or asset access; returns the changed values."""
    before = _state(session, user)
    if role is not None:
        _check_role(role)
    keeps_admin = (role or user.role) == "admin" and (user.is_active if is_active is None else is_active)
    if user.role == "admin" and user.is_active and not keeps_admin and active_admins(session) <= 1:
        raise AccountError("this is the last active administrator; make another one first")
    if asset_ids is not None:
        _set_assets(session, user, asset_ids)
    if role is not None:
        user.role = role
    if display_name is not None:
        user.display_name = display_name.strip()[:120]
    if is_active is not None:
        user.is_active = is_active
    if all_assets is not None:
        user.all_assets = all_assets
    session.flush()
    old, new = changed(before, _state(session, user))
    if not new:
        return {}
    if before["is_active"] and not user.is_active:
        revoke_user_sessions(session, user.id, now)
    record(
        session,
        actor,
        "update",
        "user",
        user.id,
        before=old,
        after=new,
        summary=f"user {user.username} changed",
    )
    return new


def active_admins(session: Session) -> int:
    return session.execute(
        select(func.count(User.id)).where(User.role == "admin", User.is_active)
    ).scalar_one()


def set_password(
    session: Session,
    actor: Actor,
    user: User,
    password: str,
    *,
    now: dt.datetime,
    min_length: int = 12,
    must_change: bool = False,
    check: bool = True,
) -> None:
    """Set a password, end every session of the user and revoke their API tokens (a token made
    by whoever knew the old password must not outlive it). ``check=False`` only for generated ones."""
    if check:
        check_password(password, username=user.username, min_length=min_length)
    user.password_hash = hash_password(password)
    user.password_changed_at = now
    user.must_change_password = must_change
    revoke_user_sessions(session, user.id, now)
    tokens = revoke_user_tokens(session, user.id, now)
    how = "reset to a one-time password" if must_change else "changed"
    record(
        session,
        actor,
        "password",
        "user",
        user.id,
        after={"password": how, "api_tokens_revoked": tokens},
        summary=f"password of {user.username} {how}" + (f"; {tokens} API token(s) revoked" if tokens else ""),
    )


def users(session: Session) -> list[UserRow]:
    names = dict(session.execute(select(Asset.id, Asset.name)).all())
    out = []
    for u in session.execute(select(User).order_by(User.username)).scalars():
        ids = asset_ids_of(session, u)
        out.append(
            UserRow(
                u.id,
                u.username,
                u.display_name,
                u.role,
                u.is_active,
                u.all_assets,
                ids,
                tuple(sorted(names[i] for i in ids)),
                u.must_change_password,
                u.failed_logins,
                u.created_at,
                u.last_login_at,
            )
        )
    return out


def assets(session: Session) -> list[tuple[int, str]]:
    return [(i, n) for i, n in session.execute(select(Asset.id, Asset.name).order_by(Asset.name))]


def ensure_first_admin(session: Session, *, now: dt.datetime) -> str | None:
    """On a database where nobody can log in, create ``admin`` with a one-time password and return it.

    Accounts without a password (the demo's invented preparer and approver of its reserves
    reviews) cannot log in, so they do not count; a database that already has an ``admin``
    is left alone."""
    can_log_in = select(func.count(User.id)).where(User.password_hash.is_not(None))
    if session.execute(can_log_in).scalar_one():
        return None
    if session.execute(select(User.id).where(User.username == FIRST_ADMIN)).first():
        return None
    password = one_time_password()
    user = create_user(
        session,
        Actor(None, "first run"),
        username=FIRST_ADMIN,
        role="admin",
        display_name="Administrator",
        now=now,
    )
    set_password(session, Actor(None, "first run"), user, password, now=now, must_change=True, check=False)
    return password


@dataclass(frozen=True)
class LoginResult:
    user: User | None
    retry_after_s: float = 0.0


def authenticate(
    session: Session,
    username: str,
    password: str,
    *,
    address: str,
    now: dt.datetime,
    policy: throttle.ThrottlePolicy,
) -> LoginResult:
    """Check a login, slowed by :mod:`throttle`. A wrong name and a wrong password look alike."""
    name = username.strip().lower()[:80]
    wait = throttle.retry_after_s(session, name, address, now, policy)
    if wait > 0:
        return LoginResult(None, wait)
    user = session.execute(select(User).where(User.username == name)).scalar_one_or_none()
    ok = verify_password(user.password_hash if user else None, password)
    if not ok or user is None or not user.is_active:
        throttle.record_failure(session, name, address, now, policy)
        if user is not None:
            user.failed_logins += 1
        return LoginResult(None, 0.0)
    throttle.clear_account(session, name)
    if needs_rehash(user.password_hash):
        user.password_hash = hash_password(password)
    user.failed_logins = 0
    user.last_login_at = now
    return LoginResult(user)


UNIT_SYSTEM_CHOICES = ("oilfield", "si")


def set_unit_system(session: Session, *, user_id: int, unit_system: str | None) -> None:
    """Store a user's own display units (None: follow the team's default).

    A personal preference, so it is not written to the audit trail."""
    if unit_system is not None and unit_system not in UNIT_SYSTEM_CHOICES:
        raise ValueError(
            f"unit_system: {unit_system!r} is not a unit system; choose one of "
            f"{', '.join(UNIT_SYSTEM_CHOICES)} or leave it empty for the team's default"
        )
    user = session.get(User, user_id)
    if user is None:
        raise LookupError(f"no user with id {user_id}")
    user.unit_system = unit_system
    session.flush()
