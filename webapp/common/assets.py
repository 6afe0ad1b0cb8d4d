"""Static files: versioned addresses, long caching, compression.

``asset('css/inkfilm.css')`` gives the address of a file in ``webapp/static``
with this build's version (a hash of the static files and templates), so a
versioned file can be cached for a year and a new build is fetched at once.
"""

from __future__ import annotations

import hashlib
from functools import cache
from pathlib import Path

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
    return response


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

    # Exports stream; CSV is compressed on the wire as JSON is.
    Compress(app).compress_mimetypes_set.add("text/csv")
    app.after_request(prepare_static)
    app.add_template_global(asset)
