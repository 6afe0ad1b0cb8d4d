"""The app shell: the unit preference, the offline page and the service worker.

The service worker caches the calculator pages (from the calculator registry)
and the static files, so the installed app opens at once and still opens when
the shop network drops.
"""

from __future__ import annotations

from functools import lru_cache

import rjsmin
from flask import Blueprint, make_response, redirect, render_template, request

from calc.display import SYSTEMS
from webapp.calculators import PAGES
from webapp.common.assets import ONE_YEAR, asset, build_version, compressed_forms
from webapp.common.preference import UNITS_COOKIE, current_system
from webapp.common.security import worker_script
from webapp.common.urls import safe_next
from webapp.shell.offline_data import offline_bundle, offline_document

bp = Blueprint("shell", __name__)

# The static files the worker keeps when it installs: what every page of the
# shell links (the page has just loaded them, so they come from the browser's
# cache, not over the wire). Any other static file is kept when first used
# (``print.css``, which only the Job ink pages link, for printing).
STATIC_FILES = (
    "vendor/htmx-2.0.11.min.js",
    "css/inkfilm.css",
    "js/inkfilm.js",
    "inkfilm.webmanifest",
    "icons/inkfilm.svg",
)


def shell_pages() -> list[str]:
    """The pages the installed app opens without the server (once fetched)."""
    return [spec.path for spec in PAGES] + ["/offline", "/outbox"]


def precached_pages() -> list[str]:
    """The pages the app fetches when it installs: the quick ones and the offline page.

    The other calculator pages are kept in the cache when first opened, so the
    first load stays within its budget however many calculators there are; so
    is ``/outbox`` (until then the offline page lists the waiting saves).
    """
    return [spec.path for spec in PAGES if spec.precache] + ["/offline"]


def offline_calc_url() -> str:
    """The phone's offline code with its data (one script, versioned by its content)."""
    return f"/offline-calc.js?v={offline_bundle().version}"


@bp.app_context_processor
def unit_preference() -> dict:
    return {"unit_system": current_system()}


@bp.post("/units")
def set_units():
    """Remember metric or imperial on this device (a cookie), then go back (plain form post)."""
    system = request.form.get("system", "metric")
    response = redirect(safe_next(request.form.get("next")), code=303)
    if system in SYSTEMS:
        response.set_cookie(UNITS_COOKIE, system, max_age=ONE_YEAR, samesite="Lax", httponly=False)
    return response


@bp.get("/offline")
def offline():
    return render_template("offline.html")


@bp.get("/offline-data.json")
def offline_data():
    """What the phone needs to work out the converter and the film chain itself (see offline_data.py)."""
    response = make_response(offline_document()[0])
    response.mimetype = "application/json"
    response.headers["Cache-Control"] = "no-cache"
    return response


@bp.get("/offline-calc.js")
def offline_calc():
    """The offline code and document in one script for the worker to import (see offline_data.py)."""
    bundle = offline_bundle()
    response = _script(bundle.body, bundle.encoded)
    if request.args.get("v") == bundle.version:
        response.headers["Cache-Control"] = f"public, max-age={ONE_YEAR}, immutable"
    else:
        response.headers["Cache-Control"] = "no-cache"
    return response


def _script(body: bytes, encoded: dict[str, bytes]):
    """A script in the best of its compressed forms the browser takes."""
    accepted = request.accept_encodings
    encoding = next((name for name in ("br", "gzip") if accepted[name] and name in encoded), None)
    response = make_response(encoded[encoding] if encoding else body)
    response.mimetype = "text/javascript"
    if encoding:
        response.headers["Content-Encoding"] = encoding
    response.vary.add("Accept-Encoding")
    return response


@lru_cache(maxsize=4)
def _worker_body(version: str, shell: tuple, pages: tuple, offline_calc: str) -> tuple[bytes, dict[str, bytes]]:
    """The worker's script of a build, without comments and spaces, and compressed once:
    it is the same for every request of a build, and part of every first load."""
    body = render_template(
        "sw.js", version=version, shell=list(shell), shell_pages=list(pages), offline_calc=offline_calc
    )
    body = rjsmin.jsmin(body).encode("utf-8")
    return body, compressed_forms(body)


@bp.get("/sw.js")
def service_worker():
    shell = tuple(precached_pages() + [asset(name) for name in STATIC_FILES])
    body, encoded = _worker_body(build_version(), shell, tuple(shell_pages()), offline_calc_url())
    response = worker_script(_script(body, encoded))
    response.headers["Cache-Control"] = "no-cache"
    # The browser checks the worker for a new build on navigations: unchanged, that is a 304.
    response.add_etag()
    return response.make_conditional(request)


def init_app(app) -> None:
    app.register_blueprint(bp)
