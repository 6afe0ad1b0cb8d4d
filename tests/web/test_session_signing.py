"""The session cookie's serializer, made once per key, signs and reads as Flask's own does.

Reference: Flask's ``SecureCookieSessionInterface`` (https://flask.palletsprojects.com/en/stable/api/#flask.sessions.SecureCookieSessionInterface),
which makes a new serializer on every open and save.
"""

from __future__ import annotations

from flask import request
from flask.sessions import SecureCookieSessionInterface

from tests.conftest import csrf_from


def _cookie(client) -> str:
    cookie = client.get_cookie("inkfilm_session")
    assert cookie is not None
    return cookie.value


def test_the_cookie_reads_with_flasks_own_serializer_and_back(app, client):
    token = csrf_from(client)
    flasks = SecureCookieSessionInterface().get_signing_serializer(app)
    session = flasks.loads(_cookie(client))
    assert token and token in session.values()
    # A cookie Flask's own serializer signed is read by the app's.
    ours = app.session_interface.get_signing_serializer(app)
    assert ours is app.session_interface.get_signing_serializer(app)  # made once
    assert ours.loads(flasks.dumps({"kept": "yes"})) == {"kept": "yes"}


def test_a_new_secret_key_makes_a_new_serializer_and_refuses_the_old_cookie(app, client):
    csrf_from(client)
    old = _cookie(client)
    before = app.session_interface.get_signing_serializer(app)
    app.secret_key = b"another key of the shop, rotated"
    after = app.session_interface.get_signing_serializer(app)
    assert after is not before
    with app.test_request_context(headers={"Cookie": f"inkfilm_session={old}"}):
        assert dict(app.session_interface.open_session(app, request)) == {}
