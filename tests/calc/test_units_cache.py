"""The remembered registry answers of ``calc.units`` give what pint itself gives.

Reference: pint (https://pint.readthedocs.io), a registry built here afresh from
the same trade definitions (``calc/trade_units.txt``) and the same spelling
preprocessor, with none of inkfilm's caches, conversion short cut or fast
Quantity construction. The numbers must be *identical* (the caches multiply by
the factor pint works out, as pint's own conversion does), the units and
labels the same text.

Also: pint's definition cache in inkfilm's cache folder (a fresh folder, a
damaged file, a folder that cannot be made) changes nothing but the start-up
time.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from calc import units
from calc.units import Q_, magnitude_in, unit_label, ureg

ROOT = Path(__file__).resolve().parents[2]


def _reference() -> pint.UnitRegistry:
    registry = pint.UnitRegistry(preprocessors=[units._normalise], autoconvert_offset_to_baseunit=False)
    registry.load_definitions(units.TRADE_UNITS)
    return registry


REFERENCE = _reference()

# Spellings the core and the pages use, by dimension (calc/display.py, calc/practice.py, the calculators).
FAMILIES = [
    ["um", "µm", "mm", "m", "in", "ft", "mil", "thou", "micrometer", "meter", "km"],
    ["BCM/in2", "cm3/m2", "in3/ft2", "ml/m2", "l/m2"],
    ["g/cm3", "kg/l", "lb/gal", "kg/m3", "g/ml"],
    ["g/m2", "lb/ream", "kg/m2", "oz/ft2", "lb/MSI"],
    ["m2/kg", "ft2/lb", "MSI/lb", "m2/g"],
    ["kg", "g", "lb", "oz", "kilogram"],
    ["l", "ml", "gal", "in3", "cm3", "liter"],
    ["m2", "ft2", "in2", "MSI", "ream", "km2"],
    ["lpi", "lpcm", "lines/cm", "1/mm"],
    ["degC", "degF", "K"],
]
SPELLINGS = [spelling for family in FAMILIES for spelling in family]

pairs = st.sampled_from(FAMILIES).flatmap(lambda family: st.tuples(st.sampled_from(family), st.sampled_from(family)))
floats = st.floats(min_value=-1e12, max_value=1e12, allow_nan=False, allow_infinity=False)
values = floats | st.integers(-(10**6), 10**6)


@settings(max_examples=400, deadline=None)
@given(value=values, units_pair=pairs)
def test_conversions_are_the_numbers_pint_gives(value, units_pair):
    source, target = units_pair
    reference = REFERENCE.Quantity(value, source).to(target)
    ours = Q_(value, source).to(target)
    assert ours.magnitude == reference.magnitude
    assert str(ours.units) == str(reference.units)
    if not any(t in (source, target) for t in ("degC", "degF")):
        # magnitude_in is for the multiplicative units of the core (not offsets).
        assert magnitude_in(Q_(value, source), target) == reference.magnitude


@settings(max_examples=200, deadline=None)
@given(value=values, spelling=st.sampled_from(SPELLINGS))
def test_quantities_are_made_as_pint_makes_them(value, spelling):
    reference = REFERENCE.Quantity(value, spelling)
    ours = Q_(value, spelling)
    assert type(ours.magnitude) is type(reference.magnitude)
    assert ours.magnitude == reference.magnitude
    assert str(ours.units) == str(reference.units)
    assert ours.dimensionality == reference.dimensionality
    # Twice (the second from the caches): the same.
    assert str(Q_(value, spelling).units) == str(ours.units)


@pytest.mark.parametrize("spelling", SPELLINGS)
def test_parsed_units_names_symbols_and_labels_are_pints(spelling):
    for _ in range(2):  # the first call fills the caches, the second reads them
        assert str(ureg.parse_units(spelling)) == str(REFERENCE.parse_units(spelling))
        assert unit_label(Q_(1.0, spelling)) == f"{REFERENCE.Quantity(1.0, spelling).units:~P}"
    for name in REFERENCE.parse_units(spelling)._units:  # each unit name in the spelling
        assert ureg.get_name(name) == REFERENCE.get_name(name)
        assert ureg.get_symbol(name) == REFERENCE.get_symbol(name)


def test_incompatible_units_still_raise_pints_error():
    with pytest.raises(pint.DimensionalityError):
        Q_(1.0, "um").to("kg")
    with pytest.raises(pint.DimensionalityError):
        magnitude_in(Q_(1.0, "BCM/in2"), "g/m2")


def test_arrays_and_other_magnitudes_go_to_pint():
    from decimal import Decimal

    assert Q_(Decimal("1.5"), "mm").to("um").magnitude == REFERENCE.Quantity(Decimal("1.5"), "mm").to("um").magnitude
    assert Q_("4.5 BCM/in2").magnitude == 4.5  # a string: pint parses it


# --- pint's definition cache ----------------------------------------------------------------

# What a registry makes of every spelling: its units, its root units and the factor to them.
PROBE = (
    "import json, sys, calc.units as u;"
    "spellings = json.loads(sys.argv[1]);"
    "roots = [u.Q_(1.0, s).to_root_units() for s in spellings];"
    "print(json.dumps([[str(u.ureg.parse_units(s)), r.magnitude, str(r.units)] for s, r in zip(spellings, roots)]))"
)


def _probe(cache: Path) -> list:
    result = subprocess.run(
        [sys.executable, "-c", PROBE, json.dumps(SPELLINGS)],
        cwd=ROOT,
        env={"PATH": "/usr/bin:/bin", "INKFILM_CACHE_DIR": str(cache), "HOME": str(cache.parent)},
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout)


def test_the_definition_cache_in_a_fresh_damaged_or_impossible_folder_gives_the_same_registry(tmp_path):
    fresh = tmp_path / "fresh"
    first = _probe(fresh)
    files = sorted((fresh / "pint").rglob("*"))
    assert any(path.suffix == ".pickle" for path in files)  # pint wrote its cache
    assert _probe(fresh) == first  # read back from the cache
    for path in files:
        if path.suffix == ".pickle":
            path.write_bytes(b"not a pickle")
    assert _probe(fresh) == first  # a damaged file: read afresh
    # ... and written again, so that the next start is fast again
    rewritten = [path.read_bytes() for path in (fresh / "pint").rglob("*.pickle")]
    assert rewritten and b"not a pickle" not in rewritten
    assert _probe(fresh) == first
    blocker = tmp_path / "a-file"
    blocker.write_text("in the way")
    assert _probe(blocker / "below") == first  # no folder can be made: nothing remembered
    expected = []
    for spelling in SPELLINGS:
        root = REFERENCE.Quantity(1.0, spelling).to_root_units()
        expected.append([str(REFERENCE.parse_units(spelling)), root.magnitude, str(root.units)])
    assert first == expected


def test_no_cache_folder_when_it_cannot_be_made(tmp_path, monkeypatch):
    blocker = tmp_path / "a-file"
    blocker.write_text("in the way")
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(blocker / "below"))
    assert units.cache_folder("pint") is None
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path / "ok"))
    assert units.cache_folder("pint") == tmp_path / "ok" / "pint"
    assert (tmp_path / "ok" / "pint").is_dir()


def test_the_definition_cache_is_one_folder_per_pint_install(tmp_path, monkeypatch):
    """pint's cache names its files by their full path: a cache another install wrote (another
    virtual environment, pint moved or upgraded) is never read, and changes nothing."""
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path))
    folder = units._pint_cache_folder()
    assert folder is not None and folder.parent == tmp_path / "pint" and folder.is_dir()
    assert folder.name != units._pint_cache_folder.__name__
    # Another install's cache beside ours, with parsed files of paths that are not here.
    other = tmp_path / "pint" / "another-install"
    other.mkdir()
    for path in (ROOT / "calc").glob("*.txt"):
        (other / (path.stem + ".json")).write_text(json.dumps({"path": "/nowhere/default_en.txt"}))
    assert _probe(tmp_path) == _probe(tmp_path / "elsewhere")
    assert sorted(p.name for p in other.iterdir()) == ["trade_units.json"]  # left alone


def test_a_registry_from_the_cache_has_the_definitions_of_an_uncached_one(tmp_path, monkeypatch):
    """Reference: pint, a registry read without any cache. Every unit, prefix and dimension the
    cached registry defines is defined alike (its factor to root units and its dimension)."""
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path))
    folder = units._pint_cache_folder()
    units._new_registry(folder)  # writes the cache
    cached = units._new_registry(folder)  # reads it
    assert any(folder.rglob("*.pickle"))
    REFERENCE = _reference()  # fresh: pint adds the prefixed units it has parsed to its table
    # A registry from the cache adds prefixed names (micrometer) when first parsed, not at start.
    assert set(cached._units) <= set(REFERENCE._units)
    assert sorted(cached._prefixes) == sorted(REFERENCE._prefixes)
    assert sorted(cached._dimensions) == sorted(REFERENCE._dimensions)
    for name, definition in REFERENCE._units.items():
        assert cached.get_name(name) == REFERENCE.get_name(name), name
        assert cached.get_symbol(name) == REFERENCE.get_symbol(name), name
        unit = pint.util.UnitsContainer({REFERENCE.get_name(name): 1})
        assert cached._get_dimensionality(unit) == REFERENCE._get_dimensionality(unit), name
        if definition.is_multiplicative:
            ours, theirs = cached._get_root_units(unit), REFERENCE._get_root_units(unit)
            assert ours[0] == theirs[0], name
            assert str(ours[1]) == str(theirs[1]), name


def test_a_cache_folder_that_cannot_be_written_falls_back_to_reading_the_files(tmp_path, monkeypatch):
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path))
    folder = units._pint_cache_folder()
    calls = []

    def refuse(registry_folder):
        calls.append(registry_folder)
        if registry_folder is not None:
            raise PermissionError("read-only cache")
        return REFERENCE

    monkeypatch.setattr(units, "_new_registry", refuse)
    assert units._build_registry() is REFERENCE
    assert calls == [folder, folder, None]  # the cache, the cache made anew, no cache


@pytest.mark.parametrize("text", ["m**9**9**9", "in2**2", "furlongs/fortnight", "m;", "BCM/in2"])
def test_a_checked_spelling_is_remembered_without_its_field(text):
    """``parse_unit`` works out a spelling once; each call still names its own field."""
    answers = []
    for field in ("to", "anilox_unit", "to"):
        try:
            answers.append((None, str(units.parse_unit(text, field))))
        except units.InputError as exc:
            assert exc.field == field
            answers.append((None, exc.message))
    assert len(set(answers)) == 1
    if text == "BCM/in2":
        assert answers[0][1] == str(REFERENCE.parse_units("BCM/in2"))
