"""Anilox wear model: the wear line, plugging, the forecast and the flags.

The line is checked against Python's own least squares
(``statistics.linear_regression``, an implementation outside this project);
its slope's standard error against the textbook formula written another way
(NIST/SEMATECH e-Handbook of Statistical Methods §4.1.4.1:
se(b)² = (Syy − b² Sxx) / ((n − 2) Sxx)). Thresholds are common practice,
read from ``calc.practice``, never repeated here.
"""

from __future__ import annotations

import math
import statistics
from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from calc import InputError
from calc.practice import WEAR_AUDIT_DAYS, WEAR_CLEAN_BELOW, WEAR_CLEAN_PLUGGING, WEAR_REPLACE_AT
from calc.units import Q_
from calc.wear import DAYS_PER_YEAR, NOT_ENOUGH, Reading, least_squares, wear_picture

ENGRAVED = date(2021, 1, 1)


def on(days: float) -> date:
    return ENGRAVED + timedelta(days=round(days))


def falling_series(years=(1, 2), rate=0.2, start=4.0):
    """After-cleaning readings exactly on a line falling ``rate`` BCM/in² a year (days counted exactly)."""
    readings = []
    for year in years:
        day = on(year * DAYS_PER_YEAR)
        volume = start - rate * (day - ENGRAVED).days / DAYS_PER_YEAR
        readings.append((day, f"{volume!r} BCM/in2", "after_cleaning"))
    return readings


def test_known_slope_and_the_85_percent_threshold_three_years_after_engraving():
    # Start 4.0 BCM/in², after-cleaning readings falling 0.2 BCM/in² a year:
    # slope −0.2; 85 % of 4.0 is 3.4 = 4.0 − 0.2 × 3, reached three years after engraving.
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, falling_series(), today=on(2 * DAYS_PER_YEAR + 10))
    assert picture.slope_per_year.to("BCM/in2").magnitude == pytest.approx(-0.2, abs=1e-12)
    assert picture.slope_stderr.magnitude == pytest.approx(0.0, abs=1e-12)
    assert picture.threshold.magnitude == pytest.approx(3.4)
    assert WEAR_REPLACE_AT == 0.85
    # 3 years = 1095.75 days; the forecast is the day the line has reached 3.4.
    assert abs((picture.replace_by - date(2024, 1, 1)).days) <= 1
    assert picture.codes == []
    assert picture.line_points == 3


def test_after_the_forecast_date_the_roll_is_due_for_replacement():
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, falling_series((1, 2, 3.1)), today=on(3.1 * DAYS_PER_YEAR + 5))
    assert "replace" in picture.codes
    assert picture.urgency == 0


@pytest.mark.parametrize(
    "series",
    [
        [(0.3, 1.52), (0.9, 1.49), (1.4, 1.47), (2.2, 1.40), (2.6, 1.41)],
        [(0.5, 7.9), (1.0, 7.5), (1.25, 7.6), (3.0, 6.8)],
        [(0.1, 3.02), (0.2, 3.05)],
    ],
)
def test_line_matches_pythons_linear_regression(series):
    start = series[0][1] + 0.05
    readings = [(on(x * DAYS_PER_YEAR), f"{v} BCM/in2", "after_cleaning") for x, v in series]
    picture = wear_picture(f"{start} BCM/in2", ENGRAVED, readings, today=on(4 * DAYS_PER_YEAR))
    xs = [0.0] + [(day - ENGRAVED).days / DAYS_PER_YEAR for day, _, _ in readings]
    ys = [start] + [v for _, v in series]
    reference = statistics.linear_regression(xs, ys)
    assert picture.line.slope == pytest.approx(reference.slope, rel=1e-9, abs=1e-12)
    assert picture.line.intercept == pytest.approx(reference.intercept, rel=1e-9)
    # The slope's standard error, written as (Syy − b² Sxx) / ((n − 2) Sxx).
    n = len(xs)
    mx, my = statistics.fmean(xs), statistics.fmean(ys)
    sxx = sum((x - mx) ** 2 for x in xs)
    syy = sum((y - my) ** 2 for y in ys)
    expected = math.sqrt(max(0.0, syy - reference.slope**2 * sxx) / ((n - 2) * sxx))
    assert picture.slope_stderr.magnitude == pytest.approx(expected, rel=1e-6, abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(1, 3000), st.floats(0.5, 12.0)),
        min_size=2,
        max_size=12,
        unique_by=lambda p: p[0],
    )
)
def test_least_squares_agrees_with_the_standard_library(points):
    data = [(0.0, 5.0)] + [(days / DAYS_PER_YEAR, v) for days, v in points]
    slope, intercept, stderr = least_squares(data)
    reference = statistics.linear_regression([x for x, _ in data], [y for _, y in data])
    assert slope == pytest.approx(reference.slope, rel=1e-7, abs=1e-9)
    assert intercept == pytest.approx(reference.intercept, rel=1e-7, abs=1e-9)
    assert stderr >= 0


def test_one_measurement_only_gives_a_line_but_not_how_sure_it_is():
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, [(on(365), "3.9 BCM/in2", "after_cleaning")], today=on(380))
    assert picture.line_points == 2
    assert picture.slope_per_year.magnitude == pytest.approx(-0.1 * DAYS_PER_YEAR / 365)
    assert picture.slope_stderr is None
    assert picture.certainty == NOT_ENOUGH
    assert picture.percent_of_nominal == pytest.approx(97.5)


def test_as_found_only_gives_no_line_and_no_forecast():
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, [(on(200), "3.8 BCM/in2", "as_found")], today=on(210))
    assert picture.line is None and picture.slope_per_year is None
    assert picture.plugging is None and picture.replace_by is None
    assert picture.certainty == NOT_ENOUGH
    assert picture.codes == []


def test_never_measured_asks_for_a_measurement():
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, [], today=on(10))
    assert picture.codes == ["measure"]
    assert picture.percent_of_nominal is None and picture.latest is None


def test_a_rising_series_has_no_forecast():
    readings = [(on(100), "4.1 BCM/in2", "after_cleaning"), (on(300), "4.2 BCM/in2", "after_cleaning")]
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, readings, today=on(310))
    assert picture.slope_per_year.magnitude > 0
    assert picture.replace_by is None
    assert "replace" not in picture.codes


def test_out_of_order_dates_give_the_same_picture_as_in_order():
    readings = [
        (on(400), "3.7 BCM/in2", "after_cleaning"),
        (on(100), "3.95 BCM/in2", "after_cleaning"),
        (on(500), "3.2 BCM/in2", "as_found"),
        (on(250), "3.85 BCM/in2", "after_cleaning"),
    ]
    shuffled = wear_picture("4.0 BCM/in2", ENGRAVED, readings, today=on(510))
    ordered = wear_picture("4.0 BCM/in2", ENGRAVED, sorted(readings), today=on(510))
    assert shuffled == ordered
    assert shuffled.latest.on == on(500)
    assert [r.on for r in shuffled.readings] == sorted(r.on for r in shuffled.readings)


def test_a_plugged_reading_then_a_deep_clean():
    history = falling_series((0.5, 1.0))
    # As found 3.2 where the line says ≈ 3.75: ≈ 15 % plugged → clean.
    plugged = [*history, (on(1.25 * DAYS_PER_YEAR), "3.2 BCM/in2", "as_found")]
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, plugged, today=on(1.25 * DAYS_PER_YEAR + 1))
    expected_line = 4.0 - 0.2 * (on(1.25 * DAYS_PER_YEAR) - ENGRAVED).days / DAYS_PER_YEAR
    assert picture.plugging == pytest.approx((expected_line - 3.2) / expected_line)
    assert picture.plugging >= WEAR_CLEAN_PLUGGING
    assert picture.codes == ["clean"]
    # The as-found reading is not part of the wear line: the slope stays −0.2.
    assert picture.slope_per_year.magnitude == pytest.approx(-0.2, abs=1e-12)

    # Cleaned (logged), not yet measured: measure it again.
    cleaned_on = on(1.25 * DAYS_PER_YEAR + 2)
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, plugged, cleanings=[cleaned_on], today=on(1.25 * DAYS_PER_YEAR + 2))
    assert picture.codes == ["measure"]

    # Measured after the deep clean: back on the line, fine again.
    recovered = [*plugged, (on(1.25 * DAYS_PER_YEAR + 3), "3.74 BCM/in2", "after_cleaning")]
    picture = wear_picture(
        "4.0 BCM/in2", ENGRAVED, recovered, cleanings=[cleaned_on], today=on(1.25 * DAYS_PER_YEAR + 4)
    )
    assert picture.codes == []
    assert picture.slope_per_year.magnitude == pytest.approx(-0.2, abs=0.01)


def test_clean_when_under_90_percent_of_nominal_without_a_line():
    volume = 4.0 * WEAR_CLEAN_BELOW - 0.01
    # Measured 200 days after engraving, so not a new roll's first check (no off_spec).
    picture = wear_picture("4.0 BCM/in2", ENGRAVED, [(on(200), f"{volume} BCM/in2", "as_found")], today=on(201))
    assert picture.codes == ["clean"]


def test_measure_after_the_audit_interval():
    readings = [(on(10), "4.0 BCM/in2", "after_cleaning")]
    assert wear_picture("4 BCM/in2", ENGRAVED, readings, today=on(10 + WEAR_AUDIT_DAYS)).codes == []
    assert wear_picture("4 BCM/in2", ENGRAVED, readings, today=on(11 + WEAR_AUDIT_DAYS)).codes == ["measure"]


def test_new_roll_off_spec_against_its_certificate():
    # Certificate 4.2; first reading 3.7 is 11.9 % under it: off spec (± 10 %, common practice).
    picture = wear_picture(
        "4.0 BCM/in2",
        ENGRAVED,
        [(on(3), "3.7 BCM/in2", "after_cleaning")],
        certificate_volume="4.2 BCM/in2",
        today=on(4),
    )
    assert "off_spec" in picture.codes
    assert picture.start_from == "certificate"
    assert picture.start_volume.magnitude == pytest.approx(4.2)
    within = wear_picture(
        "4.0 BCM/in2",
        ENGRAVED,
        [(on(3), "3.8 BCM/in2", "after_cleaning")],
        certificate_volume="4.2 BCM/in2",
        today=on(4),
    )
    assert "off_spec" not in within.codes


def test_urgency_orders_replace_before_clean_before_measure():
    worn = wear_picture("4 BCM/in2", ENGRAVED, [(on(700), "3.3 BCM/in2", "after_cleaning")], today=on(705))
    plugged = wear_picture("4 BCM/in2", ENGRAVED, [(on(700), "3.5 BCM/in2", "as_found")], today=on(705))
    stale = wear_picture("4 BCM/in2", ENGRAVED, [(on(100), "4.0 BCM/in2", "as_found")], today=on(705))
    fine = wear_picture("4 BCM/in2", ENGRAVED, [(on(700), "3.9 BCM/in2", "after_cleaning")], today=on(705))
    assert [p.urgency for p in (worn, plugged, stale, fine)] == [0, 2, 3, 4]


def test_metric_volumes_are_read_and_answered_in_bcm():
    # 1 BCM/in² = 1.5500031 cm³/m² (exact from the inch, NIST SP 811).
    picture = wear_picture("6.2000124 cm3/m2", ENGRAVED, [(on(10), "4 BCM/in2", "after_cleaning")], today=on(11))
    assert picture.nominal.magnitude == pytest.approx(4.0, rel=1e-7)
    assert picture.percent_of_nominal == pytest.approx(100.0, rel=1e-6)


def test_messages_state_volumes_in_the_unit_asked_for_and_the_numbers_stay_in_bcm():
    # 1 BCM/in² = 1.5500031 cm³/m² (exact from the inch, NIST SP 811): 3.3 BCM/in² read 5.12 cm³/m².
    readings = falling_series() + [(on(2 * DAYS_PER_YEAR + 5), "3.3 BCM/in2", "as_found")]
    args = ("4.0 BCM/in2", ENGRAVED, readings)
    bcm = wear_picture(*args, today=on(2 * DAYS_PER_YEAR + 10))
    metric = wear_picture(*args, today=on(2 * DAYS_PER_YEAR + 10), message_unit="cm3/m2")
    assert [f.code for f in metric.flags] == [f.code for f in bcm.flags] == ["clean"]
    assert "3.3 BCM/in²" in bcm.flags[0].message
    assert "5.12 cm³/m²" in metric.flags[0].message and "BCM" not in metric.flags[0].message
    assert "cm³/m² per year" in metric.certainty
    assert metric.slope_per_year == bcm.slope_per_year and metric.plugging == bcm.plugging
    with pytest.raises(InputError) as caught:
        wear_picture(*args, message_unit="ml")
    assert caught.value.field == "message_unit"


def test_a_stored_reading_out_of_range_still_gets_the_full_check():
    for volume in (Q_(0.0, "BCM/in2"), Q_(101.0, "BCM/in2"), Q_(float("nan"), "BCM/in2")):
        with pytest.raises(InputError) as caught:
            wear_picture("4 BCM/in2", ENGRAVED, [(on(5), volume, "as_found")], today=on(6))
        assert caught.value.field == "measurements[0].volume"


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"measurements": [(date(2020, 5, 1), "4 BCM/in2", "as_found")]}, "measurements[0].measured_on"),
        ({"measurements": [(date(2030, 5, 1), "4 BCM/in2", "as_found")]}, "measurements[0].measured_on"),
        ({"measurements": [("01/05/2021", "4 BCM/in2", "as_found")]}, "measurements[0].measured_on"),
        ({"measurements": [(on(5), "4 lpi", "as_found")]}, "measurements[0].volume"),
        ({"measurements": [(on(5), "4 BCM/in2", "dirty")]}, "measurements[0].condition"),
        ({"certificate_volume": "4 g"}, "certificate_volume"),
        ({"engraved_on": "2029-01-01"}, "engraved_on"),
    ],
)
def test_bad_input_names_the_field(kwargs, field):
    args = {"engraved_on": ENGRAVED, "today": date(2025, 1, 1), **kwargs}
    with pytest.raises(InputError) as caught:
        wear_picture(Q_(4.0, "BCM/in2"), **args)
    assert caught.value.field == field


def test_readings_may_be_given_as_reading_objects_or_dicts():
    a = wear_picture("4 BCM/in2", ENGRAVED, [Reading(on(9), Q_(3.9, "BCM/in2"), "after_cleaning")], today=on(10))
    b = wear_picture(
        "4 BCM/in2",
        ENGRAVED,
        [{"measured_on": on(9).isoformat(), "volume": "3.9 BCM/in2", "condition": "after cleaning"}],
        today=on(10),
    )
    assert a == b


def test_a_cleaning_on_the_day_of_an_after_cleaning_reading_is_the_one_it_followed():
    readings = [(on(100), "3.9 BCM/in2", "as_found"), (on(100), "3.98 BCM/in2", "after_cleaning")]
    picture = wear_picture("4 BCM/in2", ENGRAVED, readings, cleanings=[on(100)], today=on(101))
    assert picture.codes == []
