"""Logging in and out, and one's own account: password, sessions and API tokens."""

from __future__ import annotations

from typing import Annotated

from fastapi import APIRouter, Depends, Form, HTTPException, Request
from fastapi.responses import HTMLResponse, RedirectResponse
from sqlalchemy import select

from ...db.models import AuthSession, User
from ...services.access import accounts, credentials, throttle
from ...services.access.passwords import PasswordPolicyError, verify_password
from ...services.access.permissions import SCOPE_TITLES
from ...services.access.throttle import ThrottlePolicy
from ..auth import SESSION_COOKIE, AccountHolder, Principal, Public, now, optional_principal
from ..deps import SessionDep, SettingsDep
from ..errors import safe_next
from ..security import is_same_origin
from ..templating import render

router = APIRouter(include_in_schema=False)
OptionalUser = Annotated[Principal | None, Depends(optional_principal)]


def _client(request: Request) -> str:
    return request.client.host if request.client else ""


def _set_session_cookie(response, request: Request, raw: str) -> None:
    response.set_cookie(
        SESSION_COOKIE,
        raw,
        httponly=True,
        samesite="lax",
        secure=request.app.state.settings.behind_tls,
        path="/",
    )


def _login_page(request: Request, *, next_url: str, error: str = "", username: str = "", status: int = 200):
    context = {"title": "Log in", "next": next_url, "error": error, "username": username}
    return render(request, "login.html", context, status_code=status)


@router.get("/login", response_class=HTMLResponse, name="login", dependencies=[Public])
def login_page(request: Request, session: SessionDep, user: OptionalUser, next: str = "/"):
    if user is not None:
        return RedirectResponse(safe_next(next), status_code=303)
    no_users = session.execute(select(User.id).limit(1)).first() is None
    error = "No account exists yet: run `tankbook create-admin` on the server." if no_users else ""
    return _login_page(request, next_url=safe_next(next), error=error)


@router.post("/login", response_class=HTMLResponse, dependencies=[Public])
def login_submit(
    request: Request,
    session: SessionDep,
    settings: SettingsDep,
    username: Annotated[str, Form(max_length=200)] = "",
    password: Annotated[str, Form(max_length=2000)] = "",
    next: Annotated[str, Form(max_length=2000)] = "/",
):
    # No session exists yet, so there is no form token: the browser must say the form is ours.
    if not is_same_origin(request.headers, request.headers.get("host")):
        raise HTTPException(status_code=403, detail="log in from Tankbook's own login page")
    clock = now(request)
    result = accounts.authenticate(
        session,
        username,
        password,
        address=_client(request),
        now=clock,
        policy=ThrottlePolicy.from_settings(settings),
    )
    if result.retry_after_s > 0:
        wait = int(result.retry_after_s + 0.999)
        page = _login_page(
            request,
            next_url=safe_next(next),
            username=username,
            error=f"Too many failed attempts. Try again in {wait} seconds.",
            status=429,
        )
        page.headers["Retry-After"] = str(wait)
        return page
    if result.user is None:
        return _login_page(
            request,
            next_url=safe_next(next),
            username=username,
            error="Wrong user name or password.",
            status=401,
        )
    # Whatever session cookie came with the request is dropped: the new session gets a new token.
    if old := request.cookies.get(SESSION_COOKIE):
        found = session.execute(
            select(AuthSession).where(AuthSession.token_hash == credentials.token_hash(old))
        ).scalar_one_or_none()
        if found is not None:
            credentials.revoke_session(found, clock)
    raw, _ = credentials.start_session(
        session,
        result.user,
        now=clock,
        client_address=_client(request),
        user_agent=request.headers.get("user-agent", ""),
    )
    target = "/account#password" if result.user.must_change_password else safe_next(next)
    response = RedirectResponse(target, status_code=303)
    _set_session_cookie(response, request, raw)
    return response


@router.post("/logout", name="logout")
def logout(request: Request, session: SessionDep, user: AccountHolder):
    auth = session.get(AuthSession, user.credential_id) if user.via == "session" else None
    if auth is not None:
        credentials.revoke_session(auth, now(request))
    response = RedirectResponse("/login", status_code=303)
    response.delete_cookie(SESSION_COOKIE, path="/", httponly=True, samesite="lax")
    return response


def _account_context(request: Request, session, user: Principal, **extra) -> dict:
    sessions = session.execute(
        select(AuthSession)
        .where(AuthSession.user_id == user.user_id, AuthSession.revoked_at.is_(None))
        .order_by(AuthSession.id.desc())
    ).scalars()
    base = {
        "title": "Your account",
        "tokens": credentials.user_tokens(session, user.user_id),
        "sessions": [
            {
                "created_at": s.created_at,
                "last_seen_at": s.last_seen_at,
                "client": s.client_address,
                "agent": s.user_agent,
                "current": user.via == "session" and s.id == user.credential_id,
            }
            for s in sessions
        ],
        "scopes": SCOPE_TITLES,
        "new_token": None,
        "message": "",
        "error": "",
        "must_change": user.must_change_password,
        "password_min_length": request.app.state.settings.password_min_length,
    }
    return {**base, **extra}


@router.get("/account", response_class=HTMLResponse, name="account")
def account_page(request: Request, session: SessionDep, user: AccountHolder):
    return render(request, "account.html", _account_context(request, session, user))


@router.post("/account/password", response_class=HTMLResponse, name="account_password")
def change_password(
    request: Request,
    session: SessionDep,
    settings: SettingsDep,
    user: AccountHolder,
    current_password: Annotated[str, Form(max_length=2000)],
    new_password: Annotated[str, Form(max_length=2000)],
    repeat_password: Annotated[str, Form(max_length=2000)],
):
    me = session.get(User, user.user_id)
    clock, policy = now(request), ThrottlePolicy.from_settings(settings)
    error = ""
    # A stolen session must not become a way to guess the password: same limits as the login.
    wait = throttle.retry_after_s(session, me.username, _client(request), clock, policy)
    if wait > 0:
        error = f"Too many wrong passwords. Try again in {int(wait + 0.999)} seconds."
    elif not verify_password(me.password_hash, current_password):
        throttle.record_failure(session, me.username, _client(request), clock, policy)
        error = "The current password is wrong."
    elif new_password != repeat_password:
        error = "The two new passwords differ."
    elif new_password == current_password:
        error = "Choose a password different from the current one."
    if not error:
        try:
            accounts.set_password(
                session,
                user.actor,
                me,
                new_password,
                now=now(request),
                min_length=settings.password_min_length,
            )
        except PasswordPolicyError as exc:
            error = f"Not changed: {exc}."
    if error:
        return render(
            request, "account.html", _account_context(request, session, user, error=error), status_code=422
        )
    # Every session ended with the change; this browser gets a fresh one.
    raw, _ = credentials.start_session(
        session,
        me,
        now=now(request),
        client_address=_client(request),
        user_agent=request.headers.get("user-agent", ""),
    )
    response = RedirectResponse("/account?changed=1", status_code=303)
    _set_session_cookie(response, request, raw)
    return response


@router.post("/account/tokens", response_class=HTMLResponse, name="account_tokens")
def create_token(
    request: Request,
    session: SessionDep,
    user: AccountHolder,
    name: Annotated[str, Form(max_length=200)],
    scopes: Annotated[list[str], Form()] = [],  # noqa: B006 - FastAPI copies defaults
    expires_days: Annotated[str, Form(max_length=10)] = "",
):
    me = session.get(User, user.user_id)
    try:
        days = int(expires_days) if expires_days.strip() else None
        raw, row = credentials.create_api_token(
            session, me, name=name, scopes=scopes, now=now(request), expires_days=days
        )
    except (credentials.CredentialError, ValueError) as exc:
        return render(
            request,
            "account.html",
            _account_context(request, session, user, error=f"No token made: {exc}."),
            422,
        )
    context = _account_context(request, session, user, new_token={"raw": raw, "name": row.name})
    return render(request, "account.html", context)


@router.post("/account/tokens/{token_id}/revoke", name="account_token_revoke")
def revoke_token(request: Request, token_id: int, session: SessionDep, user: AccountHolder):
    if not credentials.revoke_api_token(session, user.actor, user.user_id, token_id, now(request)):
        raise HTTPException(status_code=404, detail="no such token")
    return RedirectResponse("/account#tokens", status_code=303)


@router.post("/account/sessions/end-others", name="account_end_sessions")
def end_other_sessions(request: Request, session: SessionDep, user: AccountHolder):
    clock = now(request)
    for s in session.execute(
        select(AuthSession).where(AuthSession.user_id == user.user_id, AuthSession.revoked_at.is_(None))
    ).scalars():
        if not (user.via == "session" and s.id == user.credential_id):
            credentials.revoke_session(s, clock)
    return RedirectResponse("/account#sessions", status_code=303)


@router.post("/account/units", name="account_units")
def choose_units(
    request: Request,
    session: SessionDep,
    user: AccountHolder,
    unit_system: Annotated[str, Form(max_length=20)] = "",
    next: Annotated[str, Form(max_length=2000)] = "/",
):
    """The header's unit switch: store the choice and go back to the page it came from."""
    try:
        accounts.set_unit_system(session, user_id=user.user_id, unit_system=unit_system or None)
    except ValueError as exc:
        raise HTTPException(status_code=422, detail=str(exc)) from None
    return RedirectResponse(safe_next(next), status_code=303)
