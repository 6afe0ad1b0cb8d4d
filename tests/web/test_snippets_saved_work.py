"""Saved work that behaves like job records (issue 10, points 6, 8, 9, 10, 12 and the small things):
stale edits merged field by field, history and who, deleted links, units and order, the header lock."""

from __future__ import annotations

import html
import json
import re

import pytest

from tests.bodies import FILM
from tests.conftest import csrf_from
from webapp import create_app
from webapp.calculators import BY_KIND, CALCULATIONS

SUPERVISOR = "Boss-4242-passcode"


def text(response) -> str:
    return html.unescape(response.get_data(as_text=True))


def hidden(page: str) -> dict:
    pairs = re.findall(r'<input type="hidden" name="([^"]+)" value="([^"]*)"', page)
    return dict(pairs)


def save(client, title="Film for station 3", **fields):
    form = {"csrf_token": csrf_from(client), "kind": "film", "inputs": json.dumps(FILM), "title": title, **fields}
    response = client.post("/snippets", data=form)
    assert response.status_code == 303, response.get_data(as_text=True)
    return int(response.headers["Location"].rsplit("/", 1)[1])


def edit(client, snippet_id, version, **fields):
    form = {"csrf_token": csrf_from(client), "version": str(version), "title": "Film for station 3", **fields}
    return client.post(f"/snippets/{snippet_id}/edit", data=form)


# --- 6: an edit conflict never silently undoes the other person's change -------------------


def test_fields_only_one_side_changed_merge_by_themselves(client):
    snippet_id = save(client, press="Press 2", notes="first")
    assert edit(client, snippet_id, 1, press="Press 4", notes="first", changed_by="Bea").status_code == 303
    # The phone started from version 1 too and changed only the notes: the press change stays.
    late = edit(client, snippet_id, 1, press="Press 2", notes="from the phone", changed_by="Cy")
    assert late.status_code == 303
    page = text(client.get(late.headers["Location"]))
    assert "Bea changed the press meanwhile; their changes are kept beside yours." in page
    assert "Press 4" in page and "from the phone" in page
    assert re.search(r"Changed by</dt><dd class=\"changed-by\">Cy,", page)


def test_a_field_both_changed_needs_a_choice_and_theirs_can_be_kept(client):
    snippet_id = save(client, press="Press 2", station="3")
    edit(client, snippet_id, 1, press="Press 4", station="3", changed_by="Bea")
    conflict = edit(client, snippet_id, 1, press="Press 7", station="White", changed_by="Cy")
    assert conflict.status_code == 409
    page = text(conflict)
    # Field by field: before, theirs, mine and the outcome.
    assert "Bea changed this snippet while you were editing" in page
    press = page[page.index("merge-field merge-conflict") :]
    assert "Press 2" in press and "Press 4" in press and "Press 7" in press
    assert "You both changed it: choose below." in press
    station = page[page.index("merge-field merge-mine") :]
    assert "Your change is taken." in station and "White" in station
    assert 'name="choose-press" value="theirs" required' in page
    fields = hidden(conflict.get_data(as_text=True))
    assert (fields["version"], fields["base_version"], fields["conflict"]) == ("2", "1", "press")
    # The station field shows the merged value, ready to save.
    assert 'id="f-station" name="station" type="text" value="White"' in page
    chosen = {**fields, "title": "Film for station 3", "station": "White", "choose-press": "theirs"}
    chosen["csrf_token"] = csrf_from(client)
    assert client.post(f"/snippets/{snippet_id}/edit", data=chosen).status_code == 303
    shown = text(client.get(f"/snippets/{snippet_id}"))
    assert "Press 4" in shown and "Press 7" not in shown and "White" in shown


def test_an_edit_after_a_newer_version_keeps_tags_and_notes_of_both(client):
    snippet_id = save(client, tags="white", notes="one")
    edit(client, snippet_id, 1, tags="white, repeat job", notes="one")
    late = edit(client, snippet_id, 1, tags="white", notes="one\ntwo")
    assert late.status_code == 303
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert "repeat job" in page and "one\ntwo" in page


def test_saving_an_edit_lands_on_the_snippets_own_address_also_for_htmx(client):
    snippet_id = save(client)
    plain = edit(client, snippet_id, 1, notes="x")
    assert plain.status_code == 303 and plain.headers["Location"] == f"/snippets/{snippet_id}"
    form = {"csrf_token": csrf_from(client), "version": "2", "title": "T", "notes": "y"}
    htmx = client.post(f"/snippets/{snippet_id}/edit", data=form, headers={"HX-Request": "true"})
    assert htmx.status_code == 200 and htmx.headers["HX-Redirect"] == f"/snippets/{snippet_id}"


# --- 8: history and who ------------------------------------------------------------------------


@pytest.fixture
def locked(tmp_path):
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "locked"), "SUPERVISOR_PASSCODE": SUPERVISOR})


def test_history_lists_every_version_and_a_supervisor_brings_one_back(locked):
    client = locked.test_client()
    snippet_id = save(client, press="Press 2", saved_by="Ada")
    edit(client, snippet_id, 1, press="Press 4", saved_by="Ada", changed_by="Bea")
    page = text(client.get(f"/snippets/{snippet_id}/history"))
    assert "Version 2 (now): edited" in page and "by Bea" in page and "Changed: press" in page
    assert "Version 1: saved" in page and "by Ada" in page
    old = text(client.get(f"/snippets/{snippet_id}/versions/1"))
    assert "Press 2" in old and "Bring this version back" in old
    form = {"csrf_token": csrf_from(client), "version": "2", "changed_by": "Sue"}
    refused = client.post(f"/snippets/{snippet_id}/versions/1/restore", data=form)
    assert refused.status_code == 403 and "supervisor passcode" in text(refused)
    assert "Press 4" in text(client.get(f"/snippets/{snippet_id}"))
    back = client.post(f"/snippets/{snippet_id}/versions/1/restore", data={**form, "passcode": SUPERVISOR})
    assert back.status_code == 303
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert "Version 1 is back" in page and "Press 2" in page
    assert re.search(r"Saved by</dt><dd class=\"saved-by\">Ada,", page)
    assert re.search(r"Changed by</dt><dd class=\"changed-by\">Sue,", page)
    assert client.get(f"/snippets/{snippet_id}/versions/9").status_code == 404


def test_the_bin_says_who_deleted_what_and_when(client):
    snippet_id = save(client, "Short-lived")
    gone = client.post(f"/snippets/{snippet_id}/delete", data={"csrf_token": csrf_from(client), "changed_by": "Sue"})
    assert gone.status_code == 303
    page = text(client.get("/snippets/bin"))
    assert re.search(r"Deleted by Sue, \d{4}-\d\d-\d\d \d\d:\d\d \S+; gone for good after \d{4}-\d\d-\d\d", page)


def test_times_are_in_the_shops_time_zone(tmp_path):
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "tz"), "TIME_ZONE": "America/Chicago"})
    client = app.test_client()
    snippet_id = save(client)
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert re.search(r"\d{4}-\d\d-\d\d \d\d:\d\d C[SD]T", page) and " UTC" not in page
    with pytest.raises(ValueError, match="TIME_ZONE"):
        create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "bad"), "TIME_ZONE": "Mars/Olympus"})


# --- 9: a link to a deleted snippet --------------------------------------------------------------


def test_a_link_to_a_deleted_snippet_says_it_is_in_the_bin_until_when(client):
    snippet_id = save(client, "Short-lived")
    client.post(f"/snippets/{snippet_id}/delete", data={"csrf_token": csrf_from(client), "changed_by": "Sue"})
    for address in (f"/s/{snippet_id}", f"/snippets/{snippet_id}"):
        response = client.get(address)
        assert response.status_code == 404 and response.mimetype == "text/html"
        page = text(response)
        assert "This snippet is in the bin" in page and "Short-lived" in page and "by Sue" in page
        assert re.search(r"a supervisor can restore it until <strong class=\"purge-date\">\d{4}-\d\d-\d\d", page, re.I)
    missing = client.get("/s/999")
    assert missing.status_code == 404 and "No snippet number 999" in text(missing)


# --- 10: units, order, words -------------------------------------------------------------------


def test_saved_results_follow_the_imperial_preference(client):
    snippet_id = save(client)
    metric = text(client.get(f"/snippets/{snippet_id}"))
    client.set_cookie("inkfilm_units", "imperial")
    imperial = text(client.get(f"/snippets/{snippet_id}"))
    wet = r"Substrate wet</dt>\s*<dd><span class=\"num\">[0-9.]+</span> "
    assert re.search(wet + "µm", metric) and re.search(wet + "mil", imperial)


def test_inputs_are_listed_in_the_calculators_order(client):
    snippet_id = save(client)
    page = text(client.get(f"/snippets/{snippet_id}"))
    inputs = page[page.index('<details class="saved-inputs"') :]
    shown = re.findall(r"<dt>([^<]+)</dt>", inputs)
    spec = BY_KIND["film"]
    expected = [name.replace("_", " ").capitalize() for name in [*spec.required, *spec.optional] if name in FILM]
    assert shown[: len(expected)] == expected and expected != sorted(expected)


def test_words_an_operator_uses(client):
    snippet_id = save(client)
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert "Work it out again with today's version" in page and "core" not in page.lower().split("<footer")[0]
    assert BY_KIND["equivalents"].title == "Convert"
    form = client.post(
        "/snippets/new",
        data={"csrf_token": csrf_from(client), "kind": "equivalents", "inputs": '{"quantity": "4.5 BCM/in2"}'},
    )
    assert 'value="Convert: 4.5 BCM/in²"' in text(form)


# --- 12: the header says a device is unlocked for supervisors ----------------------------------------


def test_the_header_says_unlocked_for_supervisors_with_a_one_tap_lock(locked):
    client = locked.test_client()
    assert "Unlocked for supervisors" not in text(client.get("/film"))
    token = csrf_from(client)
    assert client.post("/unlock", data={"csrf_token": token, "passcode": SUPERVISOR}).status_code == 303
    page = text(client.get("/film?anilox_volume=4"))
    assert "Unlocked for supervisors" in page
    bar = page[page.index('class="unlocked-bar"') :]
    assert 'action="/lock"' in bar[:200] and 'name="next" value="/film?anilox_volume=4"' in bar
    # Without the CSRF token the lock is refused (nothing changes); with it, one tap locks.
    assert client.post("/lock", data={"next": "/film"}).status_code in (400, 403)
    locked_now = client.post("/lock", data={"csrf_token": csrf_from(client), "next": "/film?anilox_volume=4"})
    assert locked_now.status_code == 303 and locked_now.headers["Location"] == "/film?anilox_volume=4"
    assert "Unlocked for supervisors" not in text(client.get("/film"))


# --- 7 (part): open a snippet in its calculator; the save form's way back ------------------------


def test_open_in_the_calculator_fills_its_form_with_the_saved_inputs(client):
    snippet_id = save(client)
    page = text(client.get(f"/snippets/{snippet_id}"))
    link = re.search(r'href="(/film\?[^"]+)">Open in the calculator', page).group(1)
    calculator = text(client.get(link))
    inputs = json.loads(re.search(r"name=\"inputs\" value='([^']*)'", calculator).group(1))
    # The same calculation (4 BCM/in2 comes back as the form writes it, 4.0), ready to change and save as new.
    assert inputs.keys() == FILM.keys() and CALCULATIONS["film"](inputs) == CALCULATIONS["film"](FILM)


def test_the_save_form_leads_back_to_the_result(client):
    body = '{"quantity": "7 cm3/m2", "coverage": 0.3}'
    form = text(
        client.post("/snippets/new", data={"csrf_token": csrf_from(client), "kind": "equivalents", "inputs": body})
    )
    link = re.search(r'<a class="back-to-result" href="([^"]+)">Back to the result</a>', form).group(1)
    assert link.startswith("/?")
    result = text(client.get(link))
    assert json.loads(re.search(r"name=\"inputs\" value='([^']*)'", result).group(1)) == {
        "quantity": "7.0 cm3/m2",
        "coverage": 0.3,
    }


def test_the_job_page_gathers_every_snippet_of_one_job_station_by_station(client):
    first = save(client, "White underlay", job_number="24-0117", station="10", press="Press 2")
    save(client, "Cyan", job_number="24-0117", station="3", press="Press 2")
    save(client, "Other job", job_number="24-0118", station="1")
    gone = save(client, "Deleted one", job_number="24-0117", station="1")
    client.post(f"/snippets/{gone}/delete", data={"csrf_token": csrf_from(client)})
    page = text(client.get("/jobs/24-0117"))
    assert "Job 24-0117" in page and "2 saved snippets · Press 2" in page
    assert page.index("Station 3: Cyan") < page.index("Station 10: White underlay")
    assert "Other job" not in page and "Deleted one" not in page
    assert "Substrate wet" in page  # each one's results
    missing = client.get("/jobs/99-9999")
    assert missing.status_code == 404 and "Nothing is saved for job 99-9999" in text(missing)
    one = text(client.get(f"/snippets/{first}"))
    assert 'href="/jobs/24-0117"' in one
