"""Generated form inputs for the offline agreement test: the converter and the
film chain as a person fills them in, good and bad, from 1e-3 to 1e4."""

from __future__ import annotations

import math
import random

from webapp.calculators import convert, film
from webapp.shell.offline_data import form_document

SYSTEMS = ("metric", "imperial")


def _value(rng: random.Random, low: float = 1e-3, high: float = 1e4) -> str:
    """A value as typed: log-uniform from ``low`` to ``high``, one to six significant figures."""
    value = 10 ** rng.uniform(math.log10(low), math.log10(high))
    return f"{value:.{rng.randint(1, 6)}g}"


def _spellings_by_menu() -> dict[str, dict[str, list[str]]]:
    """For each menu, the texts the phone knows for each menu unit."""
    doc = form_document()
    by_menu: dict[str, dict[str, list[str]]] = {}
    for menu, table in doc["menu_units"].items():
        by_menu[menu] = {}
        for text, number in doc["spellings"].items():
            unit = table.get(str(number))
            if unit is not None:
                by_menu[menu].setdefault(unit, []).append(text)
    return by_menu


def _typed(rng, value: str, menu: str, unit: str, spellings) -> tuple[str, str]:
    """The value text (sometimes with its unit typed in) and the menu's unit."""
    choice = rng.random()
    texts = spellings[menu].get(unit, [])
    if choice < 0.25 and texts:
        return f"{value} {rng.choice(texts)}", rng.choice(convert.UNIT_ORDER if menu == "converter" else [unit])
    if choice < 0.3 and "." in value:
        return value.replace(".", ","), unit  # a decimal comma
    return value, unit


# Bad values for a quantity field, and (when the phone words it as the server does) True.
_BAD_VALUES = [
    ("abc", True),
    ("-4", True),
    ("0", True),
    ("1e-20", True),
    ("1e99", True),
    ("4..5", True),
    ("1" * 41, True),
    ("4 furlong", False),  # a unit the phone does not know: the same field, its own words
    ("4 m**9**9**9", False),
    ("4 g", True),  # a unit the server reads that the menu refuses
    ("4 " + "m" * 41, True),
    ("<b>4</b>", True),
]


def converter_cases(rng: random.Random, count: int) -> list[dict]:
    spellings = _spellings_by_menu()
    cases = []
    units = list(convert.UNIT_ORDER)
    for index in range(count):
        unit = units[index % len(units)]
        value, menu_unit = _typed(rng, _value(rng), "converter", unit, spellings)
        fields = dict(convert.DEFAULTS, value=value, unit=menu_unit)
        words = True
        if rng.random() < 0.5:
            density_unit = rng.choice(convert.DENSITY_UNITS)
            number = f"{rng.uniform(0.8, 1.5):.3g}" if density_unit == "g/cm3" else f"{rng.uniform(7, 12):.3g}"
            fields["density"], fields["density_unit"] = _typed(rng, number, "density", density_unit, spellings)
        if rng.random() < 0.4:
            fields["coverage"] = f"{rng.uniform(0, 100):.{rng.randint(0, 2)}f}"
        if rng.random() < 0.3:
            fields["answer_in"] = rng.choice(units)
        roll = rng.random()
        if roll < 0.08:
            fields["value"], words = rng.choice(_BAD_VALUES)
        elif roll < 0.11:
            fields["density"] = rng.choice(["0.1", "7", "-1", "x", "1 um", "1e-30"])
        elif roll < 0.13:
            fields["coverage"] = rng.choice(["120", "-5", "half"])
        elif roll < 0.14:
            fields["value"] = ""
        elif roll < 0.15:
            fields["answer_in"] = "furlong"
        cases.append({"page": "/", "fields": fields, "system": rng.choice(SYSTEMS), "words": words})
    return cases


def film_cases(rng: random.Random, count: int) -> list[dict]:
    spellings = _spellings_by_menu()
    cases = []
    for index in range(count):
        unit = film.ANILOX_UNITS[index % 2]
        value, menu_unit = _typed(rng, _value(rng, 1e-3, 1e3 if index % 5 else 1e4), "anilox", unit, spellings)
        fields = dict(film.DEFAULTS, anilox_volume=value, anilox_unit=menu_unit)
        fields["anilox_to_plate"] = f"{rng.uniform(0, 100):.{rng.randint(0, 2)}f}"
        fields["plate_to_substrate"] = f"{rng.uniform(0, 100):.{rng.randint(0, 2)}f}"
        words = True
        if rng.random() < 0.5:
            density_unit = rng.choice(film.DENSITY_UNITS)
            number = f"{rng.uniform(0.8, 1.5):.3g}" if density_unit == "g/cm3" else f"{rng.uniform(7, 12):.3g}"
            fields["ink_density"], fields["ink_density_unit"] = _typed(rng, number, "density", density_unit, spellings)
        if rng.random() < 0.5:
            fields["solids_by_volume"] = f"{rng.uniform(10, 90):.3g}"
        if rng.random() < 0.5:
            fields["solids_by_weight"] = f"{rng.uniform(10, 90):.3g}"  # without a density: an error
        roll = rng.random()
        if roll < 0.08:
            fields["anilox_volume"], words = rng.choice(_BAD_VALUES + [("", True), ("4 g/cm3", True)])
        elif roll < 0.12:
            fields[rng.choice(["anilox_to_plate", "plate_to_substrate", "solids_by_volume"])] = rng.choice(
                ["101", "-1", "x", ""]
            )
        elif roll < 0.14:
            fields["ink_density"] = rng.choice(["0.2", "5.5", "x", "1 lb"])
        cases.append({"page": "/film", "fields": fields, "system": rng.choice(SYSTEMS), "words": words})
    return cases


def all_cases(seed: int = 14) -> list[dict]:
    rng = random.Random(seed)
    return converter_cases(rng, 420) + film_cases(rng, 220)
