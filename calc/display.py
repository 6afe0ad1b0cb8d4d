"""Numbers for people: reading what they type, rounding what they read.

The API gives full precision; the pages round. An anilox volume is known to
about ±10 % (the engraver's tolerance, and wear after that; common practice),
so the second digit of any film derived from it is already uncertain. Pages
show three significant figures: enough that converting a value back and forth
does not drift, and no more than the anilox volume deserves.

>>> format_number(6.975018)
'6.98'
>>> format_number(12345.6)
'12,300'
>>> format_number(0.000275591)
'0.000276'
>>> parse_number("4,5", "value")
4.5
>>> parse_percent("35", "coverage")
0.35
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Decimal

from calc.errors import InputError
from calc.steps import Count, Money
from calc.units import MAX_MAGNITUDE, Q_  # noqa: F401 (Q_ for the doctests)

SIGNIFICANT = 3

# Unit spellings (as the API spells them) to the labels people read.
UNIT_LABELS = {
    "BCM/in2": "BCM/in²",
    "cm3/m2": "cm³/m²",
    "um": "µm",
    "mil": "mil",
    "mm": "mm",
    "in": "in",
    "m": "m",
    "ft": "ft",
    "g/m2": "g/m²",
    "lb/ream": "lb/ream",
    "m2/kg": "m²/kg",
    "ft2/lb": "ft²/lb",
    "MSI/lb": "MSI/lb",
    "lpi": "lpi",
    "lpcm": "lines/cm",
    "m2": "m²",
    "ft2": "ft²",
    "MSI": "MSI",
    "in2": "in²",
    "l": "l",
    "ml": "ml",
    "gal": "US gal",
    "in3": "in³",
    "kg": "kg",
    "g": "g",
    "lb": "lb",
    "oz": "oz",
    "g/cm3": "g/cm³",
    "kg/l": "kg/l",
    "lb/gal": "lb/gal",
}

# Which system each unit belongs to; units of both (lpi is used everywhere,
# BCM/in² too) count as imperial here because that is where they come from.
IMPERIAL_UNITS = frozenset(
    {"BCM/in2", "mil", "in", "ft", "lb/ream", "ft2/lb", "MSI/lb", "lpi", "ft2", "MSI", "in2", "gal", "in3"}
    | {"lb", "oz", "lb/gal"}
)
SYSTEMS = ("metric", "imperial")


def unit_label(spelling: str) -> str:
    """The label people read for an API unit spelling, e.g. ``'cm³/m²'``."""
    return UNIT_LABELS.get(spelling, spelling)


def unit_system(spelling: str) -> str:
    """``'imperial'`` or ``'metric'``, for ordering units by the user's preference."""
    return "imperial" if spelling in IMPERIAL_UNITS else "metric"


def check_system(system) -> str:
    """The user's unit preference; anything unknown reads as metric."""
    return system if system in SYSTEMS else "metric"


def format_number(value: float, significant: int = SIGNIFICANT) -> str:
    """``value`` rounded to ``significant`` figures, in plain decimals with thousands separators.

    Trailing zeros after the decimal point are dropped (``2`` rather than
    ``2.00``); very small or very large values use e-notation.
    """
    if not math.isfinite(value):
        return "—"
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    if exponent < -6 or exponent >= 12:
        return f"{value:.{significant - 1}e}"
    quantum = Decimal(1).scaleb(exponent - significant + 1)
    rounded = Decimal(repr(value)).quantize(quantum, rounding=ROUND_HALF_UP)
    if rounded == rounded.to_integral_value():
        return f"{int(rounded):,}"
    text = f"{rounded:f}".rstrip("0").rstrip(".")
    whole, _, fraction = text.partition(".")
    sign = "-" if whole.startswith("-") else ""
    return f"{sign}{int(whole.lstrip('-')):,}.{fraction}"


def format_money(value: float) -> str:
    """A cost to the cent, with thousands separators: ``'1,234.50'``."""
    return f"{value:,.2f}"


def format_percent(share: float) -> str:
    """A share as a percentage for a form or a label: ``0.5`` → ``'50'``, ``0.125`` → ``'12.5'``."""
    return format_number(share * 100.0, 4)


@dataclass(frozen=True)
class Shown:
    """A quantity ready to read: rounded number, unit label, and the full value and unit."""

    number: str
    unit: str
    value: float
    spelling: str

    def __str__(self) -> str:
        return f"{self.number} {self.unit}"


def show(quantity, spelling: str, significant: int = SIGNIFICANT) -> Shown:
    """``quantity`` in the unit ``spelling``, rounded for display.

    >>> str(show(Q_(4.5, "BCM/in2"), "cm3/m2"))
    '6.98 cm³/m²'
    """
    value = float(quantity.to(spelling).magnitude)
    return Shown(format_number(value, significant), unit_label(spelling), value, spelling)


def in_order(spellings, system: str) -> list[str]:
    """Unit spellings with those of the preferred ``system`` first (stable otherwise)."""
    system = check_system(system)
    return sorted(spellings, key=lambda spelling: unit_system(spelling) != system)


# Units in which the pages state each role: (metric, imperial). A metric
# preference shows the first as the main figure and the second beside it;
# an imperial preference the other way round.
ROLE_PAIRS = {
    "anilox": ("cm3/m2", "BCM/in2"),
    "film": ("um", "mil"),
    "coat_weight": ("g/m2", "lb/ream"),
    "area": ("m2", "MSI"),
    "length": ("m", "ft"),
    "width": ("mm", "in"),
    "mass": ("kg", "lb"),
    "volume": ("l", "gal"),
    "density": ("g/cm3", "lb/gal"),
    "mileage": ("m2/kg", "ft2/lb"),
}
ROLE_UNITS = {
    "metric": dict(ROLE_PAIRS),
    "imperial": {role: (imperial, metric) for role, (metric, imperial) in ROLE_PAIRS.items()},
}


def role_units(role: str, system: str) -> tuple[str, str]:
    """(main, also) unit spellings for a role such as ``'film'`` under a preference."""
    return ROLE_UNITS[check_system(system)][role]


# --- Reading what people type ------------------------------------------------

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


# --- The film chain as a drawing -------------------------------------------


@dataclass(frozen=True)
class Layer:
    """One bar of the film chain drawing, in drawing units (the SVG's user units)."""

    key: str
    label: str
    shown: Shown
    height: float
    y: float


def film_layers(films, spelling: str, *, tallest: float = 140.0, baseline: float = 170.0, least: float = 1.0):
    """Bars for the film chain drawing, drawn to scale against each other.

    ``films`` is a list of ``(key, label, quantity)`` (the anilox volume read
    as a film first, then plate, substrate, dry); the largest is ``tallest``
    units high, the others in proportion, none less than ``least`` so that a
    very thin film stays visible. Bars stand on ``baseline`` (SVG y grows down).

    >>> [round(layer.height) for layer in film_layers(
    ...     [("a", "A", Q_(8, "um")), ("b", "B", Q_(4, "um")), ("c", "C", Q_(2, "um"))], "um")]
    [140, 70, 35]
    """
    values = [float(quantity.to("um").magnitude) for _, _, quantity in films]
    top = max(values) if values else 0.0
    layers = []
    for (key, label, quantity), value in zip(films, values, strict=True):
        height = tallest * value / top if top > 0 else 0.0
        height = max(height, least)
        layers.append(Layer(key, label, show(quantity, spelling), round(height, 2), round(baseline - height, 2)))
    return layers


# --- Values in the working ("how this was worked out") ------------------------

# The units the core computes in, and the role whose preferred unit shows them;
# a value in any other unit is one the user typed and is shown as typed.
_CORE_UNIT_ROLES = {
    "micrometer": "film",
    "gram / meter ** 2": "coat_weight",
    "meter ** 2": "area",
    "meter": "length",
    "kilogram": "mass",
    "liter": "volume",
    "meter ** 2 / kilogram": "mileage",
}
_PINT_LABEL_FIXES = {"th": "mil", "lpcm": "lines/cm", "gal": "US gal"}


def show_value(value, system: str) -> str:
    """A value from the working as people read it, in the user's preferred units.

    Shares show as percentages; quantities the core computed (µm, g/m², m², …)
    in the preferred unit for their role; quantities as typed in their own unit.

    >>> show_value(0.5, "metric")
    '50 %'
    >>> show_value(Q_(6.975, "um"), "imperial")
    '0.275 mil'
    >>> show_value(Q_(4.5, "BCM/in2"), "metric")
    '4.5 BCM/in²'
    >>> show_value(Count(16667), "metric"), show_value(Money(12.5), "metric")
    ('16,667', '12.50')
    """
    if isinstance(value, Count):
        return f"{value:,}"
    if isinstance(value, Money):
        return format_money(value)
    if isinstance(value, int | float):
        return f"{format_percent(value)} %"
    role = _CORE_UNIT_ROLES.get(str(value.units))
    if role is not None:
        return str(show(value, role_units(role, system)[0]))
    label = f"{value.units:~P}"
    return f"{format_number(float(value.magnitude))} {_PINT_LABEL_FIXES.get(label, label)}"
