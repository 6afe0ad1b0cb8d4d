"""What a phone needs to work out the quick converters and the film chain itself.

When the shop network drops, the installed app answers the converter and the
film chain on the phone (the service worker, ``webapp/static/js/offline-calc.js``).
That code only multiplies, divides and formats: every factor, limit, title,
note, formula and message it uses comes from :func:`document`, which reads
them from this package, so there is one source of truth and a test
(``tests/calc/test_offline.py``) fails when the two disagree.

What the document holds:

- ``units``: for every unit the pages offer or state (``calc.display.UNIT_LABELS``,
  and the few the formulas pass through), ``[factor, dimension]``: how many SI
  base units one of it is (from pint) and its dimension as pint writes it;
  ``factors``: pint's factor from each of them to each other of its dimension
  (a value times it is what pint's ``.to()`` gives, to the last bit);
- how numbers are shown (``calc.display``): significant figures, when
  e-notation starts, the rounding (half up on the shortest decimal of the
  float), labels, the metric/imperial order, the unit of each role, and how a
  value in the working is written (``working_units``);
- the equivalents (``calc.equivalents``): groups with their titles and units,
  the notes of each group by kind of value, the working's labels and formulas
  (taken from a run of the core), and the conversion step between every pair
  of units the converter can state (from :func:`calc.equivalents.conversion_step`);
- the film chain (``calc.film``): the typical transfer shares, the anilox limit
  and the working's labels and formulas;
- the limits (``calc.units``): the largest and smallest magnitudes, the ink
  density range;
- ``messages``: the words of each error the core gives for these inputs,
  taken from the core by giving it such an input (``{text}``-style holes
  where the message quotes what was typed).

>>> doc = document()
>>> doc["units"]["BCM/in2"][1], round(doc["units"]["BCM/in2"][0] / doc["units"]["cm3/m2"][0], 7)
('[length]', 1.5500031)
"""

from __future__ import annotations

import itertools

from calc import display, equivalents, film
from calc.errors import InputError
from calc.units import (
    DENSITY_HIGH,
    DENSITY_LOW,
    MAX_MAGNITUDE,
    MAX_UNIT_CHARS,
    MIN_MAGNITUDE,
    Q_,
    parse_density,
    parse_quantity,
    parse_unit,
)

# Units the formulas pass through without showing them (mileage from coat
# weight, pitch from line screen).
_PASSING_UNITS = ("m2/g", "1/um")
# A symbol no formula has, to mark where the symbol goes in a conversion step.
_HOLE = "§"


def _message(make) -> str:
    """The message of the InputError ``make()`` raises (a check that did not fail is a bug here)."""
    try:
        make()
    except InputError as exc:
        return exc.message
    raise AssertionError("expected an InputError")  # pragma: no cover


def _units() -> dict:
    spellings = list(display.UNIT_LABELS) + list(_PASSING_UNITS)
    table = {}
    for spelling in spellings:
        quantity = Q_(1.0, spelling)
        table[spelling] = [float(quantity.to_base_units().magnitude), str(quantity.dimensionality)]
    return table


def _factors() -> dict:
    """``{from: {to: factor}}`` between every two units of one dimension: pint's own factor,
    so that ``value × factor`` on the phone is the very multiplication pint does."""
    spellings = list(display.UNIT_LABELS) + list(_PASSING_UNITS)
    table: dict = {}
    for source, target in itertools.permutations(spellings, 2):
        if Q_(1.0, source).dimensionality == Q_(1.0, target).dimensionality:
            table.setdefault(source, {})[target] = float(Q_(1.0, source).to(target).magnitude)
    return table


def _working_units() -> dict:
    """How ``calc.display.show_value`` writes a quantity in each unit: by its role's preferred unit, else its label."""
    table = {}
    for spelling in display.UNIT_LABELS:
        quantity = Q_(1.0, spelling)
        role = display._CORE_UNIT_ROLES.get(str(quantity.units))
        if role is not None:
            table[spelling] = {"role": role}
        else:
            label = f"{quantity.units:~P}"
            table[spelling] = {"label": display._PINT_LABEL_FIXES.get(label, label)}
    return table


def _steps(steps) -> list:
    return [
        {"label": step.label, "symbol": step.symbol, "formula": step.formula, "inputs": [s for s, _ in step.inputs]}
        for step in steps
    ]


# One value of each kind, with a density and a coverage, so that every group and step shows.
_SAMPLES = {
    "film_anilox": "1 BCM/in2",
    "film": "1 um",
    "coat_weight": "1 g/m2",
    "mileage": "1 m2/kg",
    "line_screen": "100 lpi",
    "area": "1 m2",
    "volume": "1 l",
    "mass": "1 kg",
    "density": "1 g/cm3",
}
_SAMPLE_COVERAGE = 0.37


def _equivalents() -> dict:
    by_kind = {}
    for name, text in _SAMPLES.items():
        result = equivalents.equivalents(text, "1.3 g/cm3", _SAMPLE_COVERAGE)
        steps = result.steps
        if equivalents.typed_spelling(result.quantity) is not None:
            steps = steps[1:]  # the conversion step, which ``conversions`` gives for every pair
        by_kind[name] = {
            "groups": [
                [group.key, (group.note or "").replace(f"{_SAMPLE_COVERAGE:.0%}", "{percent}")]
                for group in result.groups
            ],
            "steps": _steps(steps),
        }
    group_units = {
        "volume_per_area": equivalents.VOLUME_PER_AREA_UNITS,
        "film_thickness": equivalents.FILM_UNITS,
        "thickness_other": equivalents.THICKNESS_OTHER_UNITS,
        "coat_weight": equivalents.COAT_WEIGHT_UNITS,
        "mileage": equivalents.MILEAGE_UNITS,
        "line_screen": equivalents.LINE_SCREEN_UNITS,
        "cell_pitch": equivalents.CELL_PITCH_UNITS,
        "area": equivalents.AREA_UNITS,
        "inked_area": equivalents.AREA_UNITS,
        "volume": equivalents.VOLUME_UNITS,
        "mass": equivalents.MASS_UNITS,
        "density": equivalents.DENSITY_UNITS,
    }
    kind_of = {}
    for spelling in display.UNIT_LABELS:
        quantity = Q_(1.0, spelling)
        kind_of[str(quantity.dimensionality)] = equivalents._kind(quantity)
    return {
        "kind_of": kind_of,
        "groups": {key: [equivalents.TITLES[key], list(units)] for key, units in group_units.items()},
        "by_kind": by_kind,
        "counterparts": equivalents.COUNTERPARTS,
        "symbols": equivalents.SYMBOLS,
        "kinds": equivalents.KINDS,
        "volume_per_area_units": list(equivalents.VOLUME_PER_AREA_UNITS),
        "emptied_note": equivalents.EMPTIED_NOTE,
    }


def conversions(spellings) -> dict:
    """The conversion step between every two units of one dimension among ``spellings``:
    ``{"from>to": [label, formula]}``, the symbol in the formula written as ``§``."""
    table = {}
    for source, target in itertools.permutations(spellings, 2):
        if Q_(1.0, source).dimensionality != Q_(1.0, target).dimensionality:
            continue
        step = equivalents.conversion_step(Q_(1.0, source), source, target, _HOLE)
        table[f"{source}>{target}"] = [step.label, step.formula]
    return table


def _film() -> dict:
    chain = film.film_chain("1 BCM/in2", 0.5, 0.5, 0.5, 0.5, "1 g/cm3")
    high = film.ANILOX_VOLUME_HIGH
    return {
        "anilox_to_plate": film.TYPICAL_ANILOX_TO_PLATE,
        "plate_to_substrate": film.TYPICAL_PLATE_TO_SUBSTRATE,
        "anilox_high": [float(high.magnitude), "BCM/in2"],
        "steps": _steps(chain.steps),
    }


def _messages() -> dict:
    """The core's words for each error these pages can meet (see the module docstring)."""
    too_small = MIN_MAGNITUDE / 10
    return {
        "negative": _message(lambda: parse_quantity("-1 um", "x")),
        "too_small": _message(lambda: parse_quantity(f"{too_small!r} um", "x")),
        "too_large": _message(lambda: parse_quantity(f"{MAX_MAGNITUDE * 10!r} um", "x")),
        "not_positive": _message(lambda: equivalents.equivalents("0 um")),
        "density_range": _message(lambda: parse_density("100 g/cm3", "x")),
        "anilox_range": _message(lambda: film.parse_anilox_volume("1000 BCM/in2", "x")),
        "unit_too_long": _message(lambda: parse_unit("m" * (MAX_UNIT_CHARS + 1), "x")),
        "needs_density": _message(lambda: film.film_chain("4 BCM/in2", 0.5, 0.5, solids_by_weight=0.5)),
    }


def document(conversion_units=()) -> dict:
    """The JSON-able document of everything above; ``conversion_units``: the units
    between which the page may ask for a conversion step (see :func:`conversions`)."""
    return {
        "units": _units(),
        "factors": _factors(),
        "labels": display.UNIT_LABELS,
        "imperial": sorted(display.IMPERIAL_UNITS),
        "numbers": {
            "significant": display.SIGNIFICANT,
            "percent_significant": 4,
            "scientific_below": -6,
            "scientific_from": 12,
            "rounding": "half up, on the shortest decimal that reads back as the float",
        },
        "roles": {role: list(pair) for role, pair in display.ROLE_PAIRS.items()},
        "working_units": _working_units(),
        "equivalents": _equivalents(),
        "conversions": conversions(conversion_units),
        "film": _film(),
        "limits": {
            "max_magnitude": MAX_MAGNITUDE,
            "min_magnitude": MIN_MAGNITUDE,
            "max_unit_chars": MAX_UNIT_CHARS,
            "density": [float(DENSITY_LOW.to("g/cm3").magnitude), float(DENSITY_HIGH.to("g/cm3").magnitude), "g/cm3"],
        },
        "messages": _messages(),
    }
