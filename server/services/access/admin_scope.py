"""What an administrator may do to accounts (issue 18): nobody changes their own role, status
or asset limits, and an administrator limited to some assets manages only users whose access
lies within those assets (and gives access only to them).

``admin_assets`` is the administrator's ``Principal.asset_ids``: None for every asset.
"""

from __future__ import annotations

from collections.abc import Iterable

from sqlalchemy import and_, exists, not_, select
from sqlalchemy.orm import Session

from ...db.models import User, UserAsset
from .accounts import asset_ids_of


class OutOfScopeError(PermissionError):
    """The administrator may not make this change (answered 403, nothing changed)."""


def within(session: Session, target: User, admin_assets: frozenset[int] | None) -> bool:
    """Whether every asset ``target`` may see is one the administrator may see."""
    if admin_assets is None:
        return True
    return not target.all_assets and asset_ids_of(session, target) <= admin_assets


def manageable_users(admin_assets: frozenset[int] | None):
    """A WHERE clause on User: the accounts this administrator manages (None: no limit)."""
    if admin_assets is None:
        return None
    outside = exists().where(
        and_(UserAsset.user_id == User.id, not_(UserAsset.asset_id.in_(sorted(admin_assets))))
    )
    return and_(User.all_assets.is_(False), not_(outside))


def manageable_user_ids(admin_assets: frozenset[int] | None):
    """SELECT of the ids of :func:`manageable_users` (None: no limit)."""
    clause = manageable_users(admin_assets)
    return None if clause is None else select(User.id).where(clause)


def check_grant(admin_assets: frozenset[int] | None, all_assets: bool, asset_ids: Iterable[int]) -> None:
    """A limited administrator gives access only to assets of their own."""
    if admin_assets is None:
        return
    if all_assets:
        raise OutOfScopeError("you may give access only to your own assets, not to every asset")
    beyond = sorted(set(asset_ids) - admin_assets)
    if beyond:
        raise OutOfScopeError(
            f"you may give access only to your own assets (not asset id {', '.join(map(str, beyond))})"
        )


def check_user_change(
    session: Session,
    admin_user_id: int,
    admin_assets: frozenset[int] | None,
    target: User,
    *,
    role: str,
    is_active: bool,
    all_assets: bool,
    asset_ids: Iterable[int],
) -> None:
    """Raise OutOfScopeError unless this administrator may make this change to ``target``."""
    wanted = frozenset(asset_ids)
    if target.id == admin_user_id:
        same_assets = all_assets == target.all_assets and (
            all_assets or wanted == asset_ids_of(session, target)
        )
        if role != target.role or is_active != target.is_active or not same_assets:
            raise OutOfScopeError(
                "nobody changes their own role, status or asset access; ask another administrator"
            )
        return
    if not within(session, target, admin_assets):
        raise OutOfScopeError("this user has access beyond your assets; an administrator of them manages it")
    check_grant(admin_assets, all_assets, wanted)
