"""Roles, permissions and API-token scopes: the one table that says who may do what.

Roles are cumulative: each role has every permission of the roles before it. An API token acts
with the permissions of its user's role that its scopes allow; account, user and settings
management are never open to tokens (a leaked token cannot mint tokens or accounts).
"""

from __future__ import annotations

from enum import StrEnum


class Permission(StrEnum):
    READ = "read"  # portfolio, fields, estimates, the field's audit trail
    ACCOUNT = "account"  # one's own password, sessions and API tokens
    UPLOAD = "upload"  # upload surveys and production
    ANALYSE = "analyse"  # change analysis choices, exclude surveys, recompute
    NOTE = "note"  # write interpretation notes
    SIGN_OFF = "sign_off"  # approve a reserves review
    VIEW_AUDIT = "view_audit"  # the whole audit trail
    MANAGE_USERS = "manage_users"
    MANAGE_SETTINGS = "manage_settings"


ROLE_ORDER = ("viewer", "engineer", "approver", "admin")
ROLE_TITLES = {
    "viewer": "Viewer (reads the portfolio)",
    "engineer": "Engineer (uploads, analysis choices, notes)",
    "approver": "Reserves approver (engineer rights and sign-off)",
    "admin": "Administrator (everything, users and settings)",
}

_ADDED_BY_ROLE = {
    "viewer": {Permission.READ, Permission.ACCOUNT},
    "engineer": {Permission.UPLOAD, Permission.ANALYSE, Permission.NOTE},
    "approver": {Permission.SIGN_OFF},
    "admin": {Permission.VIEW_AUDIT, Permission.MANAGE_USERS, Permission.MANAGE_SETTINGS},
}


def _cumulative() -> dict[str, frozenset[Permission]]:
    out: dict[str, frozenset[Permission]] = {}
    acc: set[Permission] = set()
    for role in ROLE_ORDER:
        acc |= _ADDED_BY_ROLE[role]
        out[role] = frozenset(acc)
    return out


ROLE_PERMISSIONS: dict[str, frozenset[Permission]] = _cumulative()

TOKEN_SCOPES: dict[str, frozenset[Permission]] = {
    "read": frozenset({Permission.READ, Permission.VIEW_AUDIT}),
    "upload": frozenset({Permission.UPLOAD}),
    "analyse": frozenset({Permission.ANALYSE, Permission.NOTE}),
}
SCOPE_TITLES = {
    "read": "read the portfolio, fields and estimates",
    "upload": "upload surveys and production",
    "analyse": "change analysis choices and write notes",
}


class UnknownRoleError(ValueError):
    """A role name that Tankbook does not know."""


def role_permissions(role: str) -> frozenset[Permission]:
    try:
        return ROLE_PERMISSIONS[role]
    except KeyError:
        raise UnknownRoleError(f"unknown role {role!r}; choose one of {', '.join(ROLE_ORDER)}") from None


def token_permissions(role: str, scopes: list[str] | tuple[str, ...]) -> frozenset[Permission]:
    """What a token may do: its scopes, limited by its user's role."""
    granted: set[Permission] = set()
    for s in scopes:
        granted |= TOKEN_SCOPES.get(s, frozenset())
    return frozenset(granted) & role_permissions(role)
