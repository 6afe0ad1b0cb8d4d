"""One pick from the shop's inks (``templates/inks/_pick.html``, ``webapp.inks.fill``) for the film chain and
every Job ink station: the same option markup, the same values filled with and without script."""

from __future__ import annotations

import html
import re

from tests.web.test_estimate_page import labels_form
from tests.web.test_inks_api import add_ink


def page_of(response) -> str:
    assert response.status_code == 200, response.status_code
    return response.get_data(as_text=True)


def page(client, url: str) -> str:
    return page_of(client.get(url))


def options(body: str) -> list[str]:
    """Each pick list's ink options, as the page writes them (a list per select)."""
    selects = re.findall(r"<select[^>]*data-ink-pick=[^>]*>(.*?)</select>", body, re.S)
    return [re.findall(r'<option value="\d+"[^>]*>[^<]*</option>', select) for select in selects]


def test_the_film_chain_and_each_station_offer_the_same_options(client):
    add_ink(client, name="Black SB", type="solvent_based", density="0.98 g/cm3", price=6.4, price_per="lb")
    add_ink(client, name="Clear UV", type="uv", density="1.1 g/cm3", solids_by_volume=0.995, price=None)
    add_ink(client, name="White WB", type="water_based", density="1.3 g/cm3", solids_by_weight=0.45)
    film, estimate = options(page(client, "/film")), options(page(client, "/estimate"))
    assert len(film) == 1 and len(estimate) >= 2 and len(film[0]) == 3
    assert all(station == film[0] for station in estimate)
    black, clear, white = film[0]
    assert 'data-density="0.98" data-price="6.4" data-price-per="lb"' in black
    assert 'data-solids-volume="99.5"' in clear and "data-price" not in clear
    assert 'data-solids-weight="45"' in white
    # Each caution once per pick list: the film chain's one, each station's own.
    estimate_page = page(client, "/estimate")
    assert estimate_page.count('data-ink-caution="1"') == len(estimate)
    assert html.unescape(estimate_page).count("Ink from the shop's list") == len(estimate)


def test_without_script_both_fill_what_the_option_carries(client):
    ink = add_ink(client, name="Black SB", type="solvent_based", density="0.98 g/cm3", solids_by_volume=0.27)
    location = client.get(f"/inks/pick?ink={ink['id']}").headers["Location"]
    filled = page(client, location)
    option = options(filled)[0][0]
    assert re.search(r'name="ink_density"[^>]*value="0\.98"', filled) and 'data-density="0.98"' in option
    assert re.search(r'name="solids_by_volume"[^>]*value="27"', filled) and 'data-solids-volume="27"' in option
    assert " selected>" in option
    # A station: its density and price filled from the ink, the other station as typed.
    priced = add_ink(client, name="Cyan WB", type="water_based", density="1.04 g/cm3", price=5.25, price_per="kg")
    form = labels_form(**{"stations[1].ink": str(priced["id"]), "stations[0].ink_density": "1.2"}, action="ink-1")
    station = page_of(client.post("/estimate", data=form))
    assert re.search(r'name="stations\[1\]\.ink_density"[^>]*value="1\.04"', station)
    assert re.search(r'name="stations\[1\]\.price_per_kg"[^>]*value="5\.25"', station)
    assert re.search(r'name="stations\[0\]\.ink_density"[^>]*value="1\.2"', station)


def test_form_values_give_the_price_only_where_the_ink_has_one():
    from webapp.inks.fill import form_values

    ink = {"id": 3, "density_g_cm3": 1.0482, "solids_by_volume": 0.3, "solids_by_weight": None, "price": None}
    assert form_values(ink) == {
        "ink": "3",
        "ink_density": "1.0482",
        "ink_density_unit": "g/cm3",
        "solids_by_volume": "30",
        "solids_by_weight": "",
    }
    assert form_values({**ink, "price": 12.5, "price_per": "kg"})["price_per_kg"] == "12.5"
    assert form_values({**ink, "price": 0.0, "price_per": "lb"})["price_unit"] == "lb"


def test_find_takes_only_an_id_of_the_shop_s_inks(app, client):
    from webapp.inks.fill import find

    ink = add_ink(client, name="Black SB", type="solvent_based", density="0.98 g/cm3")
    with app.test_request_context():
        assert find(f" {ink['id']} ")["name"] == "Black SB"
        for junk in ("", None, "x", "-1", "1.0", "999999", "0" * 12 + str(ink["id"]), "9" * 30):
            assert find(junk) is None, junk
