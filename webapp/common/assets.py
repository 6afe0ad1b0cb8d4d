"""Static files: versioned addresses, long caching, compressed once.

``asset('css/inkfilm.css')`` gives the address of a file in ``webapp/static``
with this build's version (a hash of the static files and templates), so a
versioned file can be cached for a year and a new build is fetched at once.

Static files never reach a Flask view: WhiteNoise serves them in front of the
app from a copy in inkfilm's cache folder (``calc.units.cache_folder``), made
once per build with a gzip and a brotli file beside each text file, so each
answer is a file read, compressed once at start-up and never again. A request
with this build's ``?v=`` is cached for a year (``immutable``); any other asks
the browser to check again (``no-cache``, answered 304 when unchanged). Other
responses are compressed per request by Flask-Compress.
"""

from __future__ import annotations

import atexit
import gzip
import hashlib
import os
import shutil
import tempfile
from functools import cache
from pathlib import Path
from urllib.parse import parse_qs

from flask import Response, current_app, request, url_for

ONE_YEAR = 365 * 24 * 3600
STATIC_PREFIX = "/static/"
# Files worth compressing (the images are compressed already).
COMPRESSIBLE = {".css", ".js", ".svg", ".webmanifest", ".json", ".txt", ".html", ".map"}


def asset(filename: str) -> str:
    """The address of a static file with this build's version: cached for a year, renewed by each build."""
    return url_for("static", filename=filename, v=build_version())


def prepare_static(response: Response) -> Response:
    """What Flask's own static view answers (WhiteNoise serves every existing file before it):
    read into memory so the file is closed with the response; versioned ones cached for long."""
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


# --- compressed once -------------------------------------------------------------


def _compress_into(source: Path, target: Path) -> None:
    """Copy ``source`` (the static folder) to ``target`` with ``.gz`` and ``.br`` beside each text file."""
    import brotli  # Flask-Compress's dependency; only needed when a build is first served

    for path in sorted(source.rglob("*")):
        if not path.is_file() or path.suffix in {".gz", ".br"}:
            continue
        copy = target / path.relative_to(source)
        copy.parent.mkdir(parents=True, exist_ok=True)
        data = path.read_bytes()
        copy.write_bytes(data)
        if path.suffix not in COMPRESSIBLE:
            continue
        # mtime=0: the same bytes at every build of the same file.
        squeezed = {".gz": gzip.compress(data, compresslevel=9, mtime=0), ".br": brotli.compress(data, quality=11)}
        for suffix, body in squeezed.items():
            if len(body) < len(data):  # WhiteNoise offers whichever variants exist
                copy.with_name(copy.name + suffix).write_bytes(body)


def compressed_static(static_folder: Path, version: str) -> Path:
    """The folder of this build's static files with their compressed forms, made if missing.

    Made in a fresh folder and renamed into place, so that a server starting
    beside another (or one stopped halfway) never sees half a folder.
    """
    base = _cache_base()
    final = base / version if base else None
    if final is not None and (final / ".complete").is_file():
        return final
    work = Path(tempfile.mkdtemp(prefix=f".{version}-", dir=base))
    _compress_into(static_folder, work)
    (work / ".complete").write_text(version + "\n", encoding="ascii")
    if final is None:
        atexit.register(shutil.rmtree, work, ignore_errors=True)
        return work
    try:
        os.rename(work, final)
    except OSError:  # another server made it first (or left a broken one: use ours)
        if not (final / ".complete").is_file():
            atexit.register(shutil.rmtree, work, ignore_errors=True)
            return work
        shutil.rmtree(work, ignore_errors=True)
    return final


def _cache_base() -> Path | None:
    from calc.units import cache_folder

    return cache_folder("static")


class StaticFiles:
    """WSGI: ``/static/…`` answered by WhiteNoise from the compressed copy, the rest by ``app``."""

    def __init__(self, app, root: Path, version: str, headers: dict[str, str]):
        from whitenoise import WhiteNoise

        class YearLong(WhiteNoise):
            FOREVER = ONE_YEAR  # what "immutable" files are cached for

        def add_headers(response_headers, path, url):
            for name, value in headers.items():
                response_headers[name] = value

        self.app = app
        self.version = version
        self.files = YearLong(
            app,
            root=str(root),
            prefix=STATIC_PREFIX,
            max_age=ONE_YEAR,
            allow_all_origins=False,
            immutable_file_test=lambda path, url: True,
            add_headers_function=add_headers,
        )
        # Only the build's files; the marker of a finished folder is no static file.
        self.files.files.pop(STATIC_PREFIX + ".complete", None)

    def __call__(self, environ, start_response):
        if not environ.get("PATH_INFO", "").startswith(STATIC_PREFIX):
            return self.app(environ, start_response)
        if parse_qs(environ.get("QUERY_STRING", "")).get("v") == [self.version]:
            return self.files(environ, start_response)

        def check_again(status, headers, exc_info=None):
            headers = [(name, value) for name, value in headers if name.lower() != "cache-control"]
            headers.append(("Cache-Control", "no-cache"))
            return start_response(status, headers, exc_info)

        return self.files(environ, check_again)


def init_app(app) -> None:
    """Static files in front of the app (compressed once), and compressed text responses."""
    from flask_compress import Compress

    from webapp.common.security import STATIC_HEADERS

    # Exports stream; CSV is compressed on the wire as JSON is.
    Compress(app).compress_mimetypes_set.add("text/csv")
    app.after_request(prepare_static)
    app.add_template_global(asset)
    version = _build_version(app.root_path)
    root = compressed_static(Path(app.static_folder), version)
    app.wsgi_app = StaticFiles(app.wsgi_app, root, version, STATIC_HEADERS)
