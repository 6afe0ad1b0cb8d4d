"""The snippet pages: save from a calculator, find, open, re-run, edit, conflict, bin, share, export, import."""

from __future__ import annotations

import contextlib
import html
import json
import re

import pytest

from tests.bodies import FILM
from tests.conftest import csrf_from, post_file
from webapp import create_app
from webapp.calculators import CALCULATIONS
from webapp.common import db


def csrf(client) -> str:
    return csrf_from(client)


def save(client, title="Film for station 3", **fields):
    form = {"csrf_token": csrf(client), "kind": "film", "inputs": json.dumps(FILM), "title": title, **fields}
    response = client.post("/snippets", data=form)
    assert response.status_code == 303, response.get_data(as_text=True)
    return int(response.headers["Location"].rsplit("/", 1)[1])


def text(response) -> str:
    return html.unescape(response.get_data(as_text=True))


def hidden_fields(page: str) -> dict:
    pairs = re.findall(r'<input type="hidden" name="([^"]+)" value=(?:"([^"]*)"|\'([^\']*)\')', page)
    return {name: double or single for name, double, single in pairs}


def test_the_save_button_under_a_film_result_leads_to_a_save_form_with_the_results(client):
    result = client.post(
        "/film",
        data={"anilox_volume": "4", "anilox_unit": "BCM/in2", "anilox_to_plate": "50", "plate_to_substrate": "50"},
    ).get_data(as_text=True)
    assert 'action="/snippets/new"' in result
    fields = {name: html.unescape(value) for name, value in hidden_fields(result).items()}
    assert fields["kind"] == "film"
    inputs = json.loads(fields["inputs"])
    assert CALCULATIONS["film"](inputs)

    form = client.post("/snippets/new", data=fields)
    assert form.status_code == 200
    page = text(form)
    assert "Save this film chain" in page
    # 4 BCM/in² = 6.2 µm of cells (NIST SP 811 inch); half of half reaches the substrate
    # with the other system's figure beside it (webapp.common.formatting.preferred)
    wet = r"Substrate wet</dt>\s*<dd><span class=\"num\">1.55</span> µm <span class=\"also\">\(0.061 mil\)</span></dd>"
    assert re.search(wet, page)
    assert 'name="title" type="text" value="Film chain: 4.0 BCM/in²"' in page  # in² as the app shows it
    assert 'name="job_number"' in page and 'name="saved_by"' in page


def test_saving_remembers_the_name_on_this_device(client):
    save(client, saved_by="Oksana R.")
    form = client.post("/snippets/new", data={"csrf_token": csrf(client), "kind": "film", "inputs": json.dumps(FILM)})
    assert 'name="saved_by" type="text" value="Oksana R."' in text(form)


def test_a_title_too_long_gets_a_message_beside_it_and_keeps_the_rest(client):
    form = {
        "csrf_token": csrf(client),
        "kind": "film",
        "inputs": json.dumps(FILM),
        "title": "x" * 121,
        "notes": "keep me",
    }
    response = client.post("/snippets", data=form)
    assert response.status_code == 400
    page = text(response)
    assert 'id="e-title"' in page and "may be at most 120 characters long (this is 121)" in page
    assert "keep me" in page


@pytest.mark.parametrize(
    ("kind", "inputs"),
    [("film", "{broken"), ("lunch", json.dumps(FILM)), ("film", json.dumps({**FILM, "anilox_to_plate": 9}))],
)
def test_a_save_of_something_that_cannot_be_worked_out_says_so(client, kind, inputs):
    response = client.post("/snippets/new", data={"csrf_token": csrf(client), "kind": kind, "inputs": inputs})
    assert response.status_code == 400
    assert "cannot be saved" in text(response)


def test_list_search_and_filters_find_by_job_number(client):
    save(client, "White", job_number="24-0093", press="N1")
    save(client, "Cyan", job_number="24-0117", press="N2", tags="handover")
    page = text(client.get("/snippets"))
    assert "2 saved" in page and "White" in page and "Cyan" in page
    found = text(client.get("/snippets?q=0117"))
    assert "1 found" in found and "Cyan" in found and ">White<" not in found
    assert ">Cyan<" not in text(client.get("/snippets?press=N1"))
    assert "1 found" in text(client.get("/snippets?q=handover"))
    assert "Nothing saved matches" in text(client.get("/snippets?q=nothing-like-this"))


def test_htmx_search_gets_only_the_results(client):
    save(client, "Cyan", job_number="24-0117")
    response = client.get("/snippets?q=0117", headers={"HX-Request": "true", "HX-Target": "snippet-results"})
    page = response.get_data(as_text=True)
    assert page.lstrip().startswith('<div id="snippet-results"')
    assert "<html" not in page
    assert "HX-Request" in response.headers["Vary"]


def test_a_snippet_page_shows_inputs_results_share_link_and_qr(client):
    snippet_id = save(client, notes="line one\nline two", tags="white, handover", job_number="24-0117")
    page = text(client.get(f"/snippets/{snippet_id}"))
    assert "Results as saved" in page and "Substrate wet" in page
    assert "Anilox volume" in page and "4 BCM/in²" in page and "50 %" in page
    assert f"http://localhost/s/{snippet_id}" in page
    assert f'src="/snippets/{snippet_id}/qr.svg"' in page
    qr = client.get(f"/snippets/{snippet_id}/qr.svg")
    assert qr.mimetype == "image/svg+xml"
    svg = qr.get_data(as_text=True)
    assert svg.startswith("<svg") and "<path" in svg and "style=" not in svg
    short = client.get(f"/s/{snippet_id}")
    assert short.status_code == 302 and short.headers["Location"].endswith(f"/snippets/{snippet_id}")
    assert client.get("/snippets/999").status_code == 404
    assert client.get("/snippets/999/qr.svg").status_code == 404


def test_rerun_says_plainly_whether_todays_core_agrees(app, client):
    snippet_id = save(client)
    assert "the same results" in text(client.get(f"/snippets/{snippet_id}?rerun=1"))
    with app.app_context(), contextlib.closing(db.connect(db.database_path(app))) as conn:
        results = dict(CALCULATIONS["film"](FILM), substrate_wet={"value": 9.0, "unit": "um"})
        conn.execute("UPDATE snippet SET results = ? WHERE id = ?", (json.dumps(results), snippet_id))
    page = text(client.get(f"/snippets/{snippet_id}?rerun=1"))
    assert "Today's version gives different results</strong> for 1 value:" in page
    assert re.search(r"Substrate wet</th>\s*<td class=\"num\"><span class=\"num\">9</span> µm", page)
    kept = client.post(f"/snippets/{snippet_id}/keep", data={"csrf_token": csrf(client), "version": "1"})
    assert kept.status_code == 303
    assert "the same results" in text(client.get(f"/snippets/{snippet_id}?rerun=1"))


def test_edit_and_the_conflict_of_two_people_editing(client):
    snippet_id = save(client, notes="first")
    edit_page = client.get(f"/snippets/{snippet_id}/edit").get_data(as_text=True)
    assert hidden_fields(edit_page)["version"] == "1"
    token = csrf(client)
    tablet = {"csrf_token": token, "version": "1", "title": "Film for station 3", "notes": "from the tablet"}
    phone = {"csrf_token": token, "version": "1", "title": "Film for station 3", "notes": "from the phone"}
    assert client.post(f"/snippets/{snippet_id}/edit", data=tablet).status_code == 303
    conflict = client.post(f"/snippets/{snippet_id}/edit", data=phone)
    assert conflict.status_code == 409
    page = text(conflict)
    assert "changed this snippet while you were editing" in page and "Nothing was overwritten" in page
    assert "from the tablet" in page  # the newer one
    assert 'name="notes" value="from the phone"' in page  # what this person typed is kept, as "mine"
    assert hidden_fields(conflict.get_data(as_text=True))["version"] == "2"
    assert "from the tablet" in text(client.get(f"/snippets/{snippet_id}"))
    # Saving again without a choice does not put the phone's words over the newer version.
    again = client.post(f"/snippets/{snippet_id}/edit", data={**phone, "version": "2", "conflict": "notes"})
    assert again.status_code == 409 and "Choose which one to keep" in text(again)
    assert "from the tablet" in text(client.get(f"/snippets/{snippet_id}"))
    chosen = {**phone, "version": "2", "base_version": "1", "conflict": "notes", "choose-notes": "mine"}
    assert client.post(f"/snippets/{snippet_id}/edit", data=chosen).status_code == 303
    assert "from the phone" in text(client.get(f"/snippets/{snippet_id}"))


def test_delete_goes_to_the_bin_with_an_undo(client):
    snippet_id = save(client, "Short-lived")
    response = client.post(f"/snippets/{snippet_id}/delete", data={"csrf_token": csrf(client), "version": "1"})
    assert response.status_code == 303
    page = text(client.get("/snippets"))
    assert "is in the bin for 30 days" in page
    assert f'action="/snippets/{snippet_id}/restore"' in page
    assert "Short-lived" in text(client.get("/snippets/bin"))
    assert client.get(f"/snippets/{snippet_id}").status_code == 404
    assert client.post(f"/snippets/{snippet_id}/restore", data={"csrf_token": csrf(client)}).status_code == 303
    assert client.get(f"/snippets/{snippet_id}").status_code == 200
    assert "The bin is empty" in text(client.get("/snippets/bin"))


def test_a_stale_delete_is_refused(client):
    snippet_id = save(client)
    token = csrf(client)
    client.post(f"/snippets/{snippet_id}/edit", data={"csrf_token": token, "version": "1", "title": "Newer"})
    client.post(f"/snippets/{snippet_id}/delete", data={"csrf_token": token, "version": "1"})
    assert "Newer" in text(client.get(f"/snippets/{snippet_id}"))


def test_export_and_import_through_the_pages(client, tmp_path):
    save(client, "One", tags="white")
    save(client, "Two")
    exported = client.get("/snippets/export.json")
    assert exported.headers["Content-Disposition"] == 'attachment; filename="inkfilm-snippets.json"'
    assert "One" in client.get("/snippets/export.csv").get_data(as_text=True)

    other = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "other")}).test_client()

    def upload(data: bytes):
        return post_file(other, "/snippets/import", {"csrf_token": csrf(other)}, "file", data, "inkfilm-snippets.json")

    first = upload(exported.data)
    assert first.status_code == 303
    assert "Imported 2 snippets; 0 were here already" in text(other.get("/snippets"))
    upload(exported.data)
    assert "Imported 0 snippets; 2 were here already" in text(other.get("/snippets"))
    assert json.loads(other.get("/snippets/export.json").data)["snippets"] == json.loads(exported.data)["snippets"]
    bad = upload(b"not json")
    assert bad.status_code == 400 and "not JSON" in text(bad)
    wrong = upload(json.dumps({"snippets": [{"title": "x"}]}).encode())
    assert wrong.status_code == 400 and "Nothing was imported. snippets[0].uid" in text(wrong)
    none = other.post("/snippets/import", data={"csrf_token": csrf(other)})
    assert none.status_code == 400 and "Choose an export file" in text(none)


def test_pages_carry_no_inline_script_or_style(client):
    snippet_id = save(client)
    for path in ("/snippets", f"/snippets/{snippet_id}", f"/snippets/{snippet_id}/edit", "/settings", "/snippets/bin"):
        page = client.get(path).get_data(as_text=True)
        assert "style=" not in page, path
        assert not re.search(r"<script(?![^>]*\bsrc=)", page), path
        assert " on" + "click=" not in page


def test_an_edit_of_a_snippet_deleted_meanwhile_keeps_what_was_typed(client):
    snippet_id = save(client)
    token = csrf(client)
    client.post(f"/snippets/{snippet_id}/delete", data={"csrf_token": token})
    response = client.post(
        f"/snippets/{snippet_id}/edit", data={"csrf_token": token, "version": "1", "title": "x", "notes": "my words"}
    )
    assert response.status_code == 409
    page = text(response)
    assert "Deleted by someone else meanwhile" in page and "my words" in page
    assert client.post("/snippets/999/edit", data={"csrf_token": token, "version": "1"}).status_code == 404
