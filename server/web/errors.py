"""One place that turns exceptions into HTML or JSON error responses (never a traceback)."""

from __future__ import annotations

import logging

from fastapi import FastAPI, Request
from fastapi.exceptions import RequestValidationError
from fastapi.responses import JSONResponse
from starlette.exceptions import HTTPException as StarletteHTTPException

log = logging.getLogger(__name__)


def _wants_json(request: Request) -> bool:
    return request.url.path.startswith("/api") or "application/json" in request.headers.get("accept", "")


def _respond(request: Request, status: int, message: str, extra: dict | None = None):
    if _wants_json(request):
        return JSONResponse({"detail": message, **(extra or {})}, status_code=status)
    templates = request.app.state.templates
    return templates.TemplateResponse(
        request,
        "error.html",
        {"status": status, "message": message, "title": f"Error {status}"},
        status_code=status,
    )


def install_error_handlers(app: FastAPI) -> None:
    @app.exception_handler(StarletteHTTPException)
    async def http_error(request: Request, exc: StarletteHTTPException):
        response = _respond(request, exc.status_code, str(exc.detail))
        for k, v in (exc.headers or {}).items():
            response.headers[k] = v
        return response

    @app.exception_handler(RequestValidationError)
    async def validation_error(request: Request, exc: RequestValidationError):
        errors = [
            {"loc": [str(x) for x in e.get("loc", ())], "msg": e.get("msg", ""), "type": e.get("type", "")}
            for e in exc.errors()
        ]
        if _wants_json(request):
            return JSONResponse({"detail": errors}, status_code=422)
        text = "; ".join(f"{'.'.join(e['loc'])}: {e['msg']}" for e in errors)
        return _respond(request, 422, f"the request was not understood: {text}")

    @app.exception_handler(Exception)
    async def server_error(request: Request, exc: Exception):
        log.exception("unhandled error on %s %s", request.method, request.url.path)
        return _respond(request, 500, "something went wrong on the server; the error was logged")
