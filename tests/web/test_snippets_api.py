"""``/api/v1/snippets``: list and search, create, read, re-run, update with version, delete, bin, export, import."""

from __future__ import annotations

import contextlib
import json

import pytest

from tests.bodies import FILM
from webapp import create_app
from webapp.calculators import CALCULATIONS
from webapp.common import db

URL = "/api/v1/snippets"


def new(client, title="Film for station 3", **extra):
    body = {"kind": "film", "inputs": FILM, "title": title, **extra}
    response = client.post(URL, json=body)
    assert response.status_code == 201, response.get_json()
    return response.get_json()


def assert_error(response, status, field):
    assert response.status_code == status, response.get_data(as_text=True)
    error = response.get_json()["error"]
    assert set(error) == {"field", "message"}
    assert error["field"] == field
    assert error["message"]
    return error["message"]


def test_create_answers_201_with_the_snippet_and_its_address(client):
    response = client.post(
        URL,
        json={
            "kind": "film",
            "inputs": FILM,
            "title": "Film for station 3",
            "job_number": "24-0117",
            "press": "N2",
            "station": "3",
            "notes": "ran well",
            "tags": ["handover", "Spot colour"],
            "saved_by": "Oksana",
        },
    )
    assert response.status_code == 201
    snippet = response.get_json()
    assert response.headers["Location"].endswith(f"{URL}/{snippet['id']}")
    assert snippet["results"] == CALCULATIONS["film"](FILM)
    assert snippet["tags"] == ["handover", "spot colour"]
    assert snippet["version"] == 1
    assert client.get(response.headers["Location"]).get_json() == snippet


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({"inputs": FILM, "title": "x"}, "kind"),
        ({"kind": "film", "title": "x"}, "inputs"),
        ({"kind": "film", "inputs": FILM}, "title"),
        ({"kind": "film", "inputs": FILM, "title": "x", "colour": "red"}, "colour"),
        ({"kind": "lunch", "inputs": FILM, "title": "x"}, "kind"),
        ({"kind": "film", "inputs": {**FILM, "anilox_volume": "4 apples"}, "title": "x"}, "inputs.anilox_volume"),
        ({"kind": "film", "inputs": [], "title": "x"}, "inputs"),
        ({"kind": "film", "inputs": FILM, "title": "t" * 121}, "title"),
        ({"kind": "film", "inputs": FILM, "title": "x", "notes": "n" * 4001}, "notes"),
    ],
)
def test_create_refuses_bad_bodies_naming_the_field(client, body, field):
    assert_error(client.post(URL, json=body), 400, field)
    assert client.get(URL).get_json()["total"] == 0


def test_a_body_that_is_not_json_gets_the_error_shape(client):
    response = client.post(URL, data="{not json", content_type="application/json")
    assert_error(response, 400, None)
    response = client.post(URL, data="title=x", content_type="application/x-www-form-urlencoded")
    assert_error(response, 415, None)


def test_a_body_over_64_kb_is_refused(client):
    response = client.post(URL, json={"kind": "film", "inputs": FILM, "title": "x", "notes": "n" * 70_000})
    assert_error(response, 413, None)


def test_list_searches_and_filters(client):
    new(client, "White under-print", job_number="24-0093", press="N1", tags=["white"])
    new(client, "Cyan", job_number="24-0117", press="N2", notes="blade changed")
    client.post(URL, json={"kind": "convert", "inputs": {"quantity": "7 cm3/m2", "to": "BCM/in2"}, "title": "Roll"})

    def titles(query):
        return [s["title"] for s in client.get(f"{URL}?{query}").get_json()["snippets"]]

    assert titles("q=0117") == ["Cyan"]
    assert titles("q=blade") == ["Cyan"]
    assert titles("q=white") == ["White under-print"]
    assert titles("press=N1") == ["White under-print"]
    assert titles("kind=convert") == ["Roll"]
    answer = client.get(f"{URL}?limit=2&offset=2").get_json()
    assert (answer["total"], answer["limit"], answer["offset"], len(answer["snippets"])) == (3, 2, 2, 1)
    assert_error(client.get(f"{URL}?limit=0"), 400, "limit")
    assert_error(client.get(f"{URL}?offset=-1"), 400, "offset")


def test_read_a_missing_snippet_is_404_in_the_error_shape(client):
    assert_error(client.get(f"{URL}/999"), 404, "id")
    assert_error(client.put(f"{URL}/999", json={"version": 1, "title": "x"}), 404, "id")
    assert_error(client.delete(f"{URL}/999"), 404, "id")


def test_update_with_the_current_version_and_a_stale_one(client):
    snippet = new(client)
    url = f"{URL}/{snippet['id']}"
    response = client.put(url, json={"version": 1, "notes": "tablet", "tags": "a, b"})
    assert response.status_code == 200
    assert response.get_json()["version"] == 2
    stale = client.patch(url, json={"version": 1, "notes": "phone"})
    message = assert_error(stale, 409, "version")
    assert "changed by someone else meanwhile" in message
    assert stale.get_json()["current"]["notes"] == "tablet"
    assert client.get(url).get_json()["notes"] == "tablet"
    assert_error(client.put(url, json={"notes": "no version"}), 400, "version")
    assert_error(client.put(url, json={"version": 2, "title": ""}), 400, "title")
    assert_error(client.put(url, json={"version": 2, "kind": "convert"}), 400, "kind")


def test_rerun_says_what_differs_and_can_keep_todays_results(app, client):
    snippet = new(client)
    assert client.get(f"{URL}/{snippet['id']}/rerun").get_json()["same"] is True
    with app.app_context(), contextlib.closing(db.connect(db.database_path(app))) as conn:
        results = dict(snippet["results"], substrate_wet={"value": 9.0, "unit": "um"})
        conn.execute("UPDATE snippet SET results = ? WHERE id = ?", (json.dumps(results), snippet["id"]))
    answer = client.get(f"{URL}/{snippet['id']}/rerun").get_json()
    assert answer["same"] is False
    assert [change["where"] for change in answer["changes"]] == ["substrate_wet"]
    assert answer["changes"][0]["saved"] == {"value": 9.0, "unit": "um"}
    kept = client.put(f"{URL}/{snippet['id']}", json={"version": 1, "rerun": True}).get_json()
    assert kept["results"] == CALCULATIONS["film"](FILM)
    assert kept["version"] == 2


def test_delete_to_the_bin_and_restore(client):
    snippet = new(client)
    url = f"{URL}/{snippet['id']}"
    response = client.delete(url)
    assert response.status_code == 200
    assert response.get_json()["deleted"]["id"] == snippet["id"]
    assert "gone_for_good_after" in response.get_json()
    assert_error(client.get(url), 404, "id")
    assert [s["id"] for s in client.get(f"{URL}/bin").get_json()["snippets"]] == [snippet["id"]]
    assert client.post(f"{url}/restore", json={}).status_code == 200
    assert client.get(url).status_code == 200
    assert_error(client.post(f"{url}/restore", json={}), 404, "id")


def test_delete_with_a_stale_version_is_a_conflict(client):
    snippet = new(client)
    client.put(f"{URL}/{snippet['id']}", json={"version": 1, "notes": "newer"})
    assert_error(client.delete(f"{URL}/{snippet['id']}?version=1"), 409, "version")
    assert client.get(f"{URL}/{snippet['id']}").status_code == 200


def test_export_import_round_trip_and_no_duplicates(client, tmp_path):
    new(client, "One", tags=["white"], notes="two\nlines")
    new(client, "Two", job_number="24-0117")
    exported = client.get(f"{URL}/export").get_json()
    assert [s["title"] for s in exported["snippets"]] == ["One", "Two"]

    other = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "other")}).test_client()
    assert other.post(f"{URL}/import", json=exported).get_json() == {"added": 2, "already_here": 0}
    assert other.post(f"{URL}/import", json=exported).get_json() == {"added": 0, "already_here": 2}
    assert other.get(f"{URL}/export").get_json()["snippets"] == exported["snippets"]
    assert other.get(URL).get_json()["total"] == 2


def test_import_refuses_a_bad_file_naming_the_place(client):
    assert_error(client.post(f"{URL}/import", json={"snippets": [{"title": "x"}]}), 400, "snippets[0].uid")
    assert_error(client.post(f"{URL}/import", data="nope", content_type="application/json"), 400, None)


def test_import_takes_bodies_larger_than_the_calculation_limit(client):
    snippet = new(client, notes="n" * 3000)
    exported = client.get(f"{URL}/export").get_json()
    many = [dict(exported["snippets"][0], uid=f"{number:032x}") for number in range(40)]
    body = json.dumps({"snippets": many})
    assert len(body) > 64 * 1024
    response = client.post(f"{URL}/import", data=body, content_type="application/json")
    assert response.get_json() == {"added": 40, "already_here": 0}
    assert snippet["id"] == 1


def test_csv_export(client):
    new(client, "Cyan, process", notes='said "fine"')
    response = client.get(f"{URL}/export.csv")
    assert response.mimetype == "text/csv"
    assert 'attachment; filename="inkfilm-snippets.csv"' == response.headers["Content-Disposition"]
    assert '"Cyan, process"' in response.get_data(as_text=True)


def test_the_calculation_endpoints_are_unchanged(client):
    response = client.post("/api/v1/film", json=FILM)
    assert response.get_json() == CALCULATIONS["film"](FILM)


def test_without_passcodes_a_passcode_sent_anyway_is_not_in_the_way(client):
    response = client.post(
        URL, json={"kind": "film", "inputs": FILM, "title": "x"}, headers={"X-Inkfilm-Passcode": "anything"}
    )
    assert response.status_code == 201


def test_rerun_in_an_update_must_be_true_or_false(client):
    snippet = new(client)
    assert_error(client.put(f"{URL}/{snippet['id']}", json={"version": 1, "rerun": "yes"}), 400, "rerun")


def test_who_changed_deleted_and_restored_is_taken_from_the_request(client):
    snippet = new(client, saved_by="Ada")
    url = f"{URL}/{snippet['id']}"
    changed = client.patch(url, json={"version": 1, "notes": "wiped", "changed_by": "  Bea   Lo "}).get_json()
    assert (changed["saved_by"], changed["changed_by"], changed["deleted_by"]) == ("Ada", "Bea Lo", "")
    deleted = client.delete(f"{url}?by=Cy").get_json()["deleted"]
    assert deleted["deleted_by"] == "Cy"
    assert client.get(f"{URL}/bin").get_json()["snippets"][0]["deleted_by"] == "Cy"
    restored = client.post(f"{url}/restore?by=Di", json={}).get_json()
    assert (restored["changed_by"], restored["deleted_by"], restored["saved_by"]) == ("Di", "", "Ada")
    # Without a name the change is still made, by nobody said.
    plain = client.patch(url, json={"version": restored["version"], "notes": "again"}).get_json()
    assert plain["changed_by"] == ""


def test_a_name_too_long_or_not_text_is_refused_naming_the_field(client):
    snippet = new(client)
    url = f"{URL}/{snippet['id']}"
    assert "at most" in assert_error(client.patch(url, json={"version": 1, "changed_by": "x" * 500}), 400, "changed_by")
    assert_error(client.patch(url, json={"version": 1, "changed_by": 7}), 400, "changed_by")
    assert_error(client.delete(f"{url}?by={'x' * 500}"), 400, "by")
    assert client.get(url).get_json()["version"] == 1


def test_the_description_lists_every_field_a_snippet_answer_has(client):
    document = client.get("/api/v1/openapi.json").get_json()
    described = set(document["components"]["schemas"]["Snippet"]["properties"])
    answer = new(client)
    assert set(answer) <= described
    assert {"changed_by", "deleted_by", "saved_by"} <= described
    delete = document["paths"]["/snippets/{snippet_id}"]["delete"]["parameters"]
    assert "by" in {p.get("name") for p in delete}
