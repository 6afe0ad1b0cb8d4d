"""A saved snippet opened again in its calculator: the page's form filled with its inputs.

``calculator_link(kind, inputs)`` gives the calculator page's address with the form's
fields as GET values (``webapp.common.forms.form_values`` reads them like typed ones),
so a person can change them and save the result as a new snippet. A calculator whose
inputs are lists of readings (the density kinds) has no such link yet: ``None``; an
estimate's stations go as ``stations[i].<field>`` values.
"""

from __future__ import annotations

from urllib.parse import urlencode

from calc.display import format_percent
from webapp.calculators import BY_KIND, cell, convert, estimate, film, fit

# kind → (the form's fields and defaults, API input name → form field where they differ,
# a quantity's form field → its unit menu where that is not "<field>_unit").
FORMS = {
    "equivalents": (convert.DEFAULTS, {"quantity": "value"}, convert.UNIT_MENUS),
    "film": (film.DEFAULTS, {}, {"anilox_volume": "anilox_unit"}),
    "cell": (cell.DEFAULTS, {}, {}),
    "fit": (fit.DEFAULTS, {}, {}),
}
MAX_VALUE = 100


def form_values(kind: str, inputs) -> dict | None:
    """The calculator form's field values for a snippet's ``inputs`` (``None`` if it has no such form).

    >>> form_values("film", {"anilox_volume": "4.5 BCM/in2", "anilox_to_plate": 0.5, "plate_to_substrate": 0.25})
    {'anilox_volume': '4.5', 'anilox_unit': 'BCM/in2', 'anilox_to_plate': '50', 'plate_to_substrate': '25'}
    >>> form_values("cell", {"screen": "800 lpi", "angle": 60, "volume": "4 BCM/in2"})["screen_unit"]
    'lpi'
    """
    spec = BY_KIND.get(kind)
    if kind not in FORMS or spec is None or not spec.path or not isinstance(inputs, dict):
        return None
    defaults, renames, unit_menus = FORMS[kind]
    values: dict[str, str] = {}
    for name, value in inputs.items():
        field = renames.get(name, name)
        if field not in defaults:
            continue
        if isinstance(value, bool):
            continue
        if isinstance(value, int | float) and name in spec.shares:
            values[field] = format_percent(value)
        elif isinstance(value, int | float):
            values[field] = repr(value)
        elif isinstance(value, str):
            amount, _, unit = value.strip().rpartition(" ")
            menu = unit_menus.get(field, f"{field}_unit")
            if amount and menu in defaults:
                values[field], values[menu] = amount, unit
            else:
                values[field] = value
    if kind == "cell":
        values["given"] = "volume" if "volume" in inputs else "depth"
    return {name: text for name, text in values.items() if len(text) <= MAX_VALUE}


# An estimate station's API input → (form field, its unit menu or None).
STATION_FIELDS = {
    "name": ("name", None),
    "anilox_volume": ("anilox_volume", "anilox_unit"),
    "coverage": ("coverage", None),
    "transfer": ("transfer", None),
    "ink_density": ("ink_density", "ink_density_unit"),
    "fill": ("fill", "fill_unit"),
    "on_hand": ("on_hand", "on_hand_unit"),
}
ESTIMATE_FIELDS = {
    "web_width": "web_width_unit",
    "run_length": "run_length_unit",
    "repeat": "repeat_unit",
    "makeready": "makeready_unit",
    "impressions": None,
    "labels": None,
    "across": None,
    "around": None,
    "waste": None,
}


def _put(values: dict, field: str, menu: str | None, value, *, share: bool = False) -> bool:
    """One input as form text (a quantity split into number and unit menu); False if it cannot be."""
    if isinstance(value, bool):
        return False
    if isinstance(value, int | float):
        values[field] = format_percent(value) if share else repr(value)
        return True
    if not isinstance(value, str):
        return False
    amount, _, unit = value.strip().rpartition(" ")
    if menu is not None and amount:
        values[field], values[menu] = amount, unit
    else:
        values[field] = value
    return True


def estimate_values(inputs) -> dict | None:
    """The estimate form's field values for saved inputs, stations included; ``None`` when an
    input has no field on the form (the page would work out something else)."""
    if not isinstance(inputs, dict) or not isinstance(inputs.get("stations"), list):
        return None
    stations = inputs["stations"]
    if not 1 <= len(stations) <= estimate.MAX_STATIONS:
        return None
    values = {"station_count": str(len(stations))}
    values["run_basis"] = next((b for b in ("impressions", "labels") if b in inputs), "length")
    for name, value in inputs.items():
        if name == "stations":
            continue
        if name not in ESTIMATE_FIELDS or not _put(values, name, ESTIMATE_FIELDS[name], value, share=name == "waste"):
            return None
    for index, station in enumerate(stations):
        if not isinstance(station, dict):
            return None
        for name, value in station.items():
            where = f"stations[{index}]."
            if name in ("price_per_kg", "price_per_lb"):
                if not _put(values, where + "price_per_kg", None, value):
                    return None
                values[where + "price_unit"] = name.removeprefix("price_per_")
                continue
            if name not in STATION_FIELDS:
                return None
            field, menu = STATION_FIELDS[name]
            share = name in ("coverage", "transfer")
            if not _put(values, where + field, menu and where + menu, value, share=share):
                return None
    if any(len(text) > MAX_VALUE for text in values.values()):
        return None
    return values


def calculator_link(kind: str, inputs) -> str | None:
    """The calculator page filled with ``inputs``, or ``None``."""
    values = estimate_values(inputs) if kind == "estimate" else form_values(kind, inputs)
    if values is None:
        return None
    try:
        return f"{BY_KIND[kind].path}?{urlencode(values)}"
    except UnicodeEncodeError:  # a lone surrogate, as no saved snippet holds: no link
        return None
