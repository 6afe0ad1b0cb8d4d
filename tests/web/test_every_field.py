"""No body gives a 5xx, whatever any one field holds: every field of every calculation.

For each calculation (``webapp.calculators.CALCULATORS``), its valid body
from ``tests.bodies`` has each field path in turn (``web_width``,
``stations``, ``stations[0]``, ``stations[0].coverage``, …) replaced by each
value of ``SUBSTITUTES``. The answer must be below 500 and, when it is a 4xx,
its ``error.field`` must name that path or one of its parents. The paths come
from the specs' own field dicts (the ones ``check_fields`` is given), so a new
field or a new calculator is covered without touching this file; a field
that only makes sense beside another (``impressions`` with ``repeat``) is
tried in the first valid body that already holds it (``OTHER_BODIES``).
"""

from __future__ import annotations

import copy
import json

import pytest

from tests.bodies import BY_KIND, ESTIMATE_BY_IMPRESSIONS, READINGS_BY_VOLUME
from webapp import create_app
from webapp.calculators import CALCULATORS

# Valid bodies beyond BY_KIND, for the fields BY_KIND's body leaves out.
OTHER_BODIES = {
    "estimate": [ESTIMATE_BY_IMPRESSIONS],
    # readings given as volume and transfer instead of film
    "density_fit": [{"readings": READINGS_BY_VOLUME}],
    "density_volume_for": [{"readings": READINGS_BY_VOLUME, "target_density": 1.3, "transfer": 0.25}],
    "density_from": [{"readings": READINGS_BY_VOLUME, "film": "4 um"}],
}
HUGE_INTEGER = "HUGE-INTEGER"  # written into the JSON text as 400 digits (json.dumps cannot make one from a float)
SUBSTITUTES = {
    "text": "abc",
    "empty text": "",
    "list": [1, "a"],
    "object": {"value": 1},
    "null": None,
    "true": True,
    "zero": 0,
    "minus one": -1,
    "1e308": 1e308,
    "1e-320": 1e-320,
    "400 digits": HUGE_INTEGER,
    "long text": "9" * 20_000,
}


@pytest.fixture(scope="module")
def client(tmp_path_factory):
    # One app for the several hundred requests: calculations write nothing.
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path_factory.mktemp("data"))}).test_client()


def field_paths(spec) -> list[str]:
    paths = []
    for name in {**spec.required, **spec.optional}:
        paths.append(name)
        if name in spec.nested:
            required, optional = spec.nested[name]
            paths.append(f"{name}[0]")
            paths += [f"{name}[0].{item}" for item in {**required, **optional}]
    return paths


CASES = [(spec.kind, path) for spec in CALCULATORS for path in field_paths(spec)]


def test_every_calculation_has_a_valid_body():
    assert {spec.kind for spec in CALCULATORS} <= set(BY_KIND), "add a valid body to tests/bodies.py BY_KIND"


def test_the_paths_reach_into_the_stations():
    assert ("estimate", "stations[0].price_per_kg") in CASES
    assert ("estimate", "stations[0]") in CASES


def holds(body: dict, path: str) -> bool:
    if "[0]" not in path:
        return path in body
    name, _, item = path.partition("[0]")
    return bool(body.get(name)) and (not item or item.removeprefix(".") in body[name][0])


def base_body(kind: str, path: str) -> dict:
    bodies = [BY_KIND[kind], *OTHER_BODIES.get(kind, [])]
    return copy.deepcopy(next((body for body in bodies if holds(body, path)), bodies[0]))


def with_value(body: dict, path: str, value) -> dict:
    if "[0]" not in path:
        body[path] = value
        return body
    name, _, item = path.partition("[0]")
    if item:
        body[name][0][item.removeprefix(".")] = value
    else:
        body[name][0] = value
    return body


def within(inner: str, outer: str) -> bool:
    return inner == outer or inner.startswith(outer + ".") or inner.startswith(outer + "[")


# Fields that stand in for each other: a film, or an anilox volume with its transfer share. An
# error about one of them may name the one of the group the message asks for instead.
ALTERNATIVES = ({"film", "anilox_volume", "transfer"},)


def _alternatives(field: str, path: str) -> bool:
    parent, _, name = path.rpartition(".")
    other_parent, _, other = field.rpartition(".")
    return parent == other_parent and any({name, other} <= group for group in ALTERNATIVES)


def names_it(field: str | None, path: str) -> bool:
    """``field`` is ``path``, a parent of it (``stations`` for ``stations[0].name``), a part of
    the value put there (``stations[0]`` when ``stations`` is ``[1, "a"]``), or a field that
    stands in for it (``ALTERNATIVES``)."""
    if field is None:
        return False
    return within(path, field) or within(field, path) or _alternatives(field, path)


@pytest.mark.parametrize(("kind", "path"), CASES)
@pytest.mark.parametrize("value", SUBSTITUTES.values(), ids=SUBSTITUTES.keys())
def test_any_value_in_any_field_is_answered_without_5xx_naming_the_field(client, kind, path, value):
    text = json.dumps(with_value(base_body(kind, path), path, value))
    text = text.replace(json.dumps(HUGE_INTEGER), "1" + "0" * 399)
    response = client.post(f"/api/v1/{kind}", data=text, content_type="application/json")
    assert response.status_code < 500, response.get_data(as_text=True)
    answer = response.get_json()
    if response.status_code >= 400:
        assert set(answer) == {"error"}
        assert answer["error"]["message"]
        assert names_it(answer["error"]["field"], path), answer
    else:
        assert response.status_code == 200
