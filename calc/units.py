"""The one unit registry of inkfilm, and reading and converting quantities.

Everything that has a unit passes through here: ``ureg`` is built once at
import, with the pressroom's units (``trade_units.txt``) on top of pint's own,
and ``Q_`` makes quantities in it. Nobody else builds a ``UnitRegistry``.

>>> Q_("1 BCM/in2").to("cm3/m2")  # doctest: +NUMBER
<Quantity(1.55000, 'centimeter ** 3 / meter ** 2')>
>>> parse_quantity("0.6 mil", "thickness").to("um")  # doctest: +NUMBER
<Quantity(15.24, 'micrometer')>
"""

from __future__ import annotations

import math
import re
from functools import lru_cache
from pathlib import Path

import pint

from calc.errors import InputError

# --- Spellings people type ----------------------------------------------------
# pint reads ``in**2`` and ``in²`` but not the everyday ``in2``; ``mil`` is an
# angle in pint while the trade's mil is a thousandth of an inch (pint's
# ``thou``); and people type ``lines/in`` for line screen.
_WORD_SUBSTITUTIONS = [
    (re.compile(r"\blines?\s*/\s*(?:in|inch)\b"), "lpi"),
    (re.compile(r"\blines?\s*/\s*cm\b"), "lpcm"),
    (re.compile(r"\bmils?\b"), "thou"),
    (re.compile(r"\bbcm\b"), "BCM"),
    (re.compile(r"μ"), "µ"),  # Greek mu to the micro sign
    (re.compile(r"²"), "**2"),
    (re.compile(r"³"), "**3"),
    # a unit name followed directly by 2 or 3 is a power: in2, cm3, ft2
    (re.compile(r"(?<=[A-Za-zµ])([23])\b"), r"**\1"),
]


def _normalise(text: str) -> str:
    for pattern, replacement in _WORD_SUBSTITUTIONS:
        text = pattern.sub(replacement, text)
    return text


ureg = pint.UnitRegistry(preprocessors=[_normalise], autoconvert_offset_to_baseunit=False)
ureg.load_definitions(Path(__file__).with_name("trade_units.txt"))
Q_ = ureg.Quantity

# --- Plain names for dimensions ---------------------------------------------

_DIMENSION_NAMES = {
    "[length]": "a length, film thickness or volume per area",
    "[length] ** 2": "an area",
    "[length] ** 3": "a volume",
    "[mass]": "a mass",
    "[mass] / [length] ** 3": "a density",
    "[mass] / [length] ** 2": "a coat weight (mass per area)",
    "[length] ** 2 / [mass]": "an ink mileage (area per mass)",
    "1 / [length]": "a line screen (lines per length)",
    "dimensionless": "a plain number",
}


def dimension_name(dimensionality) -> str:
    """Plain words for a pint dimensionality, e.g. ``"an area"``."""
    key = str(dimensionality)
    if key in _DIMENSION_NAMES:
        return _DIMENSION_NAMES[key]
    return f"a quantity of dimension {key}"


LENGTH = ureg.meter.dimensionality
AREA = (ureg.meter**2).dimensionality
VOLUME = (ureg.meter**3).dimensionality
MASS = ureg.kilogram.dimensionality
DENSITY = (ureg.kilogram / ureg.meter**3).dimensionality
COAT_WEIGHT = (ureg.kilogram / ureg.meter**2).dimensionality
MILEAGE = (ureg.meter**2 / ureg.kilogram).dimensionality
LINE_SCREEN = (1 / ureg.meter).dimensionality

# Largest magnitude accepted anywhere: far beyond any pressroom value, small
# enough that products of a few such numbers stay finite.
MAX_MAGNITUDE = 1e15

_NUMBER = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")


@lru_cache(maxsize=512)
def _parse_unit_cached(text: str) -> pint.Unit:
    return ureg.parse_units(text)


def parse_unit(text, field: str | None = "unit") -> pint.Unit:
    """Read a unit spelling such as ``"BCM/in2"``, ``"cm³/m²"`` or ``"mil"``.

    Raises :class:`InputError` naming ``field`` when the spelling is unknown.
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(field, "needs a unit, such as BCM/in2, cm3/m2 or um")
    text = text.strip()
    if len(text) > 40:
        raise InputError(field, "that unit is too long to be a unit")
    try:
        return _parse_unit_cached(text)
    except pint.UndefinedUnitError as exc:
        unknown = ", ".join(f"'{_spelling_in(text, name)}'" for name in exc.unit_names)
        raise InputError(field, f"unit {unknown} is not understood (in '{text}')") from None
    except Exception:  # pint's parser raises many kinds on garbled text
        raise InputError(field, f"'{text}' is not a unit inkfilm understands") from None


def _spelling_in(text: str, name: str) -> str:
    """The user's own spelling of an unknown unit, where it can be found."""
    return name if name in text else name.replace("**", "")


def check_number(value, field: str | None, *, allow_negative: bool = False) -> float:
    """A finite, sane plain number, else :class:`InputError`."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(field, "must be a number")
    value = float(value)
    if not math.isfinite(value):
        raise InputError(field, "must be a finite number")
    if abs(value) > MAX_MAGNITUDE:
        raise InputError(field, "is far too large to be a real value")
    if value < 0 and not allow_negative:
        raise InputError(field, "must not be negative")
    return value


def check_fraction(value, field: str | None) -> float:
    """A share between 0 and 1 inclusive (e.g. 0.25 for 25 %)."""
    value = check_number(value, field, allow_negative=True)
    if not 0.0 <= value <= 1.0:
        raise InputError(field, "must be a fraction from 0 to 1 (e.g. 0.25 for 25 %)")
    return value


def parse_quantity(text, field: str | None = "quantity", *, allow_negative: bool = False):
    """Read ``"<number> <unit>"`` into a pint Quantity.

    The number comes first, in plain decimal or e-notation; the unit follows.
    Raises :class:`InputError` naming ``field`` for anything else.
    """
    if isinstance(text, pint.Quantity):
        check_number(text.magnitude, field, allow_negative=allow_negative)
        return text
    if not isinstance(text, str):
        raise InputError(field, "must be a text like '3.5 BCM/in2' (a number, then a unit)")
    if len(text) > 80:
        raise InputError(field, "is too long to be a quantity")
    match = _NUMBER.match(text)
    if not match:
        raise InputError(field, f"'{text.strip()}' must start with a number, then a unit (e.g. '3.5 BCM/in2')")
    number_text, unit_text = match.groups()
    if not unit_text:
        raise InputError(field, f"'{text.strip()}' has no unit; add one, e.g. '{number_text} BCM/in2'")
    value = check_number(float(number_text), field, allow_negative=allow_negative)
    return Q_(value, parse_unit(unit_text, field))


def require_dimension(quantity, dimensionality, field: str | None, what: str, examples: str):
    """Check that ``quantity`` is of ``dimensionality``; ``what`` and ``examples`` make the message."""
    if quantity.dimensionality != dimensionality:
        raise InputError(
            field,
            f"must be {what} such as {examples}, not {dimension_name(quantity.dimensionality)}",
        )
    return quantity


def check_range(quantity, low, high, field: str | None, what: str, *, low_inclusive: bool = False):
    """Check ``low < quantity <= high`` (quantities); the message quotes the range in ``high``'s unit."""
    unit = high.units
    value = quantity.to(unit).magnitude
    low_value = low.to(unit).magnitude
    too_low = value < low_value if low_inclusive else value <= low_value
    if too_low or value > high.magnitude:
        bound = "at least" if low_inclusive else "more than"
        raise InputError(
            field,
            f"{what} must be {bound} {low_value:g} and at most {high.magnitude:g} {unit:~P}",
        )
    return quantity


def _to(quantity, unit):
    value = quantity.to(unit).magnitude
    if not math.isfinite(value):
        raise InputError("quantity", "the result is too large to state")
    return Q_(value, unit)


def convert(quantity, to, density=None, *, field="quantity", to_field="to", density_field="density"):
    """Convert ``quantity`` to the unit spelled ``to``.

    Conversions within one dimension need nothing else. Across dimensions the
    ink's density links them:

    - film thickness (or volume per area) ↔ coat weight: w = t·ρ
    - volume ↔ mass: m = V·ρ
    - ink mileage ↔ film thickness: A/m = 1/(t·ρ)
    - ink mileage ↔ coat weight: A/m = 1/w (no density needed)

    Parameters
    ----------
    quantity : Quantity or str
        What to convert, e.g. ``"3.5 BCM/in2"``.
    to : str
        The unit to convert to, as the user spells it, e.g. ``"cm3/m2"``.
    density : Quantity or str, optional
        The ink's density [g/cm³], where the conversion needs it.

    Returns
    -------
    Quantity in the unit ``to``.

    >>> convert("0.6 mil", "um")  # doctest: +NUMBER
    <Quantity(15.24, 'micrometer')>
    >>> convert("2 um", "g/m2", "1.05 g/cm3")  # doctest: +NUMBER
    <Quantity(2.1, 'gram / meter ** 2')>
    """
    quantity = parse_quantity(quantity, field)
    target = parse_unit(to, to_field)
    source_dim = quantity.dimensionality
    target_dim = target.dimensionality
    if source_dim == target_dim:
        return _to(quantity, target)

    if {source_dim, target_dim} == {MILEAGE, COAT_WEIGHT}:
        if quantity.magnitude == 0:
            raise InputError(field, "must be more than 0 to turn into its reciprocal")
        return _to(1 / quantity, target)

    pair = (source_dim, target_dim)
    needs_density = {
        (LENGTH, COAT_WEIGHT),
        (COAT_WEIGHT, LENGTH),
        (VOLUME, MASS),
        (MASS, VOLUME),
        (MILEAGE, LENGTH),
        (LENGTH, MILEAGE),
    }
    if pair not in needs_density:
        raise InputError(
            to_field,
            f"cannot convert {dimension_name(source_dim)} ({quantity.units:~P}) "
            f"to {dimension_name(target_dim)} ({to.strip()})",
        )
    if density is None:
        raise InputError(
            density_field,
            f"converting {dimension_name(source_dim)} to {dimension_name(target_dim)} "
            "needs the ink's density, e.g. '1.05 g/cm3'",
        )
    density = parse_density(density, density_field)
    if pair in {(LENGTH, COAT_WEIGHT), (VOLUME, MASS)}:
        return _to(quantity * density, target)
    if pair in {(COAT_WEIGHT, LENGTH), (MASS, VOLUME)}:
        return _to(quantity / density, target)
    if quantity.magnitude == 0:
        raise InputError(field, "must be more than 0 to turn into its reciprocal")
    # mileage ↔ film: both directions are the reciprocal of (value × density)
    return _to(1 / (quantity * density), target)


# Inks run from about 0.9 to 1.1 g/cm³, opaque whites about 1.3 and metallics
# more (common practice); anything outside 0.3–5 g/cm³ is a typing or unit slip.
DENSITY_LOW = Q_(0.3, "g/cm3")
DENSITY_HIGH = Q_(5.0, "g/cm3")


def parse_density(text, field: str | None = "ink_density"):
    """Read and check an ink density (0.3–5 g/cm³)."""
    density = parse_quantity(text, field)
    require_dimension(density, DENSITY, field, "a density", "1.05 g/cm3 or 8.8 lb/gal")
    check_range(density, DENSITY_LOW, DENSITY_HIGH, field, "an ink density", low_inclusive=True)
    return density
