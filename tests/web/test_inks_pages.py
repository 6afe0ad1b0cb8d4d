"""Inks pages: forms keep typed words with the message beside the field, CSRF, passcodes, versions,
a set's curve, chart and answers, register rolls, cautions, CSV import; the migration and the demo shop."""

from __future__ import annotations

import contextlib
import re
import sqlite3
from datetime import date, timedelta

import pytest

from calc.display import format_number
from tests.conftest import post_file
from tests.web.test_inks_api import (
    INK,
    INKS,
    SETS,
    SHOP,
    SUPERVISOR,
    add_ink,
    add_readings,
    add_set,
    count,
    exact_density,
)
from webapp import create_app
from webapp.common import db

TODAY = date.today()
CSRF = re.compile(r'name="csrf_token" value="([^"]+)"')


def text(response) -> str:
    return response.get_data(as_text=True)


@pytest.fixture
def csrf_token(client) -> str:
    return CSRF.search(text(client.get("/inks/new"))).group(1)


def form_ink(token, **changes):
    return {
        "csrf_token": token,
        "name": "Process cyan WB",
        "type": "water_based",
        "density": "1,03",
        "density_unit": "g/cm3",
        "solids_by_volume": "31",
        "solids_by_weight": "40",
        "price": "7.80",
        "price_per": "kg",
        "notes": "",
        **changes,
    }


def form_reading(token, **changes):
    return {
        "csrf_token": token,
        "read_on": TODAY.isoformat(),
        "density": "1.21",
        "basis": "volume",
        "value": "4.5",
        "volume_unit": "BCM/in2",
        "film_unit": "um",
        "transfer": "25",
        "notes": "",
        **changes,
    }


@pytest.mark.parametrize("path", ["/inks", "/inks/new", "/ink-sets", "/ink-sets/new", "/inks/import"])
def test_pages_are_whole_documents_with_no_inline_script_or_style(client, path):
    response = client.get(path)
    assert response.status_code == 200
    body = text(response)
    assert body.startswith("<!doctype html>") and 'href="/inks" aria-current="page"' in body
    assert re.findall(r"<script(?![^>]*\bsrc=)[^>]*>", body) == []
    assert re.findall(r"\sstyle=|<style|\son[a-z]+=|\shx-on|https?://", body) == []


def test_add_an_ink_through_the_form_then_edit_it(client, csrf_token):
    response = client.post("/inks/new", data=form_ink(csrf_token))
    assert response.status_code == 303
    (ink,) = client.get(INKS).get_json()["inks"]
    assert ink["density"]["value"] == 1.03 and ink["solids_by_volume"] == 0.31 and ink["price"] == 7.8
    page = text(client.get(f"/inks/{ink['id']}/edit"))
    assert 'value="31"' in page and 'value="1.03"' in page and 'name="version" value="1"' in page
    edited = client.post(f"/inks/{ink['id']}/edit", data=form_ink(csrf_token, version="1", price="8.10"))
    assert edited.status_code == 303
    assert client.get(f"{INKS}/{ink['id']}").get_json()["price"] == 8.1
    assert "8.10 per kg" in text(client.get("/inks"))


@pytest.mark.parametrize(
    "changes, field",
    [
        ({"density": "heavy"}, "density"),
        ({"density": "12"}, "density"),
        ({"solids_by_volume": "140"}, "solids_by_volume"),
        ({"price": "-2"}, "price"),
        ({"name": ""}, "name"),
        ({"type": "oil"}, "type"),
        ({"density_unit": "m**9**9**9"}, "density_unit"),
    ],
)
def test_a_bad_ink_form_names_the_field_and_keeps_the_words(client, app, csrf_token, changes, field):
    response = client.post("/inks/new", data=form_ink(csrf_token, notes="from the old sheet", **changes))
    assert response.status_code == 400
    page = text(response)
    assert f'id="e-{field}"' in page and "from the old sheet" in page
    for value in changes.values():
        if field != "type" and field != "density_unit":
            assert f'value="{value}"' in page
    assert count(app, "ink") == 0


def test_solvent_and_uv_inks_show_their_caution_on_list_edit_pick_and_set_page(client):
    solvent = add_ink(client, name="Black SB", type="solvent_based")
    uv = add_ink(client, name="Orange UV", type="uv")
    listing = text(client.get("/inks"))
    assert "flammable liquid" in listing and "skin and eye sensitiser" in listing and "SDS" in listing
    assert "Flammable liquid" in text(client.get(f"/inks/{solvent['id']}/edit"))
    pick = text(client.get("/ink-sets/new"))
    assert "Black SB (solvent-based — flammable)" in pick and "Orange UV (UV — skin/eye sensitiser)" in pick
    ink_set = add_set(client, uv["id"])
    assert "sensitise skin and eyes" in text(client.get(f"/ink-sets/{ink_set['id']}"))


def test_forms_without_the_csrf_token_change_nothing(client, app):
    assert client.post("/inks/new", data=form_ink("")).status_code == 400
    ink = add_ink(client)
    ink_set = add_set(client, ink["id"])
    assert client.post(f"/ink-sets/{ink_set['id']}/readings", data=form_reading("")).status_code == 400
    assert client.post(f"/inks/{ink['id']}/delete", data={"version": "1"}).status_code == 400
    assert count(app, "ink") == 1 and count(app, "ink_reading") == 0


@pytest.fixture
def locked(tmp_path):
    app = create_app(
        {"TESTING": True, "DATA_DIR": str(tmp_path), "SHOP_PASSCODE": SHOP, "SUPERVISOR_PASSCODE": SUPERVISOR}
    )
    return app.test_client()


def test_passcodes_on_forms_keep_what_was_typed(locked):
    token = CSRF.search(text(locked.get("/inks/new"))).group(1)
    refused = locked.post("/inks/new", data=form_ink(token, notes="typed on the floor"))
    assert refused.status_code == 403
    assert "typed on the floor" in text(refused) and 'id="e-passcode"' in text(refused)
    wrong = locked.post("/inks/new", data=form_ink(token, passcode="nope"))
    assert wrong.status_code == 403
    assert locked.post("/inks/new", data=form_ink(token, passcode=SHOP)).status_code == 303
    (ink,) = locked.get(INKS).get_json()["inks"]
    # Deleting needs the supervisor, even from an unlocked shop browser.
    delete = locked.post(f"/inks/{ink['id']}/delete", data={"csrf_token": token, "version": "1"})
    assert delete.status_code == 403 and "supervisor" in text(delete)
    done = locked.post(f"/inks/{ink['id']}/delete", data={"csrf_token": token, "version": "1", "passcode": SUPERVISOR})
    assert done.status_code == 303
    assert locked.get(INKS).get_json()["total"] == 0


def test_stale_ink_edit_gets_409_with_the_newer_one_and_the_typed_words(client, csrf_token):
    ink = add_ink(client)
    client.patch(f"{INKS}/{ink['id']}", json={"version": 1, "price": 9.25})
    response = client.post(f"/inks/{ink['id']}/edit", data=form_ink(csrf_token, version="1", notes="my words"))
    assert response.status_code == 409
    page = text(response)
    assert "9.25 per kg" in page and "my words" in page and 'name="version" value="2"' in page
    assert client.get(f"{INKS}/{ink['id']}").get_json()["notes"] == INK["notes"]


def test_an_ink_in_use_is_not_deleted_and_the_page_says_why(client, csrf_token):
    ink = add_ink(client)
    add_set(client, ink["id"], name="Cyan on foil")
    response = client.post(f"/inks/{ink['id']}/delete", data={"csrf_token": csrf_token, "version": "1"})
    assert response.status_code == 409 and "Cyan on foil" in text(response)
    assert client.get(INKS).get_json()["total"] == 1


# --- ink sets ------------------------------------------------------------------------------------


def test_add_a_set_then_readings_by_form_and_see_the_fit_and_chart(client, csrf_token):
    ink = add_ink(client)
    response = client.post(
        "/ink-sets/new",
        data={"csrf_token": csrf_token, "name": "Cyan on PE", "ink": str(ink["id"]), "substrate": "PE", "notes": ""},
    )
    assert response.status_code == 303
    page_url = response.headers["Location"].split("#")[0]
    ink_set = client.get(SETS).get_json()["ink_sets"][0]
    assert "No curve yet" in text(client.get(page_url))
    for volume, density in (("1.5", "0,62"), ("2.5", "0.88"), ("3.5", "1.08"), ("4.5", "1.22"), ("6", "1.37")):
        added = client.post(page_url + "/readings", data=form_reading(csrf_token, value=volume, density=density))
        assert added.status_code == 303
        assert "next_basis=volume" in added.headers["Location"]
    film = client.post(page_url + "/readings", data=form_reading(csrf_token, basis="film", value="3.1", density="1.45"))
    assert film.status_code == 303
    assert client.get(f"{SETS}/{ink_set['id']}").get_json()["reading_count"] == 6
    page = text(client.get(page_url))
    assert 'id="set-fit"' in page and "Ceiling D∞" in page and 'class="strength-chart"' in page
    assert page.count('class="reading"') == 6
    assert "Anilox volume for density 1.4 at 25 % transfer" in page


def test_a_bad_reading_comes_back_beside_its_field_with_the_typed_words(client, csrf_token):
    ink_set = add_set(client, add_ink(client)["id"])
    url = f"/ink-sets/{ink_set['id']}/readings"
    cases = [
        ({"density": "-0.3"}, "r-density", "cannot be negative"),
        ({"value": "lots"}, "r-value", "not a number"),
        ({"transfer": "140"}, "r-transfer", "percentage"),
        ({"read_on": (TODAY + timedelta(days=3)).isoformat()}, "r-read_on", "future"),
        ({"read_on": "2999-01-01"}, "r-read_on", "from 1950 to 2200"),
        ({"volume_unit": "m**9**9**9"}, "r-volume_unit", "choose one"),
    ]
    for changes, key, words in cases:
        response = client.post(url, data=form_reading(csrf_token, notes="pressrun 7", **changes))
        assert response.status_code == 400, changes
        page = text(response)
        assert f'id="e-{key}"' in page and words in page and 'value="pressrun 7"' in page, changes
    assert client.get(f"{SETS}/{ink_set['id']}").get_json()["reading_count"] == 0


def test_the_set_page_answers_volume_for_target_and_density_from_volume(client):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    url = f"/ink-sets/{ink_set['id']}"
    page = text(client.get(f"{url}?target_density=1.3&transfer=25&volume=4&volume_unit=BCM/in2"))
    api = client.post(f"{SETS}/{ink_set['id']}/volume-for", json={"target_density": 1.3, "transfer": 0.25}).get_json()
    shown = re.search(r'data-key="anilox_volume"><data class="num" value="([^"]+)"', page).group(1)
    assert float(shown) == pytest.approx(api["anilox_volume"]["value"], rel=1e-6)
    assert 'id="density-from"' in page and "Density from 4 BCM/in² at 25 % transfer" in page
    unreachable = text(client.get(f"{url}?target_density=1.9"))
    assert 'id="e-target_density"' in unreachable and "cannot be reached" in unreachable
    assert 'value="1.9"' in unreachable
    bad = text(client.get(f"{url}?volume=abc"))
    assert 'id="e-volume"' in bad and 'value="abc"' in bad


def test_the_set_page_tells_what_each_register_roll_gives(client):
    from tests.web.test_rolls_api import ROLL, add_roll, measure

    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    roll = add_roll(client, **{**ROLL, "nominal_volume": "5 BCM/in2", "certificate_volume": None})
    measure(client, roll["id"], 10, "4.4 BCM/in2")
    page = re.sub(
        r"\s+", " ", re.sub(r"<[^>]+>", "", text(client.get(f"/ink-sets/{ink_set['id']}?target_density=1.3")))
    )
    # 1.6 (1 − e^(−0.9 × 4.4 × 1.55 × 0.25)) = 1.255 (by hand; the readings lie on that curve)
    assert f"AN-101 (4.4 BCM/in²): at 88 % of nominal this roll gives ≈ {format_number(exact_density(4.4))}" in page
    assert exact_density(4.4) == pytest.approx(1.2550, abs=5e-4)
    assert "the target 1.3 needs ≥ 4.8 BCM/in²" in page and "falls short" in page


def test_stale_set_edit_gets_409_and_deleting_a_set_needs_its_version(client, csrf_token):
    ink = add_ink(client)
    ink_set = add_set(client, ink["id"])
    client.patch(f"{SETS}/{ink_set['id']}", json={"version": 1, "substrate": "foil"})
    data = {
        "csrf_token": csrf_token,
        "version": "1",
        "name": "Cyan on PE",
        "ink": str(ink["id"]),
        "substrate": "paper",
        "notes": "mine",
    }
    response = client.post(f"/ink-sets/{ink_set['id']}/edit", data=data)
    assert response.status_code == 409 and "foil" in text(response) and "mine" in text(response)
    assert (
        client.post(f"/ink-sets/{ink_set['id']}/delete", data={"csrf_token": csrf_token, "version": "2"}).status_code
        == 303
    )
    assert client.get(SETS).get_json()["total"] == 0


def test_removing_a_reading_from_the_page(client, csrf_token):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    reading = client.get(f"{SETS}/{ink_set['id']}/readings").get_json()["readings"][0]
    page = text(client.get(f"/ink-sets/{ink_set['id']}"))
    assert f"/readings/{reading['id']}/remove" in page
    done = client.post(
        f"/ink-sets/{ink_set['id']}/readings/{reading['id']}/remove", data={"csrf_token": csrf_token, "version": "1"}
    )
    assert done.status_code == 303
    assert client.get(f"{SETS}/{ink_set['id']}").get_json()["reading_count"] == 5


def test_unknown_pages_are_404(client):
    assert client.get("/ink-sets/99").status_code == 404
    assert client.get("/inks/99/edit").status_code == 404


# --- CSV import page -------------------------------------------------------------------------------


def test_the_import_page_lists_each_problem_by_row_and_imports_nothing(client, app, csrf_token):
    bad = b"name,type,density\r\nCyan,water_based,1.03 g/cm3\r\nWhite,oil,1.3 g/cm3\r\n"
    response = post_file(client, "/inks/import", {"csrf_token": csrf_token, "table": "inks"}, "file", bad, "inks.csv")
    assert response.status_code == 400
    page = text(response)
    assert "Nothing was imported" in page and '<td class="num">3</td><td>type</td>' in page
    assert count(app, "ink") == 0
    good = b"name,type,density\r\nCyan,water_based,1.03 g/cm3\r\n"
    done = post_file(client, "/inks/import", {"csrf_token": csrf_token, "table": "inks"}, "file", good, "inks.csv")
    assert done.status_code == 303 and count(app, "ink") == 1
    not_utf8 = post_file(
        client, "/inks/import", {"csrf_token": csrf_token, "table": "inks"}, "file", b"\xff\xfe", "x.csv"
    )
    assert not_utf8.status_code == 400 and "UTF-8" in text(not_utf8)
    assert client.get("/inks/export.csv").get_data(as_text=True).startswith("name,type,density")
    assert client.get("/ink-sets/export/readings.csv").status_code == 200


# --- migration and demo ----------------------------------------------------------------------------


def test_migration_adds_the_ink_tables_to_a_file_of_the_previous_version(tmp_path):
    path = tmp_path / db.FILENAME
    previous = db.version_before("inks")
    with contextlib.closing(sqlite3.connect(path)) as old:
        for number in range(previous):
            for statement in db._statements(db.MIGRATIONS[number]):
                old.execute(statement)
        old.execute(
            "INSERT INTO snippet (uid, kind, title, inputs, results, created_at, updated_at)"
            " VALUES ('u', 'film', 'kept', '{}', '{}', 'x', 'x')"
        )
        old.execute(f"PRAGMA user_version = {previous}")
        old.commit()
    assert db.migrate(path) == previous
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("SELECT title FROM snippet").fetchone()[0] == "kept"
        assert conn.execute("SELECT count(*) FROM roll").fetchone()[0] == 0
        for table in ("ink", "ink_set", "ink_reading"):
            assert conn.execute(f"SELECT count(*) FROM {table}").fetchone()[0] == 0
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION


def test_the_demo_shop_has_inks_and_three_fitted_sets_and_is_filled_once(tmp_path):
    from webapp.inks import demo

    assert demo.fill(tmp_path) == len(demo.INKS)
    assert demo.fill(tmp_path) == 0
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path)})
    client = app.test_client()
    sets = client.get(SETS).get_json()["ink_sets"]
    assert len(sets) == 3
    for ink_set, (_, _, _, d_inf, m, _, readings) in zip(
        sorted(sets, key=lambda s: s["name"]), sorted(demo.SETS, key=lambda s: s[0].upper()), strict=True
    ):
        fit = ink_set["fit"]
        assert fit["fitted"] and fit["count"] == len(readings)
        # The invented curve is found again, within four standard errors (the noise is invented too).
        assert abs(fit["d_inf"] - d_inf) < 4 * fit["d_inf_se"]
        assert abs(fit["m"]["value"] - m) < 4 * fit["m_se"]["value"]
        assert fit["residual_sd"] > 0.003  # readings with noise, not points on the curve
    inks = client.get(INKS).get_json()["inks"]
    assert {ink["type"] for ink in inks} == {"water_based", "solvent_based", "uv"}
    for ink_set in sets:
        assert client.get(f"/ink-sets/{ink_set['id']}").status_code == 200


# --- picking an ink in the film chain --------------------------------------------------------------


def test_the_film_chain_offers_the_shop_s_inks_and_fills_their_fields_when_picked(client):
    assert "ink-pick" not in text(client.get("/film"))  # no inks: the film chain is as it was
    ink = add_ink(client, name="Black SB", type="solvent_based", density="0.98 g/cm3", solids_by_volume=0.27)
    page = text(client.get("/film"))
    assert 'data-ink-pick="film-form"' in page and "Black SB (solvent-based — flammable)" in page
    assert re.findall(r"<script(?![^>]*\bsrc=)[^>]*>", page) == []
    # Without script: the Fill button's GET comes back as the film chain with the ink's values, the typed ones kept.
    response = client.get(f"/inks/pick?to=film&ink={ink['id']}&anilox_volume=3.2&anilox_unit=BCM/in2&other=x")
    assert response.status_code == 303
    location = response.headers["Location"]
    assert location.startswith("/film?") and "other" not in location
    filled = text(client.get(location))
    assert 'value="0.98"' in filled and 'value="27"' in filled and 'value="3.2"' in filled
    assert re.search(rf'data-ink-caution="{ink["id"]}">', filled)  # the picked ink's caution, shown
    assert "Flammable liquid" in filled
    # The film chain's answer uses them: dry film = wet film × 27 % solids.
    assert '<tr data-key="dry"' in filled
    assert client.get("/inks/pick?ink=nope&anilox_volume=4").headers["Location"] == "/film?anilox_volume=4"
    assert client.get("/inks/pick?ink=99999999999999999999999").headers["Location"] == "/film"
