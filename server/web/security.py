"""Security headers and cross-site request checks (pure ASGI middleware).

The cross-site check is the first of two CSRF defences; the second, the session's form token,
is checked with the permission of each route (``auth.py``).
"""

from __future__ import annotations

from urllib.parse import urlsplit

from starlette.datastructures import Headers
from starlette.requests import Request
from starlette.types import ASGIApp, Message, Receive, Scope, Send

from .errors import error_response

CONTENT_SECURITY_POLICY = (
    "default-src 'self'; script-src 'self'; style-src 'self' 'unsafe-inline'; "
    "img-src 'self' data: blob:; font-src 'self'; connect-src 'self'; object-src 'none'; "
    "base-uri 'self'; form-action 'self'; frame-ancestors 'none'"
)
UNSAFE_METHODS = {"POST", "PUT", "PATCH", "DELETE"}
HSTS = b"max-age=31536000; includeSubDomains"


class SecurityHeadersMiddleware:
    """Adds CSP, nosniff, referrer policy, framing protection and caching rules to every response.

    Responses that say nothing about caching get ``no-store`` (pages and API answers may hold
    confidential numbers); static files get ``no-cache`` (revalidated, never stale).
    """

    def __init__(self, app: ASGIApp, *, hsts: bool = False):
        self.app = app
        self.hsts = hsts

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        static = scope["path"].startswith("/static/")

        async def send_wrapper(message: Message) -> None:
            if message["type"] == "http.response.start":
                headers = list(message.get("headers", []))
                present = {k.lower() for k, _ in headers}
                extra = {
                    b"content-security-policy": CONTENT_SECURITY_POLICY.encode(),
                    b"x-content-type-options": b"nosniff",
                    b"referrer-policy": b"same-origin",
                    b"x-frame-options": b"DENY",
                    b"cross-origin-opener-policy": b"same-origin",
                    b"cross-origin-resource-policy": b"same-origin",
                    b"permissions-policy": b"camera=(), microphone=(), geolocation=(), payment=()",
                    b"cache-control": b"no-cache" if static else b"no-store",
                }
                if self.hsts:
                    extra[b"strict-transport-security"] = HSTS
                headers += [(k, v) for k, v in extra.items() if k not in present]
                message["headers"] = headers
            await send(message)

        await self.app(scope, receive, send_wrapper)


def is_cross_site(headers: Headers, host: str | None) -> bool:
    """True when a browser tells us the request came from another site."""
    site = headers.get("sec-fetch-site")
    if site is not None:
        return site not in ("same-origin", "none")
    origin = headers.get("origin")
    if origin and origin != "null":
        return urlsplit(origin).netloc != (host or "")
    return origin == "null"


def is_same_origin(headers: Headers, host: str | None) -> bool:
    """True only when the browser positively says the request came from this site."""
    site = headers.get("sec-fetch-site")
    if site is not None:
        return site == "same-origin"
    origin = headers.get("origin")
    return bool(origin) and origin != "null" and urlsplit(origin).netloc == (host or "")


class CrossSiteGuardMiddleware:
    """Rejects unsafe methods sent cross-site (Fetch-Metadata, then Origin)."""

    def __init__(self, app: ASGIApp):
        self.app = app

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] == "http" and scope["method"] in UNSAFE_METHODS:
            headers = Headers(scope=scope)
            if is_cross_site(headers, headers.get("host")):
                response = error_response(Request(scope), 403, "cross-site request refused")
                await response(scope, receive, send)
                return
        await self.app(scope, receive, send)
