"""Roll register pages: forms keep typed words with the message beside the field, CSRF, passcodes, chart, fit links."""

from __future__ import annotations

import contextlib
import re
import sqlite3
from datetime import date, timedelta

import pytest

from tests.web.test_rolls_api import ROLL, SHOP, SUPERVISOR, URL, add_roll, measure
from webapp import create_app
from webapp.common import db
from webapp.rolls.shown import PER_BCM

TODAY = date.today()
CSRF = re.compile(r'name="csrf_token" value="([^"]+)"')


@pytest.fixture
def csrf_token(client) -> str:
    """This client's CSRF token, as the add-a-roll form carries it."""
    return CSRF.search(client.get("/rolls/new").get_data(as_text=True)).group(1)


def form_roll(token, **changes):
    return {
        "csrf_token": token,
        "roll_id": "AN-7",
        "screen": "800",
        "screen_unit": "lpi",
        "angle": "60",
        "nominal_volume": "2.2",
        "certificate_volume": "",
        "volume_unit": "BCM/in2",
        "engraved_on": (TODAY - timedelta(days=400)).isoformat(),
        "press": "N4",
        "location": "station 2",
        "status": "in_use",
        "notes": "",
        **changes,
    }


def test_add_a_roll_then_log_a_measurement_and_see_the_chart(client, csrf_token):
    response = client.post("/rolls/new", data=form_roll(csrf_token))
    assert response.status_code == 303
    page_url = response.headers["Location"]
    body = {
        "csrf_token": csrf_token,
        "measured_on": (TODAY - timedelta(days=200)).isoformat(),
        "volume": "2,1",
        "volume_unit": "BCM/in2",
        "condition": "after_cleaning",
        "method": "spread",
        "by": "Ines",
    }
    assert client.post(page_url + "/measurements", data=body).status_code == 303
    page = client.get(page_url).get_data(as_text=True)
    assert "<svg" in page and 'class="reading after-cleaning"' in page and 'class="wear-line"' in page
    # No preference yet: metric (2.1 BCM/in² is 3.26 cm³/m²).
    assert "3.26 cm³/m²" in page and "2.1 BCM/in²" not in page
    assert 'style="' not in page and "<script>" not in page


def test_volumes_on_every_register_page_follow_the_metric_or_imperial_preference(client):
    roll = add_roll(client, roll_id="U-1", certificate_volume=None)
    measure(client, roll["id"], 3, "1.8 BCM/in2")
    pages = [f"/rolls/{roll['id']}", "/rolls", "/rolls/fit?plate_screen=150&work=process", f"/rolls/{roll['id']}/edit"]
    metric = {path: client.get(path).get_data(as_text=True) for path in pages}
    client.set_cookie("inkfilm_units", "imperial")
    imperial = {path: client.get(path).get_data(as_text=True) for path in pages}
    roll_page = metric[pages[0]]
    # Facts, log table, chart axis unit, chart point titles, links: all cm³/m² (1.8 BCM/in² = 2.79 cm³/m²).
    assert "2.79 cm³/m²" in roll_page and "BCM/in²" not in roll_page.replace('value="BCM/in2">BCM/in²', "")
    assert '<text class="axis-label axis-unit" x="4" y="11">cm³/m²</text>' in roll_page
    assert "/film?anilox_volume=2.79&amp;anilox_unit=cm3%2Fm2" in roll_page
    assert "/estimate?anilox_volume=2.79&amp;anilox_unit=cm3%2Fm2" in roll_page
    # The measurement form offers the preferred unit first and selected.
    assert '<option value="cm3/m2" selected>cm³/m²</option>' in roll_page
    assert "1.8 BCM/in²" in imperial[pages[0]] and "cm³/m²" not in imperial[pages[0]].replace(
        'value="cm3/m2">cm³/m²', ""
    )
    assert '<text class="axis-label axis-unit" x="4" y="11">BCM/in²</text>' in imperial[pages[0]]
    assert "Nominal <small>(cm³/m²)</small>" in metric["/rolls"] and "Volumes in cm³/m²" in metric["/rolls"]
    assert "Nominal <small>(BCM/in²)</small>" in imperial["/rolls"]
    fit_metric, fit_imperial = metric[pages[2]], imperial[pages[2]]
    assert "Film chain with 2.79 cm³/m²" in fit_metric and "Job estimate with 2.79 cm³/m²" in fit_metric
    assert "Film chain with 1.8 BCM/in²" in fit_imperial and "Job estimate with 1.8 BCM/in²" in fit_imperial
    # The edit form shows the stored nominal in the preferred unit; saving it unchanged keeps the roll's volume.
    assert f'value="{1.8 * PER_BCM["cm3/m2"]:.6g}"' in metric[pages[3]]
    assert 'value="1.8"' in imperial[pages[3]]


def test_a_roll_opens_in_the_job_estimate_with_its_measured_volume_in_the_first_station(client):
    roll = add_roll(client, roll_id="E-1", certificate_volume=None)
    measure(client, roll["id"], 3, "1.8 BCM/in2")
    client.set_cookie("inkfilm_units", "imperial")
    link = re.search(r'href="(/estimate\?[^"]+)"', client.get(f"/rolls/{roll['id']}").get_data(as_text=True))
    page = client.get(link.group(1).replace("&amp;", "&")).get_data(as_text=True)
    station = re.search(r'name="stations\[0\]\.anilox_volume"[^>]*value="([^"]*)"', page)
    assert station and station.group(1) == "1.8"
    assert 'name="stations[1].anilox_volume"' in page  # the other demo stations keep their values
    # A value typed into the link is checked like a typed one: the message sits beside the field.
    bad = client.get("/estimate?anilox_volume=lots&anilox_unit=BCM/in2")
    assert bad.status_code == 200 and 'value="lots"' in bad.get_data(as_text=True)
    assert re.search(
        r'id="stations-0-anilox_volume-error"[^>]*><p class="field-error">[^<]*is not a number',
        bad.get_data(as_text=True),
    )


def test_a_bad_measurement_comes_back_with_the_typed_words_and_the_message_beside_the_field(client, csrf_token):
    roll = add_roll(client)
    body = {
        "csrf_token": csrf_token,
        "measured_on": (TODAY + timedelta(days=5)).isoformat(),
        "volume": "1.71",
        "volume_unit": "BCM/in2",
        "condition": "as_found",
        "method": "microscope XY",
        "by": "Ines",
    }
    response = client.post(f"/rolls/{roll['id']}/measurements", data=body)
    assert response.status_code == 400
    page = response.get_data(as_text=True)
    assert 'id="e-m-measured_on"' in page and "is in the future" in page
    assert 'value="microscope XY"' in page and 'value="1.71"' in page
    assert client.get(f"{URL}/{roll['id']}/measurements").get_json()["measurements"] == []


def test_a_bad_roll_form_names_the_field_and_keeps_the_words(client, csrf_token):
    response = client.post("/rolls/new", data=form_roll(csrf_token, nominal_volume="lots", notes="from the old sheet"))
    assert response.status_code == 400
    page = response.get_data(as_text=True)
    assert 'id="e-nominal_volume"' in page and 'value="lots"' in page and "from the old sheet" in page


def test_forms_without_the_csrf_token_change_nothing(client):
    roll = add_roll(client)
    assert client.post("/rolls/new", data=form_roll("")).status_code == 400
    body = {"measured_on": TODAY.isoformat(), "volume": "1.8", "volume_unit": "BCM/in2", "condition": "as_found"}
    assert client.post(f"/rolls/{roll['id']}/measurements", data=body).status_code == 400
    assert client.get(URL).get_json()["total"] == 1


@pytest.fixture
def locked(tmp_path):
    app = create_app(
        {"TESTING": True, "DATA_DIR": str(tmp_path), "SHOP_PASSCODE": SHOP, "SUPERVISOR_PASSCODE": SUPERVISOR}
    )
    return app.test_client()


def test_passcodes_on_forms_keep_what_was_typed(locked):
    token = CSRF.search(locked.get("/rolls/new").get_data(as_text=True)).group(1)
    refused = locked.post("/rolls/new", data=form_roll(token, notes="typed on the floor"))
    assert refused.status_code == 403
    assert "typed on the floor" in refused.get_data(as_text=True)
    shop = locked.post("/rolls/new", data=form_roll(token, passcode=SHOP))
    assert shop.status_code == 403  # a roll needs the supervisor
    assert locked.post("/rolls/new", data=form_roll(token, passcode=SUPERVISOR)).status_code == 303


def test_stale_edit_gets_409_with_the_newer_roll_and_the_typed_words(client, csrf_token):
    roll = add_roll(client)
    client.put(f"{URL}/{roll['id']}", json={"version": 1, "location": "rack A-1"})
    data = form_roll(csrf_token, roll_id="AN-101", version="1", notes="my words")
    response = client.post(f"/rolls/{roll['id']}/edit", data=data)
    assert response.status_code == 409
    page = response.get_data(as_text=True)
    assert "rack A-1" in page and "my words" in page
    assert client.get(f"{URL}/{roll['id']}").get_json()["notes"] == ROLL["notes"]


def test_overview_lists_most_urgent_first_and_fit_page_links_to_the_film_chain(client):
    fine = add_roll(client, roll_id="F-1", certificate_volume=None)
    measure(client, fine["id"], 3, "1.8 BCM/in2")
    worn = add_roll(client, roll_id="W-1", certificate_volume=None)
    measure(client, worn["id"], 3, "1.4 BCM/in2")
    page = client.get("/rolls").get_data(as_text=True)
    assert page.index("W-1") < page.index("F-1")
    assert "flag-replace" in page
    client.set_cookie("inkfilm_units", "imperial")
    fit = client.get("/rolls/fit?plate_screen=150&work=process").get_data(as_text=True)
    assert "/film?anilox_volume=1.8&amp;anilox_unit=BCM%2Fin2" in fit
    # 1.4 BCM/in² still suits process work; the roll is listed with its replace flag.
    assert "W-1" in fit and "replace" in fit
    film = client.get("/film?anilox_volume=1.8&anilox_unit=BCM/in2").get_data(as_text=True)
    assert 'value="1.8"' in film
    assert client.get("/rolls/fit?plate_screen=abc&work=process").status_code == 200
    assert "not a number" in client.get("/rolls/fit?plate_screen=abc&work=process").get_data(as_text=True)


def test_unknown_roll_page_is_404(client):
    assert client.get("/rolls/99").status_code == 404


def test_migration_adds_the_register_to_a_file_of_the_previous_version(tmp_path):
    path = tmp_path / db.FILENAME
    with contextlib.closing(sqlite3.connect(path)) as old:
        for number in range(2):
            for statement in db._statements(db.MIGRATIONS[number]):
                old.execute(statement)
        old.execute(
            "INSERT INTO snippet (uid, kind, title, inputs, results, created_at, updated_at)"
            " VALUES ('u', 'film', 'kept', '{}', '{}', 'x', 'x')"
        )
        old.execute("PRAGMA user_version = 2")
        old.commit()
    assert db.migrate(path) == 2
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("SELECT title FROM snippet").fetchone()[0] == "kept"
        assert conn.execute("SELECT count(*) FROM roll").fetchone()[0] == 0
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION


def test_the_demo_shop_has_its_stories_and_is_filled_once(tmp_path):
    from webapp.rolls import demo

    assert demo.fill(tmp_path) == len(demo.ROLLS)
    assert demo.fill(tmp_path) == 0
    client = create_app({"TESTING": True, "DATA_DIR": str(tmp_path)}).test_client()
    rolls = {r["roll_id"]: r for r in client.get(URL).get_json()["rolls"]}
    assert 18 <= len(rolls) <= 24
    assert rolls["NW-203"]["wear"]["flags"] == ["replace"]
    assert rolls["WW-304"]["wear"]["flags"] == ["off_spec"]
    assert rolls["NW-106"]["wear"]["flags"] == ["clean"]
    assert rolls["NW-104"]["wear"]["flags"] == [] and rolls["NW-104"]["wear"]["plugging"] > 0.1
    healthy = [r for r in rolls.values() if not r["wear"]["flags"]]
    assert len(healthy) > len(rolls) / 2


def test_the_fit_form_and_the_overview_filter_answer_htmx_with_their_fragment_and_the_messages_beside_the_fields(
    client,
):
    add_roll(client, roll_id="H-1", certificate_volume=None)
    live = {"HX-Request": "true"}
    full = client.get("/rolls/fit?plate_screen=150&work=process").get_data(as_text=True)
    assert 'hx-get="/rolls/fit"' in full and 'hx-target="#fit-answer"' in full and 'id="fit-answer"' in full
    answer = client.get("/rolls/fit?plate_screen=150&work=process", headers=live)
    assert answer.headers["Vary"].count("HX-Request") == 1 and "no-cache" in answer.headers["Cache-Control"]
    text = answer.get_data(as_text=True)
    assert "<html" not in text and "H-1" in text and "roll" in text
    # The slots beside the fields are refilled out of band: emptied when fine, the message when not.
    assert '<div id="slot-plate_screen" class="error-slot" hx-swap-oob="innerHTML"></div>' in text
    bad = client.get("/rolls/fit?plate_screen=abc&work=process", headers=live).get_data(as_text=True)
    assert re.search(
        r'id="slot-plate_screen" class="error-slot" hx-swap-oob="innerHTML"><p[^>]*>[^<]*not a number', bad
    )

    listing = client.get("/rolls?status=spare", headers=live).get_data(as_text=True)
    assert "<html" not in listing and "H-1" not in listing and "No rolls match these filters" in listing
    assert "H-1" in client.get("/rolls?status=in_use", headers=live).get_data(as_text=True)
    refused = client.get("/rolls?screen_min=fine", headers=live).get_data(as_text=True)
    assert re.search(r'id="slot-screen_min" class="error-slot" hx-swap-oob="innerHTML"><p[^>]*>must be a line', refused)
    page = client.get("/rolls").get_data(as_text=True)
    assert 'hx-target="#rolls-list"' in page and 'id="rolls-list"' in page and "hx-swap-oob" not in page


# --- correcting a logged entry from the page ------------------------------------------------------


def correct_form(token, **changes):
    return {
        "csrf_token": token,
        "version": "1",
        "measured_on": (TODAY - timedelta(days=30)).isoformat(),
        "volume": "1.84",
        "volume_unit": "BCM/in2",
        "condition": "after_cleaning",
        "method": "spread test",
        "by": "Ines",
        "reason": "digits swapped",
        **changes,
    }


def test_a_supervisor_corrects_a_measurement_from_the_roll_page_and_the_old_values_are_kept(client, csrf_token):
    roll = add_roll(client)
    entry = measure(client, roll["id"], 30, "1.48 BCM/in2")
    page = client.get(f"/rolls/{roll['id']}").get_data(as_text=True)
    link = f"/rolls/{roll['id']}/measurement/{entry['id']}/correct"
    assert f'href="{link}"' in page and "Remove" in page
    form = client.get(link).get_data(as_text=True)
    # Pre-filled with the entry in the preferred unit (metric: 1.48 BCM/in² = 2.29631 cm³/m²), its version hidden.
    assert 'name="version" value="1"' in form and 'value="spread test"' in form and 'value="Ines"' in form
    assert f'value="{1.48 * PER_BCM["cm3/m2"]:.6g}"' in form and 'value="after_cleaning" checked' in form
    response = client.post(link, data=correct_form(csrf_token))
    assert response.status_code == 303 and response.headers["Location"].endswith(f"/rolls/{roll['id']}#wear")
    read = client.get(f"{URL}/{roll['id']}/measurements/{entry['id']}").get_json()
    assert read["volume"]["value"] == 1.84 and read["version"] == 2
    assert read["changes"][0]["before"]["volume_bcm"] == 1.48 and read["changes"][0]["reason"] == "digits swapped"
    page = client.get(f"/rolls/{roll['id']}").get_data(as_text=True)
    assert "was corrected" in page and f"{1.84 * PER_BCM['cm3/m2']:.3g}" in page  # table and chart worked out again


def test_a_supervisor_corrects_a_cleaning_from_the_roll_page(client, csrf_token):
    roll = add_roll(client)
    body = {"cleaned_on": (TODAY - timedelta(days=9)).isoformat(), "method": "laser", "by": "Bo", "notes": "one pass"}
    cleaning = client.post(f"{URL}/{roll['id']}/cleanings", json=body).get_json()
    link = f"/rolls/{roll['id']}/cleaning/{cleaning['id']}/correct"
    assert f'href="{link}"' in client.get(f"/rolls/{roll['id']}").get_data(as_text=True)
    form = client.get(link).get_data(as_text=True)
    assert 'value="laser"' in form and "one pass</textarea>" in form and 'name="version" value="1"' in form
    data = {"csrf_token": csrf_token, "version": "1", **body, "method": "soda blast", "notes": "two passes"}
    assert client.post(link, data=data).status_code == 303
    read = client.get(f"{URL}/{roll['id']}/cleanings/{cleaning['id']}").get_json()
    assert read["method"] == "soda blast" and read["notes"] == "two passes"
    assert read["changes"][0]["before"]["method"] == "laser"


def test_a_stale_correction_is_409_with_the_newer_entry_and_nothing_overwritten(client, csrf_token):
    roll = add_roll(client)
    entry = measure(client, roll["id"], 30, "1.48 BCM/in2")
    url = f"{URL}/{roll['id']}/measurements/{entry['id']}"
    assert client.put(url, json={"version": 1, "volume": "1.5 BCM/in2"}).status_code == 200
    link = f"/rolls/{roll['id']}/measurement/{entry['id']}/correct"
    response = client.post(link, data=correct_form(csrf_token, volume="1.84", method="my microscope"))
    assert response.status_code == 409
    page = response.get_data(as_text=True)
    assert "changed by someone else meanwhile" in page.lower() and "Nothing was overwritten" in page
    assert 'value="my microscope"' in page and 'value="1.84"' in page and 'name="version" value="2"' in page
    assert client.get(url).get_json()["volume"]["value"] == 1.5


def test_a_bad_correction_keeps_the_typed_words_with_the_message_beside_the_field(client, csrf_token):
    roll = add_roll(client)
    entry = measure(client, roll["id"], 30, "1.48 BCM/in2")
    link = f"/rolls/{roll['id']}/measurement/{entry['id']}/correct"
    response = client.post(link, data=correct_form(csrf_token, volume="1,8x", method="typed on the tablet"))
    assert response.status_code == 400
    page = response.get_data(as_text=True)
    assert 'id="e-m-volume"' in page and 'value="1,8x"' in page and 'value="typed on the tablet"' in page
    future = client.post(link, data=correct_form(csrf_token, measured_on=(TODAY + timedelta(days=3)).isoformat()))
    assert future.status_code == 400 and 'id="e-m-measured_on"' in future.get_data(as_text=True)
    read = client.get(f"{URL}/{roll['id']}/measurements/{entry['id']}").get_json()
    assert read["volume"]["value"] == 1.48 and read["changes"] == []


def test_correcting_needs_the_supervisor_and_the_csrf_token(client, locked):
    roll = add_roll(client)
    entry = measure(client, roll["id"], 30, "1.48 BCM/in2")
    link = f"/rolls/{roll['id']}/measurement/{entry['id']}/correct"
    assert client.post(link, data={k: v for k, v in correct_form("").items() if k != "csrf_token"}).status_code == 400
    assert client.get(f"{URL}/{roll['id']}/measurements/{entry['id']}").get_json()["changes"] == []
    # Locked: no Correct link for anyone not unlocked, and the form refuses a shop passcode.
    roll = add_roll(locked, headers={"X-Inkfilm-Passcode": SUPERVISOR})
    entry = measure(locked, roll["id"], 30, "1.48 BCM/in2", headers={"X-Inkfilm-Passcode": SHOP})
    link = f"/rolls/{roll['id']}/measurement/{entry['id']}/correct"
    assert "/correct" not in locked.get(f"/rolls/{roll['id']}").get_data(as_text=True)
    token = CSRF.search(locked.get(link).get_data(as_text=True)).group(1)
    refused = locked.post(link, data=correct_form(token, method="kept words"))
    assert refused.status_code == 403 and 'value="kept words"' in refused.get_data(as_text=True)
    assert 'id="e-m-passcode"' in refused.get_data(as_text=True)
    assert locked.post(link, data=correct_form(token, passcode=SHOP)).status_code == 403
    assert locked.get(f"{URL}/{roll['id']}/measurements/{entry['id']}").get_json()["changes"] == []
    assert locked.post(link, data=correct_form(token, passcode=SUPERVISOR)).status_code == 303
    assert f'href="{link}"' in locked.get(f"/rolls/{roll['id']}").get_data(as_text=True)
