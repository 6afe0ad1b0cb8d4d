"""Unit spellings are checked before pint sees them.

pint evaluates exponents exactly: ``m**9**9**9`` asks for 9**(9**9), a number
of some 370 million digits, and the interpreter holds the GIL until it is done,
so one such request stops every worker. Each hostile spelling below must get
an :class:`InputError` naming the field, within a short time (the call runs in
a forked child that is killed if it runs over, so a regression fails instead
of hanging the run); each ordinary spelling must still read as the unit it is.
"""

from __future__ import annotations

import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from calc import InputError
from calc.estimate import run_length_from_impressions
from calc.units import Q_, check_fraction, check_number, convert, parse_quantity, parse_unit
from tests.timelimit import run_within

LIMIT_S = 3.0  # a hostile spelling is refused in milliseconds; a freeze runs for minutes

# (spelling, words the message must contain)
HOSTILE_UNITS = [
    ("m**9**9**9", "power"),
    ("m³³³³", "power"),
    ("m^9^9^9", "power"),
    ("m**(9**9**9)", "power"),
    ("m⁹⁹⁹⁹", "power"),
    ("m**999", "power"),
    ("m**99999999999999999999", "power"),
    ("m**-99", "power"),
    ("m**+5", "power"),
    ("m**2**2", "one power"),
    ("m ** 1e9", "power"),
    ("m**0.5", "not part of"),
    ("BCM/in2**99999", "one power"),
    ("(((m)))**2", "brackets"),
    ("((((m))))", "brackets"),
    ("m ** (", "not a unit"),
    ("m)", "not a unit"),
    ("m" * 10_000, "too long"),
    ("m*" * 21, "too long"),
    ("\ud800", "U+D800"),
    ("m\x00", "U+0000"),
    ("m**4*m**4*m**4", "power"),  # each power allowed, the whole a length to the 12th
    ("square m**4", "power"),  # pint reads this as m**2**4
    ("Ym**4*Ym**4/ym**4/ym**4", "too large or too small"),  # dimensionless, 10^384
    ("2 m", "not a unit"),
    ("m**", "not a unit"),
    ("**2", "not a unit"),
    ("m//s", "not a unit"),
    ("m; import os", "not part of"),
]


def repr_short(value) -> str:
    return repr(value)[:30]


def _parse(text, field):
    return str(parse_unit(text, field))


def _quantity(text, field):
    return str(parse_quantity(text, field))


def _convert(quantity, to, density=None):
    return str(convert(quantity, to, density))


def _refused(outcome, field):
    assert outcome.raised == "InputError", outcome
    assert outcome.field == field, outcome
    message = outcome.message
    assert message and len(message) < 200
    message.encode("utf-8")  # no lone surrogate echoed back: a page could not send it
    assert "pint" not in message and "Error" not in message
    return message


@pytest.mark.parametrize(("spelling", "words"), HOSTILE_UNITS, ids=repr_short)
def test_a_hostile_unit_spelling_is_refused_quickly_naming_the_field(spelling, words):
    message = _refused(run_within(LIMIT_S, _parse, spelling, "to"), "to")
    assert words in message


@pytest.mark.parametrize(("spelling", "words"), HOSTILE_UNITS, ids=repr_short)
def test_a_hostile_unit_after_a_number_is_refused_quickly_naming_the_field(spelling, words):
    _refused(run_within(LIMIT_S, _quantity, "1 " + spelling, "anilox_volume"), "anilox_volume")


@pytest.mark.parametrize(
    ("quantity", "to", "density", "field", "words"),
    [
        ("1 m", "m**9**9**9", None, "to", "powers above 4"),
        ("1 m**9**9**9", "m", None, "quantity", "powers above 4"),
        ("1 m³³³³", "m", None, "quantity", "power"),
        ("1 m**999", "mm**999", None, "quantity", "power"),
        ("1 BCM/in2**99999", "um", None, "quantity", "one power"),
        ("2 um", "g/m2", "1 g/cm3**2**2", "density", "one power"),
        ("1e999 m", "mm", None, "quantity", "finite"),
        ("1e-320 g/m2", "m2/kg", None, "quantity", "too small"),
        ("1 " + "m" * 10_000, "mm", None, "quantity", "too long"),
    ],
)
def test_a_hostile_conversion_is_refused_quickly_naming_the_field(quantity, to, density, field, words):
    message = _refused(run_within(LIMIT_S, _convert, quantity, to, density), field)
    assert words in message


@pytest.mark.parametrize("value", [10**400, -(10**400), 2**1024, 10**309], ids=["1e400", "-1e400", "2^1024", "1e309"])
def test_an_integer_too_large_for_a_float_is_an_input_error(value):
    with pytest.raises(InputError) as caught:
        check_number(value, "price_per_kg", allow_negative=True)
    assert caught.value.field == "price_per_kg"
    assert "far too large" in caught.value.message
    with pytest.raises(InputError) as caught:
        check_fraction(value, "coverage")
    assert caught.value.field == "coverage"


@pytest.mark.parametrize("impressions", ["abc", "50000", 10**400, None, [1], float("nan")], ids=repr_short)
def test_impressions_that_are_not_a_number_name_the_field(impressions):
    with pytest.raises(InputError) as caught:
        run_length_from_impressions(impressions, "18 in")
    assert caught.value.field == "impressions"


# Ordinary spellings, and what each means in pint's standard units: NIST SP 811
# (2008) App. B for the inch, foot, pound and gallon; the trade's BCM (10⁹ µm³),
# MSI (1000 in²) and ream (3000 ft²) are common practice (see REFERENCES.md),
# as tests/test_units.py spells them.
ORDINARY = [
    ("BCM/in2", "1e9 * micrometer**3 / inch**2"),
    ("BCM/in²", "1e9 * micrometer**3 / inch**2"),
    ("bcm/in2", "1e9 * micrometer**3 / inch**2"),
    ("cm³/m²", "centimeter**3 / meter**2"),
    ("cm3/m2", "centimeter**3 / meter**2"),
    ("cm**3/m**2", "centimeter**3 / meter**2"),
    ("cm ** 3 / m ** 2", "centimeter**3 / meter**2"),
    ("um", "micrometer"),
    ("µm", "micrometer"),
    ("μm", "micrometer"),
    ("mil", "0.001 * inch"),
    ("mils", "0.001 * inch"),
    ("lines/in", "1 / inch"),
    ("lpi", "1 / inch"),
    ("lines/cm", "1 / centimeter"),
    ("1/in", "1 / inch"),
    ("in**-1", "1 / inch"),
    ("g/m2", "gram / meter**2"),
    ("g / m2", "gram / meter**2"),
    ("lb/ream", "pound / (3000 * foot**2)"),
    ("(lb/ream)", "pound / (3000 * foot**2)"),
    ("m2/kg", "meter**2 / kilogram"),
    ("ft2/lb", "foot**2 / pound"),
    ("MSI/lb", "1000 * inch**2 / pound"),
    ("kg/l", "kilogram / liter"),
    ("lb/gal", "pound / gallon"),
    ("g/cm3", "gram / centimeter**3"),
    ("g/(cm*cm*cm)", "gram / centimeter**3"),
    ("in²", "inch**2"),
    ("in^2", "inch**2"),
    ("in2", "inch**2"),
    ("ft²", "foot**2"),
    ("MSI", "1000 * inch**2"),
    ("l", "liter"),
    ("gal", "gallon"),
    ("kg", "kilogram"),
    ("lb", "pound"),
    ("mm", "millimeter"),
    ("in", "inch"),
    ("BCM", "1e9 * micrometer**3"),
]
REF = pint.UnitRegistry()  # pint's own definitions, without inkfilm's trade units


@pytest.mark.parametrize(("spelling", "reference"), ORDINARY)
def test_an_ordinary_spelling_still_reads_as_its_unit(spelling, reference):
    ours = Q_(1.0, parse_unit(spelling, "unit")).to_base_units()
    theirs = REF.Quantity(reference).to_base_units()
    assert str(ours.dimensionality) == str(theirs.dimensionality)
    assert ours.magnitude == pytest.approx(theirs.magnitude, rel=1e-12)


def test_an_ordinary_conversion_still_works():
    # NIST SP 811 inch: 1 BCM/in² = 1 mm³ / 645.16 mm² = 1/0.64516 cm³/m².
    assert convert("1 BCM/in2", "cm³/m²").magnitude == pytest.approx(1 / 0.64516, rel=1e-12)
    # NIST SP 811: 1 mil = 25.4 µm exactly.
    assert convert("0.6 mil", "μm").magnitude == pytest.approx(15.24, rel=1e-12)


unit_pieces = st.text(alphabet="m9432*()/ ^-+.e²³⁴⁹µ°_x", max_size=40)


@settings(deadline=500, max_examples=300)
@given(text=st.one_of(st.text(max_size=60), unit_pieces))
def test_any_text_as_a_unit_either_reads_or_is_an_input_error(text):
    try:
        unit = parse_unit(text, "to")
    except InputError as exc:
        assert exc.field == "to"
        exc.message.encode("utf-8")
    else:
        assert isinstance(unit, pint.Unit)
        assert all(abs(power) <= 4 for power in unit.dimensionality.values())


@settings(deadline=500, max_examples=200)
@given(text=st.one_of(st.text(max_size=60), unit_pieces), to=unit_pieces)
def test_any_conversion_either_works_or_is_an_input_error(text, to):
    try:
        convert("1 " + text, to, "1 g/cm3")
    except InputError as exc:
        assert exc.field in ("quantity", "to", "density")
