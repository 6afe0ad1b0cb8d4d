"""The quick converters' core: calc.equivalents, calc.display and the API's "equivalents" kind."""

from __future__ import annotations

import pytest

from calc import Q_, InputError
from calc.display import format_money, format_number, in_order, role_units, show
from calc.equivalents import equivalents
from webapp.calculators import CALCULATIONS
from webapp.calculators.convert import compute_equivalents
from webapp.calculators.film import film_layers
from webapp.common.forms import parse_number, parse_percent


def values(result, key):
    group = result.group(key)
    return {unit: quantity.magnitude for unit, quantity in zip(group.units, group.values, strict=True)}


# --- equivalents: reference values -------------------------------------------

# Exact from NIST SP 811 Appendix B (inch = 25.4 mm): 1 in² = 645.16 mm², so
# 1 BCM/in² = 1 mm³ / 645.16 mm² = 1/0.64516 cm³/m² (docs/references.md).
BCM_IN2_IN_CM3_M2 = 1 / 0.64516


@pytest.mark.parametrize(
    ("typed", "key", "unit", "expected"),
    [
        # volume per area ↔ film, both directions (NIST SP 811: inch = 25.4 mm; 1 cm³/m² = 1 µm exactly)
        ("1 BCM/in2", "volume_per_area", "cm3/m2", BCM_IN2_IN_CM3_M2),
        ("1 BCM/in2", "film_thickness", "um", BCM_IN2_IN_CM3_M2),
        ("1.55 cm3/m2", "volume_per_area", "BCM/in2", 1.55 * 0.64516),
        ("7 cm3/m2", "volume_per_area", "BCM/in2", 7 * 0.64516),
        ("10 um", "volume_per_area", "cm3/m2", 10.0),
        # thickness (NIST SP 811: 1 mil = 0.001 in = 25.4 µm exactly)
        ("0.6 mil", "film_thickness", "um", 15.24),
        ("25.4 um", "film_thickness", "mil", 1.0),
        ("1 mm", "thickness_other", "in", 1 / 25.4),
        ("1 in", "film_thickness", "mil", 1000.0),
        # line screen (NIST SP 811: inch = 2.54 cm)
        ("254 lpi", "line_screen", "lpcm", 100.0),
        ("100 lpcm", "line_screen", "lpi", 254.0),
        # cell pitch p = 25 400 µm / lpi (docs/references.md, "Anilox geometry")
        ("800 lpi", "cell_pitch", "um", 31.75),
        # areas (NIST SP 811: foot = 0.3048 m; MSI = 1000 in² = 0.64516 m²)
        ("1 MSI", "area", "m2", 0.64516),
        ("1 m2", "area", "ft2", 1 / 0.3048**2),
        ("1000 in2", "area", "MSI", 1.0),
        # coat weight: 1 lb/ream = 0.45359237 kg / 3000 ft² (NIST SP 811; the 3000 ft² ream)
        ("1 lb/ream", "coat_weight", "g/m2", 453.59237 / (3000 * 0.3048**2)),
        ("1.6275 g/m2", "coat_weight", "lb/ream", 1.6275 * (3000 * 0.3048**2) / 453.59237),
        # mileage is the reciprocal of coat weight (exact by definition)
        ("2 g/m2", "mileage", "m2/kg", 500.0),
        ("500 m2/kg", "coat_weight", "g/m2", 2.0),
        ("1 ft2/lb", "mileage", "m2/kg", 0.3048**2 / 0.45359237),
        # volumes and masses (NIST Handbook 44: US gallon = 231 in³; NIST SP 811: pound)
        ("1 gal", "volume", "in3", 231.0),
        ("1 lb", "mass", "g", 453.59237),
        ("1 g/cm3", "density", "kg/l", 1.0),
    ],
)
def test_equivalents_reference_values(typed, key, unit, expected):
    assert values(equivalents(typed), key)[unit] == pytest.approx(expected, rel=1e-9)


def test_film_with_density_gives_coat_weight_and_mileage():
    # w = t × ρ and M = 1/w, exact by definition (docs/references.md, "Ink and film")
    result = equivalents("2 um", density="1.05 g/cm3")
    assert values(result, "coat_weight")["g/m2"] == pytest.approx(2.1)
    assert values(result, "mileage")["m2/kg"] == pytest.approx(1000 / 2.1)


def test_coat_weight_with_density_gives_film_both_ways():
    result = equivalents("2.1 g/m2", density="1.05 g/cm3")
    assert values(result, "film_thickness")["um"] == pytest.approx(2.0)
    assert values(result, "volume_per_area")["cm3/m2"] == pytest.approx(2.0)
    assert values(equivalents("1000 m2/kg", density="1 g/cm3"), "film_thickness")["um"] == pytest.approx(1.0)


def test_volume_and_mass_with_density():
    assert values(equivalents("10 l", density="1.1 kg/l"), "mass")["kg"] == pytest.approx(11.0)
    assert values(equivalents("11 kg", density="1.1 kg/l"), "volume")["l"] == pytest.approx(10.0)


def test_area_with_coverage_gives_inked_area():
    result = equivalents("1000 m2", coverage=0.35)
    assert values(result, "inked_area")["m2"] == pytest.approx(350.0)
    # first the typed area in the other system's unit, then the inked area
    assert [step.symbol for step in result.steps] == ["A", "A_ink"]


def test_inputs_that_do_not_apply_are_ignored():
    assert [g.key for g in equivalents("800 lpi", density="1 g/cm3", coverage=0.5).groups] == [
        "line_screen",
        "cell_pitch",
    ]


def test_every_group_lists_the_typed_value_among_its_own_kind():
    result = equivalents("4.5 BCM/in2")
    assert result.kind == "film"
    assert values(result, "volume_per_area")["BCM/in2"] == pytest.approx(4.5)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"quantity": "4.5"}, "quantity"),
        ({"quantity": "4.5 wibbles"}, "quantity"),
        ({"quantity": "3 s"}, "quantity"),
        ({"quantity": "0 BCM/in2"}, "quantity"),
        ({"quantity": "-2 um"}, "quantity"),
        ({"quantity": "2 um", "density": "9 g/cm3"}, "density"),
        ({"quantity": "2 um", "density": "1 m"}, "density"),
        ({"quantity": "2 m2", "coverage": 1.5}, "coverage"),
    ],
)
def test_equivalents_errors_name_the_field(kwargs, field):
    with pytest.raises(InputError) as caught:
        equivalents(**kwargs)
    assert caught.value.field == field


# --- the API kind ------------------------------------------------------------


def test_equivalents_is_a_calculation_kind():
    assert CALCULATIONS["equivalents"] is compute_equivalents


def test_api_equivalents_answer(client):
    response = client.post("/api/v1/equivalents", json={"quantity": "4.5 BCM/in2", "density": "1 g/cm3"})
    assert response.status_code == 200
    answer = response.get_json()
    assert answer["kind"] == "film"
    film = next(g for g in answer["groups"] if g["key"] == "film_thickness")
    assert film["values"][0] == {"value": pytest.approx(4.5 / 0.64516), "unit": "um"}
    assert [g["key"] for g in answer["groups"]][-2:] == ["coat_weight", "mileage"]


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({}, "quantity"),
        ({"quantity": "4 BCM/in2", "colour": "red"}, "colour"),
        ({"quantity": "4 furlongs/fortnight"}, "quantity"),
        ({"quantity": "4 um", "coverage": "half"}, "coverage"),
    ],
)
def test_api_equivalents_errors(client, body, field):
    response = client.post("/api/v1/equivalents", json=body)
    assert response.status_code == 400
    assert response.get_json()["error"]["field"] == field


# --- display -----------------------------------------------------------------


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (6.975013950027899, "6.98"),
        (15.24, "15.2"),
        (25.4, "25.4"),
        (2.0, "2"),
        (0.5, "0.5"),
        (1000.0, "1,000"),
        (12345.6, "12,300"),
        (0.000274606848, "0.000275"),
        (0.0, "0"),
        (-1.555, "-1.56"),
        (2.5e-9, "2.50e-09"),
        (float("inf"), "—"),
    ],
)
def test_format_number_three_significant_figures(value, text):
    assert format_number(value) == text


def test_format_money_and_show():
    assert format_money(1234.5) == "1,234.50"
    shown = show(Q_(0.6, "mil"), "um")
    assert (shown.number, shown.unit, shown.value) == ("15.2", "µm", pytest.approx(15.24))


@pytest.mark.parametrize(
    ("typed", "value"),
    [("4.5", 4.5), (" 4,5 ", 4.5), ("1,500", 1500.0), ("12,000.5", 12000.5), (".5", 0.5), ("1e3", 1000.0)],
)
def test_parse_number(typed, value):
    assert parse_number(typed, "value") == value


@pytest.mark.parametrize("typed", ["", "abc", "4.5.6", "1,2,3", "nan", "inf", "1e400"])
def test_parse_number_errors_name_the_field(typed):
    with pytest.raises(InputError) as caught:
        parse_number(typed, "value")
    assert caught.value.field == "value"


def test_parse_percent():
    assert parse_percent("50", "t") == 0.5
    assert parse_percent("", "t", required=False) is None
    with pytest.raises(InputError) as caught:
        parse_percent("150", "anilox_to_plate")
    assert caught.value.field == "anilox_to_plate"


def test_units_in_preferred_order():
    assert in_order(["um", "mil"], "imperial") == ["mil", "um"]
    assert in_order(["um", "mil"], "metric") == ["um", "mil"]
    assert in_order(["um", "mil"], "nonsense") == ["um", "mil"]
    assert role_units("film", "imperial") == ("mil", "um")


def test_film_layers_to_scale_and_ordered():
    films = [
        ("anilox", "Anilox", Q_(7.0, "um")),
        ("plate", "Plate", Q_(3.5, "um")),
        ("substrate", "Substrate", Q_(1.75, "um")),
        ("dry", "Dry", Q_(0.0001, "um")),
    ]
    layers = film_layers(films, "um", tallest=140, baseline=170)
    assert [layer.height for layer in layers] == [140.0, 70.0, 35.0, 1.0]  # the thinnest stays visible
    assert [layer.y for layer in layers] == [30.0, 100.0, 135.0, 169.0]


# --- the working shows the conversion the user asked about ------------------------


def plain(text: str) -> str:
    return text.replace("\u202f", " ")


@pytest.mark.parametrize(
    ("typed", "formula", "result"),
    [
        # NIST SP 811 Appendix B: 1 in = 25.4 mm exactly, so 1 BCM/in² = 1 mm³ / 645.16 mm²
        # = 1/0.64516 cm³/m² = 1.550 003 1 cm³/m² to eight figures.
        ("7 cm3/m2", "V in BCM/in² = V in cm³/m² ÷ 1.550 003 1", "4.52 BCM/in²"),
        ("4.5 BCM/in2", "V in cm³/m² = V in BCM/in² × 1.550 003 1", "6.98 cm³/m²"),
        # NIST SP 811: 1 mil = 0.001 in = 25.4 µm exactly
        ("0.6 mil", "t in µm = t in mil × 25.4", "15.2 µm"),
        ("10 um", "t in mil = t in µm ÷ 25.4", "0.394 mil"),
        # NIST SP 811: 1 in = 2.54 cm exactly
        ("800 lpi", "S in lines/cm = S in lpi ÷ 2.54", "315 lines/cm"),
    ],
)
def test_the_first_step_is_the_other_systems_unit(typed, formula, result):
    step = equivalents(typed).steps[0]
    assert plain(step.formula).startswith(formula)
    assert str(step.result) == result


def test_the_bcm_factor_is_the_exact_definition_to_eight_figures():
    from calc.equivalents import conversion_step, factor_text

    # NIST SP 811 Appendix B: 1 in = 25.4 mm exactly; 1 BCM = 1 mm³; so the factor is 1/0.64516
    assert plain(factor_text(1 / 0.64516)) == "1.550 003 1"
    step = conversion_step(Q_(1, "BCM/in2"), "BCM/in2", "cm3/m2", "V")
    assert "as 1 in = 25.4 mm exactly" in step.formula
    assert step.result.value == pytest.approx(1 / 0.64516, rel=1e-15)


def test_an_anilox_volume_read_as_a_film_says_the_cells_emptied():
    result = equivalents("4.5 BCM/in2")
    assert result.group("film_thickness").note == "if the cells emptied completely"
    assert "if the cells emptied completely" in result.steps[1].label
    assert equivalents("0.6 mil").group("film_thickness").note is None  # a typed film is a film
