"""The film chain and the job estimate, against rules with a source outside inkfilm."""

import pytest

from calc import InputError
from calc.estimate import Station, job_ink, run_length_from_impressions
from calc.film import TYPICAL_ANILOX_TO_PLATE, TYPICAL_PLATE_TO_SUBSTRATE, film_chain, theoretical_film


def test_theoretical_film_of_one_bcm():
    # Common practice: 1 BCM/in² ≈ 1.55 µm of theoretical wet film (exact: 1/0.64516).
    assert round(theoretical_film("1 BCM/in2").magnitude, 2) == 1.55
    # 1 cm³/m² is exactly 1 µm of film.
    assert theoretical_film("7 cm3/m2").to("um").magnitude == pytest.approx(7.0, rel=1e-12)


def test_rule_of_thumb_transfer_puts_a_quarter_on_the_substrate():
    # Common practice (docs/references.md): about half to the plate and half of that
    # to the substrate, ≈ 25 % of the cell volume overall.
    assert TYPICAL_ANILOX_TO_PLATE * TYPICAL_PLATE_TO_SUBSTRATE == 0.25
    chain = film_chain("4 BCM/in2")
    assert chain.substrate_wet.magnitude == pytest.approx(0.25 * 4 / 0.64516, rel=1e-12)


@pytest.mark.parametrize(
    ("volume", "low_um", "high_um"),
    [
        # Common practice typical volumes and their theoretical films (× 1.55):
        ("1 BCM/in2", 1.5, 1.6),  # process work ≈ 1–1.2 BCM/in²
        ("1.2 BCM/in2", 1.8, 1.9),
        ("3 BCM/in2", 4.6, 4.7),  # line and type ≈ 3–4 BCM/in²
        ("4 BCM/in2", 6.2, 6.21),
        ("8 BCM/in2", 12.4, 12.41),  # heavy solids and coatings ≈ 8–10 BCM/in²
        ("10 BCM/in2", 15.5, 15.51),
    ],
)
def test_typical_anilox_volumes(volume, low_um, high_um):
    assert low_um <= theoretical_film(volume).magnitude <= high_um


def test_quebec_reference_ink():
    # Québec Clean Air Regulation (CQLR c. Q-2, r. 4.1), s. 26: reference flexo ink
    # of 1.1 kg/L with 25 % solids by volume. Dry film = wet × solids (by definition);
    # wet coat weight [g/m²] = film [µm] × density [g/cm³] (exact).
    chain = film_chain("6.2 cm3/m2", 0.5, 0.5, solids_by_volume=0.25, ink_density="1.1 kg/l")
    assert chain.substrate_wet.magnitude == pytest.approx(1.55, rel=1e-12)
    assert chain.dry.magnitude == pytest.approx(1.55 * 0.25, rel=1e-12)
    assert chain.wet_coat_weight.to("g/m2").magnitude == pytest.approx(1.55 * 1.1, rel=1e-12)


def test_dry_coat_weight_uses_solids_by_weight():
    chain = film_chain("10 cm3/m2", 0.5, 0.4, solids_by_weight=0.4, ink_density="1.0 g/cm3")
    assert chain.substrate_wet.magnitude == pytest.approx(2.0)
    assert chain.wet_coat_weight.magnitude == pytest.approx(2.0)
    assert chain.dry_coat_weight.magnitude == pytest.approx(0.8)
    assert chain.dry is None


def test_optional_results_only_where_inputs_allow():
    chain = film_chain("4 BCM/in2", 0.5, 0.5)
    assert chain.dry is None and chain.wet_coat_weight is None and chain.dry_coat_weight is None


def test_steps_record_the_working():
    chain = film_chain("4 BCM/in2", 0.5, 0.5, solids_by_volume=0.3, ink_density="1 g/cm3", solids_by_weight=0.4)
    assert [step.symbol for step in chain.steps] == ["t₀", "t₁", "t₂", "t_d", "w_wet", "w_dry"]
    assert chain.steps[1].inputs[1] == ("T_ap", 0.5)
    assert chain.steps[-1].result == chain.dry_coat_weight


@pytest.mark.parametrize(
    ("kwargs", "field", "words"),
    [
        ({"anilox_volume": "0 BCM/in2"}, "anilox_volume", "more than 0"),
        ({"anilox_volume": "150 BCM/in2"}, "anilox_volume", "at most 100"),
        ({"anilox_volume": "4 g"}, "anilox_volume", "volume per area"),
        ({"anilox_volume": "4 BCM"}, "anilox_volume", "not a volume"),
        ({"anilox_volume": "4 BCM/in2", "anilox_to_plate": 1.5}, "anilox_to_plate", "fraction from 0 to 1"),
        ({"anilox_volume": "4 BCM/in2", "plate_to_substrate": -0.1}, "plate_to_substrate", "fraction"),
        ({"anilox_volume": "4 BCM/in2", "solids_by_volume": float("nan")}, "solids_by_volume", "finite"),
        ({"anilox_volume": "4 BCM/in2", "solids_by_weight": 0.4}, "ink_density", "density"),
        ({"anilox_volume": "4 BCM/in2", "ink_density": "0.01 g/cm3"}, "ink_density", "at least 0.3"),
        ({"anilox_volume": "4 BCM/in2", "anilox_to_plate": True}, "anilox_to_plate", "must be a number"),
        ({"anilox_volume": "4 BCM/in2", "anilox_to_plate": "0.5"}, "anilox_to_plate", "must be a number"),
    ],
)
def test_film_chain_rejects_bad_input(kwargs, field, words):
    with pytest.raises(InputError) as caught:
        film_chain(**kwargs)
    assert caught.value.field == field
    assert words in caught.value.message


CYAN = Station("Cyan", "3 BCM/in2", 0.4, 0.3, "1.0 g/cm3", 12.5)


def test_estimate_by_hand():
    # Worked by hand: A = 0.330 m × 12 000 m = 3960 m²; t₂ = 3 × 1.5500031 × 0.3 µm
    # = 1.39500279 µm; V = t₂ × A × 0.4 × 1.05 = 2320.17 cm³ = 2.32017 l; at
    # 1.0 g/cm³ that is 2.32017 kg, costing 29.0021 at 12.5 a kg.
    estimate = job_ink("330 mm", [CYAN], run_length="12000 m", waste=0.05)
    assert estimate.printed_area.magnitude == pytest.approx(3960.0, rel=1e-12)
    station = estimate.stations[0]
    assert round(station.substrate_wet.magnitude, 6) == 1.395003
    assert round(station.ink_volume.magnitude, 5) == 2.32017
    assert round(station.ink_mass.magnitude, 5) == 2.32017
    assert round(station.cost, 4) == 29.0021
    assert estimate.total_cost == station.cost


def test_run_length_from_impressions_and_repeat():
    # 50 000 impressions of an 18 in repeat: 900 000 in = 22 860 m exactly (inch = 25.4 mm).
    assert run_length_from_impressions(50000, "18 in").to("m").magnitude == pytest.approx(22860.0, rel=1e-12)
    by_impressions = job_ink("330 mm", [CYAN], impressions=50000, repeat="18 in")
    by_length = job_ink("330 mm", [CYAN], run_length="22860 m")
    assert by_impressions.total_ink_mass.magnitude == pytest.approx(by_length.total_ink_mass.magnitude, rel=1e-12)


def test_total_cost_only_when_every_station_has_a_price():
    white = Station("White", "8 BCM/in2", 0.95, 0.35, "1.3 g/cm3")
    estimate = job_ink("330 mm", [CYAN, white], run_length="1000 m")
    assert estimate.total_cost is None
    assert estimate.total_ink_mass.magnitude == pytest.approx(sum(s.ink_mass.magnitude for s in estimate.stations))


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"run_length": None}, "run_length"),
        ({"run_length": "1000 m", "impressions": 10, "repeat": "18 in"}, "run_length"),
        ({"run_length": None, "impressions": 10}, "repeat"),
        ({"run_length": None, "repeat": "18 in"}, "impressions"),
        ({"run_length": None, "impressions": 10.5, "repeat": "18 in"}, "impressions"),
        ({"run_length": None, "impressions": 10, "repeat": "6 m"}, "repeat"),
        ({"run_length": "1000 m2"}, "run_length"),
        ({"web_width": "0 mm"}, "web_width"),
        ({"web_width": "33 m"}, "web_width"),
        ({"waste": 2}, "waste"),
        ({"stations": []}, "stations"),
        ({"stations": [CYAN] * 13}, "stations"),
        ({"stations": [Station("", "3 BCM/in2", 0.4, 0.3, "1 g/cm3")]}, "stations[0].name"),
        ({"stations": [CYAN, Station("M", "3 BCM/in2", 1.4, 0.3, "1 g/cm3")]}, "stations[1].coverage"),
        ({"stations": [Station("M", "3 BCM/in2", 0.4, 0.3, "1 g/cm3", -1)]}, "stations[0].price_per_kg"),
    ],
)
def test_estimate_rejects_bad_input(kwargs, field):
    arguments = {"web_width": "330 mm", "stations": [CYAN], "run_length": "1000 m", **kwargs}
    with pytest.raises(InputError) as caught:
        job_ink(**arguments)
    assert caught.value.field == field
    assert caught.value.message
