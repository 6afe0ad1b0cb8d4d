"""The rules of the roll register: what a roll, a measurement and a cleaning may hold.

Each ``check_*`` takes the fields as the API or a form sent them and returns
them cleaned, in the units the store keeps (lpi, BCM/in², ISO dates), or
raises ``calc.InputError`` naming the field. Nothing is written before every
field is checked.
"""

from __future__ import annotations

from datetime import date

from calc import InputError
from calc.cell import parse_anilox_screen, parse_cell_angle
from calc.film import parse_anilox_volume
from calc.wear import parse_condition, parse_day

STATUSES = ("in_use", "spare", "sent_out", "retired")
STATUS_NAMES = {"in_use": "in use", "spare": "spare", "sent_out": "sent out", "retired": "retired"}
# Rolls that can be put on a press tonight.
AVAILABLE = ("in_use", "spare")
CLEANING_METHODS = ("soda blast", "ultrasonic", "laser", "chemical", "plastic bead blast", "wash on press")

LIMITS = {
    "roll_id": 40,
    "press": 60,
    "location": 60,
    "notes": 4000,
    "method": 80,
    "by": 60,
    "reason": 400,
}

# Request fields (name → kind), for check_fields and the OpenAPI description.
ROLL_REQUIRED = {
    "roll_id": "text",
    "screen": "quantity",
    "angle": "number",
    "nominal_volume": "quantity",
    "engraved_on": "text",
}
ROLL_OPTIONAL = {
    "certificate_volume": "quantity",
    "press": "text",
    "location": "text",
    "status": "text",
    "notes": "text",
}
MEASUREMENT_REQUIRED = {"measured_on": "text", "volume": "quantity", "condition": "text"}
MEASUREMENT_OPTIONAL = {"method": "text", "by": "text"}
CLEANING_REQUIRED = {"cleaned_on": "text"}
CLEANING_OPTIONAL = {"method": "text", "by": "text", "notes": "text"}


def roll_key(roll_id: str) -> str:
    """The shop's ID as compared for uniqueness: case and spaces do not make a new roll.

    >>> roll_key(" an-0412 ")
    'AN-0412'
    """
    return " ".join(roll_id.split()).upper()


def text(value, field: str, *, required: bool = False, multiline: bool = False) -> str:
    limit = LIMITS.get(field.rsplit(".", 1)[-1], 200)
    if value is None:
        value = ""
    if not isinstance(value, str):
        raise InputError(field, "must be text")
    value = value.replace("\r\n", "\n").strip() if multiline else " ".join(value.split())
    if len(value) > limit:
        raise InputError(field, f"may be at most {limit} characters long (this is {len(value)})")
    if required and not value:
        raise InputError(field, "is required")
    return value


def parse_status(value, field: str = "status") -> str:
    name = "_".join(value.strip().lower().split()) if isinstance(value, str) else None
    if name not in STATUSES:
        raise InputError(field, "must be one of: in_use, spare, sent_out, retired")
    return name


def check_roll(data: dict, today: date) -> dict:
    """A roll's fields checked and converted: screen in lpi, volumes in BCM/in², ISO date."""
    clean = {
        "roll_id": text(data.get("roll_id"), "roll_id", required=True),
        "screen_lpi": parse_anilox_screen(data.get("screen"), "screen").to("lpi").magnitude,
        "angle": parse_cell_angle(data.get("angle"), "angle"),
        "nominal_bcm": parse_anilox_volume(data.get("nominal_volume"), "nominal_volume").to("BCM/in2").magnitude,
        "certificate_bcm": None,
        "press": text(data.get("press"), "press"),
        "location": text(data.get("location"), "location"),
        "status": parse_status(data.get("status") or "spare"),
        "notes": text(data.get("notes"), "notes", multiline=True),
    }
    if data.get("certificate_volume") not in (None, ""):
        volume = parse_anilox_volume(data["certificate_volume"], "certificate_volume")
        clean["certificate_bcm"] = volume.to("BCM/in2").magnitude
    engraved = parse_day(data.get("engraved_on"), "engraved_on")
    if engraved > today:
        raise InputError("engraved_on", "is in the future")
    clean["engraved_on"] = engraved.isoformat()
    return clean


def _day_in_life(value, field: str, engraved_on: str, today: date) -> str:
    day = parse_day(value, field)
    if day < date.fromisoformat(engraved_on):
        raise InputError(field, f"is before the roll was engraved ({engraved_on})")
    if day > today:
        raise InputError(field, "is in the future")
    return day.isoformat()


def check_measurement(data: dict, engraved_on: str, today: date) -> dict:
    return {
        "measured_on": _day_in_life(data.get("measured_on"), "measured_on", engraved_on, today),
        "volume_bcm": parse_anilox_volume(data.get("volume"), "volume").to("BCM/in2").magnitude,
        "condition": parse_condition(data.get("condition"), "condition"),
        "method": text(data.get("method"), "method"),
        "measured_by": text(data.get("by"), "by"),
    }


def check_cleaning(data: dict, engraved_on: str, today: date) -> dict:
    return {
        "cleaned_on": _day_in_life(data.get("cleaned_on"), "cleaned_on", engraved_on, today),
        "method": text(data.get("method"), "method"),
        "cleaned_by": text(data.get("by"), "by"),
        "notes": text(data.get("notes"), "notes", multiline=True),
    }
