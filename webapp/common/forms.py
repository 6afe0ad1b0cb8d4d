"""Reading what people type into the pages' forms.

The pages read each form into the API request body (which is also what a
saved snippet keeps as its inputs), naming the form field on bad input.

>>> parse_number("4,5", "value")
4.5
>>> parse_percent("35", "coverage")
0.35
"""

from __future__ import annotations

import math
import re

from flask import request

from calc import InputError
from calc.units import MAX_MAGNITUDE


def form_values(defaults: dict) -> dict:
    """The posted form over the defaults (a GET shows the defaults)."""
    values = dict(defaults)
    if request.method == "POST":
        values.update({key: value for key, value in request.form.items() if key in defaults or "[" in key})
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
