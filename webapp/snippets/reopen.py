"""A saved snippet opened again in its calculator: the page's form filled with its inputs.

``calculator_link(kind, inputs)`` gives the calculator page's address with the form's
fields as GET values (``webapp.common.forms.form_values`` reads them like typed ones),
so a person can change them and save the result as a new snippet. An estimate's stations
go as ``stations[i].<field>`` values; the density kinds' readings open the Ink strength page
as ``readings[i].value`` / ``.transfer`` / ``.density`` rows (``density_values``).
"""

from __future__ import annotations

from urllib.parse import urlencode

from calc import InputError
from calc.display import format_number, format_percent
from calc.units import magnitude_in
from webapp.calculators import BY_KIND, cell, convert, density, estimate, film, fit

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


# The density kinds: all open the Ink strength page (the one with a form), with their readings.
DENSITY_KINDS = frozenset({"density_volume_for", "density_fit", "density_from"})
DENSITY_PAGE = "density_volume_for"


def _one_way(readings: list, field: str, units) -> str | None:
    """The unit every reading gives its ``field`` in, if all give it as ``"<number> <unit>"`` in one
    unit of the page's menu (``units``); else ``None``."""
    seen = set()
    for item in readings:
        value = item.get(field)
        if not isinstance(value, str):
            return None
        amount, _, unit = value.strip().rpartition(" ")
        if not amount:
            return None
        seen.add(unit)
    return next(iter(seen)) if len(seen) == 1 and seen <= set(units) else None


def density_values(inputs) -> dict | None:
    """The Ink strength form's values for a density snippet's ``inputs``: one row per reading, the
    target density and transfer where it has them (else the page's own).

    Readings all given one way (all films, or all anilox volumes with transfer) in one unit of the
    page's menus keep their numbers as saved; any others (mixed ways, another unit) go as each
    reading's wet film in µm as the core reads it, the same fit. ``None`` without readings (a fit's
    parameters only), or with a reading the core refuses.

    >>> values = density_values({"readings": [{"film": "1.2 um", "density": 1.1}], "target_density": 1.3})
    >>> values["basis"], values["film_unit"], values["readings[0].value"], values["readings[0].density"]
    ('film', 'um', '1.2', '1.1')
    """
    if not isinstance(inputs, dict):
        return None
    items = inputs.get("readings")
    if not isinstance(items, list) or not 1 <= len(items) <= density.MAX_ROWS:
        return None
    try:
        readings = density.readings_of([dict(item) if isinstance(item, dict) else item for item in items])
    except InputError:
        return None
    values = {"reading_count": str(len(items))}
    for name in ("target_density", "transfer"):
        value = inputs.get(name)
        if isinstance(value, int | float) and not isinstance(value, bool):
            values[name] = format_percent(value) if name == "transfer" else repr(float(value))
    row_transfer = values.get("transfer", density.TYPICAL_TRANSFER)
    by_film = _one_way(items, "film", density.FILM_UNITS)
    by_volume = _one_way(items, "anilox_volume", density.VOLUME_UNITS)
    for index, (item, reading) in enumerate(zip(items, readings, strict=True)):
        where = f"readings[{index}]."
        values[where + "density"] = repr(float(item["density"]))
        if by_volume:
            values[where + "value"] = item["anilox_volume"].strip().rpartition(" ")[0]
            values[where + "transfer"] = format_percent(item["transfer"])
        else:
            values[where + "transfer"] = row_transfer
            if by_film:
                values[where + "value"] = item["film"].strip().rpartition(" ")[0]
            else:
                values[where + "value"] = format_number(magnitude_in(reading.film, "um"), 12)
    if by_volume:
        values.update(basis="volume", volume_unit=by_volume)
    else:
        values.update(basis="film", film_unit=by_film or "um")
    return values


def calculator_link(kind: str, inputs) -> str | None:
    """The calculator page filled with ``inputs``, or ``None``."""
    if kind == "estimate":
        values = estimate_values(inputs)
    elif kind in DENSITY_KINDS:
        values, kind = density_values(inputs), DENSITY_PAGE
    else:
        values = form_values(kind, inputs)
    if values is None or any(len(text) > MAX_VALUE for text in values.values()):
        return None
    try:
        return f"{BY_KIND[kind].path}?{urlencode(values)}"
    except UnicodeEncodeError:  # a lone surrogate, as no saved snippet holds: no link
        return None
