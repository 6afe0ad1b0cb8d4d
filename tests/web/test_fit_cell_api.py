"""``POST /api/v1/fit`` and ``POST /api/v1/cell``: the answers against the core,
and every bad input answered 400 naming its field (never a 5xx).

References: inch = 25.4 mm exactly (NIST SP 811), so a cell pitch at 800 lpi is
25 400 / 800 = 31.75 µm and 1 BCM/in² = 1 / 0.645 16 cm³/m²; the cell volume
model (open area × depth × shape factor, bowl = ½ by Archimedes) and the 2 %
dot at 150 lpi ≈ 27 µm are the derivations in REFERENCES.md; the screen ratio
and volume ranges are common practice (``calc.practice``).
"""

from __future__ import annotations

import math

import pytest

from calc.cell import cell_geometry
from calc.fit import fit_check
from calc.practice import WORK_KINDS, WORK_PRACTICE
from webapp.calculators import CALCULATIONS
from webapp.calculators import cell as cell_module
from webapp.calculators import fit as fit_module

UNFIT = {"work": "process", "plate_screen": "150 lpi", "anilox_screen": "600 lpi", "anilox_volume": "4 BCM/in2"}
FITS = {"work": "process", "plate_screen": "150 lpi", "anilox_screen": "1000 lpi", "anilox_volume": "1.5 BCM/in2"}
CELL = {"screen": "800 lpi", "wall": "3 um", "depth": "12 um"}


def post(client, kind, body):
    return client.post(f"/api/v1/{kind}", json=body)


# --- fit ------------------------------------------------------------------------


def test_a_coarse_heavy_roll_does_not_fit_for_both_reasons(client):
    response = post(client, "fit", UNFIT)
    assert response.status_code == 200
    answer = response.get_json()
    assert answer["fits"] is False
    assert [problem["code"] for problem in answer["problems"]] == ["screen_too_coarse", "volume_too_high"]
    assert all(problem["message"] for problem in answer["problems"])
    assert answer["ratio"] == pytest.approx(4.0)  # 600 / 150
    # common practice: at least 5 × the plate screen for halftones, 1–2.5 BCM/in²
    assert answer["screen_ratio_min"] == 5.0
    assert answer["screen_range"] == {"low": {"value": 750.0, "unit": "lpi"}, "high": None}
    assert answer["volume_range"] == {
        "low": {"value": 1.0, "unit": "BCM/in2"},
        "high": {"value": 2.5, "unit": "BCM/in2"},
    }
    # REFERENCES.md: a 2 % dot at 150 lpi is about 27 µm across
    assert answer["smallest_dot_diameter"]["unit"] == "um"
    assert round(answer["smallest_dot_diameter"]["value"]) == 27
    # pitch 25 400 / 600 µm less the 3 µm wall assumed
    assert answer["anilox_opening"] == {"value": pytest.approx(25_400 / 600 - 3), "unit": "um"}


def test_a_fine_light_roll_fits(client):
    answer = post(client, "fit", FITS).get_json()
    assert answer["fits"] is True and answer["problems"] == []
    assert answer["ratio"] == pytest.approx(1000 / 150)


def test_the_answer_is_the_core_answer(client):
    for body in (UNFIT, FITS, {"work": "white", "anilox_screen": "120 lpcm", "anilox_volume": "14 cm3/m2"}):
        answer = post(client, "fit", body).get_json()
        check = fit_check(**body)
        assert answer["fits"] == check.fits
        assert answer["problems"] == [{"code": code, "message": message} for code, message in check.problems]
        assert answer["volume_range"]["low"]["value"] == pytest.approx(check.volume_range.low.to("BCM/in2").magnitude)
        assert answer["ratio"] == (None if check.ratio is None else pytest.approx(check.ratio))


def test_a_metric_roll_gets_the_same_verdict(client):
    # 1000 lpi = 393.7 lpcm; 1.5 BCM/in² = 2.325 cm³/m² (NIST SP 811: inch = 25.4 mm)
    body = {**FITS, "anilox_screen": "393.7 lpcm", "anilox_volume": f"{1.5 / 0.64516!r} cm3/m2"}
    assert post(client, "fit", body).get_json()["fits"] is True
    body = {**FITS, "anilox_screen": "100 l/cm", "anilox_volume": "2.3 cm3/m2"}  # 254 lpi: far too coarse
    answer = post(client, "fit", body).get_json()
    assert answer["fits"] is False and answer["ratio"] == pytest.approx(254 / 150)
    # 2.3 cm³/m² = 1.48 BCM/in² is in the process range; at 254 lpi the product is only advice
    assert [p["code"] for p in answer["problems"]] == ["screen_too_coarse", "volume_screen_mismatch"]


@pytest.mark.parametrize("kind", WORK_KINDS)
def test_without_a_roll_the_answer_is_the_advice(client, kind):
    answer = post(client, "fit", {"work": kind, "plate_screen": "133 lpi"}).get_json()
    assert "fits" not in answer and "problems" not in answer and "ratio" not in answer
    practice = WORK_PRACTICE[kind]
    assert answer["screen_ratio_min"] == practice.screen_ratio_min
    low = answer["screen_range"]["low"]
    if practice.screen_ratio_min is None:
        assert low is None
    else:
        assert low["value"] == pytest.approx(133 * practice.screen_ratio_min)
    assert answer["volume_range"]["high"]["value"] == practice.volume.high.to("BCM/in2").magnitude


def test_work_without_dots_needs_no_plate_screen(client):
    response = post(client, "fit", {"work": "solid", "anilox_screen": "300 lpi", "anilox_volume": "6 BCM/in2"})
    answer = response.get_json()
    assert response.status_code == 200 and answer["fits"] is True and answer["ratio"] is None
    assert "smallest_dot_diameter" not in answer


def test_volume_screen_mismatch_is_advice_only(client):
    # 2 BCM/in² at 1 500 lpi: 3 000 = 1.5 × the 2 000 upper edge — inside; 2.5 at 1 500 is 3 750: far off
    answer = post(client, "fit", {**FITS, "anilox_screen": "1500 lpi", "anilox_volume": "2.5 BCM/in2"}).get_json()
    assert [p["code"] for p in answer["problems"]] == ["volume_screen_mismatch"]
    assert answer["fits"] is True


def fit_error(client, body):
    response = post(client, "fit", body)
    assert response.status_code == 400, response.get_json()
    return response.get_json()["error"]


def test_process_work_without_a_plate_screen_is_a_400_naming_it(client):
    error = fit_error(client, {"work": "process", "anilox_screen": "800 lpi", "anilox_volume": "1.2 BCM/in2"})
    assert error["field"] == "plate_screen" and "screen ruling" in error["message"]


def test_an_unknown_work_is_a_400_listing_the_five_kinds(client):
    error = fit_error(client, {"work": "poster", "plate_screen": "150 lpi"})
    assert error["field"] == "work"
    for kind in WORK_KINDS:
        assert kind in error["message"]


@pytest.mark.parametrize(
    ("change", "field"),
    [
        ({"work": None}, "work"),
        ({"work": 3}, "work"),
        ({"plate_screen": "150"}, "plate_screen"),
        ({"plate_screen": "150 um"}, "plate_screen"),
        ({"plate_screen": "5 lpi"}, "plate_screen"),
        ({"plate_screen": "1e999 lpi"}, "plate_screen"),
        ({"plate_screen": 150}, "plate_screen"),
        ({"anilox_screen": "-800 lpi"}, "anilox_screen"),
        ({"anilox_screen": "800 BCM/in2"}, "anilox_screen"),
        ({"anilox_screen": "lpi**9**9**9"}, "anilox_screen"),
        ({"anilox_volume": "0 BCM/in2"}, "anilox_volume"),
        ({"anilox_volume": "4 lpi"}, "anilox_volume"),
        ({"anilox_volume": None}, "anilox_volume"),
        ({"anilox_screen": None}, "anilox_screen"),
        ({"colour": "cyan"}, "colour"),
    ],
)
def test_every_bad_fit_input_names_its_field(client, change, field):
    body = {key: value for key, value in {**UNFIT, **change}.items() if value is not None}
    error = fit_error(client, body)
    assert error["field"] == field and error["message"]


# --- cell -----------------------------------------------------------------------


def test_800_lpi_3_um_wall_12_um_bowl(client):
    answer = post(client, "cell", CELL).get_json()
    pitch = 25_400 / 800  # NIST SP 811: inch = 25.4 mm
    opening = pitch - 3
    assert answer["pitch"] == {"value": pytest.approx(pitch), "unit": "um"}
    assert answer["opening"] == {"value": pytest.approx(opening), "unit": "um"}
    assert answer["open_area"] == pytest.approx((opening / pitch) ** 2)
    # REFERENCES.md model: V = (o/p)² × h × ½ for a paraboloid bowl (Archimedes) ≈ 4.92 cm³/m²
    assert answer["volume"] == {"value": pytest.approx((opening / pitch) ** 2 * 12 * 0.5), "unit": "cm3/m2"}
    assert round(answer["volume"]["value"], 2) == 4.92
    assert answer["depth"] == {"value": 12.0, "unit": "um"}
    assert answer["depth_to_opening"] == pytest.approx(12 / opening)
    assert [p["code"] for p in answer["problems"]] == ["cell_too_deep"]  # 0.42 > the usual 0.33


@pytest.mark.parametrize("angle", [60, 45, 30, "60", "45°"])
@pytest.mark.parametrize(("shape", "factor"), [("prism", 1.0), ("bowl", 0.5), ("cone", 1 / 3)])
def test_angles_and_shapes(client, angle, shape, factor):
    answer = post(client, "cell", {**CELL, "angle": angle, "shape": shape}).get_json()
    # open area (o/p)² holds for hexagonal and square cells alike (calc/cell.py Notes)
    assert answer["volume"]["value"] == pytest.approx((28.75 / 31.75) ** 2 * 12 * factor)


def test_from_a_volume_back_to_the_depth(client):
    # 3.174 BCM/in² = 4.92 cm³/m² (NIST SP 811) → back to ≈ 12 µm deep
    answer = post(client, "cell", {"screen": "800 lpi", "wall": "3 um", "volume": "3.174 BCM/in2"}).get_json()
    assert answer["depth"]["value"] == pytest.approx(12.0, abs=0.01)
    assert answer["volume"]["value"] == pytest.approx(3.174 / 0.64516)


def test_the_cell_answer_is_the_core_answer(client):
    body = {"screen": "120 lpcm", "wall": "0.2 mil", "angle": 45, "shape": "cone", "depth": "0.5 mil"}
    answer = post(client, "cell", body).get_json()
    cell = cell_geometry(**body)
    assert answer["volume"]["value"] == pytest.approx(cell.volume.to("cm3/m2").magnitude, rel=1e-12)
    assert answer["depth_to_opening"] == pytest.approx(cell.depth_to_opening, rel=1e-12)
    assert math.isclose(answer["depth"]["value"], 12.7, rel_tol=1e-12)  # 0.5 mil = 12.7 µm (NIST SP 811)


@pytest.mark.parametrize(
    ("body", "field"),
    [
        ({"wall": "3 um", "depth": "12 um"}, "screen"),
        ({"screen": "800 lpi", "depth": "12 um"}, "wall"),
        ({**CELL, "screen": "800"}, "screen"),
        ({**CELL, "screen": "5 lpi"}, "screen"),
        ({**CELL, "screen": "800 um"}, "screen"),
        ({**CELL, "wall": "32 um"}, "wall"),
        ({**CELL, "wall": "-1 um"}, "wall"),
        ({**CELL, "wall": "3 lpi"}, "wall"),
        ({**CELL, "angle": 50}, "angle"),
        ({**CELL, "angle": True}, "angle"),
        ({**CELL, "angle": "sixty"}, "angle"),
        ({**CELL, "shape": "round"}, "shape"),
        ({**CELL, "shape": 1}, "shape"),
        ({"screen": "800 lpi", "wall": "3 um"}, "depth"),
        ({**CELL, "volume": "4 cm3/m2"}, "volume"),
        ({**CELL, "depth": "0 um"}, "depth"),
        ({**CELL, "depth": "2 m"}, "depth"),
        ({"screen": "800 lpi", "wall": "3 um", "volume": "-4 BCM/in2"}, "volume"),
        ({**CELL, "colour": "cyan"}, "colour"),
    ],
)
def test_every_bad_cell_input_names_its_field(client, body, field):
    response = post(client, "cell", body)
    assert response.status_code == 400
    error = response.get_json()["error"]
    assert error["field"] == field and error["message"]


@pytest.mark.parametrize("kind", ["fit", "cell"])
@pytest.mark.parametrize("raw", ["", "[]", "null", "{", '"text"', '{"work": {"a": 1}}', '{"screen": [1]}'])
def test_junk_bodies_are_400_in_the_error_shape(client, kind, raw):
    response = client.post(f"/api/v1/{kind}", data=raw, content_type="application/json")
    assert response.status_code == 400
    assert set(response.get_json()["error"]) == {"field", "message"}


def test_registered_and_fields_declared_by_the_convention():
    assert CALCULATIONS["fit"] is fit_module.compute and CALCULATIONS["cell"] is cell_module.compute
    kinds = {"quantity", "share", "number", "integer", "text", "boolean"}
    for module in (fit_module, cell_module):
        assert set(module.REQUIRED.values()) | set(module.OPTIONAL.values()) <= kinds
    assert set(fit_module.REQUIRED) | set(fit_module.OPTIONAL) == {
        "work",
        "plate_screen",
        "anilox_screen",
        "anilox_volume",
    }
    assert set(cell_module.REQUIRED) | set(cell_module.OPTIONAL) == {
        "screen",
        "wall",
        "angle",
        "shape",
        "depth",
        "volume",
    }
    assert "open_area" in cell_module.CELL.shares
