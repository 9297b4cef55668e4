"""A method a path does not serve answers 405 with an Allow header naming every method the
schema documents there (issue 18, point 17: schemathesis found OPTIONS answered with an Allow
header that named only the first route's methods, e.g. GET where GET and POST are served).
RFC 9110 section 15.5.6: a 405 response must carry Allow with the target's supported methods."""

import re

from tests.factories import field_with_estimate


def _url(template: str, field_id: int) -> str:
    return re.sub(r"\{[^}]+\}", "1", template.replace("{field_id}", str(field_id)))


def _matches(template: str, url: str) -> bool:
    return re.fullmatch(re.sub(r"\{[^}]+\}", "[^/]+", template), url) is not None


def test_unserved_methods_name_every_served_one(db, app, token_client):
    fid = field_with_estimate(db)
    client = token_client(["read", "upload", "analyse"], role="admin")
    paths = client.get("/openapi.json").json()["paths"]
    seen_two = False
    for template in paths:
        url = _url(template, fid)
        documented = {
            m.upper() for t, ops in paths.items() if _matches(t, url) for m in ops if m != "parameters"
        }
        seen_two |= len(documented) > 1
        for method in ("OPTIONS", "TRACE"):
            r = client.request(method, url)
            assert r.status_code == 405, (method, url, r.status_code)
            allowed = {m.strip() for m in r.headers["allow"].split(",")}
            assert documented <= allowed, (url, documented, allowed)
            assert allowed - documented <= {"HEAD"}, (url, documented, allowed)
    assert seen_two  # some path serves more than one method, so a partial Allow would show
