"""The phone set-up page: the shop's root certificate, how to trust it, the HTTPS address.

Answered on both ports. The certificate is Caddy's root, read from the data
folder; its SHA-256 fingerprint is shown so that the floor can check that the
file on the phone is the shop's.
"""

from __future__ import annotations

import io
from pathlib import Path

from flask import Blueprint, Response, abort, current_app, render_template, request, url_for

from webapp.https.front import ROOT_DOWNLOAD_NAME, fingerprint

bp = Blueprint("https", __name__)


def _front() -> dict | None:
    return current_app.config.get("HTTPS_FRONT")


def _root_pem() -> str | None:
    front = _front()
    if not front or not front.get("root_path"):
        return None
    path = Path(front["root_path"])
    try:
        return path.read_text(encoding="ascii")
    except OSError:
        return None


def _name_for_phones() -> str:
    """The name in this request's address if the certificate covers it and it is not loopback, else the first."""
    front = _front()
    host = request.host
    name = (host.rsplit(":", 1)[0] if not host.endswith("]") else host).strip("[]").lower()
    if name in front["names"] and name not in ("localhost", "127.0.0.1", "::1"):
        return name
    return front["names"][0]


def _address(scheme: str, name: str) -> str:
    front = _front()
    port = front[f"{scheme}_port"]
    host = f"[{name}]" if ":" in name else name
    return f"{scheme}://{host}/" if port == {"http": 80, "https": 443}[scheme] else f"{scheme}://{host}:{port}/"


@bp.get("/setup")
def setup():
    front = _front()
    if not front:
        return render_template("https/setup.html", front=None)
    name = _name_for_phones()
    pem = _root_pem()
    return render_template(
        "https/setup.html",
        front=front,
        app_url=_address("https", name),
        setup_url=_address("http", name) + "setup",
        root_fingerprint=fingerprint(pem) if pem else None,
        root_url=url_for("https.root_certificate") if pem else None,
        root_name=ROOT_DOWNLOAD_NAME,
        secure=request.is_secure,
    )


@bp.get(f"/setup/{ROOT_DOWNLOAD_NAME}")
def root_certificate():
    pem = _root_pem()
    if pem is None:
        abort(404)
    response = Response(pem, mimetype="application/x-x509-ca-cert")
    response.headers["Content-Disposition"] = f"attachment; filename={ROOT_DOWNLOAD_NAME}"
    response.headers["Cache-Control"] = "no-cache"
    return response


def _qr(url: str) -> Response:
    out = io.BytesIO()
    import segno  # only when a QR code is drawn: not at every start

    segno.make(url, error="m").save(out, kind="svg", scale=6, border=2, xmldecl=False, title=url)
    response = Response(out.getvalue(), mimetype="image/svg+xml")
    response.headers["Cache-Control"] = "no-cache"
    return response


@bp.get("/setup/setup-qr.svg")
def setup_qr():
    if not _front():
        abort(404)
    return _qr(_address("http", _name_for_phones()) + "setup")


@bp.get("/setup/app-qr.svg")
def app_qr():
    if not _front():
        abort(404)
    return _qr(_address("https", _name_for_phones()))
