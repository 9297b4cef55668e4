"""Static files at content-hashed URLs (web/assets.py): gzipped once, cached for a year, a new
URL for new content; the chart library only on pages with charts (issue 16, point 3)."""

from __future__ import annotations

import gzip
import re

import pytest

from server.settings import PROJECT_ROOT
from server.web.assets import AssetStore, accepts_gzip
from tests.factories import field_with_estimate

REFERENCE = re.compile(r'<(?:script|link)[^>]*(?:src|href)="(/[^"]*)"')


def _references(html: str) -> list[str]:
    return REFERENCE.findall(html)


def test_pages_link_only_hashed_static_files_that_arrive_gzipped_and_cached(db, client):
    fid = field_with_estimate(db)
    urls = set()
    for path in ("/", f"/fields/{fid}", "/upload", "/jobs", "/account"):
        page = client.get(path).text
        urls |= set(_references(page))
    assert urls and all(re.fullmatch(r"/assets/[0-9a-f]{16}/[\w./-]+", u) for u in urls), urls
    for url in urls:
        r = client.get(url, headers={"Accept-Encoding": "gzip, deflate, br"})
        assert r.status_code == 200
        assert r.headers["cache-control"] == "public, max-age=31536000, immutable"
        name = url.split("/", 3)[3]
        on_disk = (PROJECT_ROOT / "static" / name) if not name.startswith("vendor/") else None
        if on_disk is not None:
            assert r.content == on_disk.read_bytes()  # httpx undoes the gzip
        if name.endswith((".js", ".css")):
            assert r.headers["content-encoding"] == "gzip" and r.headers["vary"] == "Accept-Encoding"
    plotly = next(u for u in urls if u.endswith("plotly.min.js"))
    with client.stream("GET", plotly, headers={"Accept-Encoding": "gzip"}) as r:
        sent = b"".join(r.iter_raw())
    assert len(sent) < 2_000_000 < len(gzip.decompress(sent))  # 4.8 MB travel as about 1.5 MB


def test_a_client_that_refuses_gzip_gets_the_plain_file_and_a_stale_url_is_gone(client):
    css = next(u for u in _references(client.get("/jobs").text) if u.endswith("app.css"))
    plain = client.get(css, headers={"Accept-Encoding": "gzip;q=0, identity"})
    assert "content-encoding" not in plain.headers
    assert plain.content == (PROJECT_ROOT / "static" / "app.css").read_bytes()
    stale = css.replace(css.split("/")[2], "0" * 16)
    assert client.get(stale).status_code == 404
    assert client.get(css, headers={"If-None-Match": plain.headers["etag"]}).status_code == 304


def test_new_content_gets_a_new_url(tmp_path):
    f = tmp_path / "site.css"
    f.write_text("body { color: black; }\n")
    before = AssetStore.from_directory(tmp_path).url("site.css")
    f.write_text("body { color: navy; }\n")
    after = AssetStore.from_directory(tmp_path).url("site.css")
    assert before != after and before.endswith("/site.css") and after.startswith("/assets/")
    with pytest.raises(ValueError, match="no static file"):
        AssetStore.from_directory(tmp_path).url("missing.css")


@pytest.mark.parametrize(
    ("header", "ok"),
    [
        ("gzip", True),
        ("br, gzip;q=0.5", True),
        ("*", True),
        ("gzip;q=0", False),
        ("identity", False),
        ("", False),
    ],
)
def test_accept_encoding(header, ok):
    assert accepts_gzip(header) is ok


def test_the_chart_library_loads_only_on_pages_with_charts(db, client):
    fid = field_with_estimate(db)
    with_charts = ("/", f"/fields/{fid}", f"/fields/{fid}/fluid")
    without = ("/upload", "/jobs", "/account", f"/fields/{fid}/wells", f"/fields/{fid}/production")
    for path in with_charts:
        assert any("plotly" in u for u in _references(client.get(path).text)), path
    for path in without:
        assert not any("plotly" in u for u in _references(client.get(path).text)), path


def test_a_local_server_follows_edits_to_static_files(tmp_path):
    f = tmp_path / "site.css"
    f.write_text("a { color: red; }\n")
    fixed, following = (
        AssetStore.from_directory(tmp_path),
        AssetStore.from_directory(tmp_path, follow_edits=True),
    )
    before = following.url("site.css")
    f.write_text("a { color: teal; }\n")
    assert fixed.url("site.css") == before  # a served release: files are read when the app is built
    changed = following.url("site.css")
    assert changed != before and following.get("site.css", changed.split("/")[2]).body == f.read_bytes()
