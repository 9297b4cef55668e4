"""One place that turns exceptions into HTML or JSON error responses (never a traceback).

Pages get an error page, or a redirect: to the login page when nobody is logged in, to the
password form when a one-time password must be replaced first. The API gets JSON.
"""

from __future__ import annotations

import logging
from urllib.parse import quote, urlsplit

from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import JSONResponse, RedirectResponse
from starlette.exceptions import HTTPException as StarletteHTTPException
from starlette.routing import Match

log = logging.getLogger(__name__)

TITLES = {
    400: "Bad request",
    401: "Please log in",
    403: "Not allowed",
    404: "Not found",
    405: "Not allowed here",
    409: "Conflict",
    413: "Too large",
    422: "Not understood",
    429: "Too many attempts",
    500: "Server error",
}


def wants_json(request: Request) -> bool:
    return request.url.path.startswith("/api") or "application/json" in request.headers.get("accept", "")


def safe_next(target: str | None) -> str:
    """A local path to go back to after logging in; anything else becomes the portfolio."""
    if not target or not target.startswith("/") or target.startswith("//") or "\\" in target:
        return "/"
    parts = urlsplit(target)
    if parts.scheme or parts.netloc:
        return "/"
    return target


def error_response(request: Request, status: int, message: str, extra: dict | None = None):
    """The error response for a request: JSON for the API, an HTML page otherwise."""
    if wants_json(request):
        return JSONResponse({"detail": message, **(extra or {})}, status_code=status)
    if (
        getattr(request.state, "team_settings", None) is None
        and getattr(request.state, "db_session", None) is None
    ):
        # The handlers run on the event loop: a database read here would block every request
        # while it waits for a connection (a full pool made one 30 s wait into many). An error
        # page shows no stored value, so the environment's settings serve for its header.
        from ..services.team_settings import from_environment

        request.state.team_settings = from_environment(request.app.state.settings)
    templates = request.app.state.templates
    response = templates.TemplateResponse(
        request,
        "error.html",
        {"status": status, "message": message, "title": TITLES.get(status, f"Error {status}")},
        status_code=status,
    )
    response.headers["Cache-Control"] = "no-store"
    return response


def allowed_methods(request: Request) -> list[str]:
    """Every method some route serves at this path (Starlette's own 405 names only the first
    route whose path matched, so a path served by two routes listed half its methods)."""
    served = []
    for method in ("GET", "HEAD", "POST", "PUT", "PATCH", "DELETE"):
        scope = {**request.scope, "method": method}
        if any(route.matches(scope)[0] is Match.FULL for route in request.app.router.routes):
            served.append(method)
    return served


def _redirect(to: str) -> RedirectResponse:
    return RedirectResponse(to, status_code=303, headers={"Cache-Control": "no-store"})


def install_error_handlers(app: FastAPI) -> None:
    from .auth import NotAuthenticatedError, PasswordChangeRequiredError

    @app.exception_handler(StarletteHTTPException)
    async def http_error(request: Request, exc: StarletteHTTPException):
        if not wants_json(request):
            here = request.url.path + (f"?{request.url.query}" if request.url.query else "")
            if isinstance(exc, NotAuthenticatedError):
                return _redirect(f"/login?next={quote(safe_next(here), safe='/')}")
            if isinstance(exc, PasswordChangeRequiredError):
                return _redirect("/account#password")
        response = error_response(request, exc.status_code, str(exc.detail))
        for k, v in (exc.headers or {}).items():
            response.headers[k] = v
        if exc.status_code == 405:
            response.headers["Allow"] = ", ".join(allowed_methods(request))
        return response

    @app.exception_handler(RequestValidationError)
    async def validation_error(request: Request, exc: RequestValidationError):
        errors = [
            {"loc": [str(x) for x in e.get("loc", ())], "msg": e.get("msg", ""), "type": e.get("type", "")}
            for e in exc.errors()
        ]
        if wants_json(request):
            return JSONResponse({"detail": errors}, status_code=422)
        text = "; ".join(f"{'.'.join(e['loc'])}: {e['msg']}" for e in errors)
        return error_response(request, 422, f"the request was not understood: {text}")

    @app.exception_handler(Exception)
    async def server_error(request: Request, exc: Exception):
        log.exception("unhandled error on %s %s", request.method, request.url.path)
        return error_response(request, 500, "something went wrong on the server; the error was logged")
