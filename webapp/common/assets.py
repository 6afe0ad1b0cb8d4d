"""Static files: versioned addresses, long caching, compressed once.

``asset('css/inkfilm.css')`` gives the address of a file in ``webapp/static``
with this build's version (a hash of the static files and templates), so a
versioned file can be cached for a year and a new build is fetched at once.

Static files never reach a Flask view: WhiteNoise serves them in front of the
app from a copy in inkfilm's cache folder (``calc.units.cache_folder``), made
once per build with a gzip and a brotli file beside each text file, so each
answer is a file read, compressed once at start-up and never again. Our own
stylesheets and scripts are copied without their comments and spaces
(``rcssmin``, ``rjsmin``); vendored files (``vendor/``) as they are. A request
with this build's ``?v=`` is cached for a year (``immutable``) and carries no
validators (a browser never asks again for an immutable file); any other asks
the browser to check again (``no-cache``, answered 304 when unchanged).

Pages (a GET of a whole page) are compressed per request with Brotli
(``compress_page``), smaller than Flask-Compress's zstd for the pages of a first
load; every other response by Flask-Compress.
"""

from __future__ import annotations

import atexit
import gzip
import hashlib
import os
import shutil
import tempfile
import threading
from collections import OrderedDict
from functools import cache
from pathlib import Path
from urllib.parse import parse_qs

from flask import Response, current_app, request, url_for

ONE_YEAR = 365 * 24 * 3600
STATIC_PREFIX = "/static/"
# Files worth compressing (the images are compressed already).
COMPRESSIBLE = {".css", ".js", ".svg", ".webmanifest", ".json", ".txt", ".html", ".map"}
# Kept byte for byte as they were published (their checksums are tested).
VENDORED = "vendor"
# How the static copy is made; part of the build version, so that a cache folder
# made by an inkfilm that copied the same files differently is not taken.
COPY_FORMAT = b"static copy 2: own css and js minified"
# Brotli's quality for a page: about as fast as zstd's default for a page of
# ~10 kB (well under a millisecond) and a tenth smaller. Its best (11) is a
# tenth smaller again but takes ~25 ms: kept for a page asked for again as it
# was (most pages are the same for every phone: no session token in them).
PAGE_BROTLI_QUALITY = 5
PAGES_KEPT = 64


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
    digest = hashlib.sha256(COPY_FORMAT)
    for folder in (Path(root) / "static", Path(root) / "templates"):
        for path in sorted(folder.rglob("*")):
            if path.is_file():
                digest.update(str(path.relative_to(root)).encode())
                digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


def build_version() -> str:
    return _build_version(current_app.root_path)


# --- compressed once -------------------------------------------------------------


def minified(relative: Path, data: bytes) -> bytes:
    """The bytes the build serves for a static file: our own CSS and JS without comments and spaces."""
    if VENDORED in relative.parts or relative.suffix not in {".css", ".js"}:
        return data
    if relative.suffix == ".css":
        import rcssmin

        return rcssmin.cssmin(data.decode("utf-8")).encode("utf-8")
    import rjsmin

    return rjsmin.jsmin(data.decode("utf-8")).encode("utf-8")


def compressed_forms(data: bytes) -> dict[str, bytes]:
    """``data`` compressed at each encoding's best (once per build: slow, and the smallest)."""
    import brotli  # Flask-Compress's dependency

    # mtime=0: the same bytes at every build of the same file.
    return {"br": brotli.compress(data, quality=11), "gzip": gzip.compress(data, compresslevel=9, mtime=0)}


def _compress_into(source: Path, target: Path) -> None:
    """Copy ``source`` (the static folder) to ``target`` with ``.gz`` and ``.br`` beside each text file."""
    for path in sorted(source.rglob("*")):
        if not path.is_file() or path.suffix in {".gz", ".br"}:
            continue
        relative = path.relative_to(source)
        copy = target / relative
        copy.parent.mkdir(parents=True, exist_ok=True)
        data = minified(relative, path.read_bytes())
        copy.write_bytes(data)
        if path.suffix not in COMPRESSIBLE:
            continue
        squeezed = compressed_forms(data)
        for suffix, body in ((".gz", squeezed["gzip"]), (".br", squeezed["br"])):
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


# What a browser would ask again with; an immutable file is never asked again.
VALIDATORS = {"etag", "last-modified"}


class StaticFiles:
    """WSGI: ``/static/…`` answered by WhiteNoise from the compressed copy, the rest by ``app``."""

    def __init__(self, app, root: Path, version: str, headers):
        """``headers(path)``: the headers of the file at ``path`` (``security.static_headers``)."""
        from whitenoise import WhiteNoise

        class YearLong(WhiteNoise):
            FOREVER = ONE_YEAR  # what "immutable" files are cached for

        def add_headers(response_headers, path, url):
            for name, value in headers(path).items():
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
            mimetypes={".webmanifest": "application/manifest+json"},
        )
        # Only the build's files; the marker of a finished folder is no static file.
        self.files.files.pop(STATIC_PREFIX + ".complete", None)

    def __call__(self, environ, start_response):
        if not environ.get("PATH_INFO", "").startswith(STATIC_PREFIX):
            return self.app(environ, start_response)
        if parse_qs(environ.get("QUERY_STRING", "")).get("v") == [self.version]:

            def immutable(status, headers, exc_info=None):
                headers = [(name, value) for name, value in headers if name.lower() not in VALIDATORS]
                return start_response(status, headers, exc_info)

            return self.files(environ, immutable)

        def check_again(status, headers, exc_info=None):
            headers = [(name, value) for name, value in headers if name.lower() != "cache-control"]
            headers.append(("Cache-Control", "no-cache"))
            return start_response(status, headers, exc_info)

        return self.files(environ, check_again)


class _KeptPages:
    """Pages in Brotli by their content: a page seen once is compressed quickly, a page
    seen again at Brotli's best, and kept (at most ``PAGES_KEPT``, the oldest dropped)."""

    def __init__(self, size: int):
        self.size = size
        self.lock = threading.Lock()
        self.seen: OrderedDict[bytes, None] = OrderedDict()
        self.kept: OrderedDict[bytes, bytes] = OrderedDict()

    def __call__(self, page: bytes) -> bytes:
        import brotli

        key = hashlib.sha1(page).digest()
        with self.lock:
            if (body := self.kept.get(key)) is not None:
                self.kept.move_to_end(key)
                return body
            again = self.seen.pop(key, False) is None
            if not again:
                self._remember(self.seen, key, None)
        if not again:
            return brotli.compress(page, quality=PAGE_BROTLI_QUALITY)
        body = brotli.compress(page, quality=11)
        with self.lock:
            self._remember(self.kept, key, body)
        return body

    def _remember(self, table: OrderedDict, key: bytes, value) -> None:
        table[key] = value
        table.move_to_end(key)
        while len(table) > self.size:
            table.popitem(last=False)


_page_in_brotli = _KeptPages(PAGES_KEPT)


def compress_page(response: Response) -> Response:
    """A whole page (GET, not an htmx fragment) in Brotli, when the browser takes it.

    Runs before Flask-Compress, which leaves an answer with a ``Content-Encoding``
    alone; like it, keeps the page's ETag apart per encoding and answers a
    matching ``If-None-Match`` with a 304 (the service worker asks for the page
    the browser has just loaded).
    """
    if (
        request.method != "GET"
        or response.status_code != 200
        or response.mimetype != "text/html"
        or response.is_streamed
        or "Content-Encoding" in response.headers
        or request.headers.get("HX-Request")
        or not request.accept_encodings["br"]
    ):
        return response
    response.set_data(_page_in_brotli(response.get_data()))
    response.headers["Content-Encoding"] = "br"
    response.vary.add("Accept-Encoding")
    etag, weak = response.get_etag()
    if etag and not weak:
        response.set_etag(f"{etag}:br")
    return response.make_conditional(request)


def init_app(app) -> None:
    """Static files in front of the app (compressed once), and compressed text responses."""
    from flask_compress import Compress

    from webapp.common.security import static_headers

    # Exports stream; CSV is compressed on the wire as JSON is.
    Compress(app).compress_mimetypes_set.add("text/csv")
    # After Flask-Compress's registration, so run before it (Flask runs them last first).
    app.after_request(compress_page)
    app.after_request(prepare_static)
    app.add_template_global(asset)
    version = _build_version(app.root_path)
    root = compressed_static(Path(app.static_folder), version)
    app.wsgi_app = StaticFiles(app.wsgi_app, root, version, static_headers)
