"""Who is asking, and may they? Authentication, CSRF form tokens and permissions for routes.

Every route declares its permission in one place, for example::

    @router.post("/upload", dependencies=[Require(Permission.UPLOAD)])
    def upload(..., user: Uploader): ...

or marks itself public with ``dependencies=[Public]``. ``tests/web/test_permissions.py`` walks
every route and fails on one that does neither. The check, in order:

1. the caller is known: a session cookie, or ``Authorization: Bearer <API token>`` (401 otherwise;
   pages redirect to the login page);
2. an unsafe method sent with a session cookie carries the session's form token
   (form field ``csrf_token`` or header ``X-CSRF-Token``); bearer requests are exempt;
3. a user who must change a one-time password may do nothing else first;
4. the role (and, for a token, its scopes) grants the permission (403 otherwise);
5. object level: a route with a ``{field_id}`` or ``{asset_id}`` path parameter is answered 404 for
   a field or asset outside the user's assets, as if it did not exist.
"""

from __future__ import annotations

import datetime as dt
import hmac
from dataclasses import dataclass
from typing import Annotated, Literal

from fastapi import Depends, HTTPException, Request
from fastapi.security import HTTPBearer
from sqlalchemy.orm import Session

from ..db.models import Field, User
from ..services.access.accounts import allowed_assets
from ..services.access.credentials import SessionTimeouts, live_api_token, live_session
from ..services.access.permissions import Permission, role_permissions, token_permissions
from ..services.audit import Actor
from .deps import UNSAFE, SessionDep

SESSION_COOKIE = "tb_session"
UNSAFE_METHODS = UNSAFE
_bearer = HTTPBearer(auto_error=False, description="An API token made on the account page")


class NotAuthenticatedError(HTTPException):
    """No valid session or token: pages redirect to the login page, the API answers 401."""

    def __init__(self, detail: str = "log in first (or send an API token)"):
        super().__init__(status_code=401, detail=detail, headers={"WWW-Authenticate": "Bearer"})


class PasswordChangeRequiredError(HTTPException):
    """The user logged in with a one-time password and must choose their own first."""

    def __init__(self):
        super().__init__(status_code=403, detail="choose a new password first (account page)")


@dataclass(frozen=True)
class Principal:
    """The user behind a request, with what they may do here."""

    user_id: int
    username: str
    display_name: str
    role: str
    permissions: frozenset[Permission]
    asset_ids: frozenset[int] | None  # None: every asset
    via: Literal["session", "token"]
    credential_id: int
    csrf_token: str  # the session's form token; empty for API tokens
    must_change_password: bool
    unit_system: str | None = None  # the user's own display units; None: the team's default

    def can(self, permission: Permission | str) -> bool:
        return permission in self.permissions

    def can_see_asset(self, asset_id: int) -> bool:
        return self.asset_ids is None or asset_id in self.asset_ids

    @property
    def actor(self) -> Actor:
        return Actor(self.user_id, self.username)


def now(request: Request) -> dt.datetime:
    """The app's clock (tests replace ``app.state.clock``)."""
    return request.app.state.clock()


def _principal(session: Session, user: User, via, credential_id, csrf, permissions) -> Principal:
    return Principal(
        user.id,
        user.username,
        user.display_name or user.username,
        user.role,
        permissions,
        allowed_assets(session, user),
        via,
        credential_id,
        csrf,
        user.must_change_password,
        user.unit_system,
    )


def authenticate_request(request: Request, session: Session) -> Principal | None:
    """The principal of this request (computed once, kept on ``request.state``)."""
    if hasattr(request.state, "principal"):
        return request.state.principal
    principal = None
    clock = now(request)
    header = request.headers.get("authorization")
    if header is not None:
        scheme, _, raw = header.partition(" ")
        found = live_api_token(session, raw.strip(), now=clock) if scheme.lower() == "bearer" else None
        if found is None:
            raise NotAuthenticatedError("the API token is unknown, revoked or expired")
        token, user = found
        perms = token_permissions(user.role, token.scopes)
        principal = _principal(session, user, "token", token.id, "", perms)
    elif raw := request.cookies.get(SESSION_COOKIE):
        timeouts = SessionTimeouts.from_settings(request.app.state.settings)
        found = live_session(session, raw, now=clock, timeouts=timeouts)
        if found is not None:
            auth, user = found
            principal = _principal(
                session, user, "session", auth.id, auth.csrf_token, role_permissions(user.role)
            )
    request.state.principal = principal
    return principal


async def sent_form_token(request: Request) -> str:
    """The form token a request carries (header, or the ``csrf_token`` form field)."""
    if request.method not in UNSAFE_METHODS:
        return ""
    if header := request.headers.get("x-csrf-token"):
        return header
    ctype = request.headers.get("content-type", "")
    if ctype.startswith(("application/x-www-form-urlencoded", "multipart/form-data")):
        value = (await request.form()).get("csrf_token")
        return value if isinstance(value, str) else ""
    return ""


MAX_ID = 2**31 - 1  # ids are 32-bit integers on PostgreSQL


def _path_id(params, name: str) -> int | None:
    try:
        value = int(params[name])
    except (KeyError, ValueError):
        return None
    return value if 1 <= value <= MAX_ID else None


def _check_object_access(request: Request, session: Session, principal: Principal) -> None:
    """404 for a field or asset outside the user's assets (unknown ids are left to the route)."""
    if principal.asset_ids is None:
        return
    field_id = _path_id(request.path_params, "field_id")
    if field_id is not None:
        field = session.get(Field, field_id)
        if field is not None and not principal.can_see_asset(field.asset_id):
            raise HTTPException(status_code=404, detail="no such field")
    asset_id = _path_id(request.path_params, "asset_id")
    if asset_id is not None and not principal.can_see_asset(asset_id):
        raise HTTPException(status_code=404, detail="no such asset")


def require_form_token(principal: Principal, sent: str) -> None:
    """403 unless ``sent`` is this session's form token (compared in constant time)."""
    if not sent or not hmac.compare_digest(sent.encode(), principal.csrf_token.encode()):
        raise HTTPException(
            status_code=403,
            detail="the form has expired or was not sent by Tankbook; reload the page and try again",
        )


class PermissionCheck:
    """The dependency behind :func:`Require`; ``permission`` is read by the route walker test."""

    def __init__(self, permission: Permission):
        self.permission = permission

    def __repr__(self) -> str:
        return f"Require({self.permission.value})"

    def __call__(
        self,
        request: Request,
        session: SessionDep,
        form_token: Annotated[str, Depends(sent_form_token)],
        _bearer_doc: Annotated[object, Depends(_bearer)] = None,  # documents the scheme in OpenAPI
    ) -> Principal:
        principal = authenticate_request(request, session)
        if principal is None:
            raise NotAuthenticatedError()
        if principal.via == "session" and request.method in UNSAFE_METHODS:
            require_form_token(principal, form_token)
        if principal.must_change_password and self.permission is not Permission.ACCOUNT:
            raise PasswordChangeRequiredError()
        if not principal.can(self.permission):
            who = "this API token's scopes" if principal.via == "token" else f"the role {principal.role!r}"
            raise HTTPException(
                status_code=403,
                detail=f"{who} does not allow this (needs permission {self.permission.value!r})",
            )
        _check_object_access(request, session, principal)
        end_dependency_transaction(session)
        return principal


def end_dependency_transaction(session) -> None:
    """Commit what the authentication read and wrote (a last-seen time) before the route runs.

    Each dependency and the route run in separate calls to the thread pool. A transaction
    holding SQLite's write lock must never wait for a pool thread: if every thread were
    waiting for that lock (busy timeout), nothing could finish it. So a dependency ends its
    transaction itself, and the route's (BEGIN IMMEDIATE on unsafe methods) starts and ends
    within the route's own call and the session's teardown (which FastAPI runs outside the
    request threads' limit)."""
    if session.in_transaction():
        session.commit()


_CHECKS = {p: PermissionCheck(p) for p in Permission}


def Require(permission: Permission):  # noqa: N802 - reads as a declaration in route decorators
    """``Depends`` that lets the request through only with ``permission`` (one instance per
    permission, so FastAPI runs it once per request however often it is declared)."""
    return Depends(_CHECKS[permission])


def public_route() -> None:
    """Marks a route as open to anyone; the route walker allows it only for a short list."""


Public = Depends(public_route)

Reader = Annotated[Principal, Require(Permission.READ)]
AccountHolder = Annotated[Principal, Require(Permission.ACCOUNT)]
Uploader = Annotated[Principal, Require(Permission.UPLOAD)]
Analyst = Annotated[Principal, Require(Permission.ANALYSE)]
NoteWriter = Annotated[Principal, Require(Permission.NOTE)]
Approver = Annotated[Principal, Require(Permission.SIGN_OFF)]
Auditor = Annotated[Principal, Require(Permission.VIEW_AUDIT)]
UserAdmin = Annotated[Principal, Require(Permission.MANAGE_USERS)]
SettingsAdmin = Annotated[Principal, Require(Permission.MANAGE_SETTINGS)]


def optional_principal(request: Request, session: SessionDep) -> Principal | None:
    """For public pages that look different when someone is logged in (the login page)."""
    try:
        principal = authenticate_request(request, session)
    except NotAuthenticatedError:
        principal = None
    end_dependency_transaction(session)
    return principal


AUTH_ERRORS = {
    401: "no valid session or API token",
    403: "the role, or the API token's scopes, do not allow this",
}
BODY_ERRORS = {
    400: "the request body could not be parsed",
    413: "the request body is larger than the limit (max_upload_bytes)",
}


def _declared(dependant) -> list:
    out = [dependant.call]
    for d in dependant.dependencies:
        out += _declared(d)
    return out


def permission_of(route) -> Permission | Literal["public"] | None:
    """The permission a route declares, "public", or None when it declares nothing."""
    calls = _declared(route.dependant)
    checks = [c for c in calls if isinstance(c, PermissionCheck)]
    if checks:
        return checks[0].permission
    return "public" if public_route in calls else None


def route_permissions(app) -> list[tuple[set[str], str, object, Permission | str | None]]:
    """(methods, path, route, permission) of every route, included routers flattened.

    ``permission`` is a Permission, "public", "mount" for a mounted app, or None when the route
    declares nothing."""
    from fastapi.routing import iter_route_contexts
    from starlette.routing import Mount

    out = []
    for ctx in iter_route_contexts(app.routes):
        if isinstance(ctx.original_route, Mount):
            out.append((set(), ctx.path, ctx.original_route, "mount"))
            continue
        dependant = getattr(ctx, "dependant", None)
        declared = permission_of(ctx) if dependant is not None else None
        out.append((set(ctx.methods or ()), ctx.path, ctx.original_route, declared))
    return out


def document_auth_errors(app) -> None:
    """Add the 401/403 answers to every protected operation of the OpenAPI schema, and
    400/413 to every operation that takes a body."""
    from .schemas.common import ErrorRead

    generate = app.openapi

    def openapi() -> dict:
        if app.openapi_schema:
            return app.openapi_schema
        schema = generate()
        protected = {
            (path, m.lower())
            for methods, path, _, permission in route_permissions(app)
            if isinstance(permission, Permission)
            for m in methods
        }
        schema.setdefault("components", {}).setdefault("schemas", {}).setdefault(
            "ErrorRead", ErrorRead.model_json_schema()
        )
        error = {"application/json": {"schema": {"$ref": "#/components/schemas/ErrorRead"}}}
        for path, operations in schema.get("paths", {}).items():
            for method, op in operations.items():
                documented = (AUTH_ERRORS if (path, method) in protected else {}) | (
                    BODY_ERRORS if "requestBody" in op else {}
                )
                for status, text in documented.items():
                    op["responses"].setdefault(str(status), {"description": text, "content": error})
        return schema

    app.openapi = openapi
