"""Control characters are refused at the boundary, for every text a request carries (issue 18).

A NUL in any text reached PostgreSQL as a 500 (its text type cannot hold one; SQLite stores
it), and other control characters have no place in names, reasons, notes or filters either.
Every route runs :func:`refuse_control_characters` (an app-wide dependency, before the
route's own): path parameters, the query string, form fields (URL-encoded and multipart:
field values and file names, not the files' contents, which the upload checker reads cell
by cell) and every string and key of a JSON body. Tab, line feed and carriage return are
allowed (a note has lines). A refusal is a 422 in FastAPI's validation shape, naming where.
"""

from __future__ import annotations

import contextlib
import json
import re

from fastapi import Request
from fastapi.exceptions import RequestValidationError
from starlette.datastructures import UploadFile

# C0 controls but tab, LF, CR; DEL; C1 controls.
CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")
# What may be one in a raw JSON body: a raw control byte, a C1 character in UTF-8, or an escape.
_JSON_CANDIDATE = re.compile(rb"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]|\xc2[\x80-\x9f]|\\u00[0-9a-fA-F]{2}")
_FORMS = ("application/x-www-form-urlencoded", "multipart/form-data")


def control_character(text: str) -> str | None:
    """The first control character of ``text`` as U+XXXX, or None."""
    m = CONTROL.search(text)
    return None if m is None else f"U+{ord(m.group()):04X}"


def _problem(loc: tuple, found: str) -> dict:
    return {
        "type": "value_error",
        "loc": loc,
        "msg": (
            f"contains the control character {found}; remove it "
            "(control characters other than tab and line breaks are refused)"
        ),
        "input": None,
    }


def _walk_json(value, loc: tuple, out: list) -> None:
    if isinstance(value, str):
        if found := control_character(value):
            out.append(_problem(loc, found))
    elif isinstance(value, dict):
        for key, item in value.items():
            if found := control_character(key):
                out.append(_problem((*loc, key), found))
            _walk_json(item, (*loc, key), out)
    elif isinstance(value, list):
        for i, item in enumerate(value):
            _walk_json(item, (*loc, i), out)


async def refuse_control_characters(request: Request) -> None:
    """422 when any text of the request holds a control character (see the module)."""
    problems: list[dict] = []
    for name, value in request.path_params.items():
        if isinstance(value, str) and (found := control_character(value)):
            problems.append(_problem(("path", name), found))
    for name, value in request.query_params.multi_items():
        for loc, text in ((("query", name), name), (("query", name), value)):
            if found := control_character(text):
                problems.append(_problem(loc, found))
                break
    ctype = request.headers.get("content-type", "").split(";")[0].strip().lower()
    if request.method in ("POST", "PUT", "PATCH", "DELETE"):
        if ctype in _FORMS:
            form = await request.form()  # parsed once: the route reads the same (Starlette caches it)
            for name, value in form.multi_items():
                text = value.filename or "" if isinstance(value, UploadFile) else value
                if (found := control_character(name)) or (found := control_character(text)):
                    problems.append(_problem(("body", name), found))
        elif ctype == "application/json" or ctype.endswith("+json"):
            body = await request.body()
            if _JSON_CANDIDATE.search(body):
                with contextlib.suppress(ValueError):  # not JSON: the route's own validation says so
                    _walk_json(json.loads(body), ("body",), problems)
    if problems:
        raise RequestValidationError(problems[:20])
