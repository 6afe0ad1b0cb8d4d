"""CSRF tokens: one per session, checked on every state-changing form.

Every state-changing form carries the session's token in ``csrf_token``; API
writes that rely on the session cookie carry it in the ``X-CSRF-Token``
header (API writes that send a passcode header need none: a page on another
site cannot set that header without a preflight the server refuses).
"""

from __future__ import annotations

import hmac
import secrets

from flask import Response, abort, request, session

CSRF_HEADER = "X-CSRF-Token"
CSRF_FIELD = "csrf_token"


def csrf_token() -> str:
    """This session's CSRF token (made on first use)."""
    token = session.get("csrf")
    if not isinstance(token, str) or len(token) < 32:
        token = secrets.token_urlsafe(32)
        session["csrf"] = token
        session.permanent = True
    return token


def csrf_ok(sent: str | None) -> bool:
    token = session.get("csrf")
    return isinstance(token, str) and isinstance(sent, str) and hmac.compare_digest(token.encode(), sent.encode())


def check_form_csrf() -> None:
    """Refuse (400) a state-changing form request without this session's token."""
    if request.method in ("POST", "PUT", "PATCH", "DELETE") and not csrf_ok(request.form.get(CSRF_FIELD)):
        abort(
            Response(
                "This form was out of date or came from another page, so nothing was changed. "
                "Go back, reload the page and try again.",
                status=400,
                mimetype="text/plain",
            )
        )


def protect(blueprint) -> None:
    """Check the token before every state-changing form post to ``blueprint``'s pages.

    The calculator pages post forms too, but they only work numbers out and
    change nothing: they need no token.
    """
    blueprint.before_request(check_form_csrf)


def init_app(app) -> None:
    # A global, not a context variable: imported macros see it too.
    app.add_template_global(csrf_token)
