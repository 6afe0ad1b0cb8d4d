"""``/api/v1/rolls``: rolls with versions, measurements and cleanings, passcodes, CSRF, fitting, CSV."""

from __future__ import annotations

import contextlib
from datetime import date, timedelta

import pytest

from tests.conftest import csrf_from
from webapp import create_app
from webapp.common import db

URL = "/api/v1/rolls"
SHOP, SUPERVISOR = "press-floor-7", "super-visor-9"
SHOP_HEADER = {"X-Inkfilm-Passcode": SHOP}
SUPER_HEADER = {"X-Inkfilm-Passcode": SUPERVISOR}
TODAY = date.today()


def days_ago(n: int) -> str:
    return (TODAY - timedelta(days=n)).isoformat()


ROLL = {
    "roll_id": "AN-101",
    "screen": "900 lpi",
    "angle": 60,
    "nominal_volume": "1.8 BCM/in2",
    "certificate_volume": "1.85 BCM/in2",
    "engraved_on": days_ago(800),
    "press": "N2",
    "location": "station 3",
    "status": "in_use",
    "notes": "process cyan",
}


def assert_error(response, status, field):
    assert response.status_code == status, response.get_data(as_text=True)
    error = response.get_json()["error"]
    assert error["field"] == field, error
    assert error["message"]
    return error["message"]


def add_roll(client, headers=None, **changes):
    response = client.post(URL, json={**ROLL, **changes}, headers=headers or {})
    assert response.status_code == 201, response.get_json()
    return response.get_json()


def measure(client, roll, days, volume, condition="after_cleaning", headers=None):
    body = {
        "measured_on": days_ago(days),
        "volume": volume,
        "condition": condition,
        "method": "spread test",
        "by": "Ines",
    }
    response = client.post(f"{URL}/{roll}/measurements", json=body, headers=headers or {})
    assert response.status_code == 201, response.get_json()
    return response.get_json()


def count(app, table):
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        return conn.execute(f"SELECT count(*) FROM {table}").fetchone()[0]


@pytest.fixture
def locked_app(tmp_path):
    return create_app(
        {"TESTING": True, "DATA_DIR": str(tmp_path / "d"), "SHOP_PASSCODE": SHOP, "SUPERVISOR_PASSCODE": SUPERVISOR}
    )


# --- rolls -----------------------------------------------------------------------------------


def test_create_read_and_list_a_roll_with_its_wear(client):
    response = client.post(URL, json=ROLL)
    assert response.status_code == 201
    roll = response.get_json()
    assert response.headers["Location"].endswith(f"{URL}/{roll['id']}")
    assert roll["roll_id"] == "AN-101" and roll["version"] == 1 and roll["status"] == "in_use"
    assert roll["screen"] == {"value": 900.0, "unit": "lpi"}
    assert roll["nominal_volume"] == {"value": 1.8, "unit": "BCM/in2"}
    assert roll["wear"]["flags"] == ["measure"]
    assert roll["wear"]["slope_per_year"] is None
    assert client.get(response.headers["Location"]).get_json() == roll
    listed = client.get(URL).get_json()
    assert listed["total"] == 1 and listed["rolls"][0]["id"] == roll["id"]


def test_metric_inputs_are_kept_in_bcm_and_lpi(client):
    roll = add_roll(client, screen="354.33 lpcm", nominal_volume="2.79 cm3/m2", certificate_volume=None)
    assert roll["screen"]["value"] == pytest.approx(900.0, rel=1e-4)
    # 2.79 cm³/m² ÷ 1.5500031 cm³/m² per BCM/in² (exact from the inch, NIST SP 811)
    assert roll["nominal_volume"]["value"] == pytest.approx(1.8000, abs=1e-4)


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"roll_id": ""}, "roll_id"),
        ({"screen": "900 BCM/in2"}, "screen"),
        ({"angle": 50}, "angle"),
        ({"nominal_volume": "1.8 lpi"}, "nominal_volume"),
        ({"nominal_volume": "1.8 apples"}, "nominal_volume"),
        ({"certificate_volume": "2 g"}, "certificate_volume"),
        ({"engraved_on": "yesterday"}, "engraved_on"),
        ({"engraved_on": (TODAY + timedelta(days=3)).isoformat()}, "engraved_on"),
        ({"status": "lost"}, "status"),
        ({"colour": "blue"}, "colour"),
        ({"notes": "n" * 4001}, "notes"),
    ],
)
def test_bad_rolls_are_refused_naming_the_field_and_nothing_is_written(client, app, changes, field):
    assert_error(client.post(URL, json={**ROLL, **changes}), 400, field)
    assert count(app, "roll") == 0


def test_a_duplicate_shop_id_is_refused_whatever_its_case(client, app):
    add_roll(client)
    message = assert_error(client.post(URL, json={**ROLL, "roll_id": " an-101 "}), 400, "roll_id")
    assert "AN-101" in message
    assert count(app, "roll") == 1


def test_update_with_version_and_a_stale_version_gets_409_with_the_current_roll(client):
    roll = add_roll(client)
    changed = client.put(f"{URL}/{roll['id']}", json={"version": 1, "location": "rack B-4", "status": "spare"})
    assert changed.status_code == 200
    assert changed.get_json()["version"] == 2 and changed.get_json()["location"] == "rack B-4"
    stale = client.put(f"{URL}/{roll['id']}", json={"version": 1, "notes": "overwrite?"})
    assert_error(stale, 409, "version")
    assert stale.get_json()["current"]["version"] == 2
    assert client.get(f"{URL}/{roll['id']}").get_json()["notes"] == "process cyan"
    assert_error(client.put(f"{URL}/{roll['id']}", json={"notes": "x"}), 400, "version")
    assert_error(client.put(f"{URL}/999", json={"version": 1}), 404, "id")


def test_engraving_date_cannot_move_after_a_logged_measurement(client):
    roll = add_roll(client)
    measure(client, roll["id"], 700, "1.84 BCM/in2")
    response = client.put(f"{URL}/{roll['id']}", json={"version": 1, "engraved_on": days_ago(600)})
    assert_error(response, 400, "engraved_on")


def test_retiring_keeps_the_roll_and_its_logs(client):
    roll = add_roll(client)
    measure(client, roll["id"], 700, "1.84 BCM/in2")
    assert_error(client.delete(f"{URL}/{roll['id']}"), 400, "version")
    retired = client.delete(f"{URL}/{roll['id']}?version=1").get_json()
    assert retired["status"] == "retired" and retired["version"] == 2
    assert len(client.get(f"{URL}/{roll['id']}/measurements").get_json()["measurements"]) == 1
    assert_error(client.delete(f"{URL}/{roll['id']}?version=1"), 409, "version")


# --- logs and wear -------------------------------------------------------------------------------


def test_measurements_and_cleanings_make_the_wear_picture(client):
    roll = add_roll(client, certificate_volume=None, nominal_volume="4.0 BCM/in2", screen="400 lpi")
    measure(client, roll["id"], 700, "3.95 BCM/in2")
    measure(client, roll["id"], 400, "3.8 BCM/in2")
    measure(client, roll["id"], 20, "3.1 BCM/in2", "as_found")
    wear = client.get(f"{URL}/{roll['id']}").get_json()["wear"]
    assert wear["slope_per_year"]["value"] < 0 and wear["slope_stderr"] is not None
    assert wear["plugging"] > 0.1
    assert wear["flags"] == ["clean"]
    assert wear["percent_of_nominal"] == pytest.approx(77.5)
    cleaned = client.post(
        f"{URL}/{roll['id']}/cleanings",
        json={"cleaned_on": days_ago(5), "method": "ultrasonic", "by": "Ines", "notes": "deep clean"},
    )
    assert cleaned.status_code == 201
    assert client.get(f"{URL}/{roll['id']}").get_json()["wear"]["flags"] == ["measure"]
    measure(client, roll["id"], 2, "3.7 BCM/in2")
    wear = client.get(f"{URL}/{roll['id']}").get_json()["wear"]
    assert wear["flags"] == [] and wear["replace_by"] is not None
    assert [c["method"] for c in client.get(f"{URL}/{roll['id']}/cleanings").get_json()["cleanings"]] == ["ultrasonic"]


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({"measured_on": "2001-01-01", "volume": "1.8 BCM/in2", "condition": "as_found"}, "measured_on"),
        (
            {"measured_on": (TODAY + timedelta(days=1)).isoformat(), "volume": "1.8 BCM/in2", "condition": "as_found"},
            "measured_on",
        ),
        ({"measured_on": days_ago(1), "volume": "1.8 lpi", "condition": "as_found"}, "volume"),
        ({"measured_on": days_ago(1), "volume": "1.8", "condition": "as_found"}, "volume"),
        ({"measured_on": days_ago(1), "volume": "1.8 BCM/in2", "condition": "dusty"}, "condition"),
        ({"measured_on": days_ago(1), "volume": "1.8 BCM/in2"}, "condition"),
        ({"measured_on": days_ago(1), "volume": "1.8 BCM/in2", "condition": "as_found", "x": 1}, "x"),
    ],
)
def test_bad_measurements_name_the_field_and_write_nothing(client, app, body, field):
    roll = add_roll(client)
    assert_error(client.post(f"{URL}/{roll['id']}/measurements", json=body), 400, field)
    assert count(app, "roll_measurement") == 0


def test_a_measurement_on_an_unknown_roll_is_404(client):
    body = {"measured_on": days_ago(1), "volume": "1.8 BCM/in2", "condition": "as_found"}
    assert_error(client.post(f"{URL}/42/measurements", json=body), 404, "id")


def test_correcting_and_removing_a_measurement_keeps_the_old_values(client):
    roll = add_roll(client)
    entry = measure(client, roll["id"], 30, "1.48 BCM/in2")
    url = f"{URL}/{roll['id']}/measurements/{entry['id']}"
    fixed = client.put(url, json={"version": 1, "volume": "1.84 BCM/in2", "reason": "digits swapped"})
    assert fixed.status_code == 200 and fixed.get_json()["volume"]["value"] == 1.84
    assert_error(client.put(url, json={"version": 1, "volume": "1.9 BCM/in2"}), 409, "version")
    read = client.get(url).get_json()
    assert read["changes"][0]["before"]["volume_bcm"] == 1.48
    assert read["changes"][0]["reason"] == "digits swapped"
    assert client.delete(f"{url}?version=2&reason=wrong+roll").status_code == 200
    assert client.get(url).status_code == 404
    assert client.get(f"{URL}/{roll['id']}/measurements").get_json()["measurements"] == []


# --- passcodes and CSRF ------------------------------------------------------------------------


def test_logging_needs_the_shop_passcode_and_roll_changes_the_supervisors(locked_app):
    client = locked_app.test_client()
    assert_error(client.post(URL, json=ROLL), 401, "X-Inkfilm-Passcode")
    assert_error(client.post(URL, json=ROLL, headers=SHOP_HEADER), 403, "X-Inkfilm-Passcode")
    roll = add_roll(client, headers=SUPER_HEADER)
    body = {"measured_on": days_ago(3), "volume": "1.8 BCM/in2", "condition": "as_found"}
    assert_error(client.post(f"{URL}/{roll['id']}/measurements", json=body), 401, "X-Inkfilm-Passcode")
    entry = measure(client, roll["id"], 3, "1.8 BCM/in2", headers=SHOP_HEADER)
    cleaning = {"cleaned_on": days_ago(2), "method": "laser"}
    assert client.post(f"{URL}/{roll['id']}/cleanings", json=cleaning, headers=SHOP_HEADER).status_code == 201
    entry_url = f"{URL}/{roll['id']}/measurements/{entry['id']}"
    assert_error(
        client.put(entry_url, json={"version": 1, "volume": "1.7 BCM/in2"}, headers=SHOP_HEADER),
        403,
        "X-Inkfilm-Passcode",
    )
    assert_error(client.delete(f"{entry_url}?version=1", headers=SHOP_HEADER), 403, "X-Inkfilm-Passcode")
    assert_error(
        client.put(f"{URL}/{roll['id']}", json={"version": 1, "notes": "x"}, headers=SHOP_HEADER),
        403,
        "X-Inkfilm-Passcode",
    )
    assert_error(client.delete(f"{URL}/{roll['id']}?version=1", headers=SHOP_HEADER), 403, "X-Inkfilm-Passcode")
    assert client.put(entry_url, json={"version": 1, "volume": "1.7 BCM/in2"}, headers=SUPER_HEADER).status_code == 200
    # Reading stays open.
    assert client.get(f"{URL}/{roll['id']}").status_code == 200
    assert client.get(f"{URL}/fitting?work=line").status_code == 200


def test_an_unlocked_browser_writing_needs_the_csrf_header(locked_app):
    client = locked_app.test_client()
    token = csrf_from(client)
    assert (
        client.post("/unlock", data={"csrf_token": token, "passcode": SUPERVISOR, "next": "/rolls"}).status_code == 303
    )
    assert_error(client.post(URL, json=ROLL), 403, "X-CSRF-Token")
    assert client.post(URL, json=ROLL, headers={"X-CSRF-Token": token}).status_code == 201


def test_writes_must_be_json(client):
    response = client.post(URL, data="roll_id=x", content_type="application/x-www-form-urlencoded")
    assert response.status_code == 415


# --- fitting --------------------------------------------------------------------------------------


def test_fitting_judges_measured_volume_and_says_why_a_worn_roll_is_left_out(client):
    # Process 150 lpi: screen ≥ 750 lpi, 1.0–2.5 BCM/in² (common practice, calc.practice).
    good = add_roll(client, roll_id="P-1", nominal_volume="1.8 BCM/in2", certificate_volume=None)
    measure(client, good["id"], 10, "1.75 BCM/in2")
    never = add_roll(client, roll_id="P-2", nominal_volume="1.2 BCM/in2", certificate_volume="1.3 BCM/in2")
    worn = add_roll(client, roll_id="P-3", nominal_volume="1.1 BCM/in2", certificate_volume=None)
    measure(client, worn["id"], 10, "0.9 BCM/in2")
    add_roll(client, roll_id="P-4", status="sent_out")
    coarse = add_roll(client, roll_id="L-1", screen="400 lpi", nominal_volume="3.5 BCM/in2")
    answer = client.get(f"{URL}/fitting?plate_screen=150%20lpi&work=process").get_json()
    assert [roll["roll_id"] for roll in answer["fitting"]] == ["P-1", "P-2"]
    assert answer["fitting"][0]["fit"]["judged_on"] == "measured"
    assert answer["fitting"][0]["fit"]["volume"]["value"] == 1.75
    assert answer["fitting"][1]["fit"]["judged_on"] == "certificate"
    left = {item["roll"]["roll_id"]: [p["code"] for p in item["problems"]] for item in answer["left_out"]}
    assert left["P-3"][0] == "worn_out_of_range" and "volume_too_low" in left["P-3"]
    assert left["P-4"] == ["not_available"]
    assert "screen_too_coarse" in left["L-1"]
    assert never and coarse


def test_fitting_bad_input_names_the_field(client):
    assert_error(client.get(f"{URL}/fitting?plate_screen=150%20lpi"), 400, "work")
    assert_error(client.get(f"{URL}/fitting?work=process"), 400, "plate_screen")
    assert_error(client.get(f"{URL}/fitting?work=process&plate_screen=150%20g"), 400, "plate_screen")
    assert_error(client.get(f"{URL}/fitting?work=sculpture"), 400, "work")
    assert_error(client.get(f"{URL}?screen_min=abc"), 400, "screen_min")
    assert_error(client.get(f"{URL}?status=lost"), 400, "status")


def test_overview_is_sorted_by_urgency_and_filters(client):
    fine = add_roll(client, roll_id="A-fine", certificate_volume=None)
    measure(client, fine["id"], 5, "1.79 BCM/in2")
    worn = add_roll(client, roll_id="B-worn", certificate_volume=None, press="N5")
    measure(client, worn["id"], 5, "1.4 BCM/in2")
    add_roll(client, roll_id="C-never", certificate_volume=None, screen="400 lpi")
    ids = [roll["roll_id"] for roll in client.get(URL).get_json()["rolls"]]
    assert ids == ["B-worn", "C-never", "A-fine"]
    assert [r["roll_id"] for r in client.get(f"{URL}?press=N5").get_json()["rolls"]] == ["B-worn"]
    assert [r["roll_id"] for r in client.get(f"{URL}?screen_max=500").get_json()["rolls"]] == ["C-never"]
    assert client.get(f"{URL}?status=retired").get_json()["total"] == 0


@pytest.mark.parametrize("big", ["99999999999999999999", "9223372036854775808"])
def test_an_id_beyond_sqlite_s_integers_is_not_found(client, big):
    # Found while describing the API: sqlite3 raised OverflowError (a 500) on such an id.
    roll = add_roll(client)["id"]
    assert_error(client.get(f"{URL}/{big}/measurements"), 404, "id")
    for address in (f"{URL}/{big}", f"{URL}/{roll}/measurements/{big}", f"{URL}/{big}/cleanings/1"):
        for response in (client.get(address), client.delete(address + "?version=1")):
            assert_error(response, 404, "id")
    assert_error(client.patch(f"{URL}/{big}", json={"version": 1, "press": "N1"}), 404, "id")
    assert_error(client.post(f"{URL}/{big}/cleanings", json={"cleaned_on": days_ago(1)}), 404, "id")
    assert client.get(f"{URL}/{roll}").get_json()["press"] == "N2"


def test_the_shop_sets_its_own_wear_thresholds_from_the_environment(tmp_path, monkeypatch):
    from webapp.rolls import wear_from_environment

    # 1.62 of 1.8 BCM/in² after cleaning is 90 % of nominal: fine at the usual 85 %, due at the shop's 92 %.
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "usual")})
    client = app.test_client()
    roll = add_roll(client)
    measure(client, roll["id"], 10, "1.62 BCM/in2")
    assert "replace" not in client.get(f"{URL}/{roll['id']}").get_json()["wear"]["flags"]

    monkeypatch.setenv("INKFILM_WEAR_REPLACE_AT", "92 %")
    monkeypatch.setenv("INKFILM_WEAR_AUDIT_DAYS", "5")
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "own")})
    assert app.config["ROLL_WEAR"] == {"replace_at": pytest.approx(0.92), "audit_days": 5}
    client = app.test_client()
    roll = add_roll(client)
    measure(client, roll["id"], 10, "1.62 BCM/in2")
    assert client.get(f"{URL}/{roll['id']}").get_json()["wear"]["flags"] == ["replace", "measure"]

    for variable, text in [("INKFILM_WEAR_CLEAN_BELOW", "ninety"), ("INKFILM_WEAR_OFF_SPEC", "1.5")]:
        with pytest.raises(SystemExit, match=variable):
            wear_from_environment({variable: text})
    with pytest.raises(SystemExit, match="INKFILM_WEAR_AUDIT_DAYS"):
        wear_from_environment({"INKFILM_WEAR_AUDIT_DAYS": "0"})
    assert wear_from_environment({"INKFILM_WEAR_CLEAN_PLUGGING": "0.12"}) == {"clean_plugging": 0.12}
