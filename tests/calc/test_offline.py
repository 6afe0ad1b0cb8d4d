"""The data exported for the phone (``calc.offline.document``) is what ``calc/`` computes.

The phone's offline code holds no factor, default or message of its own: it
reads them from this document. These checks compute each part again from the
core (and a few against outside sources) so that a change in ``calc/`` that
the document missed fails here, before any browser runs.

References
----------
- NIST SP 811 (2008), appendix B.8: 1 in = 0.0254 m exactly, 1 lb = 0.45359237 kg
  exactly; so 1 BCM/in² = 1e9 µm³ / 645.16 mm² = 1.5500031 cm³/m².
- pint (the project's unit library) as the reference for every other factor.
"""

from __future__ import annotations

import itertools
import json
import math

import pytest

from calc import display, equivalents, film, offline
from calc.errors import InputError
from calc.units import DENSITY_HIGH, DENSITY_LOW, MAX_MAGNITUDE, MIN_MAGNITUDE, Q_, parse_quantity

DOC = offline.document(conversion_units=("BCM/in2", "cm3/m2", "um", "mil"))


def test_every_unit_the_pages_show_has_pint_s_si_factor_and_dimension():
    units = DOC["units"]
    assert set(display.UNIT_LABELS) <= set(units)
    for spelling, (factor, dimension) in units.items():
        base = Q_(1.0, spelling).to_base_units()
        assert factor == pytest.approx(float(base.magnitude), rel=1e-15), spelling
        assert dimension == str(Q_(1.0, spelling).dimensionality), spelling


def test_the_factors_between_units_are_pint_s_own_to_the_last_bit():
    factors = DOC["factors"]
    pairs = 0
    for source, target in itertools.permutations(DOC["units"], 2):
        same = Q_(1.0, source).dimensionality == Q_(1.0, target).dimensionality
        assert (target in factors.get(source, {})) == same, (source, target)
        if same:
            for value in (1e-3, 4.5, 7.0, 1e4):
                expected = Q_(value, source).to(target).magnitude
                assert value * factors[source][target] == pytest.approx(expected, rel=1e-15)
            pairs += 1
    assert pairs > 50


def test_the_trade_s_factors_agree_with_nist_sp_811():
    # NIST SP 811 B.8: 1 in = 0.0254 m exactly, so 1 BCM/in² = 1e9 µm³ / (25.4 mm)² = 1.5500031 cm³/m².
    assert DOC["factors"]["BCM/in2"]["cm3/m2"] == pytest.approx(1e9 * 1e-12 / 0.0254**2, rel=1e-12)
    assert round(DOC["factors"]["BCM/in2"]["cm3/m2"], 7) == 1.5500031
    # The trade's mil is a thousandth of an inch (pint's thou): 25.4 µm.
    assert DOC["factors"]["mil"]["um"] == pytest.approx(25.4, rel=1e-15)


def test_the_rounding_rule_and_labels_are_calc_display_s():
    numbers = DOC["numbers"]
    assert numbers["significant"] == display.SIGNIFICANT
    assert DOC["labels"] == display.UNIT_LABELS
    assert set(DOC["imperial"]) == set(display.IMPERIAL_UNITS)
    assert DOC["roles"] == {role: list(pair) for role, pair in display.ROLE_PAIRS.items()}
    # e-notation starts where calc.display starts it, on both sides.
    below, start = numbers["scientific_below"], numbers["scientific_from"]
    assert "e" not in display.format_number(10.0**below) and "e" in display.format_number(10.0 ** (below - 1))
    assert "e" in display.format_number(10.0**start) and "e" not in display.format_number(10.0 ** (start - 1))


def test_the_film_chain_s_defaults_and_limit_are_calc_film_s():
    exported = DOC["film"]
    assert exported["anilox_to_plate"] == film.TYPICAL_ANILOX_TO_PLATE
    assert exported["plate_to_substrate"] == film.TYPICAL_PLATE_TO_SUBSTRATE
    value, unit = exported["anilox_high"]
    assert Q_(value, unit) == film.ANILOX_VOLUME_HIGH
    # The steps the phone writes are those the core writes for a chain.
    chain = film.film_chain("4 BCM/in2", 0.5, 0.5, 0.5, 0.5, "1.1 g/cm3")
    assert [step["label"] for step in exported["steps"]] == [step.label for step in chain.steps]
    assert [step["formula"] for step in exported["steps"]] == [step.formula for step in chain.steps]


def test_the_limits_are_calc_units_s():
    limits = DOC["limits"]
    assert (limits["max_magnitude"], limits["min_magnitude"]) == (MAX_MAGNITUDE, MIN_MAGNITUDE)
    low, high, unit = limits["density"]
    assert Q_(low, unit) == DENSITY_LOW and Q_(high, unit) == DENSITY_HIGH


def test_the_groups_and_their_units_are_calc_equivalents_s():
    groups = DOC["equivalents"]["groups"]
    result = equivalents.equivalents("7 cm3/m2", "1.1 g/cm3", 0.4)
    for group in result.groups:
        title, units = groups[group.key]
        assert title == equivalents.TITLES[group.key]
        assert len(group.values) == len(units), group.key
        for value, unit in zip(group.values, units, strict=True):
            assert value.units == Q_(1.0, unit).units, (group.key, unit)


def _core_message(make) -> str:
    with pytest.raises(InputError) as caught:
        make()
    return caught.value.message


@pytest.mark.parametrize(
    ("key", "make"),
    [
        ("negative", lambda: parse_quantity("-7 cm3/m2", "value")),
        ("too_large", lambda: parse_quantity(f"{MAX_MAGNITUDE * 100!r} um", "value")),
        ("not_positive", lambda: equivalents.equivalents("0 BCM/in2")),
        ("anilox_range", lambda: film.parse_anilox_volume("500 BCM/in2", "anilox_volume")),
        ("needs_density", lambda: film.film_chain("2 BCM/in2", 0.4, 0.6, solids_by_weight=0.3)),
    ],
)
def test_the_messages_are_the_core_s_for_other_inputs_too(key, make):
    """The document's words come from one input; the core says the same for another of the kind."""
    exported = DOC["messages"][key]
    said = _core_message(make)
    if "{" in exported:  # a hole for what was typed
        head = exported.split("{")[0]
        assert said.startswith(head)
    else:
        assert said == exported


def test_the_served_script_carries_exactly_this_document(app):
    from webapp.calculators import convert
    from webapp.shell.offline_data import offline_bundle

    with app.app_context():
        code = offline_bundle().body.decode("utf-8")
    data = json.loads(code.split("self.inkfilmOfflineData=", 1)[1].rstrip().rstrip(";"))
    forms = data.pop("forms")
    assert data == json.loads(json.dumps(offline.document(conversion_units=convert.UNIT_ORDER)))
    assert forms["saving"]["kinds"]["film"]["main"] == "anilox_volume"
    assert not math.isnan(data["factors"]["BCM/in2"]["cm3/m2"])
