"""The rules of the ink list and the ink sets: what an ink, a set and a density reading may hold.

Each ``check_*`` takes the fields as the API, a form or a CSV row sent them
and returns them cleaned, in the units the store keeps (g/cm³, shares from 0
to 1, µm of wet film, cm³/m² of anilox volume, ISO dates), or raises
``calc.InputError`` naming the field. Nothing is written before every field is
checked.
"""

from __future__ import annotations

from datetime import date

from calc import InputError
from calc.density import make_reading
from calc.units import check_fraction, check_number, parse_density
from calc.wear import parse_day

INK_TYPES = ("water_based", "solvent_based", "uv")
TYPE_NAMES = {"water_based": "water-based", "solvent_based": "solvent-based", "uv": "UV"}
# The usual cautions for the kinds of ink that can hurt someone (common practice); the SDS and the
# site's codes rule.
CAUTIONS = {
    "solvent_based": (
        "Flammable liquid: keep it away from sparks and open flames, ground and bond containers when pouring, "
        "keep the pressroom ventilated, and store it as its safety data sheet (SDS) and the local fire code say."
    ),
    "uv": (
        "UV ink can sensitise skin and eyes: wear nitrile gloves and safety glasses, wash uncured ink off skin "
        "at once, keep it from daylight, and follow its safety data sheet (SDS) and local codes."
    ),
}
PRICE_UNITS = ("kg", "lb")

LIMITS = {"name": 80, "substrate": 120, "notes": 2000, "price_per": 2}
PRICE_HIGH = 1e9

# Request fields (name → kind), for check_fields and the OpenAPI description.
INK_REQUIRED = {"name": "text", "type": "text", "density": "quantity"}
INK_OPTIONAL = {
    "solids_by_volume": "share",
    "solids_by_weight": "share",
    "price": "number",
    "price_per": "text",
    "notes": "text",
}
SET_REQUIRED = {"name": "text", "ink": "integer", "substrate": "text"}
SET_OPTIONAL = {"notes": "text"}
READING_REQUIRED = {"density": "number"}
READING_OPTIONAL = {
    "film": "quantity",
    "anilox_volume": "quantity",
    "transfer": "share",
    "read_on": "text",
    "notes": "text",
}


def name_key(name: str) -> str:
    """A name as compared for uniqueness: case and spaces do not make a new ink or set.

    >>> name_key("  Process  cyan ")
    'PROCESS CYAN'
    """
    return " ".join(name.split()).upper()


def text(value, field: str, *, required: bool = False, multiline: bool = False) -> str:
    limit = LIMITS.get(field, 200)
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


def parse_type(value, field: str = "type") -> str:
    """``water_based``, ``solvent-based``, ``UV`` …: one of the three kinds of ink."""
    if isinstance(value, str):
        name = "_".join(value.strip().lower().replace("-", " ").split())
        if name in INK_TYPES:
            return name
    raise InputError(field, "must be one of: water_based, solvent_based, uv")


def _optional_share(value, field: str):
    if value in (None, ""):
        return None
    share = check_fraction(value, field)
    if share == 0:
        raise InputError(field, "must be more than 0 (leave it out if it is not known)")
    return share


def check_ink(data: dict) -> dict:
    """An ink's fields checked: density in g/cm³, solids as shares, the price per kg or per lb."""
    clean = {
        "name": text(data.get("name"), "name", required=True),
        "ink_type": parse_type(data.get("type")),
        "density_g_cm3": parse_density(data.get("density"), "density").to("g/cm3").magnitude,
        "solids_by_volume": _optional_share(data.get("solids_by_volume"), "solids_by_volume"),
        "solids_by_weight": _optional_share(data.get("solids_by_weight"), "solids_by_weight"),
        "price": None,
        "price_per": "kg",
        "notes": text(data.get("notes"), "notes", multiline=True),
    }
    per = data.get("price_per")
    if per not in (None, ""):
        if not isinstance(per, str) or per.strip().lower() not in PRICE_UNITS:
            raise InputError("price_per", "must be kg or lb (the price is per kilogram or per pound of ink)")
        clean["price_per"] = per.strip().lower()
    if data.get("price") not in (None, ""):
        price = check_number(data["price"], "price")
        if price > PRICE_HIGH:
            raise InputError("price", f"must be at most {PRICE_HIGH:g} (in the shop's currency)")
        clean["price"] = price
    return clean


def check_set(data: dict) -> dict:
    """An ink set's fields; ``ink`` is the id of an ink on the list (the store checks it is there)."""
    ink = data.get("ink")
    if isinstance(ink, str) and ink.strip().isdigit():
        ink = int(ink.strip())
    if isinstance(ink, bool) or not isinstance(ink, int) or ink < 1:
        raise InputError("ink", "is required: pick an ink from the shop's list")
    return {
        "name": text(data.get("name"), "name", required=True),
        "ink": ink,
        "substrate": text(data.get("substrate"), "substrate", required=True),
        "notes": text(data.get("notes"), "notes", multiline=True),
    }


def check_reading(data: dict, today: date) -> dict:
    """A density reading with either the wet film or the anilox volume and transfer share it was printed with."""
    density = data.get("density")
    if isinstance(density, str):
        try:
            density = float(density.strip().replace(",", "."))
        except ValueError:
            raise InputError("density", "must be a number, e.g. 1.32") from None
    transfer = data.get("transfer")
    if isinstance(transfer, str):
        try:
            transfer = float(transfer.strip().replace(",", ".")) if transfer.strip() else None
        except ValueError:
            raise InputError("transfer", "must be a share from 0 to 1, e.g. 0.25") from None
    pieces = {name: data.get(name) or None for name in ("film", "anilox_volume")}
    reading = make_reading(density, film=pieces["film"], anilox_volume=pieces["anilox_volume"], transfer=transfer)
    read_on = today if data.get("read_on") in (None, "") else parse_day(data.get("read_on"), "read_on")
    if read_on > today:
        raise InputError("read_on", "is in the future")
    return {
        "read_on": read_on.isoformat(),
        "density": reading.density,
        "film_um": reading.film.to("um").magnitude,
        "anilox_cm3_m2": None if reading.anilox_volume is None else reading.anilox_volume.to("cm3/m2").magnitude,
        "transfer": reading.transfer,
        "notes": text(data.get("notes"), "notes", multiline=True),
    }
