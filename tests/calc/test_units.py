"""Unit definitions and conversions, checked against sources outside inkfilm.

Each check names its source. Exact definitions are asserted to floating-point
precision; values a source prints rounded are asserted at the precision it
prints them.
"""

import math

import pint
import pytest

from calc import Q_, InputError
from calc.units import convert, dimension_name, parse_quantity, parse_unit

# pint as an independent reference library: a registry of its own, with the
# trade's units spelled out in pint's standard units (not read from inkfilm's
# definitions file), so a slip in trade_units.txt shows up here.
REF = pint.UnitRegistry()
REF_SPELLING = {
    "BCM/in2": "1e9 * micrometer**3 / inch**2",
    "bcm/in²": "1e9 * micrometer**3 / inch**2",
    "BCM/in²": "1e9 * micrometer**3 / inch**2",
    "cm3/m2": "centimeter**3 / meter**2",
    "cm³/m²": "centimeter**3 / meter**2",
    "ml/m2": "milliliter / meter**2",
    "um": "micrometer",
    "µm": "micrometer",
    "μm": "micrometer",
    "nm": "nanometer",
    "mm": "millimeter",
    "mil": "0.001 * inch",
    "in": "inch",
    "cm": "centimeter",
    "m": "meter",
    "ft": "foot",
    "yd": "yard",
    "km": "kilometer",
    "in2": "inch**2",
    "in²": "inch**2",
    "ft2": "foot**2",
    "m2": "meter**2",
    "MSI": "1000 * inch**2",
    "ream": "3000 * foot**2",
    "BCM": "1e9 * micrometer**3",
    "mm3": "millimeter**3",
    "cm3": "centimeter**3",
    "ml": "milliliter",
    "l": "liter",
    "gal": "gallon",
    "in3": "inch**3",
    "g": "gram",
    "kg": "kilogram",
    "lb": "pound",
    "oz": "ounce",
    "g/cm3": "gram / centimeter**3",
    "kg/l": "kilogram / liter",
    "lb/gal": "pound / gallon",
    "g/m2": "gram / meter**2",
    "lb/ream": "pound / (3000 * foot**2)",
    "m2/kg": "meter**2 / kilogram",
    "ft2/lb": "foot**2 / pound",
    "MSI/lb": "1000 * inch**2 / pound",
    "lpi": "1 / inch",
    "lines/in": "1 / inch",
    "lpcm": "1 / centimeter",
    "lines/cm": "1 / centimeter",
}

# Groups of units that convert among themselves without a density.
GROUPS = {
    "film": ["BCM/in2", "bcm/in²", "BCM/in²", "cm3/m2", "cm³/m²", "ml/m2", "um", "µm", "μm", "nm", "mm", "mil", "in"],
    "length": ["mm", "cm", "m", "in", "ft", "yd", "km"],
    "area": ["in2", "in²", "ft2", "m2", "MSI", "ream"],
    "volume": ["BCM", "mm3", "cm3", "ml", "l", "gal", "in3"],
    "mass": ["g", "kg", "lb", "oz"],
    "density": ["g/cm3", "kg/l", "lb/gal"],
    "coat weight": ["g/m2", "lb/ream"],
    "mileage": ["m2/kg", "ft2/lb", "MSI/lb"],
    "line screen": ["lpi", "lines/in", "lpcm", "lines/cm"],
}

PAIRS = [(group, a, b) for group, units in GROUPS.items() for a in units for b in units if a != b]


@pytest.mark.parametrize(("group", "source", "target"), PAIRS)
def test_every_table_conversion_agrees_with_pint_reference(group, source, target):
    # Reference: pint's own definitions (a separate registry), both directions.
    ours = convert(f"2.5 {source}", target).magnitude
    ratio = 2.5 * REF.parse_expression(REF_SPELLING[source]) / REF.parse_expression(REF_SPELLING[target])
    reference = ratio.to("dimensionless").magnitude
    assert ours == pytest.approx(reference, rel=1e-12)


# NIST SP 811 (2008), Appendix B: the inch and the pound are exact by the
# 1959 international yard and pound agreement.
@pytest.mark.parametrize(
    ("quantity", "unit", "expected"),
    [
        ("1 in", "mm", 25.4),  # NIST SP 811 App. B: inch = 2.54 E-02 m exactly
        ("1 lb", "kg", 0.45359237),  # NIST SP 811 App. B: pound (avoirdupois) = 4.535 923 7 E-01 kg exactly
        ("1 ft", "m", 0.3048),  # NIST SP 811 App. B: foot = 3.048 E-01 m exactly
        ("1 in2", "mm2", 645.16),  # NIST SP 811 App. B: square inch = 6.4516 E-04 m² exactly
        ("1 mil", "um", 25.4),  # NIST SP 811 App. B: mil (0.001 in) = 2.54 E-05 m exactly
        ("1 gal", "in3", 231.0),  # NIST Handbook 44, Appendix C: US gallon = 231 in³ exactly
        ("1 oz", "lb", 1 / 16),  # NIST Handbook 44, Appendix C: avoirdupois ounce = 1/16 lb exactly
    ],
)
def test_exact_definitions(quantity, unit, expected):
    assert convert(quantity, unit).magnitude == pytest.approx(expected, rel=1e-12)


# NIST SP 811 (2008), Appendix B.8, prints these derived factors to 7 significant
# digits (values as recalled from the table; each also follows from the exact
# definitions above).
@pytest.mark.parametrize(
    ("quantity", "unit", "printed"),
    [
        ("1 gal", "m3", 3.785412e-03),  # gallon [U.S.] = 3.785 412 E-03 m³
        ("1 in3", "m3", 1.638706e-05),  # cubic inch = 1.638 706 E-05 m³
        ("1 oz", "kg", 2.834952e-02),  # ounce (avoirdupois) = 2.834 952 E-02 kg
        ("1 lb/gal", "kg/m3", 1.198264e02),  # pound per gallon [U.S.] = 1.198 264 E+02 kg/m³
    ],
)
def test_nist_printed_factors(quantity, unit, printed):
    value = convert(quantity, unit).magnitude
    assert float(f"{value:.7g}") == printed


def test_bcm_is_one_cubic_millimetre():
    # Common practice, and exact from the definition: 1 BCM = 10⁹ µm³ = 1 mm³.
    assert convert("1 BCM", "mm3").magnitude == pytest.approx(1.0, rel=1e-15)


def test_bcm_per_square_inch_in_metric():
    # Exact from NIST SP 811's inch: 1 BCM/in² = 1 mm³ / 645.16 mm² = 1/0.64516 cm³/m².
    assert convert("1 BCM/in2", "cm3/m2").magnitude == pytest.approx(1 / 0.64516, rel=1e-12)
    # The trade quotes it as ≈ 1.55 cm³/m² and ≈ 1.55 µm of film (common practice).
    assert round(convert("1 BCM/in2", "cm3/m2").magnitude, 2) == 1.55
    assert round(convert("1 BCM/in2", "um").magnitude, 2) == 1.55


def test_volume_per_area_is_film_thickness():
    # 1 cm³ spread over 1 m² is exactly 1 µm thick (10⁻⁶ m³ / 1 m² = 10⁻⁶ m).
    assert convert("1 cm3/m2", "um").magnitude == pytest.approx(1.0, rel=1e-15)
    assert convert("1 ml/m2", "um").magnitude == pytest.approx(1.0, rel=1e-15)


def test_msi_and_ream():
    # 1 MSI = 1000 in² = 0.64516 m² exactly (from the inch).
    assert convert("1 MSI", "m2").magnitude == pytest.approx(0.64516, rel=1e-15)
    # Paper and converting trade's coat-weight ream: 3000 ft² (500 sheets of 24 × 36 in).
    assert convert("1 ream", "ft2").magnitude == pytest.approx(3000.0, rel=1e-15)
    assert convert("1 ream", "in2").magnitude == pytest.approx(500 * 24 * 36, rel=1e-15)


def test_pound_per_ream_in_grams_per_square_metre():
    # Exact from the unit definitions: 1 lb/ream = 0.45359237 kg / 278.70912 m² ≈ 1.6275 g/m².
    assert round(convert("1 lb/ream", "g/m2").magnitude, 4) == 1.6275
    # A printing encyclopedia's grammage table prints 1.627 and 0.614 (truncated to 3 places).
    assert math.floor(convert("1 lb/ream", "g/m2").magnitude * 1000) / 1000 == 1.627
    assert round(convert("1 g/m2", "lb/ream").magnitude, 3) == 0.614


def test_line_screen():
    # lines/cm = lpi / 2.54 (from the inch).
    assert convert("400 lpi", "lpcm").magnitude == pytest.approx(400 / 2.54, rel=1e-12)
    assert convert("160 lines/cm", "lines/in").magnitude == pytest.approx(406.4, rel=1e-12)


def test_pint_mil_would_be_an_angle():
    # The reason for the mil mapping: pint's own "mil" is an angle, not 0.001 in.
    assert REF.Quantity(1, "mil").dimensionality != REF.Quantity(1, "inch").dimensionality
    assert parse_quantity("1 mil").dimensionality == Q_(1, "inch").dimensionality


# Conversions that need the ink's density.
@pytest.mark.parametrize(
    ("quantity", "target", "density", "expected"),
    [
        # coat weight [g/m²] = film [µm] × density [g/cm³] (exact: 1 µm over 1 m² is 1 cm³)
        ("2 um", "g/m2", "1.05 g/cm3", 2.1),
        ("2.1 g/m2", "um", "1.05 g/cm3", 2.0),
        # Québec Clean Air Regulation (CQLR c. Q-2, r. 4.1) s. 26 reference ink: 1.1 kg/L;
        # 4 µm of it weigh 4.4 g/m², and 1 L weighs 1.1 kg.
        ("4 um", "g/m2", "1.1 kg/l", 4.4),
        ("1 l", "kg", "1.1 kg/l", 1.1),
        ("1.1 kg", "l", "1.1 kg/l", 1.0),
        # mileage = 1 / (film × density): 1 µm at 1 g/cm³ is 1 g/m², so 1000 m²/kg
        ("1 um", "m2/kg", "1 g/cm3", 1000.0),
        ("1000 m2/kg", "um", "1 g/cm3", 1.0),
    ],
)
def test_density_conversions(quantity, target, density, expected):
    assert convert(quantity, target, density).magnitude == pytest.approx(expected, rel=1e-12)


def test_mileage_and_coat_weight_are_reciprocal_without_density():
    # 1 g/m² covers 1 m² per gram: 1000 m²/kg.
    assert convert("1 g/m2", "m2/kg").magnitude == pytest.approx(1000.0, rel=1e-12)
    assert convert("500 m2/kg", "g/m2").magnitude == pytest.approx(2.0, rel=1e-12)


@pytest.mark.parametrize(
    ("quantity", "target", "density", "field", "words"),
    [
        ("1 m", "kg", None, "to", "cannot convert a length"),
        ("1 m", "kg", None, "to", "to a mass"),
        ("3 BCM/in2", "g", None, "to", "to a mass"),
        ("2 um", "g/m2", None, "density", "needs the ink's density"),
        ("2 um", "g/m2", "1 kg", "density", "must be a density"),
        ("2 um", "g/m2", "50 g/cm3", "density", "at most 5 g/cm³"),
        ("1 furlongz", "m", None, "quantity", "'furlongz' is not understood"),
        ("1 m", "zz/in2", None, "to", "'zz' is not understood"),
        ("1 Um", "m", None, "quantity", "'Um' is not understood"),
        ("abc m", "m", None, "quantity", "must start with a number"),
        ("5", "m", None, "quantity", "has no unit"),
        ("-3 BCM/in2", "um", None, "quantity", "must not be negative"),
        ("1e999 um", "m", None, "quantity", "finite"),
        ("1e300 um", "m", None, "quantity", "far too large"),
        ("0 m2/kg", "g/m2", None, "quantity", "more than 0"),
        ("1 m", "", None, "to", "needs a unit"),
        ("1 m", "m ** (", None, "to", "not a unit"),
    ],
)
def test_conversion_errors_name_the_field(quantity, target, density, field, words):
    with pytest.raises(InputError) as caught:
        convert(quantity, target, density)
    assert caught.value.field == field
    assert words in caught.value.message


def test_spellings_are_case_sensitive_except_bcm():
    # m (metre) and M (mega prefix) differ; "bcm" is accepted as BCM.
    assert parse_unit("bcm") == parse_unit("BCM")
    assert convert("1 mm", "um").magnitude == pytest.approx(1000.0)
    assert convert("1 Mm", "mm").magnitude == pytest.approx(1e9)  # megametre, not millimetre
    for wrong_case in ("UM", "Bcm", "IN2"):
        with pytest.raises(InputError):
            parse_unit(wrong_case)


def test_dimension_names_are_plain_words():
    assert dimension_name(Q_(1, "m2").dimensionality) == "an area"
    assert dimension_name(Q_(1, "g/m2").dimensionality) == "a coat weight (mass per area)"
    assert dimension_name(Q_(1, "lpi").dimensionality) == "a line screen (lines per length)"
