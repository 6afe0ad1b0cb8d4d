"""A saved snippet opened again in its calculator: the page's form filled with its inputs.

``calculator_link(kind, inputs)`` gives the calculator page's address with the form's
fields as GET values (``webapp.common.forms.form_values`` reads them like typed ones),
so a person can change them and save the result as a new snippet. A calculator whose
inputs are lists (stations, readings) has no such link yet: ``None``.
"""

from __future__ import annotations

from urllib.parse import urlencode

from calc.display import format_percent
from webapp.calculators import BY_KIND, cell, convert, film, fit

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


def calculator_link(kind: str, inputs) -> str | None:
    """The calculator page filled with ``inputs``, or ``None``."""
    values = form_values(kind, inputs)
    if values is None:
        return None
    try:
        return f"{BY_KIND[kind].path}?{urlencode(values)}"
    except UnicodeEncodeError:  # a lone surrogate, as no saved snippet holds: no link
        return None
