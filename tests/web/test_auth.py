"""Who may write: passcodes, the session cookie, CSRF tokens, slowing down guesses, escaping."""

from __future__ import annotations

import json
import os
import stat
import urllib.error
import urllib.request

import pytest

from tests.bodies import FILM
from tests.conftest import csrf_from, start_server
from webapp import create_app
from webapp.auth import passcodes as auth

URL = "/api/v1/snippets"
SHOP = "Shop-4711-passcode"
SUPERVISOR = "Boss-9090-passcode"
XSS = '<script>alert("ink")</script><img src=x onerror=alert(1)>'


@pytest.fixture
def locked_app(tmp_path):
    return create_app(
        {
            "TESTING": True,
            "DATA_DIR": str(tmp_path / "data"),
            "SHOP_PASSCODE": SHOP,
            "SUPERVISOR_PASSCODE": SUPERVISOR,
        }
    )


@pytest.fixture
def locked(locked_app):
    return locked_app.test_client()


def body(title="Station 3"):
    return {"kind": "film", "inputs": FILM, "title": title}


def token(client) -> str:
    return csrf_from(client)


def unlock(client, passcode):
    response = client.post("/unlock", data={"csrf_token": token(client), "passcode": passcode, "next": "/snippets"})
    assert response.status_code == 303, response.get_data(as_text=True)
    return response


# --- hashing and set-up -------------------------------------------------------------------


def test_passcodes_are_kept_only_as_salted_hashes(locked_app):
    assert "SHOP_PASSCODE" not in locked_app.config
    assert "SUPERVISOR_PASSCODE" not in locked_app.config
    stored = locked_app.config["SHOP_PASSCODE_HASH"]
    assert stored.startswith("scrypt$") and SHOP not in stored
    assert auth.hash_passcode(SHOP) != auth.hash_passcode(SHOP)
    assert auth.check_passcode(SHOP, stored)
    assert not auth.check_passcode(SHOP + "x", stored)
    assert not auth.check_passcode(SHOP, "garbage")


def test_the_secret_key_is_made_once_and_kept_private(tmp_path):
    first = create_app({"DATA_DIR": str(tmp_path)})
    second = create_app({"DATA_DIR": str(tmp_path)})
    assert first.secret_key == second.secret_key
    assert len(first.secret_key) >= 32
    assert stat.S_IMODE(os.stat(tmp_path / "secret_key").st_mode) == 0o600


def test_an_unlock_survives_a_restart_but_not_a_new_passcode(tmp_path):
    data = str(tmp_path / "data")
    client = create_app({"DATA_DIR": data, "SHOP_PASSCODE": SHOP}).test_client()
    unlock(client, SHOP)
    cookie = client.get_cookie("inkfilm_session").value
    csrf = token(client)

    def can_write(passcode):
        again = create_app({"DATA_DIR": data, "SHOP_PASSCODE": passcode}).test_client()
        again.set_cookie("inkfilm_session", cookie)
        return again.post(URL, json=body(), headers={"X-CSRF-Token": csrf}).status_code

    assert can_write(SHOP) == 201
    assert can_write("a new one") == 401


# --- the API -------------------------------------------------------------------------------------


def test_api_writes_need_the_passcode_header(locked):
    assert locked.get(URL).status_code == 200
    message = locked.post(URL, json=body()).get_json()["error"]
    assert message["field"] == "X-Inkfilm-Passcode" and "shop passcode" in message["message"]
    assert locked.post(URL, json=body()).status_code == 401
    assert locked.post(URL, json=body(), headers={"X-Inkfilm-Passcode": "wrong"}).status_code == 403
    created = locked.post(URL, json=body(), headers={"X-Inkfilm-Passcode": SHOP})
    assert created.status_code == 201
    url = f"{URL}/{created.get_json()['id']}"
    assert locked.put(url, json={"version": 1, "notes": "x"}).status_code == 401
    assert locked.put(url, json={"version": 1, "notes": "x"}, headers={"X-Inkfilm-Passcode": SHOP}).status_code == 200


def test_deleting_the_bin_and_import_need_the_supervisor(locked):
    shop = {"X-Inkfilm-Passcode": SHOP}
    boss = {"X-Inkfilm-Passcode": SUPERVISOR}
    url = f"{URL}/{locked.post(URL, json=body(), headers=shop).get_json()['id']}"
    assert locked.delete(url, headers=shop).status_code == 403
    assert "supervisor" in locked.delete(url, headers=shop).get_json()["error"]["message"]
    assert locked.get(f"{URL}/bin", headers=shop).status_code == 403
    assert locked.post(f"{URL}/import", json={"snippets": []}, headers=shop).status_code == 403
    assert locked.delete(url, headers=boss).status_code == 200
    assert locked.get(f"{URL}/bin", headers=boss).status_code == 200
    assert locked.post(f"{url}/restore", json={}, headers=shop).status_code == 403
    assert locked.post(f"{url}/restore", json={}, headers=boss).status_code == 200
    assert locked.post(f"{URL}/import", json={"snippets": []}, headers=boss).status_code == 200


def test_with_only_a_supervisor_passcode_the_floor_saves_freely(tmp_path):
    client = create_app({"TESTING": True, "DATA_DIR": str(tmp_path), "SUPERVISOR_PASSCODE": SUPERVISOR}).test_client()
    created = client.post(URL, json=body())
    assert created.status_code == 201
    assert client.delete(f"{URL}/{created.get_json()['id']}").status_code == 401
    page = client.get("/settings").get_data(as_text=True)
    assert "Saving and editing: anyone" in page


def test_an_unlocked_browser_writing_to_the_api_needs_the_csrf_header(locked):
    unlock(locked, SHOP)
    refused = locked.post(URL, json=body())
    assert refused.status_code == 403
    assert refused.get_json()["error"]["field"] == "X-CSRF-Token"
    assert locked.post(URL, json=body(), headers={"X-CSRF-Token": "not-it"}).status_code == 403
    assert locked.post(URL, json=body(), headers={"X-CSRF-Token": token(locked)}).status_code == 201


def test_a_forged_or_tampered_cookie_is_refused(locked_app, locked, tmp_path):
    # A cookie signed with another key, saying "supervisor" for today's passcode.
    other = create_app({"DATA_DIR": str(tmp_path / "elsewhere"), "SECRET_KEY": "guessed"})
    with other.test_request_context():
        for name in ("SUPERVISOR_PASSCODE_HASH", "SUPERVISOR_PASSCODE_TAG"):
            other.config[name] = locked_app.config[name]
        serializer = other.session_interface.get_signing_serializer(other)
        forged = serializer.dumps(
            {"unlocked": {"role": "supervisor", "key": auth._fingerprint("supervisor"), "until": 2e9}, "csrf": "c" * 40}
        )
    locked.set_cookie("inkfilm_session", forged)
    assert locked.post(URL, json=body(), headers={"X-CSRF-Token": "c" * 40}).status_code == 401
    response = locked.post(
        "/snippets", data={"csrf_token": "c" * 40, "kind": "film", "inputs": json.dumps(FILM), "title": "x"}
    )
    assert response.status_code == 400

    unlock(locked, SHOP)
    real = locked.get_cookie("inkfilm_session").value
    payload, rest = real.split(".", 1)
    locked.set_cookie("inkfilm_session", payload[:-2] + "xx." + rest)
    assert locked.post(URL, json=body(), headers={"X-CSRF-Token": token(locked)}).status_code == 401
    assert locked.get(URL).get_json()["total"] == 0


def test_the_session_cookie_is_httponly_and_samesite_strict(locked):
    cookie = unlock(locked, SHOP).headers.getlist("Set-Cookie")
    session_cookie = next(c for c in cookie if c.startswith("inkfilm_session="))
    assert "HttpOnly" in session_cookie
    assert "SameSite=Strict" in session_cookie


# --- slowing down guesses ----------------------------------------------------------------------


def test_repeated_wrong_passcodes_lock_the_address_out_for_a_growing_while():
    now = [100.0]
    throttle = auth.Throttle(free_tries=3, max_lock=300, clock=lambda: now[0])
    for _ in range(3):
        assert throttle.wait("10.0.0.5") == 0
        throttle.failed("10.0.0.5")
    assert throttle.wait("10.0.0.5") == 0
    throttle.failed("10.0.0.5")
    assert throttle.wait("10.0.0.5") == 1
    assert throttle.wait("10.0.0.6") == 0
    now[0] += 1
    throttle.failed("10.0.0.5")
    assert throttle.wait("10.0.0.5") == 2
    for _ in range(20):
        throttle.failed("10.0.0.5")
    assert throttle.wait("10.0.0.5") == 300
    throttle.succeeded("10.0.0.5")
    assert throttle.wait("10.0.0.5") == 0


def test_the_api_answers_429_while_an_address_is_locked_out(locked):
    wrong = {"X-Inkfilm-Passcode": "guess"}
    statuses = [locked.post(URL, json=body(), headers=wrong).status_code for _ in range(4)]
    assert statuses == [403, 403, 403, 403]
    refused = locked.post(URL, json=body(), headers={"X-Inkfilm-Passcode": SHOP})
    assert refused.status_code == 429
    assert int(refused.headers["Retry-After"]) >= 1
    assert "try again" in refused.get_json()["error"]["message"]


def test_the_unlock_page_answers_429_while_locked_out(locked):
    csrf = token(locked)
    for _ in range(4):
        assert locked.post("/unlock", data={"csrf_token": csrf, "passcode": "guess"}).status_code == 403
    response = locked.post("/unlock", data={"csrf_token": csrf, "passcode": SHOP})
    assert response.status_code == 429
    assert "try again in" in response.get_data(as_text=True)


# --- pages -----------------------------------------------------------------------------------------


def test_a_save_form_without_the_passcode_keeps_what_was_typed(locked):
    csrf = token(locked)
    form = {"csrf_token": csrf, "kind": "film", "inputs": json.dumps(FILM), "title": "Typed on the floor"}
    response = locked.post("/snippets", data=form)
    assert response.status_code == 403
    page = response.get_data(as_text=True)
    assert "needs the shop passcode" in page
    assert 'value="Typed on the floor"' in page
    assert locked.post("/snippets", data={**form, "passcode": "wrong"}).status_code == 403
    saved = locked.post("/snippets", data={**form, "passcode": SHOP})
    assert saved.status_code == 303
    # The passcode unlocked this browser: the next save needs no passcode (not an exact
    # duplicate, which would ask first).
    assert locked.post("/snippets", data={**form, "title": "Typed again"}).status_code == 303
    assert locked.get(URL).get_json()["total"] == 2


@pytest.mark.parametrize("field", ["csrf_token", None])
def test_forms_without_the_right_csrf_token_are_refused(client, field):
    token(client)
    form = {"kind": "film", "inputs": json.dumps(FILM), "title": "x"}
    if field:
        form[field] = "wrong-token-" + "x" * 30
    for path in ("/snippets", "/snippets/new", "/unlock", "/lock", "/snippets/import"):
        assert client.post(path, data=form).status_code == 400, path
    assert client.get(URL).get_json()["total"] == 0


def test_deleting_from_a_page_needs_the_supervisor_passcode(locked):
    created = locked.post(URL, json=body(), headers={"X-Inkfilm-Passcode": SHOP}).get_json()
    csrf = token(locked)
    page = f"/snippets/{created['id']}"
    assert locked.post(f"{page}/delete", data={"csrf_token": csrf}).status_code == 403
    assert locked.post(f"{page}/delete", data={"csrf_token": csrf, "passcode": SHOP}).status_code == 403
    assert locked.post(f"{page}/delete", data={"csrf_token": csrf, "passcode": SUPERVISOR}).status_code == 303
    assert locked.get(page).status_code == 404
    assert locked.get("/snippets/bin").status_code == 200


def test_settings_says_the_floor_can_write_freely_without_passcodes(client):
    page = client.get("/settings").get_data(as_text=True)
    assert "the floor can write freely" in page


def test_settings_shows_what_is_locked(locked):
    page = locked.get("/settings").get_data(as_text=True)
    assert "Saving and editing: the shop passcode" in page
    assert "This device is locked" in page
    unlock(locked, SUPERVISOR)
    assert "unlocked for supervisors" in locked.get("/settings").get_data(as_text=True)
    locked.post("/lock", data={"csrf_token": token(locked)})
    assert "This device is locked" in locked.get("/settings").get_data(as_text=True)


def test_unlock_only_redirects_within_the_site(locked):
    response = locked.post(
        "/unlock", data={"csrf_token": token(locked), "passcode": SHOP, "next": "//elsewhere.example/x"}
    )
    assert response.headers["Location"] == "/settings"


# --- escaping and never showing the passcode ------------------------------------------------------------


def test_script_in_titles_notes_and_tags_comes_back_escaped(client):
    created = client.post(
        URL,
        json={**body(XSS), "notes": XSS, "job_number": "<b>1</b>", "press": "<i>N1</i>", "tags": ["<u>x</u>"]},
    ).get_json()
    client.put(f"{URL}/{created['id']}", json={"version": 1, "notes": XSS + " again"})
    conflict = client.post(
        f"/snippets/{created['id']}/edit",
        # Both changed the notes differently: the merge page shows both, escaped.
        data={"csrf_token": token(client), "version": "1", "title": XSS, "notes": XSS + " mine"},
    )
    assert conflict.status_code == 409
    pages = [
        client.get("/snippets").get_data(as_text=True),
        client.get("/snippets?q=script").get_data(as_text=True),
        client.get(f"/snippets/{created['id']}").get_data(as_text=True),
        client.get(f"/snippets/{created['id']}/edit").get_data(as_text=True),
        conflict.get_data(as_text=True),
    ]
    for page in pages:
        assert "<script>alert" not in page
        assert "<img src=x" not in page
        assert "<b>1</b>" not in page and "<i>N1</i>" not in page and "<u>x</u>" not in page
    assert "&lt;script&gt;alert(&#34;ink&#34;)&lt;/script&gt;" in pages[2]


def test_the_passcode_never_appears_in_pages(locked):
    unlock(locked, SHOP)
    csrf = token(locked)
    locked.post("/snippets", data={"csrf_token": csrf, "kind": "film", "inputs": json.dumps(FILM), "title": "x"})
    responses = [
        locked.get(path)
        for path in ("/settings", "/snippets", "/snippets/1", "/snippets/1/edit", "/snippets/import", "/snippets/bin")
    ]
    responses.append(locked.post("/unlock", data={"csrf_token": csrf, "passcode": SUPERVISOR + "x"}))
    for response in responses:
        text = response.get_data(as_text=True)
        assert SHOP not in text and SUPERVISOR not in text


def test_the_passcode_never_appears_in_the_server_log(tmp_path):
    process, base = start_server(
        tmp_path / "data",
        "--shop-passcode",
        SHOP,
        env={"INKFILM_SUPERVISOR_PASSCODE": SUPERVISOR},
    )
    try:
        for passcode in (SHOP, SUPERVISOR, SHOP + "-wrong", "x" * 500):
            request = urllib.request.Request(
                base + URL,
                data=json.dumps(body()).encode(),
                headers={"Content-Type": "application/json", "X-Inkfilm-Passcode": passcode},
            )
            try:
                urllib.request.urlopen(request, timeout=10).close()
            except urllib.error.HTTPError as exc:
                exc.close()
        with urllib.request.urlopen(base + "/settings", timeout=10) as response:
            page = response.read().decode()
        assert "Saving and editing: the shop passcode" in page
    finally:
        process.terminate()
        output = process.communicate(timeout=10)[0].decode()
    assert "passcodes set: shop, supervisor" in output
    assert SHOP not in output and SUPERVISOR not in output
    assert SHOP not in page
