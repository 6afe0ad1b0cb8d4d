"""The OpenAPI description of /api/v1: valid, served, and made from the fields the code checks."""

from __future__ import annotations

import json
import re

import pytest
from openapi_spec_validator import validate

from tests.bodies import BY_KIND
from webapp.calculators import CALCULATORS
from webapp.common.openapi import QUANTITY_PATTERN, description
from webapp.snippets import api as snippets_api

KINDS = [spec.kind for spec in CALCULATORS]


@pytest.fixture
def document(client):
    response = client.get("/api/v1/openapi.json")
    assert response.status_code == 200
    assert response.mimetype == "application/json"
    return response.get_json()


def test_the_description_is_valid_openapi_3_1(document):
    assert document["openapi"].startswith("3.1")
    validate(document)  # openapi-spec-validator: raises on any fault


def test_the_served_description_is_the_generated_one(document):
    assert document == json.loads(json.dumps(description()))


def described_paths(rule: str) -> list[str]:
    """A Flask rule as the OpenAPI paths that describe it: ``<int:x>`` is ``{x}``; ``<any(a, b):x>`` is a path each."""
    path = re.sub(r"<int:(\w+)>", r"{\1}", rule.removeprefix("/api/v1"))
    choice = re.search(r"<any\(([^)]*)\):\w+>", path)
    if choice is None:
        return [path]
    options = [name.strip() for name in choice.group(1).split(",")]
    return [p for name in options for p in described_paths(path[: choice.start()] + name + path[choice.end() :])]


def test_described_paths_expands_flask_rules():
    assert described_paths("/api/v1/rolls/<int:roll>") == ["/rolls/{roll}"]
    assert described_paths("/api/v1/rolls/export/<any(rolls, cleanings):table>.csv") == [
        "/rolls/export/rolls.csv",
        "/rolls/export/cleanings.csv",
    ]


def test_every_calculator_and_snippets_endpoint_has_a_path(document, app):
    paths = set(document["paths"])
    assert {f"/{kind}" for kind in KINDS} <= paths
    assert "/rolls" in paths
    # Every API rule the app serves is described, with each of its methods.
    for rule in app.url_map.iter_rules():
        if not rule.rule.startswith("/api/v1/"):
            continue
        for path in described_paths(rule.rule):
            assert path in paths, path
            for method in rule.methods - {"HEAD", "OPTIONS"}:
                assert method.lower() in document["paths"][path], (method, path)


def body_schema(document, kind):
    return document["paths"][f"/{kind}"]["post"]["requestBody"]["content"]["application/json"]["schema"]


@pytest.mark.parametrize("spec", CALCULATORS, ids=KINDS)
def test_a_calculation_s_fields_are_its_spec_s(document, spec):
    schema = body_schema(document, spec.kind)
    assert set(schema["properties"]) == set(spec.required) | set(spec.optional)
    assert set(schema["required"]) == set(spec.required)
    assert schema["additionalProperties"] is False
    for name, (required, optional) in spec.nested.items():
        field = schema["properties"][name]
        # an optional list is "this list, or null"
        field = next((choice for choice in field.get("anyOf", [field]) if choice.get("type") == "array"), field)
        item = field["items"]
        assert set(item["properties"]) == set(required) | set(optional)
        assert set(item["required"]) == set(required)


def unwrap(schema: dict) -> dict:
    """An optional field's own schema (it is also allowed to be null)."""
    return schema["anyOf"][0] if "anyOf" in schema else schema


@pytest.mark.parametrize("spec", CALCULATORS, ids=KINDS)
def test_each_field_is_described_by_its_kind(document, spec):
    schema = body_schema(document, spec.kind)
    for name, kind in {**spec.required, **spec.optional}.items():
        field = unwrap(schema["properties"][name])
        if kind == "quantity":
            assert field == field | {"type": "string", "pattern": QUANTITY_PATTERN, "maxLength": 80}
        elif kind == "share":
            assert (field["type"], field["minimum"], field["maximum"]) == ("number", 0, 1)
        elif kind == "list":
            assert field["type"] == "array"
        else:
            assert field["type"] == {"number": "number", "integer": "integer", "text": "string"}.get(kind, kind)


def test_the_bounds_the_code_enforces_are_stated(document):
    estimate = body_schema(document, "estimate")["properties"]
    assert (estimate["stations"]["minItems"], estimate["stations"]["maxItems"]) == (1, 12)
    assert unwrap(estimate["impressions"])["maximum"] == 1_000_000_000
    assert estimate["stations"]["items"]["properties"]["name"]["maxLength"] == 60
    assert "100.0 BCM/in²" in body_schema(document, "film")["properties"]["anilox_volume"]["description"]


@pytest.mark.parametrize("kind", KINDS)
def test_the_quantity_pattern_matches_the_valid_bodies_quantities(document, kind):
    schema = body_schema(document, kind)
    for name, value in BY_KIND[kind].items():
        field = unwrap(schema["properties"][name])
        if field.get("pattern") == QUANTITY_PATTERN:
            assert re.match(QUANTITY_PATTERN, value), (name, value)


def test_the_snippet_fields_are_the_api_s_constants(document):
    create = document["paths"]["/snippets"]["post"]["requestBody"]["content"]["application/json"]["schema"]
    assert set(create["properties"]) == {"kind", "inputs", "title"} | snippets_api.CREATE_OPTIONAL
    assert sorted(create["properties"]["kind"]["enum"]) == sorted(KINDS)
    update = document["paths"]["/snippets/{snippet_id}"]["put"]["requestBody"]["content"]["application/json"]
    expected = {"version", "rerun", snippets_api.CHANGED_BY} | snippets_api.UPDATE_FIELDS
    assert set(update["schema"]["properties"]) == expected


def test_refusals_are_described_with_the_error_shape(document):
    create = document["paths"]["/snippets"]["post"]
    for status in ("400", "401", "403", "413", "415", "429"):
        assert create["responses"][status]["content"]["application/json"]["schema"] == {
            "$ref": "#/components/schemas/Error"
        }
    assert "Retry-After" in create["responses"]["429"]["headers"]
    assert {"name": "X-Inkfilm-Passcode", "in": "header", "required": False}.items() <= create["parameters"][0].items()
    conflict = document["paths"]["/snippets/{snippet_id}"]["put"]["responses"]["409"]
    assert "current" in conflict["content"]["application/json"]["schema"]["required"]
    for kind in KINDS:
        assert {"200", "400", "413", "415"} <= set(document["paths"][f"/{kind}"]["post"]["responses"])


@pytest.mark.parametrize("kind", KINDS)
def test_a_valid_answer_has_the_described_top_level_fields(client, document, kind):
    answer = client.post(f"/api/v1/{kind}", json=BY_KIND[kind]).get_json()
    schema = document["paths"][f"/{kind}"]["post"]["responses"]["200"]["content"]["application/json"]["schema"]
    assert set(schema["required"]) <= set(answer) <= set(schema["properties"])


@pytest.mark.parametrize("address", ["/api/v1/snippets/99999999999999999999", "/api/v1/snippets/9223372036854775808"])
def test_an_id_beyond_sqlite_s_integers_is_not_found(client, address):
    # Found by tests/system/test_schemathesis.py: sqlite3 raised OverflowError (a 500).
    for response in (client.get(address), client.get(address + "/rerun"), client.delete(address)):
        assert response.status_code == 404
        assert response.get_json()["error"]["field"] == "id"
