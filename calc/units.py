"""The one unit registry of inkfilm, and reading and converting quantities.

Everything that has a unit passes through here: ``ureg`` is built once at
import, with the pressroom's units (``trade_units.txt``) on top of pint's own,
and ``Q_`` makes quantities in it. Nobody else builds a ``UnitRegistry``.

>>> Q_("1 BCM/in2").to("cm3/m2")  # doctest: +NUMBER
<Quantity(1.55000, 'centimeter ** 3 / meter ** 2')>
>>> parse_quantity("0.6 mil", "thickness").to("um")  # doctest: +NUMBER
<Quantity(15.24, 'micrometer')>

Unit spellings are checked before pint sees them
------------------------------------------------
pint evaluates exponents exactly, as Python integers: ``m**9**9**9`` asks for
9 to the power 9**9, a number of some 370 million digits, and the
interpreter holds the GIL until it is done, so every worker of the server
stops (``/healthz`` too). :func:`parse_unit` is therefore the one door for
unit text a person typed or a client sent (every endpoint, form, saved
snippet and re-run reads units through it), and it lets pint parse only
spellings of a small grammar, checked on the text after :func:`_normalise`
(and its length before)::

    unit    := factor (("*" | "/" | " ") factor)*
    factor  := (name | "1" | "(" unit ")") [power]
    name    := a letter, µ, ° or _, then letters, µ, °, _ or digits
    power   := "**" whole number from -4 to 4

with at most one power per factor (no ``m**2**2``), brackets at most two
deep and at most 40 characters. What pint makes of it must then be at most
the fourth power of any dimension and worth between 10**-100 and 10**100 of
its base units, so that no conversion of a value from :data:`MIN_MAGNITUDE`
to :data:`MAX_MAGNITUDE` can overflow. Anything else is an
:class:`InputError` naming the field, in plain words.
"""

from __future__ import annotations

import hashlib
import math
import os
import pickle
import re
import shutil
from functools import lru_cache
from pathlib import Path

import pint

from calc.errors import InputError

# --- Spellings people type ----------------------------------------------------
# pint reads ``in**2`` and ``in²`` but not the everyday ``in2``; ``mil`` is an
# angle in pint while the trade's mil is a thousandth of an inch (pint's
# ``thou``); and people type ``lines/in`` for line screen. Carets and
# superscripts become ``**`` here, so that the grammar below sees every power
# pint will see (pint would otherwise rewrite them after the check).
_SUPERSCRIPT_DIGITS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")


def _superscript_power(match: re.Match) -> str:
    """A run of superscripts is one power: ``m³`` is ``m**3``, ``m³³³³`` is ``m**3333`` (refused)."""
    return "**" + match.group().translate(_SUPERSCRIPT_DIGITS)


_WORD_SUBSTITUTIONS = [
    (re.compile(r"\blines?\s*/\s*(?:in|inch)\b"), "lpi"),
    (re.compile(r"\blines?\s*/\s*cm\b"), "lpcm"),
    (re.compile(r"\bmils?\b"), "thou"),
    (re.compile(r"\bbcm\b"), "BCM"),
    (re.compile(r"μ"), "µ"),  # Greek mu to the micro sign
    (re.compile(r"[·×]"), "*"),
    (re.compile(r"\^"), "**"),
    (re.compile(r"[⁻⁺]?[⁰¹²³⁴⁵⁶⁷⁸⁹]+"), _superscript_power),
    # a unit name followed directly by 2 or 3 is a power: in2, cm3, ft2
    (re.compile(r"(?<=[A-Za-zµ])([23])\b"), r"**\1"),
]


@lru_cache(maxsize=4096)
def _normalise(text: str) -> str:
    """The everyday spellings above rewritten as pint reads them (also pint's preprocessor).

    Applying it twice gives what applying it once does, so pint may run it
    again on text :func:`parse_unit` has already normalised and checked.
    """
    for pattern, replacement in _WORD_SUBSTITUTIONS:
        text = pattern.sub(replacement, text)
    return text


def cache_folder(kind: str) -> Path | None:
    """inkfilm's folder for ``kind`` of remembered work (pint's definitions, compressed static files).

    ``INKFILM_CACHE_DIR`` if set, else ``$XDG_CACHE_HOME/inkfilm`` or
    ``~/.cache/inkfilm``; made on first use, readable by its owner only. None
    when it cannot be made (a read-only home): then nothing is remembered
    between starts, and nothing else changes.
    """
    base = os.environ.get("INKFILM_CACHE_DIR")
    if not base:
        xdg = os.environ.get("XDG_CACHE_HOME")
        base = os.path.join(xdg, "inkfilm") if xdg and os.path.isabs(xdg) else os.path.join("~", ".cache", "inkfilm")
    folder = Path(base).expanduser() / kind
    try:
        folder.mkdir(parents=True, exist_ok=True, mode=0o700)
        if not os.access(folder, os.W_OK | os.X_OK):
            return None
    except OSError:
        return None
    return folder


def _pint_cache_folder() -> Path | None:
    """Where pint keeps its parsed definitions: one folder per pint install.

    pint's cache names the files it parsed by their full path, so a cache
    written by another install (another virtual environment, a pint since
    upgraded or moved) points at files that are not there: each install gets
    a folder of its own, named by pint's version and location.
    """
    folder = cache_folder("pint")
    if folder is None:
        return None
    key = hashlib.sha256(f"{pint.__version__}\n{Path(pint.__file__).parent}".encode()).hexdigest()[:16]
    folder = folder / key
    try:
        folder.mkdir(exist_ok=True, mode=0o700)
    except OSError:
        return None
    return folder


_CACHE_TROUBLE = (OSError, EOFError, ValueError, TypeError, AttributeError, pickle.UnpicklingError)


def _new_registry(folder: Path | None) -> pint.UnitRegistry:
    registry = pint.UnitRegistry(preprocessors=[_normalise], autoconvert_offset_to_baseunit=False, cache_folder=folder)
    registry.load_definitions(TRADE_UNITS)
    return registry


def _build_registry() -> pint.UnitRegistry:
    """pint's registry with the trade units; pint keeps its parsed definition files in the cache folder.

    pint's own definition cache (``cache_folder``) holds the parsed files keyed
    on their content, so a start after the first skips most of the ~0.5 s of
    reading them; the registry is the same either way
    (``tests/calc/test_units_cache.py``). A damaged cache (a file another
    process was writing, a disk error) is emptied and written again, so the
    next start is fast again; if that fails too, the files are read without a
    cache.
    """
    folder = _pint_cache_folder()
    if folder is not None:
        try:
            return _new_registry(folder)
        except _CACHE_TROUBLE:
            shutil.rmtree(folder, ignore_errors=True)
        try:
            folder.mkdir(parents=True, exist_ok=True, mode=0o700)
            return _new_registry(folder)
        except _CACHE_TROUBLE:
            pass
    return _new_registry(None)


TRADE_UNITS = Path(__file__).with_name("trade_units.txt")
ureg = _build_registry()
Q_ = ureg.Quantity

# --- Remembered answers of the registry -----------------------------------------
# Once the trade units are loaded the registry never changes, so what it makes of
# a unit spelling or a unit name is the same on every call. pint itself keeps
# only some of these (single unit names), and works the rest out again on every
# ``Q_(x, "um")``, ``.to("kg/l")`` and ``f"{q:~P}"``: most of a calculation's
# time. These caches hold the answers (strings, immutable units and unit
# containers) keyed on the text pint was given; spellings from outside still
# pass the guard of ``parse_unit`` first, and every cache is bounded.
REGISTRY_CACHE_SIZE = 4096
_REMEMBERED = ("parse_units", "parse_units_as_container", "get_name", "get_symbol")
for _method in _REMEMBERED:
    setattr(ureg, _method, lru_cache(maxsize=REGISTRY_CACHE_SIZE)(getattr(ureg, _method)))

_pint_convert = ureg.convert


def _offset_free(units) -> bool:
    """No unit with an offset (degC) in ``units``: pint's test before it converts by a factor alone."""
    try:
        return ureg._validate_and_extract(units) is None
    except (ValueError, pint.errors.UndefinedUnitError):
        return False


# Conversion factors between pairs of multiplicative units, as pint works them out.
_FACTORS: dict = {}


def _convert(value, src, dst, inplace=False, **ctx_kwargs):
    """pint's ``convert`` (behind every ``Quantity.to``), by a remembered factor where that is all it does.

    For a float between two units without offset (every unit of the core but
    the temperatures), with no context, pint multiplies the value by the
    factor between the units (``PlainRegistry._convert``); this does that same
    multiplication, so the numbers are identical, without pint's dispatch
    through its facets on every call. Anything else goes to pint.
    """
    if (
        ctx_kwargs
        or inplace
        or type(value) is not float
        or type(src) is not pint.util.UnitsContainer
        or type(dst) is not pint.util.UnitsContainer
    ):
        return _pint_convert(value, src, dst, inplace, **ctx_kwargs)
    if src is dst:
        return value
    factor = _FACTORS.get((src, dst))
    if factor is None:
        if src == dst:
            return value
        if ureg._active_ctx or not (_offset_free(src) and _offset_free(dst)):
            return _pint_convert(value, src, dst, inplace, **ctx_kwargs)
        factor = ureg._get_conversion_factor(src, dst)
        if not isinstance(factor, float):  # a DimensionalityError to raise, or an exact factor
            return _pint_convert(value, src, dst, inplace, **ctx_kwargs)
        if len(_FACTORS) < REGISTRY_CACHE_SIZE:
            _FACTORS[(src, dst)] = factor
    return value * factor


ureg.convert = _convert


_pint_new = Q_.__new__
_Unit = ureg.Unit


def _new_quantity(cls, value, units=None):
    """``Q_(value, units)`` for a plain number and a unit spelling or container, as pint makes it.

    pint's constructor checks for arrays, dask and other wrapped types on every
    call; for a float or int with a unit spelling of the code (or a unit pint
    already parsed) it then keeps the number as it is and the parsed unit. This
    does only that (the same two attributes); anything else goes to pint.
    """
    kind = type(value)
    if cls is Q_ and (kind is float or kind is int) and units is not None:
        unit_kind = type(units)
        if unit_kind is str:
            units = ureg.parse_units(units)._units
        elif unit_kind is _Unit:
            units = units._units
        elif unit_kind is not pint.util.UnitsContainer:
            return _pint_new(cls, value, units)
        quantity = object.__new__(cls)
        quantity._magnitude = value
        quantity._units = units
        return quantity
    return _pint_new(cls, value, units)


Q_.__new__ = staticmethod(_new_quantity)

_pint_to = Q_.to


def _quantity_to(self, other=None, *contexts, **ctx_kwargs):
    """``Quantity.to`` (and so ``m_as``) for a plain number, as pint does it, without its dispatch.

    pint turns ``other`` into a unit container, converts the magnitude by
    ``ureg.convert`` and makes a Quantity of the two; for a float or int with a
    unit spelling of the code, a unit or a unit container, and no context,
    this does the same three steps through the remembered parts above (the
    same numbers). Anything else goes to pint.
    """
    kind = type(self._magnitude)
    if contexts or ctx_kwargs or (kind is not float and kind is not int):
        return _pint_to(self, other, *contexts, **ctx_kwargs)
    other_kind = type(other)
    if other_kind is str:
        units = _units_of(other)
    elif other_kind is _Unit:
        units = other._units
    elif other_kind is pint.util.UnitsContainer:
        units = other
    else:
        return _pint_to(self, other, *contexts, **ctx_kwargs)
    quantity = object.__new__(type(self))
    quantity._magnitude = ureg.convert(self._magnitude, self._units, units)
    quantity._units = units
    return quantity


Q_.to = _quantity_to


@lru_cache(maxsize=REGISTRY_CACHE_SIZE)
def _units_of(unit) -> pint.util.UnitsContainer:
    return pint.util.to_units_container(unit, ureg)


def magnitude_in(quantity, unit) -> float:
    """``quantity.to(unit).magnitude`` (the same number), without making a Quantity on the way.

    ``unit`` is a fixed spelling of the code (``"um"``, ``"kg/l"``) or a unit
    :func:`parse_unit` read, never text from outside.

    >>> magnitude_in(Q_(1.0, "BCM/in2"), "cm3/m2") == Q_(1.0, "BCM/in2").to("cm3/m2").magnitude
    True
    """
    units = unit._units if type(unit) is _Unit else _units_of(unit)
    return ureg.convert(quantity._magnitude, quantity._units, units)


@lru_cache(maxsize=REGISTRY_CACHE_SIZE)
def _label(units: pint.util.UnitsContainer) -> str:
    return f"{ureg.Unit(units):~P}"


def unit_label(quantity) -> str:
    """``f"{quantity.units:~P}"`` (pint's short pretty label, e.g. ``"µm"``), worked out once per unit."""
    return _label(quantity._units)


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

# A value this close to zero, other than zero, is a typing or unit slip; it
# also keeps reciprocals (ink mileage from coat weight) finite.
MIN_MAGNITUDE = 1 / MAX_MAGNITUDE

_NUMBER = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*?)\s*$")

# --- The unit grammar (see the module docstring) ------------------------------

MAX_UNIT_CHARS = 40
MAX_POWER = 4
MAX_BRACKET_DEPTH = 2
# Base units per unit: beyond these no pressroom unit lies, and within them a
# value up to MAX_MAGNITUDE converts to any other such unit without overflow.
UNIT_FACTOR_LOW, UNIT_FACTOR_HIGH = 1e-100, 1e100

_UNIT_CHARACTER = re.compile(r"[A-Za-zµ°_0-9*/() +\-]")
_NAME = re.compile(r"[A-Za-zµ°_][A-Za-zµ°_0-9]*")
_ONE = re.compile(r"1(?![\w.])")
_POWER = re.compile(r"\*\*\s*([-+]?\d{1,3})(?![\w.])")
_NOT_A_POWER = "a power must be a whole number from -4 to 4, as in m**2 or in**-1"


def _stray_character(text: str) -> str | None:
    """Plain words for the first character no unit spelling has, if any (never echoing it raw)."""
    for character in text:
        if not _UNIT_CHARACTER.fullmatch(character):
            if character.isprintable():
                return f"'{character}' is not part of any unit"
            return f"the text has a character that is not part of any unit (U+{ord(character):04X})"
    return None


def _grammar_problem(text: str) -> str | None:
    """Why normalised ``text`` is not of the unit grammar, or None if it is.

    One pass, left to right: a factor is expected at the start, after ``*``,
    ``/`` or ``(``, and after a space that follows a factor (pint reads a space
    as multiplication); a factor may carry one power.
    """
    depth = 0
    expect_factor = True
    powered = False
    index = 0
    while index < len(text):
        character = text[index]
        if character == " ":
            index += 1
            continue
        if not expect_factor and text[index - 1] == " " and (character == "(" or _NAME.match(text, index)):
            expect_factor = True  # "lb ream" is lb*ream
        if expect_factor:
            if character == "(":
                depth += 1
                if depth > MAX_BRACKET_DEPTH:
                    return "brackets may go at most two deep"
                index += 1
                continue
            factor = _NAME.match(text, index) or _ONE.match(text, index)
            if not factor:
                return "a unit name (starting with a letter) is missing"
            index = factor.end()
            expect_factor, powered = False, False
            continue
        if text.startswith("**", index):
            if powered:
                return "use one power per unit, as in m**3 (not m**3**3)"
            power = _POWER.match(text, index)
            if not power:
                return _NOT_A_POWER
            if abs(int(power.group(1))) > MAX_POWER:
                return "powers above 4 are not units a pressroom uses"
            index, powered = power.end(), True
            continue
        if character in "*/":
            expect_factor = True
            index += 1
            continue
        if character == ")":
            if depth == 0:
                return "a bracket closes that was never opened"
            depth -= 1
            powered = False
            index += 1
            continue
        return "a '*' or '/' is missing between units"
    if expect_factor:
        return "it ends without a unit"
    if depth:
        return "a bracket is left open"
    return None


@lru_cache(maxsize=512)
def _read_unit(text: str, normalised: str) -> pint.Unit | str:
    """The pint unit for ``normalised`` (checked), or plain words for what is wrong with ``text``."""
    try:
        unit = ureg.parse_units(normalised)
    except pint.UndefinedUnitError as exc:
        unknown = ", ".join(f"'{_spelling_in(text, name)}'" for name in exc.unit_names)
        return f"unit {unknown} is not understood (in '{text}')"
    except Exception:  # pint's parser raises many kinds on garbled text
        return f"'{text}' is not a unit inkfilm understands"
    # pint's own word forms ("square m**4" is m**2**4) can still raise a power.
    for dimension, power in unit.dimensionality.items():
        if abs(power) > MAX_POWER:
            name = dimension.strip("[]")
            return f"'{text}' comes to {name} to the power {power:g}: powers above 4 are not units a pressroom uses"
    try:
        factor, _ = ureg.get_base_units(unit)
        factor = 1.0 if factor is None else abs(float(factor))  # None: an offset unit such as degC
    except (ArithmeticError, ValueError):
        factor = math.inf
    if not UNIT_FACTOR_LOW <= factor <= UNIT_FACTOR_HIGH:
        return f"'{text}' is far too large or too small a unit to be a real one"
    return unit


def parse_unit(text, field: str | None = "unit") -> pint.Unit:
    """Read a unit spelling such as ``"BCM/in2"``, ``"cm³/m²"`` or ``"mil"``.

    The one place where unit text from outside reaches pint: the spelling is
    checked against the grammar of the module docstring first, because pint
    evaluates powers exactly and ``m**9**9**9`` would hold the interpreter for
    good. Raises :class:`InputError` naming ``field`` when the spelling is too
    long, outside the grammar, unknown, or too large a power or size.

    >>> parse_unit("m**9**9**9", "to")
    Traceback (most recent call last):
    ...
    calc.errors.InputError: to: 'm**9**9**9' is not a unit inkfilm understands: powers above 4 are not ...
    >>> parse_unit("in2**2", "to")
    Traceback (most recent call last):
    ...
    calc.errors.InputError: to: 'in2**2' is not a unit inkfilm understands: use one power per unit, ...
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(field, "needs a unit, such as BCM/in2, cm3/m2 or um")
    text = text.strip()
    if len(text) > MAX_UNIT_CHARS:
        raise InputError(field, "that unit is too long to be a unit")
    unit = _checked_unit(text)
    if isinstance(unit, str):
        raise InputError(field, unit)
    return unit


@lru_cache(maxsize=REGISTRY_CACHE_SIZE)
def _checked_unit(text: str) -> pint.Unit | str:
    """The unit for stripped ``text`` of at most :data:`MAX_UNIT_CHARS`, or plain words for what is wrong.

    The same text always gets the same answer, so it is worked out once.
    """
    normalised = _normalise(text)
    stray = _stray_character(normalised)
    if stray is not None:
        return f"{stray}; a unit is spelled like BCM/in2, cm3/m2 or um"
    problem = _grammar_problem(normalised)
    if problem is not None:
        return f"'{text}' is not a unit inkfilm understands: {problem}"
    return _read_unit(text, normalised)


def _spelling_in(text: str, name: str) -> str:
    """The user's own spelling of an unknown unit, where it can be found."""
    return name if name in text else name.replace("**", "")


def check_number(value, field: str | None, *, allow_negative: bool = False) -> float:
    """A finite, sane plain number, else :class:`InputError` (also for an int too large for a float)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(field, "must be a number")
    try:
        value = float(value)
    except OverflowError:  # a JSON integer of hundreds of digits
        raise InputError(field, "is far too large to be a real value") from None
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
        _check_magnitude(text.magnitude, field, allow_negative)
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
    value = _check_magnitude(float(number_text), field, allow_negative)
    return Q_(value, parse_unit(unit_text, field))


def _check_magnitude(value, field: str | None, allow_negative: bool) -> float:
    """A quantity's number: as :func:`check_number`, and not too close to zero unless zero."""
    value = check_number(value, field, allow_negative=allow_negative)
    if 0.0 < abs(value) < MIN_MAGNITUDE:
        raise InputError(field, "is too small to be a real value (type 0, or use a smaller unit)")
    return value


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
    value = magnitude_in(quantity, unit)
    low_value = magnitude_in(low, unit)
    too_low = value < low_value if low_inclusive else value <= low_value
    if too_low or value > high.magnitude:
        bound = "at least" if low_inclusive else "more than"
        raise InputError(
            field,
            f"{what} must be {bound} {low_value:g} and at most {high.magnitude:g} {unit:~P}",
        )
    return quantity


def _to(make, unit, field: str | None):
    """``make()`` in ``unit``; an overflow or a result beyond a float is an :class:`InputError` naming ``field``.

    The unit grammar keeps both sides of a conversion within 10**±100 base
    units, so this is the last line, not the first.
    """
    try:
        value = float(make().to(unit).magnitude)
    except (OverflowError, ZeroDivisionError):
        value = math.inf
    if not math.isfinite(value):
        raise InputError(field, "the result is too large to state")
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
        return _to(lambda: quantity, target, field)

    if {source_dim, target_dim} == {MILEAGE, COAT_WEIGHT}:
        if quantity.magnitude == 0:
            raise InputError(field, "must be more than 0 to turn into its reciprocal")
        return _to(lambda: 1 / quantity, target, field)

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
        return _to(lambda: quantity * density, target, field)
    if pair in {(COAT_WEIGHT, LENGTH), (MASS, VOLUME)}:
        return _to(lambda: quantity / density, target, field)
    if quantity.magnitude == 0:
        raise InputError(field, "must be more than 0 to turn into its reciprocal")
    # mileage ↔ film: both directions are the reciprocal of (value × density)
    return _to(lambda: 1 / (quantity * density), target, field)


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
