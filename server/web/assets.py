"""Static files (CSS, scripts, the chart library) at URLs that carry a hash of their content.

``/assets/<digest>/<name>``: the digest is the start of the file's SHA-256, so a new release
(or any edit) gives a new URL and a browser never runs a stale file, while an unchanged file
is cached for a year and not asked for again (``immutable``). Text files are gzipped once,
when the app is built, and sent compressed to browsers that accept it: the chart library's
4.8 MB travel as 1.5 MB. Brotli would save a little more but needs a compiled package; gzip is
in the standard library. Pages themselves are not compressed: they carry the session's form
token next to text a user typed, which is what compression side channels (BREACH) feed on.
"""

from __future__ import annotations

import functools
import gzip
import hashlib
from dataclasses import dataclass
from pathlib import Path

from fastapi import Request
from fastapi.responses import Response

DIGEST_CHARS = 16
CACHE_FOREVER = "public, max-age=31536000, immutable"
MEDIA_TYPES = {
    ".css": "text/css; charset=utf-8",
    ".js": "text/javascript; charset=utf-8",
    ".svg": "image/svg+xml",
    ".json": "application/json",
    ".png": "image/png",
}
COMPRESSIBLE = {".css", ".js", ".svg", ".json"}


@dataclass(frozen=True)
class Asset:
    name: str
    digest: str
    media_type: str
    body: bytes
    gzipped: bytes | None  # None when compression would not pay


@functools.lru_cache(maxsize=128)
def _read(path: str, mtime_ns: int, size: int) -> tuple[str, bytes, bytes | None]:
    """Digest, bytes and gzipped bytes of a file (once per process and version of the file:
    every app a test suite builds shares the work)."""
    data = Path(path).read_bytes()
    digest = hashlib.sha256(data).hexdigest()[:DIGEST_CHARS]
    packed = None
    if Path(path).suffix in COMPRESSIBLE:
        packed = gzip.compress(data, compresslevel=9, mtime=0)
        if len(packed) >= len(data):
            packed = None
    return digest, data, packed


def load_asset(name: str, path: Path) -> Asset:
    stat = path.stat()
    digest, body, packed = _read(str(path), stat.st_mtime_ns, stat.st_size)
    return Asset(name, digest, MEDIA_TYPES.get(path.suffix, "application/octet-stream"), body, packed)


class AssetStore:
    """The files pages may link to, read (and compressed) when the app is built.

    ``follow_edits`` (local use): each link checks its file again, so an edited style sheet
    shows on the next page load without restarting the server."""

    def __init__(self, files: dict[str, Path], *, follow_edits: bool = False):
        self._paths = dict(files)
        self._assets = {name: load_asset(name, path) for name, path in files.items()}
        self._follow = follow_edits

    @classmethod
    def from_directory(
        cls, directory: Path, extra: dict[str, Path] | None = None, *, follow_edits: bool = False
    ) -> AssetStore:
        files = {p.name: p for p in sorted(directory.iterdir()) if p.suffix in MEDIA_TYPES}
        return cls({**files, **(extra or {})}, follow_edits=follow_edits)

    def url(self, name: str) -> str:
        """The file's URL for a page; a name that is not an asset is a bug in the template."""
        if name not in self._assets:
            raise ValueError(f"no static file {name!r}")
        if self._follow:
            self._assets[name] = load_asset(name, self._paths[name])  # cached unless it changed
        return f"/assets/{self._assets[name].digest}/{name}"

    def get(self, name: str, digest: str) -> Asset | None:
        asset = self._assets.get(name)
        return asset if asset is not None and asset.digest == digest else None


def accepts_gzip(accept_encoding: str) -> bool:
    """Whether an Accept-Encoding header allows gzip (``gzip;q=0`` refuses it)."""
    for item in accept_encoding.split(","):
        coding, _, params = item.strip().partition(";")
        if coding.strip().lower() not in ("gzip", "*"):
            continue
        q = params.strip().lower()
        if q.startswith("q="):
            try:
                return float(q[2:]) > 0
            except ValueError:
                return False
        return True
    return False


def asset_response(request: Request, asset: Asset) -> Response:
    headers = {"Cache-Control": CACHE_FOREVER, "ETag": f'"{asset.digest}"', "Vary": "Accept-Encoding"}
    if request.headers.get("if-none-match") == headers["ETag"]:
        return Response(status_code=304, headers=headers)
    body = asset.body
    if asset.gzipped is not None and accepts_gzip(request.headers.get("accept-encoding", "")):
        body = asset.gzipped
        headers["Content-Encoding"] = "gzip"
    return Response(body, media_type=asset.media_type, headers=headers)
