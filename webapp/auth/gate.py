"""The one gate: may this request do this action, and if not, why not.

Actions are ``write`` (saving and editing) and ``supervise`` (deleting, the
bin, import). Which passcode an action needs follows from the passcodes set
today (``passcodes.needed``). Forms may carry the passcode in the same form
(so nothing typed is lost to a lock); API clients send it in the
``X-Inkfilm-Passcode`` header or rely on an unlocked session plus the CSRF
header. Forms and API ask the same questions here, in the same order.

A passcode is tried only against the roles that open the action, the one it
needs first (``passcodes.opening_roles``): a shop passcode on a save costs at
most one scrypt (none once verified), and a wrong one counts against each role
it could have been meant for.
"""

from __future__ import annotations

from flask import request

from webapp.auth import passcodes
from webapp.auth.csrf import CSRF_HEADER, csrf_ok
from webapp.common.errors import WebError

PASSCODE_HEADER = "X-Inkfilm-Passcode"
WHAT = {"write": "saving and editing", "supervise": "deleting, the bin and import"}


def _needs(action: str) -> str:
    return "supervisor" if passcodes.needed(action) == "supervisor" else "shop"


def _role_of(sent: str, field: str, action: str) -> str:
    """The role a passcode opens for ``action``; ``WebError`` for a wrong one (403) or while locked out (429)."""
    try:
        opening = passcodes.opening_roles(action)
        lower = tuple(role for role in ("shop", "supervisor") if role not in opening)
        role = passcodes.role_for_passcode(sent, opening, known=lower)
    except passcodes.Locked as exc:
        raise WebError(field, exc.message, 429, retry_after=exc.seconds) from None
    if role is None:
        raise WebError(field, f"that passcode is not right: {WHAT[action]} needs the {_needs(action)} passcode", 403)
    return role


def form_gate(action: str) -> tuple[str | None, int]:
    """For a page's form: ``(None, 200)`` if this browser may do ``action``; else a message and a status.

    A right passcode typed into the same form unlocks this browser on the way.
    """
    if passcodes.allowed(action, passcodes.session_role()):
        return None, 200
    sent = request.form.get("passcode", "")
    if not sent:
        return f"{WHAT[action].capitalize()} needs the {_needs(action)} passcode: type it here.", 403
    try:
        role = _role_of(sent, "passcode", action)
    except WebError as exc:
        return exc.message[0].upper() + exc.message[1:] + ".", exc.status
    passcodes.unlock(role)
    if not passcodes.allowed(action, role):
        return f"{WHAT[action].capitalize()} needs the supervisor passcode.", 403
    return None, 200


def api_gate(action: str) -> None:
    """For the JSON API: return if the sender may do ``action``; else raise ``WebError``."""
    from webapp.common.jsonapi import sends_json

    if request.method in ("POST", "PUT", "PATCH") and not sends_json():
        raise WebError(None, "send the body as JSON (Content-Type: application/json)", 415)
    if passcodes.allowed(action, "reader"):
        return  # no passcode guards this: a passcode sent anyway is not checked
    sent = request.headers.get(PASSCODE_HEADER)
    if sent is not None:
        role = _role_of(sent, PASSCODE_HEADER, action)
    else:
        role = passcodes.session_role()
        writing = request.method not in ("GET", "HEAD")
        if role != "reader" and writing and not csrf_ok(request.headers.get(CSRF_HEADER)):
            # An unlocked browser: the cookie alone could be a forged request's.
            raise WebError(CSRF_HEADER, "a write from an unlocked browser needs this session's CSRF token", 403)
    if not passcodes.allowed(action, role):
        raise WebError(
            PASSCODE_HEADER,
            f"{WHAT[action]} needs the {_needs(action)} passcode (send it in this header)",
            401 if sent is None else 403,
        )
