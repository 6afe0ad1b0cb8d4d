"""A save sent twice is kept once: ``client_id`` on ``POST /api/v1/snippets`` and the page form.

The phone's outbox sends a save again whenever it cannot tell whether the
server got it (the answer was lost with the Wi-Fi), so the create must be
idempotent: the same id with the same contents is the same snippet (200 with
it), the same id with other contents is refused (409 naming ``client_id``),
under the same passcode and CSRF rules as every other write.
"""

from __future__ import annotations

import contextlib
import json
import sqlite3
import threading
import uuid

import pytest

from tests.bodies import FILM
from tests.conftest import csrf_from
from webapp import create_app
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import store

URL = "/api/v1/snippets"
SHOP = "Shop-4711-passcode"


def body(client_id, title="Station 3, outbox", **extra):
    return {"kind": "film", "inputs": FILM, "title": title, "client_id": client_id, **extra}


def total(client) -> int:
    return client.get(URL).get_json()["total"]


def assert_error(response, status, field):
    assert response.status_code == status, response.get_data(as_text=True)
    assert response.get_json()["error"]["field"] == field
    assert response.get_json()["error"]["message"]
    return response.get_json()


# --- the API --------------------------------------------------------------------------------------------


def test_the_same_id_twice_is_one_snippet_and_the_repeat_answers_200_with_it(client):
    client_id = str(uuid.uuid4())
    first = client.post(URL, json=body(client_id, tags="outbox"))
    assert first.status_code == 201
    again = client.post(URL, json=body(client_id, tags="outbox"))
    assert again.status_code == 200
    assert again.get_json() == first.get_json()
    assert again.headers["Location"] == first.headers["Location"]
    assert total(client) == 1


def test_the_id_is_read_in_either_case(client):
    client_id = str(uuid.uuid4())
    assert client.post(URL, json=body(client_id.upper())).status_code == 201
    assert client.post(URL, json=body(client_id)).status_code == 200
    assert total(client) == 1


@pytest.mark.parametrize(
    "change",
    [
        {"title": "Another title"},
        {"inputs": {**FILM, "anilox_volume": "5 BCM/in2"}},
        {"kind": "equivalents", "inputs": {"quantity": "4.5 BCM/in2"}},
        {"notes": "a note the first one did not have"},
    ],
)
def test_the_same_id_with_other_contents_is_a_409_naming_client_id(client, change):
    client_id = str(uuid.uuid4())
    first = client.post(URL, json=body(client_id)).get_json()
    answer = assert_error(client.post(URL, json={**body(client_id), **change}), 409, "client_id")
    assert answer["current"] == first
    assert "another save" in answer["error"]["message"]
    assert total(client) == 1
    assert client.get(f"{URL}/{first['id']}").get_json() == first  # nothing overwritten


def test_a_repeat_after_an_edit_answers_with_the_edited_snippet(client):
    client_id = str(uuid.uuid4())
    first = client.post(URL, json=body(client_id)).get_json()
    edited = client.put(f"{URL}/{first['id']}", json={"version": 1, "title": "Renamed on the tablet"}).get_json()
    again = client.post(URL, json=body(client_id))
    assert again.status_code == 200
    assert again.get_json() == edited
    assert total(client) == 1


def test_a_repeat_after_the_snippet_went_to_the_bin_saves_no_second_one(client):
    client_id = str(uuid.uuid4())
    first = client.post(URL, json=body(client_id)).get_json()
    client.delete(f"{URL}/{first['id']}")
    again = client.post(URL, json=body(client_id))
    assert again.status_code == 200
    assert again.get_json()["id"] == first["id"]
    assert again.get_json()["deleted_at"] is not None
    assert total(client) == 0


def test_without_an_id_every_save_is_a_new_snippet(client):
    assert client.post(URL, json={"kind": "film", "inputs": FILM, "title": "x"}).status_code == 201
    assert client.post(URL, json={"kind": "film", "inputs": FILM, "title": "x", "client_id": None}).status_code == 201
    assert client.post(URL, json={"kind": "film", "inputs": FILM, "title": "x", "client_id": ""}).status_code == 201
    assert total(client) == 3


@pytest.mark.parametrize(
    "client_id",
    ["not-a-uuid", "3f2b8c1e4d5a4b6c8d7e9f0a1b2c3d4e", "{3f2b8c1e-4d5a-4b6c-8d7e-9f0a1b2c3d4e}", 12, ["x"], "é" * 36],
)
def test_a_bad_id_is_a_400_naming_client_id_and_saves_nothing(client, client_id):
    assert_error(client.post(URL, json=body(client_id)), 400, "client_id")
    assert total(client) == 0


def test_a_bad_input_with_an_id_is_a_400_and_the_id_stays_free(client):
    client_id = str(uuid.uuid4())
    bad = body(client_id, inputs={**FILM, "anilox_volume": "4 apples"})
    assert_error(client.post(URL, json=bad), 400, "inputs.anilox_volume")
    assert client.post(URL, json=body(client_id)).status_code == 201  # fixed and sent again under the same id


# --- passcodes and CSRF, as for every write -----------------------------------------------------------------


@pytest.fixture
def locked(tmp_path):
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data"), "SHOP_PASSCODE": SHOP}).test_client()


def test_with_a_shop_passcode_a_save_and_its_repeat_need_it(locked):
    client_id = str(uuid.uuid4())
    assert_error(locked.post(URL, json=body(client_id)), 401, "X-Inkfilm-Passcode")
    assert_error(
        locked.post(URL, json=body(client_id), headers={"X-Inkfilm-Passcode": "wrong"}), 403, "X-Inkfilm-Passcode"
    )
    assert total(locked) == 0
    assert locked.post(URL, json=body(client_id), headers={"X-Inkfilm-Passcode": SHOP}).status_code == 201
    assert_error(locked.post(URL, json=body(client_id)), 401, "X-Inkfilm-Passcode")  # the repeat is a write too
    assert locked.post(URL, json=body(client_id), headers={"X-Inkfilm-Passcode": SHOP}).status_code == 200
    assert total(locked) == 1


def test_an_unlocked_browser_sends_the_csrf_token_with_the_repeat(locked):
    token = csrf_from(locked)
    unlocked = locked.post("/unlock", data={"csrf_token": token, "passcode": SHOP, "next": "/snippets"})
    assert unlocked.status_code == 303
    client_id = str(uuid.uuid4())
    assert_error(locked.post(URL, json=body(client_id)), 403, "X-CSRF-Token")
    assert locked.post(URL, json=body(client_id), headers={"X-CSRF-Token": token}).status_code == 201
    assert locked.post(URL, json=body(client_id), headers={"X-CSRF-Token": token}).status_code == 200
    assert total(locked) == 1


def test_a_form_post_cannot_reach_the_api(client):
    # A page on another site can post a form, never JSON: the outbox's API create is not open to it.
    response = client.post(URL, data={"kind": "film", "title": "x", "client_id": str(uuid.uuid4())})
    assert response.status_code == 415
    assert total(client) == 0


# --- the store, at once from two connections ------------------------------------------------------------------


@pytest.fixture
def path(tmp_path):
    path = tmp_path / db.FILENAME
    db.migrate(path)
    return path


def test_the_same_id_sent_at_once_from_many_connections_is_kept_once(path):
    client_id = str(uuid.uuid4())
    answers, barrier = [], threading.Barrier(6)

    def send():
        with contextlib.closing(db.connect(path)) as conn:
            barrier.wait()
            answers.append(store.create_once(conn, client_id, "film", FILM, {"title": "Twice"}, CALCULATIONS))

    threads = [threading.Thread(target=send) for _ in range(6)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert sorted(created for _snippet, created in answers) == [False] * 5 + [True]
    assert len({snippet["id"] for snippet, _created in answers}) == 1
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("SELECT count(*) FROM snippet").fetchone()[0] == 1


def test_a_repeat_is_found_before_todays_core_is_asked(path):
    # A save made under an older build is sent again after an update: it is the snippet it was.
    client_id = str(uuid.uuid4())
    with contextlib.closing(db.connect(path)) as conn:
        first, _ = store.create_once(conn, client_id, "film", FILM, {"title": "Old build"}, CALCULATIONS)

        def refusing(_inputs):
            raise AssertionError("a repeat must not be worked out again")

        again, created = store.create_once(
            conn, client_id, "film", FILM, {"title": "Old build"}, {**CALCULATIONS, "film": refusing}
        )
    assert (again, created) == (first, False)


# --- the schema: a file of the version before -------------------------------------------------------------------


def test_migrating_a_file_of_the_version_before_keeps_its_snippets_and_adds_the_unique_id(tmp_path):
    path = tmp_path / db.FILENAME
    before = db.version_before("snippet_client_id")
    with contextlib.closing(sqlite3.connect(path)) as old:
        for number in range(before):
            for statement in db._statements(db.MIGRATIONS[number]):
                old.execute(statement)
        old.execute(f"PRAGMA user_version = {before}")
        old.execute(
            "INSERT INTO snippet (uid, kind, title, inputs, results, created_at, updated_at)"
            " VALUES (?, 'film', 'Saved before the outbox', ?, '{}', '2025-01-02T03:04:05Z', '2025-01-02T03:04:05Z')",
            ("b" * 32, json.dumps(FILM)),
        )
        old.commit()
    assert db.migrate(path) == before
    client_id = str(uuid.uuid4())
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION
        kept = store.get(conn, 1)
        assert kept["title"] == "Saved before the outbox"
        assert conn.execute("SELECT client_id FROM snippet WHERE id = 1").fetchone()[0] is None
        first, created = store.create_once(conn, client_id, "film", FILM, {"title": "New"}, CALCULATIONS)
        assert created
        assert store.create_once(conn, client_id, "film", FILM, {"title": "New"}, CALCULATIONS) == (first, False)
        # Many snippets without an id; never two with the same one.
        assert store.create_once(conn, None, "film", FILM, {"title": "No id"}, CALCULATIONS)[1]
        with pytest.raises(sqlite3.IntegrityError):
            conn.execute("UPDATE snippet SET client_id = ? WHERE id = 1", (client_id,))
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"


# --- the page form carries it too ---------------------------------------------------------------------------------

HIDDEN = 'name="client_id" value="'


def hidden_client_id(page: str) -> str:
    start = page.index(HIDDEN) + len(HIDDEN)
    return page[start : page.index('"', start)]


def form(client, client_id, title="From the page", **extra):
    return {
        "csrf_token": csrf_from(client),
        "kind": "film",
        "inputs": json.dumps(FILM),
        "title": title,
        "client_id": client_id,
        **extra,
    }


def test_the_save_button_has_an_id_slot_and_the_phone_s_title(client):
    page = client.post("/film", data={"anilox_volume": "4.5", "anilox_unit": "BCM/in2"}).get_data(as_text=True)
    assert 'name="client_id" value=""' in page  # filled on the phone when it is pressed
    assert 'name="title" value="Film chain' in page


def test_the_save_form_keeps_the_id_it_was_opened_with_or_makes_one(client):
    client_id = str(uuid.uuid4())
    opened = client.post("/snippets/new", data={**form(client, client_id), "job_number": "24-0117"})
    assert opened.status_code == 200
    page = opened.get_data(as_text=True)
    assert hidden_client_id(page) == client_id
    assert 'value="From the page"' in page and 'value="24-0117"' in page  # what the outbox kept
    made = hidden_client_id(client.post("/snippets/new", data=form(client, "")).get_data(as_text=True))
    assert uuid.UUID(made)


def test_the_page_form_sent_twice_saves_once(client):
    client_id = str(uuid.uuid4())
    first = client.post("/snippets", data=form(client, client_id))
    assert first.status_code == 303
    again = client.post("/snippets", data=form(client, client_id))
    assert again.status_code == 303
    assert again.headers["Location"] == first.headers["Location"]
    assert "saved already" in client.get(again.headers["Location"]).get_data(as_text=True)
    assert total(client) == 1
    # The outbox sending the same save afterwards finds it too.
    api = client.post(URL, json={"kind": "film", "inputs": FILM, "title": "From the page", "client_id": client_id})
    assert api.status_code == 200


def test_the_page_form_saved_again_with_other_words_says_so_and_offers_a_new_id(client):
    client_id = str(uuid.uuid4())
    client.post("/snippets", data=form(client, client_id))
    refused = client.post("/snippets", data=form(client, client_id, title="Changed after going back"))
    assert refused.status_code == 409
    page = refused.get_data(as_text=True)
    assert "saved already as" in page
    assert 'value="Changed after going back"' in page  # the typed words are kept
    fresh = hidden_client_id(page)
    assert fresh != client_id
    assert client.post("/snippets", data=form(client, fresh, title="Changed after going back")).status_code == 303
    assert total(client) == 2


def test_the_page_form_with_a_passcode_set_keeps_the_id_while_it_asks(locked):
    client_id = str(uuid.uuid4())
    asked = locked.post("/snippets", data=form(locked, client_id))
    assert asked.status_code == 403
    assert hidden_client_id(asked.get_data(as_text=True)) == client_id
    saved = locked.post("/snippets", data=form(locked, client_id, passcode=SHOP))
    assert saved.status_code == 303
    assert total(locked) == 1
