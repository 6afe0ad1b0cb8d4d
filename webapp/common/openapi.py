"""The OpenAPI 3.1 description of ``/api/v1``, served at ``GET /api/v1/openapi.json``.

Made from what the code checks, so that it cannot drift from it:

- a calculation's request fields are its ``Calculator`` spec's ``required``,
  ``optional`` and ``nested`` dicts (the ones its ``compute`` passes to
  ``check_fields``), with the ``limits`` it enforces; its 200 answer is the
  spec's ``answer``;
- the snippets endpoints' fields are ``webapp.snippets.api``'s field
  constants, with the lengths of ``webapp.snippets.rules``;
- the roll register's paths are ``webapp.rolls.openapi.roll_paths()``, from
  the field dicts of ``webapp.rolls.rules`` and ``webapp.rolls.api``;
- the inks' paths are ``webapp.inks.openapi.ink_paths()``, from the field
  dicts of ``webapp.inks.rules`` and ``webapp.inks.api``.

Every 4xx answer has the one error shape of ``webapp.common.jsonapi``
(``{"error": {"field", "message"}}``); a stale edit's 409 adds ``current``.
"""

from __future__ import annotations

from functools import cache

from flask import Blueprint, jsonify

from calc.units import MAX_MAGNITUDE, MAX_UNIT_CHARS
from webapp.auth.csrf import CSRF_HEADER
from webapp.auth.gate import PASSCODE_HEADER
from webapp.calculators import CALCULATORS
from webapp.calculators.spec import Answer, Calculator
from webapp.common.jsonapi import MAX_BODY, api
from webapp.snippets import api as snippets_api
from webapp.snippets import exchange, rules

# What ``calc.units.parse_quantity`` reads: a number, then a unit (checked by the server, not by this pattern).
QUANTITY_PATTERN = r"^\s*[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?\s*\S.*$"
QUANTITY_CHARS = 80

REQUEST_KINDS = {
    "quantity": {
        "type": "string",
        "pattern": QUANTITY_PATTERN,
        "maxLength": QUANTITY_CHARS,
        "examples": ["3.5 BCM/in2"],
    },
    "share": {"type": "number", "minimum": 0, "maximum": 1},
    "number": {"type": "number", "minimum": -MAX_MAGNITUDE, "maximum": MAX_MAGNITUDE},
    "integer": {"type": "integer"},
    "text": {"type": "string"},
    "boolean": {"type": "boolean"},
}
QUANTITY_NOTE = (
    f"A quantity: a number (at most {MAX_MAGNITUDE:g} in size; 0 or at least {1 / MAX_MAGNITUDE:g}), "
    f"then a unit of at most {MAX_UNIT_CHARS} characters, e.g. '3.5 BCM/in2'."
)
ANSWER_KINDS = {
    "quantity": {"$ref": "#/components/schemas/Quantity"},
    "number": {"type": "number"},
    "integer": {"type": "integer"},
    "text": {"type": "string"},
    "text or null": {"type": ["string", "null"]},
    "boolean": {"type": "boolean"},
    "number or null": {"type": ["number", "null"]},
    "quantity or null": {"oneOf": [{"$ref": "#/components/schemas/Quantity"}, {"type": "null"}]},
    "any": {},
}
ERROR = {"$ref": "#/components/schemas/Error"}
JSON = "application/json"


# --- the pieces -------------------------------------------------------------------------------------


def field_schema(kind: str, limits: dict | None = None) -> dict:
    """One request field of ``kind`` with the bounds the code enforces on it."""
    schema = dict(REQUEST_KINDS[kind])
    for key, value in (limits or {}).items():
        if key == "description" and kind == "quantity":
            value = f"{value[0].upper()}{value[1:]}. {QUANTITY_NOTE}"
        schema[key] = value
    if kind == "quantity" and "description" not in schema:
        schema["description"] = QUANTITY_NOTE
    return schema


def nullable(schema: dict) -> dict:
    """An optional field: ``null`` counts as absent (``check_fields``)."""
    return {"anyOf": [schema, {"type": "null"}]}


def request_object(required: dict, optional: dict, *, nested: dict | None = None, limits=None, prefix="") -> dict:
    """An object of exactly these fields (any other is refused), as ``check_fields`` checks it."""
    nested, limits = nested or {}, limits or {}
    properties = {}
    for name, kind in {**required, **optional}.items():
        if name in nested:
            item_required, item_optional = nested[name]
            item = request_object(item_required, item_optional, limits=limits, prefix=f"{prefix}{name}.")
            schema = {"type": "array", "items": item, **limits.get(f"{prefix}{name}", {})}
        else:
            schema = field_schema(kind, limits.get(f"{prefix}{name}"))
        properties[name] = schema if name in required else nullable(schema)
    return {
        "type": "object",
        "properties": properties,
        "required": sorted(required),
        "additionalProperties": False,
    }


def answer_schema(answer: object) -> dict:
    """The JSON Schema of an answer kind, an ``Answer`` object or a ``[kind]`` list."""
    if isinstance(answer, Answer):
        fields = {**answer.fields, **answer.optional}
        return {
            "type": "object",
            "properties": {name: answer_schema(kind) for name, kind in fields.items()},
            "required": sorted(answer.fields),
        }
    if isinstance(answer, list):
        (item,) = answer
        return {"type": "array", "items": answer_schema(item)}
    return dict(ANSWER_KINDS[answer])


def json_body(schema: dict, description: str | None = None) -> dict:
    content = {"content": {JSON: {"schema": schema}}}
    return {"description": description or "JSON", **content}


def error(description: str) -> dict:
    return json_body(ERROR, description)


REFUSALS = {
    "400": error("bad input: `field` names the input (`stations[0].coverage`), `message` says what is wrong"),
    "413": error("the body is too large"),
    "415": error("the body was not sent as JSON (`Content-Type: application/json`); `field` is null"),
}
GATE = {
    "401": error(f"this needs a passcode: send it in `{PASSCODE_HEADER}`"),
    "403": error("that passcode is not right, does not open this, or an unlocked browser sent no CSRF token"),
    "429": {
        **error("too many wrong passcodes: try again after `Retry-After` seconds"),
        "headers": {"Retry-After": {"description": "seconds to wait", "schema": {"type": "integer", "minimum": 1}}},
    },
}
NOT_FOUND = {"404": error("there is no such snippet (or it is in the bin)")}
GATE_HEADERS = [
    {
        "name": PASSCODE_HEADER,
        "in": "header",
        "required": False,
        "description": "the shop or supervisor passcode, where passcodes are set",
        "schema": {"type": "string"},
    },
    {
        "name": CSRF_HEADER,
        "in": "header",
        "required": False,
        "description": "instead of the passcode: the session's CSRF token, from a browser unlocked on /unlock",
        "schema": {"type": "string"},
    },
]
SNIPPET_ID = {"name": "snippet_id", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}


# --- the calculations --------------------------------------------------------------------------------


def calculation(spec: Calculator, operation: str | None = None) -> dict:
    body = request_object(spec.required, spec.optional, nested=spec.nested, limits=spec.limits)
    answer = answer_schema(spec.answer) if spec.answer is not None else {"type": "object"}
    return {
        "post": {
            "operationId": (operation or f"calculate_{spec.kind}").replace("/", "_").replace("-", "_"),
            "summary": spec.title,
            "tags": ["calculations"],
            "requestBody": {"required": True, "content": {JSON: {"schema": body}}},
            "responses": {"200": json_body(answer, "the answer, quantities in full precision"), **REFUSALS},
        }
    }


# --- the snippets ------------------------------------------------------------------------------------


def meta_field(name: str) -> dict:
    """A snippet's title, job number, press, … as ``rules.check_meta`` takes it (null counts as empty)."""
    if name == "tags":
        tag = {"type": "string", "maxLength": rules.MAX_TAG}
        text = {"type": "string", "description": f"tags separated by commas; at most {rules.MAX_TAGS}"}
        return {"anyOf": [text, {"type": "array", "items": tag, "maxItems": rules.MAX_TAGS}, {"type": "null"}]}
    return {"type": ["string", "null"], "maxLength": rules.LIMITS[name]}


def snippet_create() -> dict:
    properties = {
        "kind": {"type": "string", "enum": sorted(spec.kind for spec in CALCULATORS)},
        "inputs": {"type": "object", "description": "the request body of that calculation"},
        "title": {"type": "string", "minLength": 1, "pattern": r"\S", "maxLength": rules.LIMITS["title"]},
    }
    properties |= {name: meta_field(name) for name in sorted(snippets_api.META_OPTIONAL)}
    properties["client_id"] = {
        "type": ["string", "null"],
        "pattern": rules.CLIENT_ID_PATTERN.pattern,
        "description": (
            "a UUID the sender made for this save (a phone's outbox does): sent again with the same "
            "contents it is answered 200 with the snippet saved the first time, never saved twice; "
            "the same id with other contents is a 409 naming `client_id`"
        ),
    }
    return {
        "type": "object",
        "properties": properties,
        "required": ["inputs", "kind", "title"],
        "additionalProperties": False,
    }


def snippet_update() -> dict:
    properties = {
        "version": {"type": "integer", "minimum": 1, "description": "the version the change was made against"},
        "rerun": {"type": "boolean", "description": "true: keep today's results of a re-run"},
        snippets_api.CHANGED_BY: {
            "type": ["string", "null"],
            "maxLength": rules.LIMITS["saved_by"],
            "description": 'who makes the change (shown as "changed by"; the saver stays in `saved_by`)',
        },
    }
    properties |= {name: meta_field(name) for name in sorted(snippets_api.UPDATE_FIELDS)}
    if "title" in properties:
        properties["title"] = {"type": "string", "minLength": 1, "pattern": r"\S", "maxLength": rules.LIMITS["title"]}
    return {"type": "object", "properties": properties, "required": ["version"], "additionalProperties": False}


SNIPPET = {
    "type": "object",
    "properties": {
        "id": {"type": "integer"},
        "uid": {"type": "string"},
        "kind": {"type": "string"},
        "title": {"type": "string"},
        "job_number": {"type": "string"},
        "press": {"type": "string"},
        "station": {"type": "string"},
        "notes": {"type": "string"},
        "tags": {"type": "array", "items": {"type": "string"}},
        "saved_by": {"type": "string", "description": "who saved it first"},
        "changed_by": {"type": "string", "description": "who made the latest change (empty: nobody said)"},
        "deleted_by": {"type": "string", "description": "who moved it to the bin (empty when not in the bin)"},
        "inputs": {"type": "object"},
        "results": {"type": "object"},
        "created_at": {"type": "string"},
        "updated_at": {"type": "string"},
        "version": {"type": "integer", "minimum": 1},
        "deleted_at": {"type": ["string", "null"]},
    },
    "required": ["id", "kind", "title", "inputs", "results", "version"],
}
ONE = {"$ref": "#/components/schemas/Snippet"}
LISTING = {
    "type": "object",
    "properties": {
        "snippets": {"type": "array", "items": ONE},
        "total": {"type": "integer", "minimum": 0},
        "limit": {"type": "integer"},
        "offset": {"type": "integer"},
        "page": {"type": "integer", "minimum": 1},
        "pages": {"type": "integer", "minimum": 1},
        "order": {"type": "string"},
    },
    "required": ["snippets", "total", "limit", "offset", "page", "pages", "order"],
}
CONFLICT = {
    "409": json_body(
        {
            "type": "object",
            "properties": {"error": {"$ref": "#/components/schemas/ErrorDetail"}, "current": ONE},
            "required": ["error", "current"],
        },
        "someone changed it meanwhile: `current` is the newer snippet; send its `version` to try again",
    )
}


def query(name: str, schema: dict, description: str) -> dict:
    return {"name": name, "in": "query", "required": False, "description": description, "schema": schema}


def list_parameters() -> list[dict]:
    """The list's query parameters, from ``webapp.snippets.api.LIST_QUERY`` (what ``list_query`` checks)."""
    parameters = []
    for name, spec in snippets_api.LIST_QUERY.items():
        kind = spec["kind"]
        if kind == "text":
            schema = {"type": "string", "maxLength": spec["max"]}
        elif kind == "choice":
            schema = {"type": "string", "enum": list(spec["choices"])}
        elif kind == "day":
            schema = {
                "type": "string",
                "format": "date",
                "pattern": r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$",
                "examples": ["2024-05-01"],
            }
        elif kind == "time":
            schema = {
                "type": "string",
                "pattern": r"^[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z$",
                "examples": ["2024-05-01T00:00:00Z"],
            }
        else:
            schema = {"type": "integer", "minimum": spec["min"], "maximum": spec["max"]}
        if "default" in spec:
            schema["default"] = spec["default"]
        parameters.append(query(name, schema, spec["description"]))
    return parameters


BY_PARAMETER = query(
    snippets_api.BY_QUERY,
    {"type": "string", "maxLength": rules.LIMITS["saved_by"]},
    "who does it (the bin and the history say so)",
)


def snippet_paths() -> dict:
    write = {**REFUSALS, **GATE}
    return {
        "/snippets": {
            "get": {
                "operationId": "list_snippets",
                "summary": "Saved calculations, newest first; search, filter, sort and page as the Saved page does",
                "parameters": list_parameters(),
                "responses": {"200": json_body(LISTING), "400": REFUSALS["400"]},
            },
            "post": {
                "operationId": "create_snippet",
                "summary": "Save a calculation (the results are worked out on the server)",
                "parameters": GATE_HEADERS,
                "requestBody": {"required": True, "content": {JSON: {"schema": snippet_create()}}},
                "responses": {
                    "201": {
                        **json_body(ONE, "saved"),
                        "headers": {"Location": {"description": "its address", "schema": {"type": "string"}}},
                    },
                    "200": {
                        **json_body(ONE, "saved before under this `client_id`: the snippet from then, not saved again"),
                        "headers": {"Location": {"description": "its address", "schema": {"type": "string"}}},
                    },
                    "409": json_body(
                        {
                            "type": "object",
                            "properties": {"error": {"$ref": "#/components/schemas/ErrorDetail"}, "current": ONE},
                            "required": ["error", "current"],
                        },
                        "this `client_id` was used for a save with other contents: `current` is that snippet",
                    ),
                    **write,
                },
            },
        },
        "/snippets/{snippet_id}": {
            "parameters": [SNIPPET_ID],
            "get": {"operationId": "read_snippet", "responses": {"200": json_body(ONE), **NOT_FOUND}},
            "put": update_operation("update_snippet"),
            "patch": update_operation("patch_snippet"),
            "delete": {
                "operationId": "delete_snippet",
                "summary": "Move to the bin (needs the supervisor passcode where one is set)",
                "parameters": [
                    *GATE_HEADERS,
                    query("version", {"type": "integer", "minimum": 1}, "refuse (409) if it changed since"),
                    BY_PARAMETER,
                ],
                "responses": {
                    "200": json_body(
                        {
                            "type": "object",
                            "properties": {"deleted": ONE, "gone_for_good_after": {"type": "string"}},
                            "required": ["deleted", "gone_for_good_after"],
                        }
                    ),
                    "400": REFUSALS["400"],
                    **GATE,
                    **NOT_FOUND,
                    **CONFLICT,
                },
            },
        },
        "/snippets/{snippet_id}/rerun": {
            "parameters": [SNIPPET_ID],
            "get": {
                "operationId": "rerun_snippet",
                "summary": "Work a saved calculation out again with today's code, and compare",
                "responses": {"200": json_body(RERUN), **NOT_FOUND},
            },
        },
        "/snippets/{snippet_id}/restore": {
            "parameters": [SNIPPET_ID],
            "post": {
                "operationId": "restore_snippet",
                "summary": "Take a snippet back out of the bin",
                "parameters": [*GATE_HEADERS, BY_PARAMETER],
                "requestBody": {"required": False, "content": {JSON: {"schema": {"type": "object"}}}},
                "responses": {"200": json_body(ONE), **REFUSALS, **GATE, **NOT_FOUND},
            },
        },
        "/snippets/bin": {
            "get": {
                "operationId": "snippet_bin",
                "summary": "The bin: deleted snippets, kept for `days` days",
                "parameters": GATE_HEADERS,
                "responses": {
                    "200": json_body(
                        {
                            "type": "object",
                            "properties": {"snippets": {"type": "array", "items": ONE}, "days": {"type": "integer"}},
                            "required": ["snippets", "days"],
                        }
                    ),
                    **GATE,
                },
            },
        },
        "/snippets/export": {
            "get": {
                "operationId": "export_snippets",
                "summary": "Every snippet as an inkfilm JSON export (a download)",
                "responses": {"200": json_body(EXPORT)},
            },
        },
        "/snippets/export.csv": {
            "get": {
                "operationId": "export_snippets_csv",
                "summary": "Every snippet as CSV (a download)",
                "responses": {"200": {"description": "CSV", "content": {"text/csv": {"schema": {"type": "string"}}}}},
            },
        },
        "/snippets/import": {
            "post": {
                "operationId": "import_snippets",
                "summary": "Add the snippets of an inkfilm export, JSON or CSV (those already here are skipped)",
                "parameters": GATE_HEADERS,
                "requestBody": {
                    "required": True,
                    "description": f"an export (up to {exchange.MAX_IMPORT_BYTES // (1024 * 1024)} MiB)",
                    "content": {
                        JSON: {"schema": {"anyOf": [EXPORT, {"type": "array"}]}},
                        "text/csv": {"schema": {"type": "string", "description": "a CSV export of inkfilm"}},
                    },
                },
                "responses": {
                    "200": json_body(
                        {
                            "type": "object",
                            "properties": {"added": {"type": "integer"}, "already_here": {"type": "integer"}},
                            "required": ["added", "already_here"],
                        }
                    ),
                    **REFUSALS,
                    **GATE,
                },
            },
        },
    }


def update_operation(operation_id: str) -> dict:
    return {
        "operationId": operation_id,
        "summary": "Change a snippet's title, job number, notes, … (made against the `version` you read)",
        "parameters": GATE_HEADERS,
        "requestBody": {"required": True, "content": {JSON: {"schema": snippet_update()}}},
        "responses": {"200": json_body(ONE), **REFUSALS, **GATE, **NOT_FOUND, **CONFLICT},
    }


RERUN = {
    "type": "object",
    "properties": {
        "same": {"type": "boolean"},
        "saved": {"type": "object"},
        "today": {"type": ["object", "null"]},
        "changes": {
            "type": "array",
            "items": {"type": "object", "properties": {"where": {"type": "string"}}, "required": ["where"]},
        },
        "error": {"$ref": "#/components/schemas/ErrorDetail"},
    },
    "required": ["same", "saved", "changes"],
}
EXPORT = {
    "type": "object",
    "properties": {
        "format": {"type": "string"},
        "format_version": {"type": "integer"},
        "exported_at": {"type": "string"},
        "snippets": {"type": "array", "items": {"type": "object"}},
    },
    "required": ["snippets"],
}


# --- pieces the roll register's and the inks' parts share (``webapp/rolls/openapi.py``, ``webapp/inks/openapi.py``)


def object_schema(properties: dict, required: list[str]) -> dict:
    return {"type": "object", "properties": properties, "required": required}


def conflict(current: dict) -> dict:
    """The 409 of a stale change, with the newer thing (``current``)."""
    schema = object_schema(
        {"error": {"$ref": "#/components/schemas/ErrorDetail"}, "current": current}, ["error", "current"]
    )
    return {
        "409": json_body(schema, "changed by someone else meanwhile: `current` is the newer one; send its `version`")
    }


def created(schema: dict) -> dict:
    return {
        "201": {
            **json_body(schema, "saved"),
            "headers": {"Location": {"description": "its address", "schema": {"type": "string"}}},
        }
    }


def body(schema: dict) -> dict:
    return {"required": True, "content": {JSON: {"schema": schema}}}


def version_query(what: str) -> dict:
    return {
        **query(
            "version", {"type": "integer", "minimum": 1}, f"the version of the {what} you read (else 400; 409 if stale)"
        ),
        "required": True,
    }


def csv_export(operation_id: str, summary: str, tags: list[str]) -> dict:
    """A CSV download's ``get``."""
    return {
        "get": {
            "operationId": operation_id,
            "summary": summary,
            "tags": tags,
            "responses": {"200": {"description": "CSV", "content": {"text/csv": {"schema": {"type": "string"}}}}},
        }
    }


_TEXT = {"type": "string"}
IMPORT_REFUSED = {
    "400": json_body(
        object_schema(
            {
                "error": {"$ref": "#/components/schemas/ErrorDetail"},
                "errors": {
                    "type": "array",
                    "items": object_schema(
                        {"row": {"type": "integer"}, "field": _TEXT, "message": _TEXT}, ["row", "field", "message"]
                    ),
                },
                "imported": {"const": 0},
            },
            ["error"],
        ),
        "bad input, or rows that are wrong (then `errors` lists them, and nothing was imported)",
    )
}


def csv_import(operation_id: str, table: str, tags: list[str], fields: dict, file_description: str) -> dict:
    """The ``post`` of a check-every-row CSV import (``webapp/common/csvimport.py``): all rows or none."""
    return {
        "post": {
            "operationId": operation_id,
            "summary": f"Add the {table} of a CSV file like the export (supervisor): all rows or none",
            "tags": tags,
            "parameters": GATE_HEADERS,
            "requestBody": {
                "required": True,
                "description": file_description,
                "content": {JSON: {"schema": request_object(fields, {})}},
            },
            "responses": {
                "200": json_body(
                    object_schema(
                        {"added": {"type": "integer", "minimum": 0}, "already_here": {"type": "integer", "minimum": 0}},
                        ["added", "already_here"],
                    )
                ),
                **REFUSALS,
                **IMPORT_REFUSED,
                **GATE,
            },
        }
    }


# --- the whole ---------------------------------------------------------------------------------------


@cache
def description() -> dict:
    """The OpenAPI 3.1 document of ``/api/v1`` (paths relative to the server ``/api/v1``)."""
    paths = {f"/{spec.kind}": calculation(spec) for spec in CALCULATORS}
    # A calculation also served under a name people read (e.g. /density/fit).
    for spec in CALCULATORS:
        if spec.also_at:
            paths[spec.also_at] = calculation(spec, operation=f"calculate_{spec.kind}_at_{spec.also_at.strip('/')}")
    paths |= snippet_paths()
    # Imported here: the rolls module builds its paths from this module's pieces.
    from webapp.rolls import openapi as rolls_openapi

    paths |= rolls_openapi.roll_paths()
    from webapp.inks import openapi as inks_openapi

    paths |= inks_openapi.ink_paths()
    paths["/openapi.json"] = {
        "get": {
            "operationId": "openapi",
            "summary": "This description",
            "responses": {"200": json_body({"type": "object", "required": ["openapi", "paths"]})},
        }
    }
    return {
        "openapi": "3.1.0",
        "info": {
            "title": "inkfilm API",
            "version": "1",
            "description": (
                "Anilox volume, ink film and ink quantities for the flexographic pressroom, and saved "
                "calculations (snippets), and the anilox roll register (rolls). Every POST, PUT and PATCH sends "
                "`Content-Type: application/json` "
                f"(else 415), at most {MAX_BODY // 1024} KiB (an import up to "
                f"{exchange.MAX_IMPORT_BYTES // (1024 * 1024)} MiB). Quantities go in as text "
                "'<number> <unit>' and come back as {value, unit}; shares are numbers from 0 to 1. "
                "Every refusal answers {error: {field, message}}."
            ),
        },
        "servers": [{"url": "/api/v1"}],
        "paths": paths,
        "components": {
            "schemas": {
                "Quantity": {
                    "type": "object",
                    "properties": {"value": {"type": "number"}, "unit": {"type": "string"}},
                    "required": ["value", "unit"],
                    "additionalProperties": False,
                },
                "Error": {
                    "type": "object",
                    "properties": {"error": {"$ref": "#/components/schemas/ErrorDetail"}},
                    "required": ["error"],
                },
                "ErrorDetail": {
                    "type": "object",
                    "properties": {
                        "field": {"type": ["string", "null"], "description": "the input (or header) meant"},
                        "message": {"type": "string", "minLength": 1},
                    },
                    "required": ["field", "message"],
                },
                "Snippet": SNIPPET,
                **rolls_openapi.SCHEMAS,
                **inks_openapi.SCHEMAS,
            }
        },
    }


bp = Blueprint("openapi", __name__)


@bp.get("/openapi.json")
def openapi_json():
    return jsonify(description())


# Nested once, at import, like every other child of ``api``.
api.register_blueprint(bp)
