"""A saved density snippet (Ink strength, its fit, a density from a volume) opens in the Ink strength
page with every reading and its settings, ready to change and save (issue 10, point 7)."""

from __future__ import annotations

import html
import json
import re

import pytest

from tests.conftest import csrf_from
from webapp.calculators import CALCULATIONS
from webapp.snippets.reopen import calculator_link, density_values

# Invented readings of an example shop's magenta on white film: anilox volume [BCM/in²], transfer, density.
BY_VOLUME = [
    {"anilox_volume": f"{volume} BCM/in2", "transfer": transfer, "density": density}
    for volume, transfer, density in (
        (1.5, 0.25, 0.61),
        (2.2, 0.25, 0.8),
        (3.0, 0.27, 0.97),
        (3.8, 0.27, 1.08),
        (4.5, 0.3, 1.2),
        (6.0, 0.3, 1.33),
        (8.0, 0.31, 1.41),
    )
]
STRENGTH = {"readings": BY_VOLUME, "target_density": 1.3, "transfer": 0.28}
# Films in mil (trade mil), for the fit alone.
BY_FILM = [{"film": f"{film} mil", "density": d} for film, d in ((0.02, 0.5), (0.04, 0.86), (0.07, 1.15), (0.1, 1.3))]
# Both ways and two units: the page has one basis and one unit, so these go as films in µm.
MIXED = [
    {"film": "0.5 um", "density": 0.57},
    {"anilox_volume": "3 cm3/m2", "transfer": 0.3, "density": 0.86},
    {"film": "0.06 mil", "density": 1.2},
    {"anilox_volume": "2 BCM/in2", "transfer": 0.25, "density": 0.78},
    {"film": "2.6 um", "density": 1.49},
]


def text(response) -> str:
    assert response.status_code == 200, response.status_code
    return html.unescape(response.get_data(as_text=True))


def saved_link(client, kind: str, inputs: dict) -> str:
    form = {"csrf_token": csrf_from(client), "kind": kind, "inputs": json.dumps(inputs), "title": "Magenta on PE"}
    saved = client.post("/snippets", data=form)
    assert saved.status_code == 303, saved.get_data(as_text=True)
    page = text(client.get(saved.headers["Location"]))
    return re.search(r'href="(/ink-strength\?[^"]+)">Open in the calculator', page).group(1)


def rows(page: str) -> list[dict]:
    """The reading rows of the Ink strength form as the page holds them."""
    found: dict[int, dict] = {}
    for index, key, value in re.findall(r'name="readings\[(\d+)\]\.(\w+)"[^>]*value="([^"]*)"', page):
        found.setdefault(int(index), {})[key] = value
    return [found[index] for index in sorted(found)]


def checked_basis(page: str) -> str:
    return re.search(r'name="basis" value="(\w+)" checked', page).group(1)


def selected(page: str, menu: str) -> str:
    select = re.search(rf'<select[^>]*name="{menu}".*?</select>', page, re.S).group(0)
    return re.search(r'<option value="([^"]+)" selected', select).group(1)


def save_inputs(page: str) -> dict:
    return json.loads(re.search(r"name=\"inputs\" value='([^']*)'", page).group(1))


def fit_of(inputs: dict) -> dict:
    return CALCULATIONS["density_fit"]({"readings": inputs["readings"]})


def test_an_ink_strength_snippet_opens_with_every_reading_and_its_settings(client):
    page = text(client.get(saved_link(client, "density_volume_for", STRENGTH)))
    held = rows(page)
    assert len(held) == len(BY_VOLUME) and f'name="reading_count" value="{len(BY_VOLUME)}"' in page
    for row, reading in zip(held, BY_VOLUME, strict=True):
        assert float(row["value"]) == float(reading["anilox_volume"].split()[0])
        assert float(row["transfer"]) == pytest.approx(reading["transfer"] * 100, rel=1e-12)
        assert float(row["density"]) == reading["density"]
    assert checked_basis(page) == "volume" and selected(page, "volume_unit") == "BCM/in2"
    assert re.search(r'name="target_density"[^>]*value="1.3"', page)
    assert re.search(r'name="transfer"[^>]*value="28"', page)
    # Worked out again as it was saved, and ready to save as a new snippet.
    again = save_inputs(page)
    assert 'name="kind" value="density_volume_for"' in page
    assert CALCULATIONS["density_volume_for"](again) == CALCULATIONS["density_volume_for"](STRENGTH)
    # The shop's own readings are not called invented.
    assert "example rows are invented" not in page


def test_a_fit_in_mil_opens_by_film_in_mil_with_the_page_s_own_question(client):
    page = text(client.get(saved_link(client, "density_fit", {"readings": BY_FILM})))
    assert [(row["value"], row["density"]) for row in rows(page)] == [
        (r["film"].split()[0], repr(r["density"])) for r in BY_FILM
    ]
    assert checked_basis(page) == "film" and selected(page, "film_unit") == "mil"
    assert re.search(r'name="target_density"[^>]*value="1.40"', page)  # the page's default question
    assert fit_of(save_inputs(page)) == fit_of({"readings": BY_FILM})


def test_readings_given_both_ways_open_as_their_films_in_micrometres(client):
    body = {"readings": MIXED, "anilox_volume": "3 BCM/in2", "transfer": 0.3}
    page = text(client.get(saved_link(client, "density_from", body)))
    held = rows(page)
    assert len(held) == len(MIXED) and checked_basis(page) == "film" and selected(page, "film_unit") == "um"
    # 0.06 mil = 1.524 µm; 3 cm³/m² × 0.3 = 0.9 µm; 2 BCM/in² × 0.25 ≈ 0.775 µm (1 BCM/in² = 1.550 003 1 cm³/m²).
    assert [float(row["value"]) for row in held] == pytest.approx([0.5, 0.9, 1.524, 0.77500155, 2.6], rel=1e-9)
    assert [float(row["density"]) for row in held] == [r["density"] for r in MIXED]
    assert re.search(r'name="transfer"[^>]*value="30"', page)
    fitted, saved = fit_of(save_inputs(page)), fit_of(body)
    assert fitted["d_inf"] == pytest.approx(saved["d_inf"], rel=1e-9)
    assert fitted["m"]["value"] == pytest.approx(saved["m"]["value"], rel=1e-9)


def test_more_readings_than_the_page_showed_before_all_open(client):
    many = [{"film": f"{0.1 * (i + 1):.1f} um", "density": round(1.5 - 1.4 * 0.6 ** (i + 1), 3)} for i in range(30)]
    page = text(client.get(saved_link(client, "density_fit", {"readings": many})))
    assert len(rows(page)) == 30 and 'data-key="count">30<' in page


def test_a_snippet_without_readings_or_with_refused_ones_opens_no_calculator():
    fit = {"d_inf": 1.5, "m": "0.9 1/um", "target_density": 1.3, "transfer": 0.25}
    assert calculator_link("density_volume_for", fit) is None
    assert density_values({"readings": [{"density": 9, "film": "1 um"}]}) is None  # beyond a densitometer
    assert density_values({"readings": "1.2 um"}) is None and density_values(None) is None
    assert calculator_link("density_fit", {"readings": BY_FILM}).startswith("/ink-strength?")


def test_an_address_without_rows_still_shows_the_example(client):
    page = text(client.get("/ink-strength?target_density=1.2"))
    assert len(rows(page)) == 6 and re.search(r'name="target_density"[^>]*value="1.2"', page)
    assert "example rows are invented" in page


def test_the_invented_hint_goes_once_every_example_row_is_typed_over(client):
    page = text(client.get("/ink-strength"))
    assert "example rows are invented" in page
    form = {"csrf_token": csrf_from(client), "reading_count": "3", "basis": "volume", "volume_unit": "BCM/in2"}
    form |= {"film_unit": "um", "target_density": "1.3", "transfer": "25"}
    for index, (value, density) in enumerate((("2", "0.7"), ("3", "0.95"), ("5", "1.2"))):
        form |= {
            f"readings[{index}].value": value,
            f"readings[{index}].transfer": "25",
            f"readings[{index}].density": density,
        }
    answer = client.post("/ink-strength", data=form)
    assert answer.status_code == 200
    assert "example rows are invented" not in text(answer)
    form["readings[0].value"], form["readings[0].density"] = "1.5", "0.64"  # the first example row again
    assert "example rows are invented" in text(client.post("/ink-strength", data=form))
