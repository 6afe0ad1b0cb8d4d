"""Job ink estimates as estimators and the ink room work them (calc.estimate.job_ink)."""

from __future__ import annotations

import math
from dataclasses import replace

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from calc import InputError
from calc.estimate import Station, job_ink
from calc.units import Q_

# --- The previous release's answers are a contract ------------------------------------
#
# Regression pin, not an outside source: the arithmetic of job_ink before labels,
# make-ready, fill and ink on hand were added, in the order it was done then, so
# that an old-style input must give the very same floats (== , not approx).


def _previous_release(width_mm, length_m, waste, station):
    volume, transfer, coverage, density, price = station
    area_m2 = Q_(width_mm, "mm").to("m").magnitude * length_m
    t2_um = Q_(volume, "cm3/m2").to("cm3/m2").magnitude * transfer
    litres = t2_um * area_m2 * coverage * (1.0 + waste) / 1000.0
    kg = litres * Q_(density, "g/cm3").to("kg/l").magnitude
    return area_m2, t2_um, litres, kg, None if price is None else kg * price


old_stations = st.tuples(
    st.floats(0.5, 60.0),  # anilox volume [cm³/m²]
    st.floats(0.0, 1.0),  # transfer
    st.floats(0.0, 1.0),  # coverage
    st.floats(0.3, 5.0),  # density [g/cm³]
    st.none() | st.floats(0.0, 500.0),  # price per kg
)


@settings(max_examples=60, deadline=None)
@given(
    width_mm=st.floats(1.0, 10_000.0),
    length_m=st.floats(1.0, 1_000_000.0),
    waste=st.floats(0.0, 1.0),
    stations=st.lists(old_stations, min_size=1, max_size=4),
)
def test_old_style_input_gives_the_previous_answers(width_mm, length_m, waste, stations):
    job = job_ink(
        Q_(width_mm, "mm"),
        [Station(f"S{i}", Q_(s[0], "cm3/m2"), s[2], s[1], Q_(s[3], "g/cm3"), s[4]) for i, s in enumerate(stations)],
        run_length=Q_(length_m, "m"),
        waste=waste,
    )
    expected = [_previous_release(width_mm, length_m, waste, s) for s in stations]
    assert job.printed_area.to("m2").magnitude == expected[0][0]
    assert job.run_length.magnitude == length_m
    assert job.waste == waste
    for got, (_, t2_um, litres, kg, cost) in zip(job.stations, expected, strict=True):
        assert got.substrate_wet.magnitude == t2_um
        assert got.ink_volume.magnitude == litres
        assert got.ink_mass.magnitude == kg
        assert got.cost == cost
    assert job.total_ink_mass.magnitude == math.fsum(e[3] for e in expected)
    assert job.total_ink_volume.magnitude == math.fsum(e[2] for e in expected)
    costs = [e[4] for e in expected]
    assert job.total_cost == (None if None in costs else math.fsum(costs))


# --- Worked by hand: a metric labels job ----------------------------------------------
#
# 10 000 labels, 3 across × 2 around (6 a turn) on a 300 mm repeat, web 330 mm,
# 5 % waste, 50 m make-ready.
#   n   = ⌈10 000 / 6⌉ = ⌈1666.67⌉ = 1667 whole impressions (N = 1667 × 6 = 10 002 labels)
#   L   = 1667 × 0.300 m = 500.1 m
#   L_p = 500.1 m × 1.05 + 50 m = 525.105 + 50 = 575.105 m
# Cyan: 4 cm³/m², transfer 25 % → t₂ = 1 µm; coverage 40 %; 1.0 g/cm³; 20 a kg; fill 1.5 l.
#   V   = 1 µm × 0.33 m × 575.105 m × 0.40 = 75.913 86 cm³ = 0.075 913 86 l → m = 0.075 913 86 kg
#   pull = 0.075 913 86 + 1.5 l × 1.0 kg/l = 1.575 913 86 kg
#   per 1 000 impressions: 75.913 86 g / 1.667 = 45.539 2 g; per 1 000 labels: 75.913 86 g / 10.002 = 7.589 87 g
#   cost 0.075 913 86 × 20 = 1.518 277 2; per 1 000 labels 1.518 277 2 / 10.002 = 0.151 797;
#   per 1 000 impressions 1.518 277 2 / 1.667 = 0.910 784
#   mileage 1 / (1 µm × 1 g/cm³) = 1 / (1 g/m²) = 1000 m²/kg
# Black text: 1.5 cm³/m², transfer 30 %, inked area 9 cm² a label, 1.05 g/cm³, no price:
#   c   = 9 cm² × 6 / (33 cm × 30 cm) = 54 / 990 = 0.054 545 45
#   t₂  = 0.45 µm; V = 0.45 µm × 0.33 m × 575.105 m × 0.054 545 45 = 4.658 35 cm³ → m = 4.891 27 g
def labels_job(cyan_on_hand=None):
    cyan = Station("Cyan", "4 cm3/m2", 0.40, 0.25, "1.0 g/cm3", 20.0, fill="1.5 l", on_hand=cyan_on_hand)
    black = Station("Black text", "1.5 cm3/m2", None, 0.30, "1.05 g/cm3", inked_area_per_label="9 cm2")
    return job_ink(
        "330 mm", [cyan, black], labels=10_000, across=3, around=2, repeat="300 mm", waste=0.05, makeready="50 m"
    )


def test_metric_labels_job_by_hand():
    job = labels_job()
    assert job.impressions == 1667
    assert job.labels == 10_002
    assert job.run_length.to("m").magnitude == pytest.approx(500.1, rel=1e-12)
    assert job.printed_length.to("m").magnitude == pytest.approx(575.105, rel=1e-12)
    cyan, black = job.stations
    assert cyan.ink_volume.to("l").magnitude == pytest.approx(0.07591386, rel=1e-9)
    assert cyan.ink_mass.to("kg").magnitude == pytest.approx(0.07591386, rel=1e-9)
    assert cyan.fill_mass.to("kg").magnitude == pytest.approx(1.5, rel=1e-12)
    assert cyan.pull_mass.to("kg").magnitude == pytest.approx(1.57591386, rel=1e-9)
    assert cyan.ink_per_1000_impressions.to("g").magnitude == pytest.approx(45.5392, rel=1e-5)
    assert cyan.ink_per_1000_labels.to("g").magnitude == pytest.approx(7.58987, rel=1e-5)
    assert cyan.cost == pytest.approx(1.5182772, rel=1e-9)
    assert cyan.cost_per_1000_labels == pytest.approx(0.151797, rel=1e-5)
    assert cyan.cost_per_1000_impressions == pytest.approx(0.910784, rel=1e-5)
    assert cyan.mileage.to("m2/kg").magnitude == pytest.approx(1000.0, rel=1e-9)
    assert cyan.on_hand_prints is None and cyan.enough is None and cyan.short_by is None
    assert black.coverage == pytest.approx(54 / 990, rel=1e-12)
    assert black.ink_mass.to("g").magnitude == pytest.approx(4.89127, rel=1e-5)
    assert black.pull_mass == black.ink_mass  # no fill given
    assert black.cost is None and black.cost_per_1000_labels is None
    # one station without a price: no job cost, no job cost per 1 000
    assert job.total_cost is None and job.cost_per_1000_labels is None and job.cost_per_1000_impressions is None
    assert job.total_pull_mass.to("kg").magnitude == pytest.approx(1.57591386 + 0.00489127, rel=1e-6)


def test_metric_labels_job_ink_on_hand_short_and_enough():
    # 1 kg of cyan on hand does not even fill the 1.5 kg system: short by 1.575 913 86 − 1 = 0.575 913 86 kg,
    # and it prints nothing.
    short = labels_job(cyan_on_hand="1 kg").stations[0]
    assert short.enough is False
    assert short.short_by.to("kg").magnitude == pytest.approx(0.57591386, rel=1e-9)
    assert short.on_hand_prints.run_length.magnitude == 0.0
    assert (short.on_hand_prints.impressions, short.on_hand_prints.labels) == (0, 0)
    # 2 l at 1.0 g/cm³ = 2 kg: enough. Ink per metre of web t₂ × W × c × ρ = 1e-6 m × 0.33 m × 0.4 × 1000 kg/m³
    # = 1.32e-4 kg/m; L_good = ((2 − 1.5) / 1.32e-4 − 50) / 1.05 = (3787.879 − 50) / 1.05 = 3559.885 m
    # = 11 866.28 repeats of 0.3 m → 11 866 whole impressions, × 6 = 71 196 labels.
    enough = labels_job(cyan_on_hand="2 l").stations[0]
    assert enough.enough is True
    assert enough.short_by.magnitude == 0.0
    assert enough.on_hand_mass.to("kg").magnitude == pytest.approx(2.0, rel=1e-12)
    assert enough.on_hand_prints.run_length.to("m").magnitude == pytest.approx(3559.885, rel=1e-6)
    assert enough.on_hand_prints.impressions == 11_866
    assert enough.on_hand_prints.labels == 71_196


# --- Worked by hand: an imperial job with white, varnish and a spot colour ---------------
#
# 20 000 impressions of a 12 in repeat, 4 across × 3 around (240 000 labels), web 13 in,
# 10 % waste, 500 ft make-ready (6000 in). 1 US gal = 231 in³; 1 in³ = 16 387.064 mm³ (= BCM).
#   L = 240 000 in = 20 000 ft; L_p = 20 000 ft × 1.1 + 500 ft = 22 500 ft = 270 000 in
#   web printed: 13 in × 270 000 in = 3 510 000 in²
# White: 6 BCM/in², transfer 40 % → t₂ = 2.4 BCM/in²; inked area 11.7 in² a label
#   c = 11.7 × 12 / (13 × 12) = 140.4 / 156 = 0.90
#   V = 2.4 × 3 510 000 × 0.9 = 7 581 600 BCM = 7.5816 l = 7 581 600 / (231 × 16 387.064) = 2.002 847 gal
#   m = 2.002 847 gal × 11 lb/gal = 22.031 32 lb; fill 1 gal × 11 lb/gal = 11 lb → pull 33.031 32 lb
#   cost 22.031 32 × 4.50 = 99.1409; mileage 1 / (2.4 BCM/in² × 11 lb/gal) = 231 × 16 387.064 / 26.4
#   = 143 386.8 in²/lb; per 1 000 labels 22.031 32 / 240 = 0.091 797 lb
#   on hand 2 gal = 22 lb: short by 33.031 32 − 22 = 11.031 32 lb; it prints
#   ((22 − 11) lb / (2.4 × 13 × 0.9 × 11 / 3 785 411.784 lb/in) − 6000 in) / 1.1 = 117 098.3 in
#   = 9758.19 repeats → 9758 impressions, 117 096 labels
# Varnish: 4 BCM/in², transfer 50 % → t₂ = 2 BCM/in², coverage 100 %, 8.5 lb/gal, 3.00 a lb, fill 2 lb
#   V = 2 × 3 510 000 = 7 020 000 BCM = 7.02 l = 1.854 488 gal → m = 15.763 15 lb; pull 17.763 15 lb
#   on hand 20 lb: enough; prints ((20 − 2) / (2 × 13 × 8.5 / 3 785 411.784) − 6000) / 1.1 = 274 831.0 in
#   = 22 902.58 repeats → 22 902 impressions, 274 824 labels
# Blue spot: 3 BCM/in² × 30 % = 0.9 BCM/in², coverage 25 %, 9 lb/gal, 6.00 a lb
#   V = 0.9 × 3 510 000 × 0.25 = 789 750 BCM = 0.789 75 l → 0.208 630 gal → m = 1.877 669 lb
# Totals: volume 7.5816 + 7.02 + 0.78975 = 15.391 35 l; pull 33.031 32 + 17.763 15 + 1.877 67 = 52.672 13 lb;
#   cost 99.140 92 + 47.289 44 + 11.266 01 = 157.696 37 → per 1 000 labels 0.657 068, per 1 000 impressions 7.884 82
LB = "lb"


def imperial_job():
    white = Station(
        "White", "6 BCM/in2", None, 0.40, "11 lb/gal", price_per_lb=4.5, fill="1 gal", on_hand="2 gal",
        inked_area_per_label="11.7 in2",
    )  # fmt: skip
    varnish = Station("Varnish", "4 BCM/in2", 1.0, 0.50, "8.5 lb/gal", price_per_lb=3.0, fill="2 lb", on_hand="20 lb")
    spot = Station("Blue spot", "3 BCM/in2", 0.25, 0.30, "9 lb/gal", price_per_lb=6.0)
    return job_ink(
        "13 in", [white, varnish, spot], impressions=20_000, repeat="12 in", across=4, around=3, waste=0.10,
        makeready="500 ft",
    )  # fmt: skip


def test_imperial_white_varnish_spot_by_hand():
    job = imperial_job()
    assert job.printed_length.to("ft").magnitude == pytest.approx(22_500.0, rel=1e-12)
    assert (job.impressions, job.labels) == (20_000, 240_000)
    white, varnish, spot = job.stations
    assert white.coverage == pytest.approx(0.90, rel=1e-12)
    assert white.ink_volume.to("l").magnitude == pytest.approx(7.5816, rel=1e-9)
    assert white.ink_mass.to(LB).magnitude == pytest.approx(22.03132, rel=1e-6)
    assert white.fill_mass.to(LB).magnitude == pytest.approx(11.0, rel=1e-12)
    assert white.pull_mass.to(LB).magnitude == pytest.approx(33.03132, rel=1e-6)
    assert white.cost == pytest.approx(99.1409, rel=1e-6)
    assert white.mileage.to("in2/lb").magnitude == pytest.approx(143_386.8, rel=1e-6)
    assert white.ink_per_1000_labels.to(LB).magnitude == pytest.approx(0.091797, rel=1e-5)
    assert white.enough is False
    assert white.short_by.to(LB).magnitude == pytest.approx(11.03132, rel=1e-6)
    assert white.on_hand_prints.run_length.to("in").magnitude == pytest.approx(117_098.3, rel=1e-6)
    assert (white.on_hand_prints.impressions, white.on_hand_prints.labels) == (9758, 117_096)

    assert varnish.ink_mass.to(LB).magnitude == pytest.approx(15.76315, rel=1e-6)
    assert varnish.pull_mass.to(LB).magnitude == pytest.approx(17.76315, rel=1e-6)
    assert varnish.enough is True and varnish.short_by.magnitude == 0.0
    assert varnish.on_hand_prints.run_length.to("in").magnitude == pytest.approx(274_831.0, rel=1e-6)
    assert (varnish.on_hand_prints.impressions, varnish.on_hand_prints.labels) == (22_902, 274_824)

    assert spot.ink_mass.to(LB).magnitude == pytest.approx(1.877669, rel=1e-6)
    assert spot.on_hand_prints is None and spot.enough is None

    assert job.total_ink_volume.to("l").magnitude == pytest.approx(15.39135, rel=1e-9)
    assert job.total_pull_mass.to(LB).magnitude == pytest.approx(52.67213, rel=1e-6)
    assert job.total_cost == pytest.approx(157.69637, rel=1e-7)
    assert job.cost_per_1000_labels == pytest.approx(0.657068, rel=1e-5)
    assert job.cost_per_1000_impressions == pytest.approx(7.88482, rel=1e-5)


def test_price_per_lb_is_the_price_per_kg_over_0_453_592_37():
    # NIST SP 811, Appendix B: 1 lb = 0.453 592 37 kg exactly, so 4.50 a lb is 4.5 / 0.453 592 37
    # = 9.920 802 a kg, and the cost is the same reckoned in kg or in lb.
    white = imperial_job().stations[0]
    assert round(white.price_per_kg, 6) == 9.920802
    assert white.cost == pytest.approx(white.ink_mass.to("kg").magnitude * 9.920802, rel=1e-7)


# --- Outside worked example --------------------------------------------------------------
#
# An ink maker's technical note on estimating ink coverage (REFERENCES.md, "Worked examples from
# outside"): 5 BCM/in² on a non-porous coated stock, table mileage 180,000 in²/lb; 1,000,000 in² of
# coverage ÷ 180,000 in²/lb = "5.5 lbs" (5.56 written short), plus 3 lb for the pan and 0.5 lb for
# set-up: "about 9 lbs".
# The transfer share that table implies at the note's "usually 9 lbs" per US gallon:
#   t₂ = 1 / (M × ρ) = 1 / (180 000 in²/lb × 9 lb/gal) = 231 in³ / 1 620 000 in² = 1.425 93e-4 in = 3.6219 µm
#   V_a = 5 BCM/in² = 5 × 1.550 003 1 µm = 7.7500 µm  →  T = 3.6219 / 7.7500 = 0.467 (46.7 %),
# inside the 45–60 % REFERENCES.md gives, and well above the 25 % rule of thumb.
# The job: 10 in web × 100 000 in good run × 100 % coverage = 1 000 000 in²; set-up as make-ready web:
# 0.5 lb × 180 000 in²/lb / 10 in = 9000 in; the pan as the system fill, 3 lb.
def test_ink_makers_worked_example_pull_quantity():
    mileage = Q_(180_000, "in2/lb")
    density = Q_(9, "lb/gal")
    transfer = (1 / (mileage * density) / Q_(5, "BCM/in2")).to("").magnitude
    assert round(transfer, 3) == 0.467
    job = job_ink(
        "10 in",
        [Station("Spot", "5 BCM/in2", 1.0, transfer, "9 lb/gal", fill="3 lb")],
        run_length="100000 in",
        makeready="9000 in",
    )
    station = job.stations[0]
    assert round(station.mileage.to("in2/lb").magnitude, -3) == 180_000  # the table's figure
    good_run_ink = (station.ink_mass - Q_(0.5, "lb")).to("lb").magnitude
    assert 5.5 <= good_run_ink < 5.6  # "5.5 lbs" (1 000 000 / 180 000 = 5.56)
    assert round(station.pull_mass.to("lb").magnitude) == 9  # "about 9 lbs"
    assert station.pull_mass.to("lb").magnitude == pytest.approx(1_000_000 / 180_000 + 3.5, rel=1e-9)


# --- Properties ------------------------------------------------------------------------------

forward_jobs = st.fixed_dictionaries(
    {
        "width_mm": st.floats(50.0, 2000.0),
        "impressions": st.integers(1, 2_000_000),
        "repeat_mm": st.floats(100.0, 1000.0),
        "waste": st.floats(0.0, 0.5),
        # 0, or a real length: the core refuses magnitudes below 1e-15 as typing slips
        "makeready_m": st.one_of(st.just(0.0), st.floats(0.001, 2000.0)),
        "volume": st.floats(0.5, 20.0),
        "transfer": st.floats(0.05, 0.8),
        "coverage": st.floats(0.01, 1.0),
        "density": st.floats(0.8, 1.6),
        "fill_l": st.one_of(st.just(0.0), st.floats(0.001, 20.0)),
        "across": st.integers(1, 20),
        "around": st.integers(1, 20),
    }
)


def _job(p, on_hand=None, **run):
    station = Station(
        "S", Q_(p["volume"], "cm3/m2"), p["coverage"], p["transfer"], Q_(p["density"], "g/cm3"),
        fill=Q_(p["fill_l"], "l"), on_hand=on_hand,
    )  # fmt: skip
    run = run or {"impressions": p["impressions"]}
    return job_ink(
        Q_(p["width_mm"], "mm"), [station], repeat=Q_(p["repeat_mm"], "mm"), waste=p["waste"],
        makeready=Q_(p["makeready_m"], "m"), across=p["across"], around=p["around"], **run,
    )  # fmt: skip


@settings(max_examples=80, deadline=None)
@given(p=forward_jobs)
def test_forward_then_reverse_gives_back_the_run(p):
    forward = _job(p).stations[0]
    back = _job(p, on_hand=forward.pull_mass).stations[0]
    assert back.enough is True
    assert abs(back.on_hand_prints.impressions - p["impressions"]) <= 1
    # within one impression also as a length (a large fill over a thin film loses digits in m_oh − m_fill)
    length_m = p["impressions"] * p["repeat_mm"] / 1000.0
    assert abs(back.on_hand_prints.run_length.to("m").magnitude - length_m) <= p["repeat_mm"] / 1000.0


@settings(max_examples=60, deadline=None)
@given(p=forward_jobs, labels=st.integers(1, 5_000_000))
def test_forward_then_reverse_for_a_labels_job(p, labels):
    job = _job(p, labels=labels)
    back = _job(p, on_hand=job.stations[0].pull_mass, labels=labels).stations[0]
    per_impression = p["across"] * p["around"]
    assert job.labels >= labels > job.labels - per_impression  # whole impressions, rounded up
    assert abs(back.on_hand_prints.labels - job.labels) <= per_impression


@settings(max_examples=80, deadline=None)
@given(
    p=forward_jobs,
    a=st.one_of(st.just(0.0), st.floats(0.001, 500.0)),
    b=st.one_of(st.just(0.0), st.floats(0.001, 500.0)),
)
def test_more_ink_on_hand_never_prints_fewer_labels(p, a, b):
    less, more = sorted((a, b))
    with_less = _job(p, on_hand=Q_(less, "kg")).stations[0].on_hand_prints
    with_more = _job(p, on_hand=Q_(more, "kg")).stations[0].on_hand_prints
    assert with_less.labels <= with_more.labels
    assert with_less.impressions <= with_more.impressions
    assert with_less.run_length.magnitude <= with_more.run_length.magnitude


# --- Bad input, each with its field -------------------------------------------------------

CYAN = Station("Cyan", "4 cm3/m2", 0.4, 0.25, "1.0 g/cm3", 20.0)
LABELS = {"labels": 10_000, "across": 3, "around": 2, "repeat": "300 mm"}


def _with(**changes):
    return replace(CYAN, **changes)


@pytest.mark.parametrize(
    ("kwargs", "field", "words"),
    [
        ({**LABELS, "labels": 0}, "labels", "whole number"),
        ({**LABELS, "labels": 10.5}, "labels", "whole number"),
        ({**LABELS, "labels": True}, "labels", "whole number"),
        ({**LABELS, "labels": "10000"}, "labels", "whole number"),
        ({**LABELS, "labels": 1e12, "across": 1, "around": 1}, "labels", "impressions"),
        ({**LABELS, "run_length": "1000 m", "repeat": None}, "labels", "only one"),
        ({**LABELS, "impressions": 100}, "labels", "only one"),
        ({**LABELS, "repeat": None}, "repeat", "repeat"),
        ({**LABELS, "across": None}, "across", "across"),
        ({**LABELS, "around": None}, "around", "around"),
        ({**LABELS, "across": 0}, "across", "whole number"),
        ({**LABELS, "around": 2.5}, "around", "whole number"),
        ({**LABELS, "across": 5000}, "across", "1,000"),
        ({"run_length": "1000 m", "across": 3, "around": 2}, "across", "repeat"),
        ({"impressions": 100, "repeat": "12 in", "across": 3}, "around", "around"),
        ({"impressions": 100, "repeat": "12 in", "around": 3}, "across", "across"),
        ({**LABELS, "makeready": "-5 m"}, "makeready", "negative"),
        ({**LABELS, "makeready": "5 kg"}, "makeready", "length"),
        ({**LABELS, "makeready": "500 km"}, "makeready", "make-ready"),
        ({**LABELS, "makeready": 50}, "makeready", "text"),
        ({**LABELS, "stations": [CYAN, _with(fill="2 m")]}, "stations[1].fill", "volume or a mass"),
        ({**LABELS, "stations": [_with(fill="2000 l")]}, "stations[0].fill", "system fill"),
        ({**LABELS, "stations": [_with(fill="2 l"), CYAN, _with(on_hand="3 m2")]}, "stations[2].on_hand", "mass"),
        ({**LABELS, "stations": [_with(on_hand="1e6 kg")]}, "stations[0].on_hand", "on hand"),
        ({**LABELS, "stations": [_with(on_hand="-1 kg")]}, "stations[0].on_hand", "negative"),
        ({**LABELS, "stations": [_with(price_per_lb=4.0)]}, "stations[0].price_per_lb", "not both"),
        ({**LABELS, "stations": [_with(price_per_kg=None, price_per_lb=-4.0)]}, "stations[0].price_per_lb", "negative"),
        ({**LABELS, "stations": [_with(coverage=None)]}, "stations[0].coverage", "share"),
        (
            {**LABELS, "stations": [_with(coverage=None, inked_area_per_label="200 cm2")]},
            "stations[0].inked_area_per_label",
            "more than all of it",
        ),
        (
            {**LABELS, "stations": [_with(inked_area_per_label="9 cm2")]},
            "stations[0].inked_area_per_label",
            "not both",
        ),
        (
            {**LABELS, "stations": [_with(coverage=None, inked_area_per_label="9 cm")]},
            "stations[0].inked_area_per_label",
            "an area",
        ),
        (
            {"run_length": "1000 m", "stations": [_with(coverage=None, inked_area_per_label="9 cm2")]},
            "stations[0].inked_area_per_label",
            "repeat",
        ),
    ],
)
def test_bad_job_input_names_its_field(kwargs, field, words):
    arguments = {"web_width": "330 mm", "stations": [CYAN], **kwargs}
    with pytest.raises(InputError) as caught:
        job_ink(**arguments)
    assert caught.value.field == field
    assert words in caught.value.message


def test_inked_area_per_label_names_the_share_it_would_cover():
    # 200 cm² × 6 labels over 33 cm × 30 cm = 1200 / 990 = 121 % of the web
    with pytest.raises(InputError, match="121%"):
        job_ink("330 mm", [_with(coverage=None, inked_area_per_label="200 cm2")], **LABELS)


# --- The working shows every new quantity ---------------------------------------------


def test_every_new_quantity_is_in_the_working():
    job = imperial_job()
    job_steps = {step.symbol: step.result for step in job.steps}
    assert job_steps["L_p"] == job.printed_length
    assert job_steps["N"] == job.labels
    assert job_steps["Σm_pull"] == job.total_pull_mass
    assert job_steps["Σcost_N"] == job.cost_per_1000_labels
    assert job_steps["Σcost_n"] == job.cost_per_1000_impressions
    white = {step.symbol: step.result for step in job.stations[0].steps}
    assert white["c"] == job.stations[0].coverage
    assert white["p_kg"] == job.stations[0].price_per_kg
    for symbol, value in [
        ("M", "mileage"), ("m_fill", "fill_mass"), ("m_pull", "pull_mass"), ("q_n", "ink_per_1000_impressions"),
        ("q_N", "ink_per_1000_labels"), ("cost_n", "cost_per_1000_impressions"), ("cost_N", "cost_per_1000_labels"),
        ("m_oh", "on_hand_mass"), ("s", "short_by"),
    ]:  # fmt: skip
        assert white[symbol] == getattr(job.stations[0], value), symbol
    assert white["L_good"] == job.stations[0].on_hand_prints.run_length
    assert white["n_oh"] == job.stations[0].on_hand_prints.impressions
    assert white["N_oh"] == job.stations[0].on_hand_prints.labels
    labels_steps = {step.symbol: step.result for step in labels_job().steps}
    assert labels_steps["n"] == 1667


@pytest.mark.parametrize("system", ["metric", "imperial"])
def test_the_working_reads_as_counts_money_and_quantities(system):
    from calc.display import show_value

    job = imperial_job()
    steps = job.steps + [step for station in job.stations for step in station.steps]
    shown = {step.symbol: show_value(step.result, system) for step in job.steps + job.stations[0].steps}
    assert shown["N"] == "240,000"  # a count, not "24,000,000 %"
    assert shown["Σcost_N"] == "0.66"  # money to the cent
    assert shown["cost"] == "99.14"
    assert shown["c"] == "90 %"
    for step in steps:
        for _, value in step.inputs:
            assert show_value(value, system)


def test_typical_coverages_are_shares_from_light_to_solid():
    from calc.estimate import TYPICAL_COVERAGES

    shares = list(TYPICAL_COVERAGES.values())
    assert list(TYPICAL_COVERAGES) == ["light text", "medium", "heavy", "solid"]
    assert shares == sorted(shares) and 0.0 < shares[0] and shares[-1] == 1.0


def test_a_station_that_lays_no_ink_is_limited_only_by_its_fill():
    # coverage 0: no ink used, so the pull is the fill alone (1 kg); 5 kg on hand sets no limit,
    # 0.5 kg does not fill the system and prints nothing.
    idle = _with(coverage=0.0, fill="1 kg")
    plenty = job_ink("330 mm", [replace(idle, on_hand="5 kg")], **LABELS).stations[0]
    assert plenty.ink_mass.magnitude == 0.0 and plenty.pull_mass.to("kg").magnitude == 1.0
    assert plenty.enough is True and plenty.on_hand_prints is None and plenty.mileage is not None
    little = job_ink("330 mm", [replace(idle, on_hand="0.5 kg")], **LABELS).stations[0]
    assert little.enough is False and little.short_by.to("kg").magnitude == 0.5
    assert (little.on_hand_prints.impressions, little.on_hand_prints.labels) == (0, 0)
