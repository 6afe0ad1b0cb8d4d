"""Static files: versioned addresses, long caching, compression.

``asset('css/inkfilm.css')`` gives the address of a file in ``webapp/static``
with this build's version (a hash of the static files and templates), so a
versioned file can be cached for a year and a new build is fetched at once.
"""

from __future__ import annotations

import gzip
import hashlib
from functools import cache, lru_cache
from pathlib import Path

import brotli  # Flask-Compress's own dependency
from flask import Response, current_app, request, url_for

ONE_YEAR = 365 * 24 * 3600


def asset(filename: str) -> str:
    """The address of a static file with this build's version: cached for a year, renewed by each build."""
    return url_for("static", filename=filename, v=build_version())


def prepare_static(response: Response) -> Response:
    """Static files: read into memory (they are small) so that they are compressed
    whole and the file is closed with the response; versioned ones cached for long."""
    if request.endpoint != "static" or response.status_code != 200:
        return response
    response.direct_passthrough = False
    response.make_sequence()
    if request.args.get("v") == build_version():
        response.cache_control.no_cache = None
        response.cache_control.public = True
        response.cache_control.max_age = ONE_YEAR
        response.cache_control.immutable = True
    _compress_best(response)
    return response


# Static text compressed at the best level once per build (they are part of every first
# load); pages and answers are left to Flask-Compress's quicker default level.
COMPRESSIBLE = {"text/css", "text/javascript", "application/javascript", "application/manifest+json", "image/svg+xml"}
MIN_SIZE = 500


def _compress_best(response: Response) -> None:
    accepted = request.accept_encodings
    encoding = next((name for name in ("br", "gzip") if accepted[name]), None)
    if encoding is None or response.mimetype not in COMPRESSIBLE or "Content-Encoding" in response.headers:
        return
    body = response.get_data()
    if len(body) < MIN_SIZE:
        return
    response.set_data(_compressed(request.path, build_version(), encoding, body))
    response.headers["Content-Encoding"] = encoding
    etag, weak = response.get_etag()
    if etag:
        response.set_etag(f"{etag}:{encoding}", weak=weak)
    response.vary.add("Accept-Encoding")
    response.make_conditional(request)  # a 304 for the compressed file's own ETag


@lru_cache(maxsize=256)
def _compressed(path: str, version: str, encoding: str, body: bytes) -> bytes:
    if encoding == "br":
        return brotli.compress(body, quality=11)
    return gzip.compress(body, compresslevel=9, mtime=0)


@cache
def _build_version(root: str) -> str:
    """A hash of every static file and template: a new build gets a new cache."""
    digest = hashlib.sha256()
    for folder in (Path(root) / "static", Path(root) / "templates"):
        for path in sorted(folder.rglob("*")):
            if path.is_file():
                digest.update(str(path.relative_to(root)).encode())
                digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


def build_version() -> str:
    return _build_version(current_app.root_path)


def init_app(app) -> None:
    """Versioned static files and compressed text responses."""
    from flask_compress import Compress

    Compress(app)
    app.after_request(prepare_static)
    app.add_template_global(asset)
