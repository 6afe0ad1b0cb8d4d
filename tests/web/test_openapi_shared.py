"""The roll register's and the inks' parts of the OpenAPI description share their pieces (``conflict``,
``created``, ``body``, ``version_query`` of ``webapp.common.openapi``): described alike, answered alike."""

from __future__ import annotations

import pytest

from tests.web.test_inks_api import add_ink
from tests.web.test_rolls_api import add_roll

OWN = ("/rolls", "/inks", "/ink-sets")


@pytest.fixture
def operations(client):
    document = client.get("/api/v1/openapi.json").get_json()
    found = [
        (method, path, operation)
        for path, item in document["paths"].items()
        if path.startswith(OWN)
        for method, operation in item.items()
        if isinstance(operation, dict) and "responses" in operation
    ]
    assert len(found) > 40
    return found


def test_every_stale_change_is_a_409_with_the_newer_one(operations):
    stale = [(method, path, op) for method, path, op in operations if "409" in op["responses"]]
    assert {method for method, _, _ in stale} == {"put", "patch", "delete"}
    for method, path, operation in stale:
        if (method, path) == ("delete", "/inks/{ink}"):
            continue  # also "ink sets still use the ink": the plain error shape, `current` where it was stale
        schema = operation["responses"]["409"]["content"]["application/json"]["schema"]
        assert schema["required"] == ["error", "current"], (method, path)
        assert schema["properties"]["error"] == {"$ref": "#/components/schemas/ErrorDetail"}
        if method == "delete":
            version = [p for p in operation["parameters"] if p.get("name") == "version"]
            assert version and version[0]["required"] is True and version[0]["in"] == "query", path


def test_every_create_answers_201_with_its_address_and_takes_a_json_body(operations):
    creates = [(path, op) for method, path, op in operations if "201" in op["responses"]]
    assert len(creates) == 6  # rolls, their measurements and cleanings, inks, ink sets, their readings
    for path, operation in creates:
        assert "Location" in operation["responses"]["201"]["headers"], path
        assert operation["requestBody"]["required"] is True
        assert "schema" in operation["requestBody"]["content"]["application/json"]


def test_a_stale_change_is_answered_as_described(client):
    for thing, url in ((add_roll(client), "/api/v1/rolls"), (add_ink(client), "/api/v1/inks")):
        address = f"{url}/{thing['id']}"
        assert client.patch(address, json={"version": thing["version"], "notes": "first"}).status_code == 200
        late = client.patch(address, json={"version": thing["version"], "notes": "second"})
        assert late.status_code == 409
        answer = late.get_json()
        assert set(answer) == {"error", "current"} and answer["current"]["notes"] == "first"


def test_every_csv_import_is_described_alike_and_refuses_as_described(client, operations):
    imports = [(path, op) for method, path, op in operations if "/import" in path and method == "post"]
    assert sorted(path for path, _ in imports) == [
        "/ink-sets/import/readings",
        "/inks/import",
        "/rolls/import/cleanings",
        "/rolls/import/measurements",
        "/rolls/import/rolls",
    ]
    refused = [op["responses"]["400"] for _, op in imports]
    assert all(one == refused[0] for one in refused)
    row = refused[0]["content"]["application/json"]["schema"]["properties"]["errors"]["items"]
    assert row["required"] == ["row", "field", "message"]
    for url in ("/api/v1/inks/import", "/api/v1/rolls/import/rolls"):
        answer = client.post(url, json={"csv": "nonsense\n"})
        assert answer.status_code == 400
        assert set(answer.get_json()["errors"][0]) == {"row", "field", "message"}
