"""CSV import and export of the register: row-numbered, field-named errors; all or nothing; re-import adds nothing."""

from __future__ import annotations

from datetime import date, timedelta

from tests.web.test_rolls_api import URL

OLD = (date.today() - timedelta(days=900)).isoformat()
LATER = (date.today() - timedelta(days=100)).isoformat()

ROLLS = f"""roll_id,screen,angle,nominal_volume,certificate_volume,engraved_on,press,location,status,notes
AN-1,900 lpi,60,1.8 BCM/in2,1.85 BCM/in2,{OLD},N2,station 1,in_use,cyan
AN-2,354 lpcm,60,2.79 cm3/m2,,{OLD},,rack B-4,spare,
AN-3,400 lpi,60,3.8 BCM/in2,,{OLD},N2,station 5,in use,"white, heavy"
"""
MEASUREMENTS = f"""roll_id,measured_on,volume,condition,method,by
AN-1,{LATER},1.75 BCM/in2,after_cleaning,spread,Ines
AN-3,{LATER},3.2 BCM/in2,as_found,spread,Ines
"""


def post(client, table, text):
    return client.post(f"{URL}/import/{table}", json={"csv": text})


def test_import_then_reimport_adds_nothing_twice_and_export_round_trips(client):
    assert post(client, "rolls", ROLLS).get_json() == {"added": 3, "already_here": 0}
    assert post(client, "measurements", MEASUREMENTS).get_json() == {"added": 2, "already_here": 0}
    assert post(client, "rolls", ROLLS).get_json() == {"added": 0, "already_here": 3}
    assert post(client, "measurements", MEASUREMENTS).get_json() == {"added": 0, "already_here": 2}
    exported = client.get(f"{URL}/export/measurements.csv").get_data(as_text=True)
    assert post(client, "measurements", exported).get_json() == {"added": 0, "already_here": 2}
    rolls = client.get(f"{URL}/export/rolls.csv").get_data(as_text=True)
    assert post(client, "rolls", rolls).get_json()["added"] == 0
    assert client.get(URL).get_json()["total"] == 3


def test_one_bad_row_among_good_ones_imports_nothing_and_names_row_and_field(client):
    bad = ROLLS + f"AN-4,400 lpi,60,3.8 furlongs,,{OLD},,,spare,\n"
    response = post(client, "rolls", bad)
    assert response.status_code == 400
    answer = response.get_json()
    assert answer["errors"] == [{"row": 5, "field": "nominal_volume", "message": answer["errors"][0]["message"]}]
    assert answer["error"]["field"] == "row 5: nominal_volume"
    assert client.get(URL).get_json()["total"] == 0


def test_malformed_rows_duplicates_unknown_rolls_and_columns(client):
    dup = ROLLS + f"an-1,900 lpi,60,1.8 BCM/in2,,{OLD},,,spare,\n"
    errors = post(client, "rolls", dup).get_json()["errors"]
    assert errors[0]["row"] == 5 and errors[0]["field"] == "roll_id" and "row 2" in errors[0]["message"]
    errors = post(client, "rolls", "roll_id,screen,angle,nominal_volume,engraved_on,colour\n").get_json()["errors"]
    assert errors == [{"row": 1, "field": "colour", "message": "is not a column of the rolls file"}]
    errors = post(client, "rolls", "roll_id,screen\nx,1\n").get_json()["errors"]
    assert {e["field"] for e in errors} == {"angle", "nominal_volume", "engraved_on"}
    errors = post(client, "rolls", ROLLS.replace("in_use,cyan", "in_use,cyan,extra")).get_json()["errors"]
    assert errors[0]["row"] == 2 and errors[0]["field"] == "row"
    post(client, "rolls", ROLLS)
    bad = (
        MEASUREMENTS
        + f"AN-9,{LATER},1 BCM/in2,as_found,,\nAN-1,{LATER},1 lpi,as_found,,\nAN-1,1999-01-01,1 BCM/in2,as_found,,\n"
    )
    errors = post(client, "measurements", bad).get_json()["errors"]
    assert [(e["row"], e["field"]) for e in errors] == [(4, "roll_id"), (5, "volume"), (6, "measured_on")]
    assert client.get(f"{URL}/1/measurements").get_json()["measurements"] == []
    assert post(client, "measurements", "").get_json()["errors"][0]["message"] == "the file is empty"


def test_import_needs_the_supervisor(tmp_path):
    from tests.web.test_rolls_api import SHOP_HEADER, SUPER_HEADER
    from webapp import create_app

    app = create_app(
        {
            "TESTING": True,
            "DATA_DIR": str(tmp_path),
            "SHOP_PASSCODE": "press-floor-7",
            "SUPERVISOR_PASSCODE": "super-visor-9",
        }
    )
    client = app.test_client()
    assert client.post(f"{URL}/import/rolls", json={"csv": ROLLS}).status_code == 401
    assert client.post(f"{URL}/import/rolls", json={"csv": ROLLS}, headers=SHOP_HEADER).status_code == 403
    assert client.post(f"{URL}/import/rolls", json={"csv": ROLLS}, headers=SUPER_HEADER).get_json()["added"] == 3
