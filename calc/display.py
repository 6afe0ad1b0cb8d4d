"""Numbers for people: the one place for rounding and unit labels.

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
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Decimal

from calc.steps import Count, Money
from calc.units import Q_, magnitude_in  # noqa: F401 (Q_ for the doctests)

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
    "cm2": "cm²",
    "mm2": "mm²",
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
    value = float(magnitude_in(quantity, spelling))
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
    in the preferred unit for their role; quantities as typed in their own unit;
    a value already :class:`Shown` in a chosen unit (a conversion step) as it is.

    >>> show_value(0.5, "metric")
    '50 %'
    >>> show_value(Q_(6.975, "um"), "imperial")
    '0.275 mil'
    >>> show_value(Q_(4.5, "BCM/in2"), "metric")
    '4.5 BCM/in²'
    >>> show_value(Count(16667), "metric"), show_value(Money(12.5), "metric")
    ('16,667', '12.50')
    """
    if isinstance(value, Shown):
        return str(value)
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
