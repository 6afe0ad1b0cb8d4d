"""The roll register's part of the OpenAPI description: every ``/api/v1/rolls...`` route.

Request bodies come from the field dicts ``webapp.rolls.api`` passes to
``check_fields`` (``rules.ROLL_*``, ``rules.MEASUREMENT_*``,
``rules.CLEANING_*``, ``api.ROLL_UPDATE_OPTIONAL``, ``api.CORRECTION_FIELDS``)
with the lengths of ``rules.LIMITS``; the answers are those of
``webapp.rolls.register`` (their main keys required, more allowed).
``webapp.common.openapi`` adds these paths to the whole.
"""

from __future__ import annotations

from calc.cell import CELL_LAYOUTS
from calc.fit import WORK_KINDS
from calc.wear import CONDITIONS
from webapp.common.openapi import (
    GATE,
    GATE_HEADERS,
    REFUSALS,
    body,
    conflict,
    created,
    csv_export,
    csv_import,
    error,
    json_body,
    query,
    request_object,
    version_query,
)
from webapp.common.openapi import object_schema as _object
from webapp.rolls import api as rolls_api
from webapp.rolls import exchange, rules

QUANTITY = {"$ref": "#/components/schemas/Quantity"}
MAYBE_QUANTITY = {"oneOf": [QUANTITY, {"type": "null"}]}
TEXT = {"type": "string"}
DAY = "a date, YYYY-MM-DD, not in the future"

# What ``rules.check_*`` enforces beyond the field kinds. Text is measured after runs of spaces become one.
LIMITS = {name: {"maxLength": length} for name, length in rules.LIMITS.items()}
LIMITS |= {
    "roll_id": {"maxLength": rules.LIMITS["roll_id"], "pattern": r"\S", "description": "the shop's own ID, unique"},
    "angle": {"enum": list(CELL_LAYOUTS), "description": "the engraving angle in degrees"},
    "screen": {"description": "the anilox line screen, 10 to 2500 lpi, e.g. '900 lpi' or '354 L/cm'"},
    "nominal_volume": {"description": "the volume ordered, e.g. '1.8 BCM/in2'"},
    "certificate_volume": {"description": "the volume on the engraver's certificate"},
    "volume": {"description": "the measured volume"},
    "engraved_on": {"format": "date", "description": DAY},
    "measured_on": {"format": "date", "description": f"{DAY}, nor before the roll was engraved"},
    "cleaned_on": {"format": "date", "description": f"{DAY}, nor before the roll was engraved"},
    "status": {"description": f"one of {', '.join(rules.STATUSES)} (new rolls: spare)"},
    "condition": {"description": f"one of {', '.join(CONDITIONS)}"},
    "version": {"minimum": 1, "description": "the version the change was made against"},
}

# Valid bodies (so that a generated run also makes rolls and logs entries on them).
EXAMPLES = {
    "roll": {
        "roll_id": "AN-101",
        "screen": "900 lpi",
        "angle": 60,
        "nominal_volume": "1.8 BCM/in2",
        "engraved_on": "2023-04-03",
    },
    "measurement": {"measured_on": "2024-05-06", "volume": "1.72 BCM/in2", "condition": "after_cleaning"},
    "cleaning": {"cleaned_on": "2024-05-06", "method": "ultrasonic"},
}

ROLL_ID = {"name": "roll", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}
ENTRY_ID = {"name": "entry", "in": "path", "required": True, "schema": {"type": "integer", "minimum": 0}}
NOT_FOUND = {"404": error("there is no such roll (or log entry on it)")}
TAGS = ["rolls"]


WEAR = _object(
    {
        "percent_of_nominal": {"type": ["number", "null"]},
        "slope_per_year": MAYBE_QUANTITY,
        "slope_stderr": MAYBE_QUANTITY,
        "certainty": TEXT,
        "line_points": {"type": "integer", "minimum": 0},
        "plugging": {"type": ["number", "null"]},
        "threshold": QUANTITY,
        "replace_by": {"type": ["string", "null"]},
        "latest": {
            "oneOf": [
                _object(
                    {"measured_on": TEXT, "volume": QUANTITY, "condition": {"enum": list(CONDITIONS)}},
                    ["measured_on", "volume", "condition"],
                ),
                {"type": "null"},
            ]
        },
        "flags": {"type": "array", "items": TEXT},
        "reasons": {
            "type": "array",
            "items": _object({"flag": TEXT, "message": TEXT}, ["flag", "message"]),
        },
    },
    ["flags", "reasons", "threshold", "latest"],
)
ROLL = _object(
    {
        "id": {"type": "integer"},
        "roll_id": TEXT,
        "screen": QUANTITY,
        "angle": {"type": "number"},
        "nominal_volume": QUANTITY,
        "certificate_volume": MAYBE_QUANTITY,
        "engraved_on": TEXT,
        "press": TEXT,
        "location": TEXT,
        "status": {"enum": list(rules.STATUSES)},
        "notes": TEXT,
        "version": {"type": "integer", "minimum": 1},
        "updated_at": TEXT,
        "wear": WEAR,
        "fit": {"type": "object", "description": "in a fitting answer: how the roll was judged for the job"},
    },
    ["id", "roll_id", "screen", "angle", "nominal_volume", "engraved_on", "status", "version", "wear"],
)
ENTRY_COMMON = {"id": {"type": "integer"}, "roll": {"type": "integer"}, "method": TEXT, "by": TEXT}
ENTRIES = {
    "measurement": _object(
        {
            **ENTRY_COMMON,
            "measured_on": TEXT,
            "volume": QUANTITY,
            "condition": {"enum": list(CONDITIONS)},
            "version": {"type": "integer", "minimum": 1},
        },
        ["id", "roll", "measured_on", "volume", "condition", "version"],
    ),
    "cleaning": _object(
        {**ENTRY_COMMON, "cleaned_on": TEXT, "notes": TEXT, "version": {"type": "integer", "minimum": 1}},
        ["id", "roll", "cleaned_on", "version"],
    ),
}
CHANGE = _object(
    {"action": {"enum": ["corrected", "removed"]}, "before": {"type": "object"}, "changed_at": TEXT, "reason": TEXT},
    ["action", "before", "changed_at"],
)
ONE_ROLL = {"$ref": "#/components/schemas/Roll"}


# --- rolls ------------------------------------------------------------------------------------------


def roll_update(operation_id: str) -> dict:
    schema = request_object({"version": "integer"}, rolls_api.ROLL_UPDATE_OPTIONAL, limits=LIMITS)
    return {
        "operationId": operation_id,
        "summary": "Change a roll's fields (supervisor), made against the `version` you read",
        "tags": TAGS,
        "parameters": GATE_HEADERS,
        "requestBody": body(schema),
        "responses": {"200": json_body(ONE_ROLL), **REFUSALS, **GATE, **NOT_FOUND, **conflict(ONE_ROLL)},
    }


def roll_paths_only() -> dict:
    return {
        "/rolls": {
            "get": {
                "operationId": "list_rolls",
                "summary": "Every roll with its wear, most urgent first; filter by press, status, screen",
                "tags": TAGS,
                "parameters": [
                    query("press", TEXT, "only rolls on this press"),
                    query("status", TEXT, f"only rolls with this status: {', '.join(rules.STATUSES)}"),
                    query("screen_min", TEXT, "only rolls of at least this line screen (lpi), e.g. 400"),
                    query("screen_max", TEXT, "only rolls of at most this line screen (lpi)"),
                ],
                "responses": {
                    "200": json_body(
                        _object(
                            {"rolls": {"type": "array", "items": ONE_ROLL}, "total": {"type": "integer", "minimum": 0}},
                            ["rolls", "total"],
                        )
                    ),
                    "400": REFUSALS["400"],
                },
            },
            "post": {
                "operationId": "create_roll",
                "summary": "Add a roll to the register (supervisor)",
                "tags": TAGS,
                "parameters": GATE_HEADERS,
                "requestBody": body(
                    request_object(rules.ROLL_REQUIRED, rules.ROLL_OPTIONAL, limits=LIMITS)
                    | {"examples": [EXAMPLES["roll"]]}
                ),
                "responses": {**created(ONE_ROLL), **REFUSALS, **GATE},
            },
        },
        "/rolls/fitting": {
            "get": {
                "operationId": "fitting_rolls",
                "summary": "Which rolls in use or spare fit a job, best first; the others with their reasons",
                "tags": TAGS,
                "parameters": [
                    {
                        **query("work", {"type": "string"}, f"the work: {', '.join(WORK_KINDS)}"),
                        "required": True,
                    },
                    query("plate_screen", TEXT, "the plate line screen, e.g. '150 lpi' (needed for process work)"),
                ],
                "responses": {
                    "200": json_body(
                        _object(
                            {
                                "fitting": {"type": "array", "items": ONE_ROLL},
                                "left_out": {
                                    "type": "array",
                                    "items": _object(
                                        {
                                            "roll": ONE_ROLL,
                                            "problems": {
                                                "type": "array",
                                                "items": _object({"code": TEXT, "message": TEXT}, ["code", "message"]),
                                            },
                                        },
                                        ["roll", "problems"],
                                    ),
                                },
                            },
                            ["fitting", "left_out"],
                        )
                    ),
                    "400": REFUSALS["400"],
                },
            },
        },
        "/rolls/{roll}": {
            "parameters": [ROLL_ID],
            "get": {
                "operationId": "read_roll",
                "summary": "One roll with its wear picture",
                "tags": TAGS,
                "responses": {"200": json_body(ONE_ROLL), **NOT_FOUND},
            },
            "put": roll_update("update_roll"),
            "patch": roll_update("patch_roll"),
            "delete": {
                "operationId": "retire_roll",
                "summary": "Retire the roll (supervisor): it stays in the register with its logs",
                "tags": TAGS,
                "parameters": [*GATE_HEADERS, version_query("roll")],
                "responses": {
                    "200": json_body(ONE_ROLL, "the retired roll"),
                    "400": REFUSALS["400"],
                    **GATE,
                    **NOT_FOUND,
                    **conflict(ONE_ROLL),
                },
            },
        },
    }


# --- log entries ------------------------------------------------------------------------------------


def entry_paths(kinds: str) -> dict:
    kind = rolls_api.KINDS[kinds]
    required, optional = rolls_api.FIELDS[kind]
    one = ENTRIES[kind]
    correction_required = {"version": rolls_api.CORRECTION_FIELDS["version"]}
    correction_optional = {**required, **optional, "reason": rolls_api.CORRECTION_FIELDS["reason"]}
    correction = request_object(correction_required, correction_optional, limits=LIMITS)

    def correct(operation_id: str) -> dict:
        return {
            "operationId": operation_id,
            "summary": f"Correct a {kind} (supervisor); the old values are kept with the `reason`",
            "tags": TAGS,
            "parameters": GATE_HEADERS,
            "requestBody": body(correction),
            "responses": {"200": json_body(one), **REFUSALS, **GATE, **NOT_FOUND, **conflict(one)},
        }

    return {
        f"/rolls/{{roll}}/{kinds}": {
            "parameters": [ROLL_ID],
            "get": {
                "operationId": f"list_{kinds}",
                "summary": f"A roll's {kinds}, oldest first",
                "tags": TAGS,
                "responses": {
                    "200": json_body(_object({kinds: {"type": "array", "items": one}}, [kinds])),
                    **NOT_FOUND,
                },
            },
            "post": {
                "operationId": f"add_{kind}",
                "summary": f"Log a {kind} on a roll (the shop passcode)",
                "tags": TAGS,
                "parameters": GATE_HEADERS,
                "requestBody": body(request_object(required, optional, limits=LIMITS) | {"examples": [EXAMPLES[kind]]}),
                "responses": {**created(one), **REFUSALS, **GATE, **NOT_FOUND},
            },
        },
        f"/rolls/{{roll}}/{kinds}/{{entry}}": {
            "parameters": [ROLL_ID, ENTRY_ID],
            "get": {
                "operationId": f"read_{kind}",
                "summary": f"One {kind} with its corrections",
                "tags": TAGS,
                "responses": {
                    "200": json_body(
                        {"allOf": [one, _object({"changes": {"type": "array", "items": CHANGE}}, ["changes"])]}
                    ),
                    **NOT_FOUND,
                },
            },
            "put": correct(f"correct_{kind}"),
            "patch": correct(f"patch_{kind}"),
            "delete": {
                "operationId": f"remove_{kind}",
                "summary": f"Remove a {kind} (supervisor): it leaves the wear picture but is kept as a change",
                "tags": TAGS,
                "parameters": [
                    *GATE_HEADERS,
                    version_query(kind),
                    query("reason", {"type": "string", "maxLength": rules.LIMITS["reason"]}, "why"),
                ],
                "responses": {
                    "200": json_body(_object({"removed": one}, ["removed"]), "the entry as it was removed"),
                    "400": REFUSALS["400"],
                    **GATE,
                    **NOT_FOUND,
                    **conflict(one),
                },
            },
        },
    }


# --- CSV ----------------------------------------------------------------------------------------------


def csv_paths(table: str) -> dict:
    description = (
        f"the file's text, up to {rolls_api.MAX_IMPORT_BODY // (1024 * 1024)} MiB, at most {exchange.MAX_ROWS} rows"
    )
    return {
        f"/rolls/export/{table}.csv": csv_export(
            f"export_{table}_csv", f"Every {table[:-1]} as CSV (a download)", TAGS
        ),
        f"/rolls/import/{table}": csv_import(f"import_{table}_csv", table, TAGS, {"csv": "text"}, description),
    }


def roll_paths() -> dict:
    """Every ``/rolls...`` path of ``/api/v1`` with its operations."""
    paths = roll_paths_only()
    for kinds in rolls_api.KINDS:
        paths |= entry_paths(kinds)
    for table in exchange.COLUMNS:
        paths |= csv_paths(table)
    return paths


SCHEMAS = {"Roll": ROLL}
