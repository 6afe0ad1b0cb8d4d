"""The app shell: the unit preference, the offline page and the service worker.

The service worker caches the calculator pages (from the calculator registry)
and the static files, so the installed app opens at once and still opens when
the shop network drops.
"""

from __future__ import annotations

from flask import Blueprint, make_response, redirect, render_template, request

from calc.display import SYSTEMS
from webapp.calculators import PAGES
from webapp.common.assets import ONE_YEAR, asset, build_version
from webapp.common.preference import UNITS_COOKIE, current_system
from webapp.common.urls import safe_next
from webapp.shell.offline_data import offline_bundle, offline_document

bp = Blueprint("shell", __name__)

STATIC_FILES = (
    "vendor/htmx-2.0.11.min.js",
    "css/inkfilm.css",
    "css/print.css",
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
    accepted = request.accept_encodings
    encoding = next((name for name in ("br", "gzip") if accepted[name]), None)
    response = make_response(bundle.encoded[encoding] if encoding else bundle.body)
    response.mimetype = "text/javascript"
    if encoding:
        response.headers["Content-Encoding"] = encoding
    response.vary.add("Accept-Encoding")
    if request.args.get("v") == bundle.version:
        response.headers["Cache-Control"] = f"public, max-age={ONE_YEAR}, immutable"
    else:
        response.headers["Cache-Control"] = "no-cache"
    return response


@bp.get("/sw.js")
def service_worker():
    shell = precached_pages() + [asset(name) for name in STATIC_FILES]
    body = render_template(
        "sw.js",
        version=build_version(),
        shell=shell,
        shell_pages=shell_pages(),
        offline_calc=offline_calc_url(),
    )
    response = make_response(body)
    response.mimetype = "text/javascript"
    response.headers["Cache-Control"] = "no-cache"
    return response


def init_app(app) -> None:
    app.register_blueprint(bp)
