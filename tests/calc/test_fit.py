"""Fit check: anilox roll against plate screen and kind of work.

The ratio and volume rules are common practice (calc/practice.py, REFERENCES.md
"Anilox rolls"); tests read them from the practice module, never repeat them.
Hand-worked numbers show their arithmetic.
"""

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from calc import InputError
from calc.fit import ADVISORY_CODES, UNFIT_CODES, fit_check, smallest_dot_diameter
from calc.practice import (
    SMALLEST_DOT,
    TYPICAL_WALL,
    VOLUME_SCREEN_BAND,
    VOLUME_SCREEN_FAR,
    WORK_KINDS,
    WORK_PRACTICE,
)


def _codes(check):
    return [code for code, _ in check.problems]


# --- The two cases the browser scenario relies on -------------------------------------


def test_150_lpi_process_on_600_lpi_4_bcm_does_not_fit():
    # ratio = 600 / 150 = 4, under the process minimum; 4 BCM/in² above the process range;
    # V × S = 4 × 600 = 2 400, inside the far band, so no advisory.
    check = fit_check("process", "150 lpi", "600 lpi", "4 BCM/in2")
    assert check.ratio == pytest.approx(4.0, rel=1e-12)
    assert check.fits is False
    assert _codes(check) == ["screen_too_coarse", "volume_too_high"]
    assert check.volume_screen == pytest.approx(2400.0, rel=1e-12)


def test_150_lpi_process_on_1000_lpi_1_5_bcm_fits():
    # ratio = 1000 / 150 = 6.667; V × S = 1.5 × 1000 = 1 500, inside the usual band.
    check = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2")
    assert round(check.ratio, 3) == 6.667
    assert check.fits is True
    assert check.problems == ()


def test_answer_parts_have_the_shape_of_the_api_answer():
    # problems are (code, message) pairs; ranges are (low, high)
    check = fit_check("process", "150 lpi", "600 lpi", "4 BCM/in2")
    code, message = check.problems[0]
    assert check.problems[0]._asdict() == {"code": code, "message": message}
    assert set(check.screen_range._asdict()) == {"low", "high"}
    assert set(check.volume_range._asdict()) == {"low", "high"}


def test_process_minimum_is_above_a_bare_four_to_one():
    # The browser scenario needs 4:1 to be too coarse for halftones.
    assert WORK_PRACTICE["process"].screen_ratio_min > 4


# --- Settings and ranges ------------------------------------------------------------


@pytest.mark.parametrize("kind", WORK_KINDS)
def test_ranges_come_from_practice(kind):
    practice = WORK_PRACTICE[kind]
    check = fit_check(kind, "150 lpi")
    assert check.screen_ratio_min == practice.screen_ratio_min
    assert check.volume_range.low == practice.volume.low
    assert check.volume_range.high == practice.volume.high
    assert check.volume_screen_band == VOLUME_SCREEN_BAND
    if practice.screen_ratio_min is None:
        assert check.screen_range.low is None
    else:
        # low = plate × minimum ratio, e.g. process: 150 × 5 = 750 lpi
        assert check.screen_range.low.to("lpi").magnitude == pytest.approx(150 * practice.screen_ratio_min)
    assert check.screen_range.high is None
    assert check.fits is None and check.problems == () and check.ratio is None


@pytest.mark.parametrize("kind", WORK_KINDS)
def test_a_roll_in_the_middle_of_the_range_fits_and_outside_does_not(kind):
    low = WORK_PRACTICE[kind].volume.low.to("BCM/in2").magnitude
    high = WORK_PRACTICE[kind].volume.high.to("BCM/in2").magnitude
    plate = "150 lpi" if kind == "process" else None
    middle = (low + high) / 2
    # a screen that keeps V × S in the middle of the usual band
    band_middle = sum(VOLUME_SCREEN_BAND) / 2

    def roll(volume):
        screen = band_middle / volume
        if kind == "process":  # fine enough for the plate, with room to spare
            screen = max(screen, 150 * WORK_PRACTICE["process"].screen_ratio_min * 1.3)
        return fit_check(kind, plate, f"{screen} lpi", f"{volume} BCM/in2")

    assert roll(middle).fits is True
    over = roll(high * 1.05)
    assert over.fits is False and "volume_too_high" in _codes(over)
    under = roll(low * 0.95)
    assert under.fits is False and "volume_too_low" in _codes(under)


def test_range_edges_count_as_inside():
    # 1.55 cm³/m² is 1 BCM/in² rounded (1 / 0.645 16 = 1.550 003): not "too low" for process work.
    assert WORK_PRACTICE["process"].volume.low.to("BCM/in2").magnitude == 1.0
    check = fit_check("process", "150 lpi", "1500 lpi", "1.55 cm3/m2")
    assert check.fits is True, check.problems
    # 295 l/cm = 749.3 lpi, the process minimum of 750 lpi rounded
    assert "screen_too_coarse" not in _codes(fit_check("process", "150 lpi", "295 lpcm", "2.2 BCM/in2"))


def test_overrides_replace_the_settings():
    check = fit_check(
        "process", "150 lpi", "600 lpi", "4 BCM/in2", screen_ratio_min=4, volume_range=("3 BCM/in2", "5 BCM/in2")
    )
    assert check.fits is True
    assert check.screen_ratio_min == 4
    assert check.volume_range.low.to("BCM/in2").magnitude == 3
    solid = fit_check("solid", "150 lpi", "600 lpi", "5 BCM/in2", screen_ratio_min=5)
    assert _codes(solid)[0] == "screen_too_coarse"  # a ratio applied to solids on request
    assert fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2", volume_screen_band=(3000, 4000)).fits is True


def test_no_ratio_for_work_without_dots():
    check = fit_check("solid", None, "200 lpi", "8 BCM/in2")
    assert check.ratio is None and check.screen_range.low is None
    assert check.fits is True
    # with a plate screen given, the ratio is shown but not applied to solids
    coarse = fit_check("white", "150 lpi", "250 lpi", "7 BCM/in2")
    assert coarse.ratio == pytest.approx(250 / 150) and coarse.fits is True


# --- The volume–screen advice ---------------------------------------------------------


def test_volume_screen_mismatch_is_advice_only():
    # far above: V × S beyond band high × far (2 000 × 1.5 = 3 000)
    screen = 1500
    volume = VOLUME_SCREEN_BAND.high * VOLUME_SCREEN_FAR / screen * 1.1  # 2.2 BCM/in², product 3 300
    check = fit_check("process", "150 lpi", f"{screen} lpi", f"{volume} BCM/in2")
    assert _codes(check) == ["volume_screen_mismatch"]
    assert check.fits is True
    assert "does not rule the roll out" in check.problems[0].message
    # far below: under band low / far (1 500 / 1.5 = 1 000): 300 lpi at 3 BCM/in² gives 900
    low = fit_check("line", None, "300 lpi", "3 BCM/in2")
    assert _codes(low) == ["volume_screen_mismatch"] and low.fits is True


def test_volume_screen_just_outside_the_band_is_not_far():
    # 1 200 lpi × 2 BCM/in² = 2 400: above the 2 000 edge but within 1.5 × of it
    assert fit_check("process", "150 lpi", "1200 lpi", "2 BCM/in2").problems == ()


# --- Geometry for the drawing -----------------------------------------------------------


def test_smallest_dot_at_150_lpi():
    # REFERENCES.md: a 2 % dot at 150 lpi is ≈ 27 µm across.
    # d = (2 / 150 in) × √(0.02 / π) = 338.667 µm × 0.079 788 = 27.02 µm
    assert SMALLEST_DOT == 0.02
    assert round(smallest_dot_diameter("150 lpi").to("um").magnitude) == 27
    assert smallest_dot_diameter("150 lpi").to("um").magnitude == pytest.approx(338.6667 * 0.0797885, rel=1e-5)
    check = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2")
    assert check.smallest_dot_diameter.to("um").magnitude == pytest.approx(27.0217, rel=1e-5)


def test_dot_area_is_the_share_of_its_halftone_cell():
    # independently: a round dot of diameter d covers π d² / 4 of the halftone cell (1/L)²
    for lpi, share in [(85, 0.01), (133, 0.03), (175, 0.5)]:
        d = smallest_dot_diameter(f"{lpi} lpi", share).to("um").magnitude
        cell_side = 25_400 / lpi
        assert math.pi * d**2 / 4 / cell_side**2 == pytest.approx(share, rel=1e-12)


def test_anilox_cell_for_comparison():
    # 1 000 lpi: p = 25 400 / 1 000 = 25.4 µm; opening with the typical wall = 25.4 − 3 = 22.4 µm,
    # smaller than the 27 µm dot; at 600 lpi p = 42.33 µm, o = 39.33 µm: the dot dips in.
    wall = TYPICAL_WALL.to("um").magnitude
    fine = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2")
    assert fine.anilox_pitch.to("um").magnitude == pytest.approx(25.4, rel=1e-12)
    assert fine.anilox_opening.to("um").magnitude == pytest.approx(25.4 - wall, rel=1e-12)
    assert fine.anilox_opening < fine.smallest_dot_diameter
    coarse = fit_check("process", "150 lpi", "600 lpi", "4 BCM/in2")
    assert coarse.anilox_opening > coarse.smallest_dot_diameter
    own_wall = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2", anilox_wall="5 um")
    assert own_wall.anilox_opening.to("um").magnitude == pytest.approx(20.4, rel=1e-12)


def test_steps_record_the_working():
    check = fit_check("process", "150 lpi", "1000 lpi", "1.5 BCM/in2")
    assert [step.symbol for step in check.steps] == ["d", "S_min", "p", "o", "r", "V × S"]
    assert check.steps[4].result == check.ratio


# --- Messages ---------------------------------------------------------------------------


def test_messages_say_why_in_plain_words():
    check = fit_check("process", "150 lpi", "600 lpi", "4 BCM/in2")
    coarse, high = (message for _, message in check.problems)
    assert "dots dip into the cells" in coarse and "dirty print" in coarse and "750 lpi" in coarse
    assert "dot gain" in high and "filling in" in high and "slow drying" in high
    low = fit_check("solid", None, "500 lpi", "3 BCM/in2").problems[0]
    assert low.code == "volume_too_low"
    assert "weak colour" in low.message and "pinholes" in low.message and "mottle" in low.message


def test_messages_answer_in_the_units_typed():
    check = fit_check("process", "59 lpcm", "236 lpcm", "6.2 cm3/m2")
    coarse, high = (message for _, message in check.problems)
    assert "236 l/cm" in coarse and "lpi" not in coarse
    assert "6.2 cm³/m²" in high and "BCM" not in high


# --- Properties ---------------------------------------------------------------------------


@given(
    kind=st.sampled_from(WORK_KINDS),
    plate=st.floats(65, 200),
    screen=st.floats(100, 2000),
    volume=st.floats(0.3, 40),
)
def test_fits_is_false_whenever_a_real_problem_is_listed(kind, plate, screen, volume):
    check = fit_check(kind, f"{plate!r} lpi", f"{screen!r} lpi", f"{volume!r} BCM/in2")
    codes = set(_codes(check))
    assert codes <= UNFIT_CODES | ADVISORY_CODES
    assert check.fits is (not codes & UNFIT_CODES)
    ratio_min = WORK_PRACTICE[kind].screen_ratio_min
    if ratio_min is not None and check.ratio < ratio_min * 0.99:
        assert "screen_too_coarse" in codes
    if ratio_min is None or check.ratio >= ratio_min:
        assert "screen_too_coarse" not in codes


# --- Bad input ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("args", "kwargs", "field", "words"),
    [
        (("process",), {}, "plate_screen", "screen ruling"),
        (("process", None, "1000 lpi", "1.5 BCM/in2"), {}, "plate_screen", "150 lpi"),
        (("halftone", "150 lpi"), {}, "work", "process (halftones), line (line work and type)"),
        ((None, "150 lpi"), {}, "work", "coating (varnish"),
        ((7,), {}, "work", "must be one of"),
        (("process", "150 BCM/in2"), {}, "plate_screen", "line screen"),
        (("process", "1000 lpi"), {}, "plate_screen", "at most 300"),
        (("process", "150"), {}, "plate_screen", "no unit"),
        (("process", "150 lpi", "1000 lpi"), {}, "anilox_volume", "both"),
        (("process", "150 lpi", None, "1.5 BCM/in2"), {}, "anilox_screen", "both"),
        (("process", "150 lpi", "5000 lpi", "1.5 BCM/in2"), {}, "anilox_screen", "at most 2500"),
        (("process", "150 lpi", "1000 um", "1.5 BCM/in2"), {}, "anilox_screen", "line screen"),
        (("process", "150 lpi", "1000 lpi", "0 BCM/in2"), {}, "anilox_volume", "more than 0"),
        (("process", "150 lpi", "1000 lpi", "1.5 BCM"), {}, "anilox_volume", "volume per area"),
        (("process", "150 lpi"), {"screen_ratio_min": 0.5}, "screen_ratio_min", "from 1"),
        (("process", "150 lpi"), {"screen_ratio_min": "5"}, "screen_ratio_min", "number"),
        (("process", "150 lpi"), {"volume_range": ("3 BCM/in2", "2 BCM/in2")}, "volume_range.high", "less than"),
        (("process", "150 lpi"), {"volume_range": ("x", "2 BCM/in2")}, "volume_range.low", "number"),
        (("process", "150 lpi"), {"volume_range": "1-2"}, "volume_range", "a low and a high"),
        (("process", "150 lpi"), {"volume_screen_band": (2000, 1000)}, "volume_screen_band.high", "not less"),
        (("process", "150 lpi"), {"volume_screen_far": 0.5}, "volume_screen_far", "from 1"),
        (("process", "150 lpi"), {"smallest_dot": 2}, "smallest_dot", "fraction"),
        (("process", "150 lpi", "1000 lpi", "1.5 BCM/in2"), {"anilox_wall": "30 um"}, "anilox_wall", "pitch"),
        (("process", "150 lpi", "1000 lpi", "1.5 BCM/in2"), {"anilox_wall": "3 lpi"}, "anilox_wall", "a length"),
    ],
)
def test_bad_input_names_the_field(args, kwargs, field, words):
    with pytest.raises(InputError) as excinfo:
        fit_check(*args, **kwargs)
    assert excinfo.value.field == field
    assert words in excinfo.value.message


def test_unknown_work_lists_the_five_kinds():
    with pytest.raises(InputError) as excinfo:
        fit_check("gloss")
    for kind in WORK_KINDS:
        assert kind in excinfo.value.message
