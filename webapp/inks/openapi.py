"""The inks' part of the OpenAPI description: every ``/api/v1/inks...`` and ``/api/v1/ink-sets...`` route.

Request bodies come from the field dicts ``webapp.inks.api`` passes to
``check_fields`` (``rules.INK_*``, ``rules.SET_*``, ``rules.READING_*`` and the
update dicts of ``api``) with the lengths of ``rules.LIMITS``; the answers are
those of ``webapp.inks.curves`` (their main keys required, more allowed).
``webapp.common.openapi`` adds these paths to the whole.
"""

from __future__ import annotations

from webapp.calculators import density as density_api
from webapp.common.openapi import (
    ERROR,
    GATE,
    GATE_HEADERS,
    JSON,
    REFUSALS,
    answer_schema,
    json_body,
    query,
    request_object,
)
from webapp.inks import api as inks_api
from webapp.inks import exchange, rules

QUANTITY = {"$ref": "#/components/schemas/Quantity"}
TEXT = {"type": "string"}
NUMBER_OR_NULL = {"type": ["number", "null"]}
TAGS = ["inks"]

LIMITS = {name: {"maxLength": length} for name, length in rules.LIMITS.items()}
LIMITS |= {
    "name": {"maxLength": rules.LIMITS["name"], "pattern": r"\S", "description": "the shop's own name, unique"},
    "type": {"enum": list(rules.INK_TYPES), "description": "water_based, solvent_based or uv"},
    "density": {"description": "the press-ready ink density, 0.3 to 5 g/cm³, e.g. '1.02 g/cm3'"},
    "price": {
        "minimum": 0,
        "maximum": rules.PRICE_HIGH,
        "description": "per kg or per lb (price_per), shop's currency",
    },
    "price_per": {"enum": list(rules.PRICE_UNITS)},
    "ink": {"minimum": 1, "description": "the id of an ink on the shop's list"},
    "read_on": {"format": "date", "description": "a date, YYYY-MM-DD, not in the future (default today)"},
    "film": {"description": "the wet film printed, e.g. '1.4 um' (or give anilox_volume and transfer)"},
    "anilox_volume": {"description": "the anilox volume printed with, e.g. '4.5 BCM/in2'; film = volume × transfer"},
    "version": {"minimum": 1, "description": "the version the change was made against"},
}
EXAMPLES = {
    "ink": {"name": "Process cyan WB", "type": "water_based", "density": "1.03 g/cm3", "solids_by_volume": 0.3},
    "reading": {"density": 1.21, "anilox_volume": "4.5 BCM/in2", "transfer": 0.25, "read_on": "2024-05-06"},
}


def _object(properties: dict, required: list[str]) -> dict:
    return {"type": "object", "properties": properties, "required": required}


CAUTION = {"type": ["string", "null"], "description": "the usual caution of a solvent-based or UV ink, else null"}
INK = _object(
    {
        "id": {"type": "integer"},
        "name": TEXT,
        "type": {"enum": list(rules.INK_TYPES)},
        "type_name": TEXT,
        "caution": CAUTION,
        "density": QUANTITY,
        "solids_by_volume": NUMBER_OR_NULL,
        "solids_by_weight": NUMBER_OR_NULL,
        "price": NUMBER_OR_NULL,
        "price_per": {"enum": list(rules.PRICE_UNITS)},
        "notes": TEXT,
        "version": {"type": "integer", "minimum": 1},
        "updated_at": TEXT,
    },
    ["id", "name", "type", "caution", "density", "version"],
)
READING = _object(
    {
        "id": {"type": "integer"},
        "ink_set": {"type": "integer"},
        "read_on": TEXT,
        "density": {"type": "number"},
        "film": QUANTITY,
        "anilox_volume": {"oneOf": [QUANTITY, {"type": "null"}]},
        "transfer": NUMBER_OR_NULL,
        "notes": TEXT,
        "version": {"type": "integer", "minimum": 1},
    },
    ["id", "read_on", "density", "film", "version"],
)
FIT = {
    "description": "the Tollenaar–Ernst fit of the readings, or (fitted false) the plain-words reason there is none",
    "oneOf": [
        _object(
            {
                "fitted": {"const": True},
                "d_inf": {"type": "number"},
                "d_inf_se": {"type": "number"},
                "m": QUANTITY,
                "m_se": QUANTITY,
                "correlation": {"type": "number"},
                "residual_sd": {"type": "number"},
                "count": {"type": "integer"},
            },
            ["fitted", "d_inf", "d_inf_se", "m", "m_se", "residual_sd", "count"],
        ),
        _object({"fitted": {"const": False}, "reason": TEXT}, ["fitted", "reason"]),
    ],
}
INK_SET = _object(
    {
        "id": {"type": "integer"},
        "name": TEXT,
        "ink": _object({"id": {"type": "integer"}, "name": TEXT, "type": TEXT, "caution": CAUTION}, ["id", "name"]),
        "substrate": TEXT,
        "notes": TEXT,
        "version": {"type": "integer", "minimum": 1},
        "updated_at": TEXT,
        "reading_count": {"type": "integer", "minimum": 0},
        "fit": FIT,
        "readings": {"type": "array", "items": READING},
    },
    ["id", "name", "ink", "substrate", "version", "reading_count", "fit"],
)
ONE_INK = {"$ref": "#/components/schemas/Ink"}
ONE_SET = {"$ref": "#/components/schemas/InkSet"}
ONE_READING = {"$ref": "#/components/schemas/InkReading"}
SCHEMAS = {"Ink": INK, "InkSet": INK_SET, "InkReading": READING}

INK_ID = {"name": "ink", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}
SET_ID = {"name": "ink_set", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}
READING_ID = {"name": "reading", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}
NOT_FOUND = {"404": json_body(ERROR, "there is no such ink, ink set or reading")}


def conflict(current: dict) -> dict:
    schema = _object({"error": {"$ref": "#/components/schemas/ErrorDetail"}, "current": current}, ["error", "current"])
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


def _update(operation_id: str, what: str, fields: dict, one: dict) -> dict:
    return {
        "operationId": operation_id,
        "summary": f"Change an {what}'s fields (the shop passcode), made against the `version` you read",
        "tags": TAGS,
        "parameters": GATE_HEADERS,
        "requestBody": body(request_object({"version": "integer"}, fields, limits=LIMITS)),
        "responses": {"200": json_body(one), **REFUSALS, **GATE, **NOT_FOUND, **conflict(one)},
    }


def _delete(operation_id: str, summary: str, what: str, one: dict, answer: dict, in_use: bool = False) -> dict:
    refused = (
        {"409": json_body(ERROR, "changed meanwhile (then `current` is the newer one), or ink sets still use the ink")}
        if in_use
        else conflict(one)
    )
    return {
        "operationId": operation_id,
        "summary": summary,
        "tags": TAGS,
        "parameters": [*GATE_HEADERS, version_query(what)],
        "responses": {"200": json_body(answer), "400": REFUSALS["400"], **GATE, **NOT_FOUND, **refused},
    }


def _csv_get(operation_id: str, summary: str) -> dict:
    return {
        "get": {
            "operationId": operation_id,
            "summary": summary,
            "tags": TAGS,
            "responses": {"200": {"description": "CSV", "content": {"text/csv": {"schema": {"type": "string"}}}}},
        }
    }


IMPORT_REFUSED = {
    "400": json_body(
        _object(
            {
                "error": {"$ref": "#/components/schemas/ErrorDetail"},
                "errors": {
                    "type": "array",
                    "items": _object(
                        {"row": {"type": "integer"}, "field": TEXT, "message": TEXT}, ["row", "field", "message"]
                    ),
                },
                "imported": {"const": 0},
            },
            ["error"],
        ),
        "bad input, or rows that are wrong (then `errors` lists them, and nothing was imported)",
    )
}


def _csv_import(operation_id: str, table: str) -> dict:
    return {
        "post": {
            "operationId": operation_id,
            "summary": f"Add the {table} of a CSV file like the export (supervisor): all rows or none",
            "tags": TAGS,
            "parameters": GATE_HEADERS,
            "requestBody": {
                "required": True,
                "description": f"the file's text, up to {inks_api.MAX_IMPORT_BODY // (1024 * 1024)} MiB, "
                f"at most {exchange.MAX_ROWS} rows; columns {', '.join(exchange.COLUMNS[table])}",
                "content": {JSON: {"schema": request_object(inks_api.IMPORT_FIELDS, {})}},
            },
            "responses": {
                "200": json_body(
                    _object(
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


def _ink_paths() -> dict:
    ink_body = request_object(rules.INK_REQUIRED, rules.INK_OPTIONAL, limits=LIMITS) | {"examples": [EXAMPLES["ink"]]}
    return {
        "/inks": {
            "get": {
                "operationId": "list_inks",
                "summary": "The shop's inks, by name, each with its caution (solvent-based, UV)",
                "tags": TAGS,
                "responses": {
                    "200": json_body(
                        _object(
                            {"inks": {"type": "array", "items": ONE_INK}, "total": {"type": "integer"}},
                            ["inks", "total"],
                        )
                    )
                },
            },
            "post": {
                "operationId": "add_ink",
                "summary": "Add an ink to the list (the shop passcode)",
                "tags": TAGS,
                "parameters": GATE_HEADERS,
                "requestBody": body(ink_body),
                "responses": {**created(ONE_INK), **REFUSALS, **GATE},
            },
        },
        "/inks/{ink}": {
            "parameters": [INK_ID],
            "get": {
                "operationId": "read_ink",
                "summary": "One ink",
                "tags": TAGS,
                "responses": {"200": json_body(ONE_INK), **NOT_FOUND},
            },
            "put": _update("update_ink", "ink", inks_api.INK_UPDATE, ONE_INK),
            "patch": _update("patch_ink", "ink", inks_api.INK_UPDATE, ONE_INK),
            "delete": _delete(
                "delete_ink",
                "Delete an ink no ink set uses (supervisor)",
                "ink",
                ONE_INK,
                _object({"deleted": ONE_INK}, ["deleted"]),
                in_use=True,
            ),
        },
        "/inks/export.csv": _csv_get("export_inks_csv", "Every ink as CSV (a download)"),
        "/inks/import": _csv_import("import_inks_csv", "inks"),
    }


def _set_paths() -> dict:
    set_body = request_object(rules.SET_REQUIRED, rules.SET_OPTIONAL, limits=LIMITS)
    reading_body = request_object(rules.READING_REQUIRED, rules.READING_OPTIONAL, limits=LIMITS) | {
        "examples": [EXAMPLES["reading"]]
    }
    return {
        "/ink-sets": {
            "get": {
                "operationId": "list_ink_sets",
                "summary": "Every ink set with its fit (readings left out), by name",
                "tags": TAGS,
                "responses": {
                    "200": json_body(
                        _object(
                            {"ink_sets": {"type": "array", "items": ONE_SET}, "total": {"type": "integer"}},
                            ["ink_sets", "total"],
                        )
                    )
                },
            },
            "post": {
                "operationId": "add_ink_set",
                "summary": "Add an ink set: an ink from the list on a substrate (the shop passcode)",
                "tags": TAGS,
                "parameters": GATE_HEADERS,
                "requestBody": body(set_body),
                "responses": {**created(ONE_SET), **REFUSALS, **GATE},
            },
        },
        "/ink-sets/{ink_set}": {
            "parameters": [SET_ID],
            "get": {
                "operationId": "read_ink_set",
                "summary": "One ink set with its readings and its fit",
                "tags": TAGS,
                "responses": {"200": json_body(ONE_SET), **NOT_FOUND},
            },
            "put": _update("update_ink_set", "ink set", inks_api.SET_UPDATE, ONE_SET),
            "patch": _update("patch_ink_set", "ink set", inks_api.SET_UPDATE, ONE_SET),
            "delete": _delete(
                "delete_ink_set",
                "Delete an ink set with its readings (supervisor)",
                "ink set",
                ONE_SET,
                _object({"deleted": _object({"id": {"type": "integer"}, "name": TEXT}, ["id", "name"])}, ["deleted"]),
            ),
        },
        "/ink-sets/{ink_set}/readings": {
            "parameters": [SET_ID],
            "get": {
                "operationId": "list_ink_readings",
                "summary": "A set's readings, oldest first",
                "tags": TAGS,
                "responses": {
                    "200": json_body(_object({"readings": {"type": "array", "items": ONE_READING}}, ["readings"])),
                    **NOT_FOUND,
                },
            },
            "post": {
                "operationId": "add_ink_reading",
                "summary": "Add a density reading: the wet film, or the anilox volume and transfer (shop passcode)",
                "tags": TAGS,
                "parameters": GATE_HEADERS,
                "requestBody": body(reading_body),
                "responses": {**created(ONE_READING), **REFUSALS, **GATE, **NOT_FOUND},
            },
        },
        "/ink-sets/{ink_set}/readings/{reading}": {
            "parameters": [SET_ID, READING_ID],
            "get": {
                "operationId": "read_ink_reading",
                "summary": "One reading",
                "tags": TAGS,
                "responses": {"200": json_body(ONE_READING), **NOT_FOUND},
            },
            "put": _update("update_ink_reading", "reading", inks_api.READING_UPDATE, ONE_READING),
            "patch": _update("patch_ink_reading", "reading", inks_api.READING_UPDATE, ONE_READING),
            "delete": _delete(
                "delete_ink_reading",
                "Delete a reading (supervisor)",
                "reading",
                ONE_READING,
                _object({"deleted": ONE_READING}, ["deleted"]),
            ),
        },
        "/ink-sets/{ink_set}/volume-for": {
            "parameters": [SET_ID],
            "post": {
                "operationId": "ink_set_volume_for",
                "summary": "The film and anilox volume a target density needs on this set's curve",
                "tags": TAGS,
                "requestBody": body(request_object(inks_api.VOLUME_FOR_FIELDS, {})),
                "responses": {
                    "200": json_body(answer_schema(density_api.DENSITY_VOLUME_FOR.answer)),
                    **REFUSALS,
                    **NOT_FOUND,
                },
            },
        },
        "/ink-sets/{ink_set}/density-from": {
            "parameters": [SET_ID],
            "post": {
                "operationId": "ink_set_density_from",
                "summary": "The density a volume and transfer (or a film) is expected to give on this set's curve",
                "tags": TAGS,
                "requestBody": body(request_object({}, inks_api.DENSITY_FROM_OPTIONAL)),
                "responses": {
                    "200": json_body(answer_schema(density_api.DENSITY_FROM.answer)),
                    **REFUSALS,
                    **NOT_FOUND,
                },
            },
        },
        "/ink-sets/{ink_set}/rolls": {
            "parameters": [SET_ID],
            "get": {
                "operationId": "ink_set_on_rolls",
                "summary": "What each register roll in use or spare gives with this set, on its latest measured volume",
                "tags": TAGS,
                "parameters": [
                    query("target_density", TEXT, "the density wanted (default 1.40)"),
                    query("transfer", TEXT, "the share of the cell volume on the stock, 0 to 1 (default 0.25)"),
                ],
                "responses": {
                    "200": json_body(
                        _object(
                            {
                                "target_density": {"type": "number"},
                                "transfer": {"type": "number"},
                                "needed_volume": {"oneOf": [QUANTITY, {"type": "null"}]},
                                "needed_error": {"type": ["string", "null"]},
                                "rolls": {"type": "array", "items": {"type": "object"}},
                            },
                            ["target_density", "transfer", "needed_volume", "rolls"],
                        )
                    ),
                    "400": REFUSALS["400"],
                    **NOT_FOUND,
                },
            },
        },
        "/ink-sets/export/readings.csv": _csv_get(
            "export_ink_readings_csv", "Every set's readings as CSV (a download)"
        ),
        "/ink-sets/import/readings": _csv_import("import_ink_readings_csv", "readings"),
    }


def ink_paths() -> dict:
    """Every ``/inks...`` and ``/ink-sets...`` path of ``/api/v1`` with its operations."""
    return _ink_paths() | _set_paths()
