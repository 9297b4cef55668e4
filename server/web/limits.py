"""The request size limit, answered with a readable 413 page or JSON body.

Replaces FastAPI's built-in ``max_body_size`` (whose 413 is plain text): a declared
Content-Length above the limit is refused before the body is read; a body without
one is counted as it arrives and refused once it passes the limit. Also: one file part per
upload request, and the cleaned name a file is kept under (issue 18).
"""

from __future__ import annotations

import re

from fastapi import HTTPException
from fastapi.exceptions import RequestValidationError
from starlette.requests import Request
from starlette.types import ASGIApp, Message, Receive, Scope, Send

from .errors import error_response


def too_large_message(limit: int) -> str:
    return (
        f"the upload is larger than the limit of {limit:,} bytes ({limit / 2**20:.1f} MiB, setting "
        "TANKBOOK_MAX_UPLOAD_BYTES); split the file or ask an administrator to raise the limit"
    )


class RequestTooLargeError(HTTPException):
    def __init__(self, limit: int):
        super().__init__(status_code=413, detail=too_large_message(limit))


class UploadLimitMiddleware:
    def __init__(self, app: ASGIApp, *, max_bytes: int):
        self.app = app
        self.max_bytes = max_bytes

    async def __call__(self, scope: Scope, receive: Receive, send: Send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        declared = dict(scope.get("headers", [])).get(b"content-length")
        if declared is not None and declared.isdigit() and int(declared) > self.max_bytes:
            scope.setdefault("router", scope["app"].router)  # url_for in the error page
            response = error_response(Request(scope), 413, too_large_message(self.max_bytes))
            await response(scope, receive, send)
            return
        total = 0

        async def counted() -> Message:
            nonlocal total
            message = await receive()
            if message["type"] == "http.request":
                total += len(message.get("body", b""))
                if total > self.max_bytes:
                    raise RequestTooLargeError(self.max_bytes)
            return message

        await self.app(scope, counted, send)


async def the_one_file(request: Request, name: str = "file") -> None:
    """422 unless the form carries exactly one part called ``name`` (two files in one request:
    which one would be stored is nobody's guess, so neither is)."""
    parts = (await request.form()).getlist(name)
    if len(parts) != 1:
        raise RequestValidationError(
            [
                {
                    "type": "value_error",
                    "loc": ("body", name),
                    "msg": f"send exactly one file part named {name!r} (got {len(parts)})",
                    "input": None,
                }
            ]
        )


def clean_filename(raw: str | None, default: str = "upload") -> str:
    """The name a file is stored and shown under: its base name (no folders, whichever slash),
    without control characters or line breaks, spaces collapsed, at most 255 characters."""
    name = re.split(r"[/\\]", raw or "")[-1]
    name = re.sub(r"[\x00-\x1f\x7f-\x9f\u2028\u2029]+", " ", name)
    name = re.sub(r"\s+", " ", name).strip().strip(".")
    return name[:255] or default
