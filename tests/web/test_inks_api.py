"""``/api/v1/inks`` and ``/api/v1/ink-sets``: inks with versions and cautions, sets with readings and their fit,
the answers on a set's curve and on the register's rolls, passcodes, CSRF, bad input, CSV."""

from __future__ import annotations

import contextlib
import math
import random
from datetime import date, timedelta

import pytest

from tests.conftest import csrf_from
from webapp import create_app
from webapp.common import db

INKS, SETS = "/api/v1/inks", "/api/v1/ink-sets"
SHOP, SUPERVISOR = "press-floor-7", "super-visor-9"
SHOP_HEADER = {"X-Inkfilm-Passcode": SHOP}
SUPER_HEADER = {"X-Inkfilm-Passcode": SUPERVISOR}
TODAY = date.today()
INK = {
    "name": "Process cyan WB",
    "type": "water_based",
    "density": "1.03 g/cm3",
    "solids_by_volume": 0.31,
    "solids_by_weight": 0.4,
    "price": 7.8,
    "price_per": "kg",
    "notes": "press-ready at 24 s",
}
# A curve with D∞ = 1.6 and m = 0.9 /µm; readings printed at 25 % transfer from these volumes (BCM/in²).
D_INF, M = 1.6, 0.9
VOLUMES = (1.5, 2.5, 3.5, 4.5, 6.0, 8.0)
BCM_TO_CM3_M2 = 1.5500031  # 1 BCM/in² = 1e9 µm³ / 645.16 mm² (NIST SP 811 inch = 25.4 mm exactly)


def exact_density(volume_bcm: float, transfer: float = 0.25) -> float:
    return D_INF * (1 - math.exp(-M * volume_bcm * BCM_TO_CM3_M2 * transfer))


def assert_error(response, status, field):
    assert response.status_code == status, response.get_data(as_text=True)
    error = response.get_json()["error"]
    assert error["field"] == field, error
    assert error["message"]
    return error["message"]


def add_ink(client, headers=None, **changes):
    response = client.post(INKS, json={**INK, **changes}, headers=headers or {})
    assert response.status_code == 201, response.get_json()
    return response.get_json()


def add_set(client, ink, headers=None, **changes):
    body = {"name": "Cyan on white PE", "ink": ink, "substrate": "white PE film", **changes}
    response = client.post(SETS, json=body, headers=headers or {})
    assert response.status_code == 201, response.get_json()
    return response.get_json()


def add_readings(client, ink_set, volumes=VOLUMES, noise=0.0, seed=7, headers=None):
    rng = random.Random(seed)
    for volume in volumes:
        body = {
            "density": round(exact_density(volume) + rng.gauss(0, noise), 4),
            "anilox_volume": f"{volume} BCM/in2",
            "transfer": 0.25,
            "read_on": (TODAY - timedelta(days=3)).isoformat(),
        }
        response = client.post(f"{SETS}/{ink_set}/readings", json=body, headers=headers or {})
        assert response.status_code == 201, response.get_json()


def count(app, table):
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        return conn.execute(f"SELECT count(*) FROM {table}").fetchone()[0]


@pytest.fixture
def locked_app(tmp_path):
    return create_app(
        {"TESTING": True, "DATA_DIR": str(tmp_path / "d"), "SHOP_PASSCODE": SHOP, "SUPERVISOR_PASSCODE": SUPERVISOR}
    )


# --- inks ----------------------------------------------------------------------------------------


def test_create_read_list_an_ink(client):
    ink = add_ink(client)
    assert ink["density"] == {"value": 1.03, "unit": "g/cm3"}
    assert ink["solids_by_volume"] == 0.31 and ink["price"] == 7.8 and ink["price_per"] == "kg"
    assert ink["caution"] is None and ink["version"] == 1
    assert client.get(f"{INKS}/{ink['id']}").get_json() == ink
    listed = client.get(INKS).get_json()
    assert listed["total"] == 1 and listed["inks"][0]["name"] == "Process cyan WB"


def test_an_imperial_density_is_kept_in_g_per_cm3(client):
    ink = add_ink(client, density="8.6 lb/gal", price=3.9, price_per="lb")
    # 8.6 lb/gal × 0.45359237 kg/lb / 3.785411784 L/gal = 1.030 5 g/cm³ (NIST SP 811, US gallon)
    assert ink["density"]["value"] == pytest.approx(1.03051, abs=5e-6)
    assert ink["price_per"] == "lb"


@pytest.mark.parametrize(
    "changes, field",
    [
        ({"name": "  "}, "name"),
        ({"type": "oil"}, "type"),
        ({"density": "1.03 BCM/in2"}, "density"),
        ({"density": "12 g/cm3"}, "density"),
        ({"density": "1 m**9**9**9"}, "density"),
        ({"solids_by_volume": 1.4}, "solids_by_volume"),
        ({"solids_by_weight": -0.1}, "solids_by_weight"),
        ({"price": -3}, "price"),
        ({"price": "cheap"}, "price"),
        ({"price_per": "gal"}, "price_per"),
        ({"colour": "cyan"}, "colour"),
        ({"notes": "x" * 2001}, "notes"),
    ],
)
def test_bad_inks_are_refused_naming_the_field_and_nothing_is_written(client, app, changes, field):
    assert_error(client.post(INKS, json={**INK, **changes}), 400, field)
    assert count(app, "ink") == 0


def test_solvent_and_uv_inks_carry_their_caution(client):
    solvent = add_ink(client, name="Black SB", type="solvent-based")
    uv = add_ink(client, name="Orange UV", type="UV")
    assert solvent["type"] == "solvent_based" and "Flammable liquid" in solvent["caution"]
    assert uv["type"] == "uv" and "sensitise skin and eyes" in uv["caution"]
    for answer in (solvent, uv):
        assert "SDS" in answer["caution"]
    ink_set = add_set(client, uv["id"])
    assert "sensitise" in ink_set["ink"]["caution"]


def test_a_duplicate_name_is_refused_whatever_its_case(client, app):
    add_ink(client)
    message = assert_error(client.post(INKS, json={**INK, "name": "process  CYAN wb"}), 400, "name")
    assert "already" in message
    assert count(app, "ink") == 1


def test_update_with_version_and_a_stale_version_gets_409_with_the_current_ink(client):
    ink = add_ink(client)
    changed = client.patch(f"{INKS}/{ink['id']}", json={"version": 1, "price": 8.1})
    assert changed.status_code == 200 and changed.get_json()["price"] == 8.1 and changed.get_json()["version"] == 2
    stale = client.put(f"{INKS}/{ink['id']}", json={"version": 1, "price": 1.0})
    assert_error(stale, 409, "version")
    assert stale.get_json()["current"]["price"] == 8.1 and stale.get_json()["current"]["version"] == 2
    assert_error(client.patch(f"{INKS}/{ink['id']}", json={"price": 2}), 400, "version")
    assert_error(client.patch(f"{INKS}/{ink['id']}", json={"version": 2, "density": "heavy"}), 400, "density")
    assert client.get(f"{INKS}/{ink['id']}").get_json()["price"] == 8.1


def test_an_ink_that_a_set_uses_cannot_be_deleted(client, app):
    ink = add_ink(client)
    ink_set = add_set(client, ink["id"])
    message = assert_error(client.delete(f"{INKS}/{ink['id']}?version=1"), 409, "id")
    assert "Cyan on white PE" in message
    assert client.delete(f"{SETS}/{ink_set['id']}?version=1").status_code == 200
    assert_error(client.delete(f"{INKS}/{ink['id']}"), 400, "version")
    assert client.delete(f"{INKS}/{ink['id']}?version=1").get_json()["deleted"]["name"] == INK["name"]
    assert count(app, "ink") == 0
    assert_error(client.get(f"{INKS}/{ink['id']}"), 404, "id")


# --- ink sets, readings and the fit -----------------------------------------------------------------


def test_a_set_with_too_few_readings_says_why_it_has_no_curve(client):
    ink_set = add_set(client, add_ink(client)["id"])
    assert ink_set["fit"]["fitted"] is False and "at least 3 readings" in ink_set["fit"]["reason"]
    add_readings(client, ink_set["id"], volumes=(2.0, 4.0))
    answer = client.get(f"{SETS}/{ink_set['id']}").get_json()
    assert answer["reading_count"] == 2 and answer["fit"] == {
        "fitted": False,
        "reason": answer["fit"]["reason"],
    }
    assert "this has 2" in answer["fit"]["reason"]
    assert_error(
        client.post(f"{SETS}/{ink_set['id']}/volume-for", json={"target_density": 1.3, "transfer": 0.25}),
        400,
        "readings",
    )


def test_readings_that_do_not_level_off_give_no_number(client):
    ink_set = add_set(client, add_ink(client)["id"])
    for volume, density in ((1.0, 0.10), (2.0, 0.20), (3.0, 0.30), (4.0, 0.40)):  # a straight line
        body = {"density": density, "film": f"{volume} um"}
        assert client.post(f"{SETS}/{ink_set['id']}/readings", json=body).status_code == 201
    fit = client.get(f"{SETS}/{ink_set['id']}").get_json()["fit"]
    assert fit["fitted"] is False and "do not level off" in fit["reason"]
    assert "d_inf" not in fit


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_the_fit_recovers_the_curve_the_readings_were_made_with(client, seed):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"], noise=0.01, seed=seed)
    fit = client.get(f"{SETS}/{ink_set['id']}").get_json()["fit"]
    assert fit["fitted"] is True and fit["count"] == 6
    # Within three of the standard errors it reports (the noise is 0.01 in density).
    assert abs(fit["d_inf"] - D_INF) < 3 * fit["d_inf_se"] + 1e-9
    assert abs(fit["m"]["value"] - M) < 3 * fit["m_se"]["value"] + 1e-9
    assert 0.002 < fit["residual_sd"] < 0.03


def test_the_set_s_answers_agree_with_the_stateless_density_api(client):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    readings = [
        {"density": r["density"], "film": f"{r['film']['value']!r} um"}
        for r in client.get(f"{SETS}/{ink_set['id']}/readings").get_json()["readings"]
    ]
    body = {"target_density": 1.3, "transfer": 0.25}
    mine = client.post(f"{SETS}/{ink_set['id']}/volume-for", json=body).get_json()
    stateless = client.post("/api/v1/density/volume-for", json={**body, "readings": readings}).get_json()
    assert mine == stateless
    # Exact readings: x = −ln(1 − 1.3/1.6)/0.9 = 1.859 98 µm; V = x / 0.25 = 7.439 9 cm³/m² (by hand).
    assert mine["film"]["value"] == pytest.approx(1.85998, abs=1e-4)
    assert mine["anilox_volume"]["value"] == pytest.approx(7.4399, abs=5e-4)
    from_volume = client.post(
        f"{SETS}/{ink_set['id']}/density-from", json={"anilox_volume": "4 BCM/in2", "transfer": 0.25}
    ).get_json()
    assert from_volume["density"] == pytest.approx(exact_density(4.0), abs=1e-4)
    # At or above the ceiling: said so at the field, never a number.
    message = assert_error(
        client.post(f"{SETS}/{ink_set['id']}/volume-for", json={"target_density": 1.7, "transfer": 0.25}),
        400,
        "target_density",
    )
    assert "cannot be reached" in message and "1.6" in message


@pytest.mark.parametrize(
    "body, field",
    [
        ({"density": -0.2, "film": "1 um"}, "density"),
        ({"density": 5.5, "film": "1 um"}, "density"),
        ({"density": 1.1, "film": "1 g/cm3"}, "film"),
        ({"density": 1.1, "film": "1 um", "anilox_volume": "4 BCM/in2"}, "film"),
        ({"density": 1.1}, "film"),
        ({"density": 1.1, "anilox_volume": "4 BCM/in2"}, "transfer"),
        ({"density": 1.1, "anilox_volume": "4 BCM/in2", "transfer": 1.5}, "transfer"),
        ({"density": 1.1, "anilox_volume": "4 lpi", "transfer": 0.25}, "anilox_volume"),
        ({"density": 1.1, "film": "1 um", "read_on": "yesterday"}, "read_on"),
        ({"density": 1.1, "film": "1 um", "read_on": (TODAY + timedelta(days=2)).isoformat()}, "read_on"),
        ({"film": "1 um"}, "density"),
        ({"density": "strong", "film": "1 um"}, "density"),
    ],
)
def test_bad_readings_name_the_field_and_write_nothing(client, app, body, field):
    ink_set = add_set(client, add_ink(client)["id"])
    assert_error(client.post(f"{SETS}/{ink_set['id']}/readings", json=body), 400, field)
    assert count(app, "ink_reading") == 0


def test_a_set_needs_an_ink_from_the_list(client, app):
    assert_error(client.post(SETS, json={"name": "x", "ink": 99, "substrate": "PE"}), 400, "ink")
    assert_error(client.post(SETS, json={"name": "x", "ink": "cyan", "substrate": "PE"}), 400, "ink")
    ink = add_ink(client)
    assert_error(client.post(SETS, json={"name": "x", "ink": ink["id"], "substrate": " "}), 400, "substrate")
    add_set(client, ink["id"])
    assert_error(client.post(SETS, json={"name": "CYAN ON WHITE PE", "ink": ink["id"], "substrate": "PE"}), 400, "name")
    assert count(app, "ink_set") == 1


def test_set_and_reading_versions_and_deleting_a_set_deletes_its_readings(client, app):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    url = f"{SETS}/{ink_set['id']}"
    assert client.patch(url, json={"version": 1, "substrate": "clear PE"}).get_json()["substrate"] == "clear PE"
    stale = client.patch(url, json={"version": 1, "substrate": "paper"})
    assert_error(stale, 409, "version")
    assert stale.get_json()["current"]["substrate"] == "clear PE"
    reading = client.get(f"{url}/readings").get_json()["readings"][0]
    reading_url = f"{url}/readings/{reading['id']}"
    corrected = client.put(reading_url, json={"version": 1, "film": "0.9 um"}).get_json()
    assert corrected["film"]["value"] == 0.9 and corrected["anilox_volume"] is None and corrected["version"] == 2
    assert_error(client.delete(f"{reading_url}?version=1"), 409, "version")
    assert client.delete(f"{reading_url}?version=2").status_code == 200
    assert_error(client.get(reading_url), 404, "id")
    assert client.delete(f"{url}?version=2").status_code == 200
    assert count(app, "ink_reading") == 0 and count(app, "ink_set") == 0
    assert_error(client.get(url), 404, "id")


def test_register_rolls_are_judged_on_their_latest_measured_volume(client):
    from tests.web.test_rolls_api import ROLL, add_roll, measure

    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    roll = add_roll(client, **{**ROLL, "nominal_volume": "5 BCM/in2", "certificate_volume": None})
    measure(client, roll["id"], 10, "4.4 BCM/in2")  # 88 % of nominal
    answer = client.get(f"{SETS}/{ink_set['id']}/rolls?target_density=1.3&transfer=0.25").get_json()
    (item,) = answer["rolls"]
    assert item["percent_of_nominal"] == pytest.approx(88.0)
    assert item["volume"] == {"value": 4.4, "unit": "BCM/in2"} and item["judged_on"] == "measured"
    assert item["density"] == pytest.approx(exact_density(4.4), abs=1e-4)
    # The target needs 7.4399 cm³/m² = 4.8000 BCM/in² (÷ 1.5500031): more than the roll's 4.4.
    assert answer["needed_volume"]["value"] == pytest.approx(7.4399 / BCM_TO_CM3_M2, abs=5e-4)
    assert item["reaches_target"] is False
    assert_error(client.get(f"{SETS}/{ink_set['id']}/rolls?transfer=lots"), 400, "transfer")


# --- passcodes and CSRF --------------------------------------------------------------------------


def test_writing_needs_the_shop_passcode_and_deleting_the_supervisors(locked_app):
    client = locked_app.test_client()
    assert_error(client.post(INKS, json=INK), 401, "X-Inkfilm-Passcode")
    assert_error(client.post(INKS, json=INK, headers={"X-Inkfilm-Passcode": "wrong"}), 403, "X-Inkfilm-Passcode")
    ink = add_ink(client, headers=SHOP_HEADER)
    ink_set = add_set(client, ink["id"], headers=SHOP_HEADER)
    assert_error(
        client.post(f"{SETS}/{ink_set['id']}/readings", json={"density": 1, "film": "1 um"}), 401, "X-Inkfilm-Passcode"
    )
    add_readings(client, ink_set["id"], headers=SHOP_HEADER)
    assert client.patch(f"{INKS}/{ink['id']}", json={"version": 1, "price": 9}, headers=SHOP_HEADER).status_code == 200
    assert_error(client.delete(f"{SETS}/{ink_set['id']}?version=1", headers=SHOP_HEADER), 403, "X-Inkfilm-Passcode")
    assert_error(
        client.post(f"{INKS}/import", json={"csv": "name,type,density\n"}, headers=SHOP_HEADER),
        403,
        "X-Inkfilm-Passcode",
    )
    assert client.delete(f"{SETS}/{ink_set['id']}?version=1", headers=SUPER_HEADER).status_code == 200
    # Reading stays open.
    assert client.get(INKS).status_code == 200 and client.get(SETS).status_code == 200


def test_an_unlocked_browser_writing_needs_the_csrf_header(locked_app):
    client = locked_app.test_client()
    token = csrf_from(client)
    assert client.post("/unlock", data={"csrf_token": token, "passcode": SHOP, "next": "/inks"}).status_code == 303
    assert_error(client.post(INKS, json=INK), 403, "X-CSRF-Token")
    assert client.post(INKS, json=INK, headers={"X-CSRF-Token": token}).status_code == 201


def test_writes_must_be_json(client):
    assert client.post(INKS, data="name=x", content_type="application/x-www-form-urlencoded").status_code == 415


@pytest.mark.parametrize(
    "address", [f"{INKS}/9223372036854775808", f"{SETS}/9223372036854775808", f"{SETS}/1/readings/9223372036854775808"]
)
def test_an_id_beyond_sqlite_s_integers_is_not_found(client, address):
    assert_error(client.get(address), 404, "id")


# --- CSV -----------------------------------------------------------------------------------------

INKS_CSV = (
    "name,type,density,solids_by_volume,solids_by_weight,price,price_per,notes\r\n"
    "Cyan WB,water_based,1.03 g/cm3,0.31,0.4,7.8,kg,\r\n"
    "Black SB,solvent_based,8.2 lb/gal,0.27,,3.95,lb,thin with house blend\r\n"
)


def test_inks_csv_import_export_and_import_again_adds_nothing_twice(client, app):
    imported = client.post(f"{INKS}/import", json={"csv": INKS_CSV})
    assert imported.get_json() == {"added": 2, "already_here": 0}
    exported = client.get(f"{INKS}/export.csv")
    assert exported.mimetype == "text/csv"
    text = exported.get_data(as_text=True)
    assert "Black SB,solvent_based,0.982" in text
    assert client.post(f"{INKS}/import", json={"csv": text}).get_json() == {"added": 0, "already_here": 2}
    assert count(app, "ink") == 2


def test_a_csv_with_any_bad_row_imports_nothing_and_names_row_and_column(client, app):
    bad = INKS_CSV + "Magenta,oil,1.0 g/cm3,,,,,\r\nWhite,uv,12 g/cm3,,,,,\r\nCyan wb,uv,1.1 g/cm3,,,,,\r\n"
    response = client.post(f"{INKS}/import", json={"csv": bad})
    assert response.status_code == 400 and response.get_json()["imported"] == 0
    errors = response.get_json()["errors"]
    assert [(e["row"], e["field"]) for e in errors] == [(4, "type"), (5, "density"), (6, "name")]
    assert response.get_json()["error"]["field"] == "row 4: type"
    assert count(app, "ink") == 0
    header = client.post(f"{INKS}/import", json={"csv": "name,colour\r\nx,y\r\n"}).get_json()["errors"]
    assert {(e["row"], e["field"]) for e in header} == {(1, "colour"), (1, "type"), (1, "density")}


def test_readings_csv_round_trip_and_errors(client, app):
    ink_set = add_set(client, add_ink(client)["id"])
    add_readings(client, ink_set["id"])
    text = client.get(f"{SETS}/export/readings.csv").get_data(as_text=True)
    assert text.startswith("ink_set,read_on,density,film,anilox_volume,transfer,notes")
    assert text.count("Cyan on white PE") == 6
    assert client.post(f"{SETS}/import/readings", json={"csv": text}).get_json() == {"added": 0, "already_here": 6}
    more = (
        "ink_set,read_on,density,film,anilox_volume,transfer,notes\r\n"
        "Cyan on white PE,2024-03-05,1.45,3.5 um,,,\r\n"
        "No such set,2024-03-05,1.2,2 um,,,\r\n"
        "Cyan on white PE,2024-03-05,-1,2 um,,,\r\n"
        "Cyan on white PE,2024-03-05,1.2,,5 BCM/in2,,\r\n"
    )
    errors = client.post(f"{SETS}/import/readings", json={"csv": more}).get_json()["errors"]
    assert [(e["row"], e["field"]) for e in errors] == [(3, "ink_set"), (4, "density"), (5, "transfer")]
    assert count(app, "ink_reading") == 6
    good = more.split("\r\n")[0:2]
    assert client.post(f"{SETS}/import/readings", json={"csv": "\r\n".join(good)}).get_json()["added"] == 1
    assert_error(client.post(f"{SETS}/import/readings", json={"csv": 12}), 400, "csv")
