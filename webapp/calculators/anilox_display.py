"""What the anilox pages (roll fit, cell geometry) share: screens, volumes and
lengths in the user's units, and their working with ratios read as ratios.

The shared ``steps`` helper reads every plain number as a share (``0.5`` →
``50 %``); a screen ratio of 6.67 or a volume × screen of 6 000 is not one,
so these pages name the symbols that are plain numbers.

>>> screen_units("metric"), screen_units("imperial")
(('lpcm', 'lpi'), ('lpi', 'lpcm'))
>>> show_step_value("r", 6.667, "metric", {"r"}), show_step_value("A_o", 0.82, "metric", {"r"})
('6.67', '82 %')
>>> show_step_value("S", Q_(750, "lpi"), "metric", set()), show_step_value("V", Q_(1.5, "BCM/in2"), "metric", set())
('295 lines/cm', '2.33 cm³/m²')
"""

from __future__ import annotations

from calc.display import format_number, role_units, show, show_value
from calc.units import LINE_SCREEN, Q_  # noqa: F401 (Q_ for the doctests)

# Line screens: l/cm where the shop works metric, lpi otherwise; the other beside it.
_SCREEN_UNITS = {"metric": ("lpcm", "lpi"), "imperial": ("lpi", "lpcm")}
_VOLUME_UNITS = {"BCM / inch ** 2", "centimeter ** 3 / meter ** 2"}


def screen_units(system: str) -> tuple[str, str]:
    """(main, also) spellings for a line screen under a preference."""
    return _SCREEN_UNITS.get(system, _SCREEN_UNITS["metric"])


def units(role: str, system: str) -> tuple[str, str]:
    """(main, also) spellings for ``screen``, ``anilox`` (volume) or ``film`` (a length)."""
    return screen_units(system) if role == "screen" else role_units(role, system)


def pair(quantity, role: str, system: str) -> dict:
    """The quantity in the preferred unit and in the other: ``{"main": Shown, "also": Shown}``."""
    main, also = units(role, system)
    return {"main": show(quantity, main), "also": show(quantity, also)}


def show_step_value(symbol: str, value, system: str, plain) -> str:
    """One value of the working in the user's units; ``plain`` symbols are ratios, not shares."""
    if isinstance(value, int | float) and symbol in plain:
        return format_number(float(value))
    if hasattr(value, "units"):
        if value.dimensionality == LINE_SCREEN:
            return str(show(value, screen_units(system)[0]))
        if str(value.units) in _VOLUME_UNITS:
            return str(show(value, role_units("anilox", system)[0]))
    return show_value(value, system)


def working(step_list, system: str, plain=frozenset()) -> list[dict]:
    """ "How this was worked out", each value in the user's units (as ``webapp.common.formatting.steps``)."""
    return [
        {
            "label": step.label,
            "formula": step.formula,
            "inputs": [(symbol, show_step_value(symbol, value, system, plain)) for symbol, value in step.inputs],
            "result": f"{step.symbol} = {show_step_value(step.symbol, step.result, system, plain)}",
        }
        for step in step_list
    ]
