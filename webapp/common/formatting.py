"""Numbers and names as people read them on every page, over ``calc.display``.

``calc.display`` is the one source of rounding and unit labels; this module
only makes it available to the views (presenter helpers) and the templates
(filters). Calculator pages and saved snippets round the same way: three
significant figures, money to the cent, shares as percentages.
"""

from __future__ import annotations

import math

from flask import current_app, has_app_context

from calc.display import format_money, format_number, format_percent, role_units, show, show_value, unit_label


def is_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def is_quantity(value) -> bool:
    """A quantity as the API gives it: ``{"value", "unit"}``."""
    return isinstance(value, dict) and set(value) == {"value", "unit"}


def number(value) -> str:
    """A number as the floor reads it (anything else as text).

    >>> number(6.975018), number(12345.6), number("Cyan")
    ('6.98', '12,300', 'Cyan')
    """
    if not is_number(value):
        return _text(value)
    try:
        return format_number(float(value))
    except OverflowError:  # a whole number too large for a float, as a stored file may hold
        return "—"


def _text(value) -> str:
    """Anything else as text; never fails on what a stored file holds (nested far too deep)."""
    try:
        return str(value)
    except RecursionError:
        return "(nested too deeply to show here)"


def when(stamp: str | None) -> str:
    """``2024-05-01T13:45:00Z`` → ``2024-05-01 13:45 UTC``."""
    return f"{stamp[:10]} {stamp[11:16]} UTC" if stamp else ""


def field_name(name) -> str:
    """``anilox_to_plate`` → ``Anilox to plate``; ``stations[0].ink_mass`` → ``Station 1 ink mass``."""
    text = str(name)
    for index in range(12, -1, -1):
        text = text.replace(f"stations[{index}].", f"station {index + 1} ")
    return text.replace("_", " ").replace(".", " ").capitalize()


CURRENCY_MAX = 8


def currency(money_text: str) -> str:
    """A cost as text with the shop's currency (``CURRENCY`` in the app config, set by
    ``inkfilm serve --currency``): a symbol goes right before the figure (``€12.50``),
    a code or word with a space (``CHF 12.50``); without a setting the figure alone.
    """
    symbol = current_app.config.get("CURRENCY", "") if has_app_context() else ""
    if not symbol:
        return money_text
    return f"{symbol} {money_text}" if symbol[-1].isalpha() else f"{symbol}{money_text}"


def check_currency(text) -> str:
    """The currency setting, stripped: at most ``CURRENCY_MAX`` printable characters, no digits.

    >>> check_currency(" € "), check_currency("CHF")
    ('€', 'CHF')
    """
    text = str(text or "").strip()
    if len(text) > CURRENCY_MAX or not all(ch.isprintable() and not ch.isdigit() for ch in text):
        raise ValueError(
            f"the currency must be a symbol or short code of at most {CURRENCY_MAX} characters without digits, "
            "e.g. € or $ or CHF"
        )
    return text


def shown(key, value, *, shares=frozenset(), money=frozenset()) -> str:
    """A saved input or answer as the floor reads it: shares as percentages,
    money to the cent, quantities rounded with their unit labels.

    >>> shown("coverage", 0.455, shares={"coverage"}), shown("anilox_volume", "4.5 BCM/in2"), shown("name", "Cyan")
    ('45.5 %', '4.5 BCM/in²', 'Cyan')
    >>> shown("total_cost", 12.5, money={"total_cost"}), shown("dry", {"value": 6.975018, "unit": "um"})
    ('12.50', '6.98 µm')
    """
    if is_quantity(value) and is_number(value["value"]):
        return f"{number(value['value'])} {unit_label(str(value['unit']))}"
    if is_number(value):
        try:
            if key in shares:
                return f"{format_percent(value)} %"
            if key in money and math.isfinite(value):
                return currency(format_money(value))
        except OverflowError:  # a whole number too large for a float, as a stored file may hold
            return "—"
        return number(value)
    if isinstance(value, str) and " " in value.strip():
        amount, _, spelling = value.strip().rpartition(" ")
        return f"{amount} {unit_label(spelling)}"
    return _text(value)


# --- presenter helpers for the calculator pages ------------------------------------


def both(quantity, role: str, system: str) -> tuple:
    """The quantity in the preferred unit for its role, and in the other system's."""
    main, also = role_units(role, system)
    return show(quantity, main), show(quantity, also)


def steps(step_list, system: str) -> list[dict]:
    """ "How this was worked out", each value in the user's units."""
    return [
        {
            "label": step.label,
            "formula": step.formula,
            "inputs": [(symbol, show_value(value, system)) for symbol, value in step.inputs],
            "result": f"{step.symbol} = {show_value(step.result, system)}",
        }
        for step in step_list
    ]


def init_app(app) -> None:
    app.add_template_filter(unit_label, "unit_label")
    app.add_template_filter(number, "number")
    app.add_template_filter(when, "when")
    app.add_template_filter(field_name, "field_name")
    app.add_template_global(is_quantity, "is_quantity")
