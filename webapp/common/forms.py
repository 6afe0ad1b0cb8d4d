"""Reading what people type into the pages' forms.

The pages read each form into the API request body (which is also what a
saved snippet keeps as its inputs), naming the form field on bad input.

>>> parse_number("4,5", "value")
4.5
>>> parse_percent("35", "coverage")
0.35

A quantity field may carry its unit in the text (``4.5 bcm``): see
:func:`parse_amount`, which sets the field's unit menu from it.
"""

from __future__ import annotations

import math
import re

from flask import request

from calc import InputError
from calc.display import unit_label
from calc.units import MAX_MAGNITUDE, Q_, parse_unit


class FormValues(dict):
    """A form's values by field name, and the unit menus set from units typed
    with a value (``typed_units``: unit field → menu value), which the result
    fragments send back so that the menu on screen shows the unit read."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.typed_units: dict[str, str] = {}


def form_values(defaults: dict) -> FormValues:
    """The posted form over the defaults (a GET shows the defaults, or the values its address gives)."""
    values = FormValues(defaults)
    if request.method == "POST":
        values.update({key: value for key, value in request.form.items() if key in defaults or "[" in key})
    elif request.args:
        # A link may fill the form (a saved snippet's "Open in the calculator"); checked like typed values.
        values.update({key: value[:100] for key, value in request.args.items() if key in defaults})
    return values


def quantity_text(value: float, unit: str) -> str:
    """The API's spelling of a quantity: full precision, then the unit."""
    return f"{value!r} {unit}"


def choose(value: str, allowed, field: str) -> str:
    """A unit from a form's menu, which must be one the menu offers."""
    if value not in allowed:
        raise InputError(field, "choose one of the units in the list")
    return value


def field_errors(exc: InputError, renames: dict | None = None) -> dict:
    """``{form field: message}`` for an InputError; a field-less error goes under ``"_form"``."""
    field = exc.field or "_form"
    return {(renames or {}).get(field, field): exc.message}


_THOUSANDS = re.compile(r"^[+-]?\d{1,3}(,\d{3})+(\.\d*)?$")
_DECIMAL_COMMA = re.compile(r"^[+-]?\d*,\d+$")
_PLAIN = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")


def parse_number(text, field: str | None, *, required: bool = True) -> float | None:
    """A number as typed in a form field: ``'4.5'``, ``'4,5'`` (decimal comma), ``'12,000'``.

    A comma followed by exactly three digits groups thousands (``1,500`` is
    fifteen hundred); any other single comma is a decimal comma (``4,5``).
    Returns ``None`` for an empty field when ``required`` is false.
    """
    if text is None:
        text = ""
    if not isinstance(text, str):
        raise InputError(field, "must be a number")
    text = text.strip().replace(" ", "").replace("\u202f", "")
    if not text:
        if required:
            raise InputError(field, "needs a number")
        return None
    if len(text) > 40:
        raise InputError(field, "is too long to be a number")
    if _THOUSANDS.match(text):
        text = text.replace(",", "")
    elif _DECIMAL_COMMA.match(text):
        text = text.replace(",", ".")
    if not _PLAIN.match(text):
        raise InputError(field, f"'{text}' is not a number; type digits, e.g. 4.5")
    value = float(text)
    if not math.isfinite(value) or abs(value) > MAX_MAGNITUDE:
        raise InputError(field, "is far too large to be a real value")
    return value


# The number at the start of a field's text, as parse_number reads it (digits
# with a decimal point or comma, thousands parted by commas or spaces, an
# exponent), and whatever follows it, which is read as a unit.
_LEADING_NUMBER = re.compile(
    r"^\s*([+-]?(?:\d[\d.,]*|[.,]\d+)(?:[ \u00a0\u202f]\d{3}(?![\d.,]))*(?:[.,]\d+)?(?:[eE][+-]?\d+)?)\s*(.*?)\s*$"
)

# The trade says "a 4.5 BCM roll" for 4.5 BCM/in² (common practice in the US
# pressroom): a bare BCM typed with a value is read as BCM per square inch
# wherever the menu offers BCM/in² (a BCM on its own is a volume, 1 mm³).
_BARE = {"BCM": "BCM/in2"}


def _same_unit(unit, spelling: str) -> bool:
    """Whether ``unit`` is the menu's ``spelling`` (or another name for it: µm for cm³/m², mm³/in² for BCM/in²)."""
    menu = Q_(1.0, spelling)
    if menu.dimensionality != Q_(1.0, unit).dimensionality:
        return False
    return math.isclose(float(Q_(1.0, unit).to(spelling).magnitude), 1.0, rel_tol=1e-12)


def _menu_unit(unit_text: str, allowed, field: str | None) -> str:
    """The menu value for a unit typed with a value, read through :func:`calc.units.parse_unit`."""
    unit = parse_unit(unit_text, field)
    for bare, meant in _BARE.items():
        if meant in allowed and unit == parse_unit(bare, field):
            return meant
    for spelling in allowed:  # the menu's own unit first (µm is µm where both µm and cm³/m² are offered)
        if unit == parse_unit(spelling, field):
            return spelling
    for spelling in allowed:
        if _same_unit(unit, spelling):
            return spelling
    if len(allowed) <= 4:
        offered = " or ".join(unit_label(spelling) for spelling in allowed)
        raise InputError(field, f"'{unit_text}' is not one of this field's units: type the value in {offered}")
    raise InputError(field, f"'{unit_text}' is not one of this field's units: pick one from the unit list")


def parse_amount(
    form: dict, field: str, unit_field: str, allowed, *, required: bool = True, prefix: str = "", record=None
):
    """``(number, unit)`` from a quantity field and its unit menu, or None for an empty optional field.

    The text may carry its unit (``4.5 bcm``, ``4,5 BCM/in²``, ``7 cm3/m2``):
    the unit is read with :func:`calc.units.parse_unit` (the one door for
    unit text), must be one the menu offers (``allowed``: menu spellings),
    and then stands for the menu's choice: ``form[unit_field]`` is set to it
    and recorded in the ``typed_units`` of ``record`` (default: ``form``, when
    it is a :class:`FormValues`) so that the page shows the menu changed. A
    unit the menu does not offer is an :class:`InputError` naming ``field``
    (the message goes beside the text that has the unit). Without a unit in
    the text, the menu's unit is used. ``prefix`` goes before the field names
    in messages and records (``stations[0].`` for a station of the estimate).

    >>> form = FormValues(value="4,5 BCM/in²", unit="mil")
    >>> parse_amount(form, "value", "unit", ("BCM/in2", "cm3/m2", "mil")), form["unit"], form.typed_units
    ((4.5, 'BCM/in2'), 'BCM/in2', {'unit': 'BCM/in2'})
    """
    text = form.get(field)
    record = form if record is None else record
    match = _LEADING_NUMBER.match(text) if isinstance(text, str) else None
    if match and match.group(2):
        number_text, unit_text = match.groups()
        value = parse_number(number_text, prefix + field, required=True)
        unit = _menu_unit(unit_text, allowed, prefix + field)
        form[unit_field] = unit
        if isinstance(record, FormValues):
            record.typed_units[prefix + unit_field] = unit
        return value, unit
    value = parse_number(text, prefix + field, required=required)
    if value is None:
        return None
    return value, choose(form.get(unit_field), allowed, prefix + unit_field)


def parse_percent(text, field: str | None, *, required: bool = True) -> float | None:
    """A percentage as typed (``'35'`` or ``'35 %'``) as a share from 0 to 1.

    >>> parse_percent("12.5 %", "transfer")
    0.125
    """
    if isinstance(text, str):
        text = text.replace("%", "")
    value = parse_number(text, field, required=required)
    if value is None:
        return None
    if not 0.0 <= value <= 100.0:
        raise InputError(field, "must be a percentage from 0 to 100")
    return value / 100.0
