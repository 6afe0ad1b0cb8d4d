"""HTTPS for the shop network: the phone set-up page and the app's side of the Caddy front.

``inkfilm serve`` runs Caddy in front of waitress (``webapp.https.front``) and
puts what phones need to know in ``app.config["HTTPS_FRONT"]``. Then:

- the forwarded headers (client address, scheme, host) are trusted from
  loopback only, where Caddy connects from (werkzeug's ``ProxyFix``);
- a request that came over the plain HTTP port gets only the set-up page, its
  certificate, QR codes and static files; ``/`` opens the set-up page and every
  other address is redirected to the same one over HTTPS;
- cookies get ``Secure`` whenever the request came over HTTPS (decided per
  request, so a plain loopback server, as in tests, still keeps sessions).

Without ``HTTPS_FRONT`` (``--no-https``, or behind the shop's own proxy) only
the cookie rule applies and ``/setup`` says that HTTPS is handled elsewhere.
"""

from __future__ import annotations

from flask import redirect, request
from flask.sessions import SecureCookieSessionInterface
from werkzeug.middleware.proxy_fix import ProxyFix

# What the plain HTTP port answers; everything else is sent to HTTPS.
PLAIN_ENDPOINTS = {"https.setup", "https.root_certificate", "https.setup_qr", "https.app_qr", "static"}
LOOPBACK = ("127.0.0.1", "::1")


def init_app(app) -> None:
    from webapp.https import views

    app.register_blueprint(views.bp)
    app.session_interface = SecureWhenHttps()
    app.after_request(_secure_cookies)
    if app.config.get("HTTPS_FRONT"):
        app.wsgi_app = behind_front(app.wsgi_app)
        app.before_request(_plain_port_guard)


def behind_front(wsgi_app):
    """``wsgi_app`` with Caddy's forwarded headers applied, for requests from loopback only."""
    fixed = ProxyFix(wsgi_app, x_for=1, x_proto=1, x_host=1)

    def app(environ, start_response):
        if environ.get("REMOTE_ADDR") in LOOPBACK:
            return fixed(environ, start_response)
        return wsgi_app(environ, start_response)

    return app


class SecureWhenHttps(SecureCookieSessionInterface):
    """The session cookie is ``Secure`` when this request came over HTTPS."""

    def get_cookie_secure(self, app) -> bool:
        return request.is_secure or super().get_cookie_secure(app)

    def get_signing_serializer(self, app):
        """Flask's serializer for the cookie, made once per key instead of twice per request.

        Flask builds a new one on every open and save (and itsdangerous tries
        the JSON serializer out each time); it keeps nothing between calls, so
        one made for the same keys signs and reads alike.
        """
        keys = (app.secret_key, tuple(app.config.get("SECRET_KEY_FALLBACKS") or ()))
        made = getattr(self, "_signing", None)
        if made is None or made[0] != keys:
            made = (keys, super().get_signing_serializer(app))
            self._signing = made
        return made[1]


def _secure_cookies(response):
    if not request.is_secure:
        return response
    cookies = response.headers.getlist("Set-Cookie")
    if cookies:
        response.headers.remove("Set-Cookie")
        for cookie in cookies:
            if "; secure" not in cookie.lower():
                cookie += "; Secure"
            response.headers.add("Set-Cookie", cookie)
    return response


def _plain_port_guard():
    from flask import current_app

    if request.is_secure or request.endpoint in PLAIN_ENDPOINTS:
        return None
    if request.path == "/":
        return redirect("/setup", code=302)
    front = current_app.config["HTTPS_FRONT"]
    name = request.host.rsplit(":", 1)[0] if not request.host.endswith("]") else request.host
    name = name.strip("[]").lower()
    if name not in front["names"]:
        name = front["names"][0]
    host = f"[{name}]" if ":" in name else name
    path = request.full_path if request.query_string else request.path
    # 307: the same method and body; not permanent, as --no-https may come later.
    return redirect(f"https://{host}:{front['https_port']}{path}", code=307)
