"""Numbers and names as people read them on every page, over ``calc.display``.

``calc.display`` is the one source of rounding and unit labels; this module
only makes it available to the views (presenter helpers) and the templates
(filters). Calculator pages and saved snippets round the same way: three
significant figures, money to the cent, shares as percentages.
"""

from __future__ import annotations

import math
from datetime import UTC, datetime
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from flask import current_app, has_app_context, has_request_context

from calc.display import (
    ROLE_PAIRS,
    Shown,
    check_system,
    format_money,
    format_number,
    format_percent,
    role_units,
    show,
    show_value,
    unit_label,
    unit_system,
)
from calc.units import Q_


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


def shop_zone(name: str | None):
    """The shop's time zone from its name (``Europe/Berlin``); ``None`` (or ``""``) is the server's own.

    Raises ``ValueError`` naming the setting for a zone this machine does not know.
    """
    if not name:
        return None
    try:
        return ZoneInfo(str(name))
    except (ZoneInfoNotFoundError, ValueError, OSError):
        raise ValueError(
            f"TIME_ZONE: {name!r} is not a time zone this machine knows (e.g. Europe/Berlin, America/Chicago)"
        ) from None


def local_time(stamp: str | None, zone=None) -> str:
    """A stored UTC time as the shop reads it, in ``zone`` (``None``: the server's own zone).

    >>> local_time("2024-05-01T13:45:00Z", ZoneInfo("Europe/Berlin")), local_time("2024-12-01T13:45:00Z", UTC)
    ('2024-05-01 15:45 CEST', '2024-12-01 13:45 UTC')
    """
    if not stamp:
        return ""
    try:
        moment = datetime.strptime(stamp, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)
    except (TypeError, ValueError):  # not a time this app wrote: shown as it is
        return _text(stamp)
    local = moment.astimezone(zone) if zone is not None else moment.astimezone()
    return f"{local:%Y-%m-%d %H:%M} {local.tzname() or ''}".rstrip()


def when(stamp: str | None) -> str:
    """``2024-05-01T13:45:00Z`` in the shop's time zone (the app's ``TIME_ZONE``): ``2024-05-01 15:45 CEST``."""
    zone = current_app.extensions.get("inkfilm_zone") if has_app_context() else None
    return local_time(stamp, zone)


def day(stamp: str | None) -> str:
    """Only the date of ``when``: ``2024-05-01``."""
    return when(stamp)[:10]


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


# The role of each unit spelling the pages state roles in (µm → film, kg → mass, …).
_ROLE_OF_UNIT = {spelling: role for role, pair in ROLE_PAIRS.items() for spelling in pair}


def preferred(quantity: dict, system: str) -> tuple[Shown, str | None]:
    """A saved quantity (``{"value", "unit"}``) as the calculator pages show it under the
    user's preference: in the preferred unit for its role, and the other system's beside it.

    A unit with no role (or a value that is no finite number) is shown as saved. Only the
    spellings of ``ROLE_PAIRS`` reach pint, never a stored unit text as it is.

    >>> main, also = preferred({"value": 6.975018, "unit": "um"}, "imperial")
    >>> str(main), also
    ('0.275 mil', '6.98 µm')
    >>> str(preferred({"value": 2.5, "unit": "kg"}, "metric")[0]), preferred({"value": 3, "unit": "lpi"}, "metric")[1]
    ('2.5 kg', None)
    """
    value, spelling = quantity.get("value"), quantity.get("unit")
    role = _ROLE_OF_UNIT.get(spelling) if isinstance(spelling, str) else None
    if role is not None and is_number(value):
        try:
            number_value = float(value)
        except OverflowError:
            number_value = math.inf
        if math.isfinite(number_value):
            main, also = role_units(role, system)
            amount = Q_(number_value, spelling)
            return show(amount, main), str(show(amount, also))
    label = unit_label(str(spelling))
    return Shown(number(value), label, math.nan, str(spelling)), None


def preferred_first(items: list, system: str) -> list:
    """A list of equivalents (the same value in several units) with the preferred system's first.

    >>> both = [{"value": 4.5, "unit": "BCM/in2"}, {"value": 7, "unit": "cm3/m2"}]
    >>> [q["unit"] for q in preferred_first(both, "metric")]
    ['cm3/m2', 'BCM/in2']
    """
    return sorted(
        items,
        key=lambda item: not (is_quantity(item) and unit_system(str(item["unit"])) == check_system(system)),
    )


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
    # The shop's time zone for every time shown (checked here: a wrong name stops the start).
    app.extensions["inkfilm_zone"] = shop_zone(app.config.get("TIME_ZONE"))
    app.add_template_filter(day, "day")
    app.add_template_filter(unit_label, "unit_label")
    app.add_template_filter(number, "number")
    app.add_template_filter(when, "when")
    app.add_template_filter(field_name, "field_name")
    app.add_template_global(is_quantity, "is_quantity")
    # Saved quantities in the user's metric or imperial preference (``webapp.common.preference``).
    app.add_template_global(lambda quantity: preferred(quantity, _system()), "preferred")
    app.add_template_global(lambda items: preferred_first(items, _system()), "preferred_first")


def _system() -> str:
    from webapp.common.preference import current_system

    return current_system() if has_request_context() else "metric"
