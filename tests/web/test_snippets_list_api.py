"""``GET /api/v1/snippets`` takes the Saved page's filters (issue 10, point 7, for the API):
press, station, kind, a range of days in the shop's zone (or UTC times), the order, and
pages with the count; every bad value is a 400 naming the parameter, and the OpenAPI
description lists each parameter the list checks."""

from __future__ import annotations

import contextlib
from datetime import UTC, datetime

import pytest

from tests.bodies import CONVERT, FILM
from webapp import create_app
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import api as snippets_api
from webapp.snippets import store

URL = "/api/v1/snippets"


@pytest.fixture
def app(tmp_path):
    # Berlin: a day there starts at 22:00 or 23:00 UTC the day before, so the bounds are tested.
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data"), "TIME_ZONE": "Europe/Berlin"})


@pytest.fixture
def stored(app):
    """Five snippets saved at known times (UTC)."""
    rows = [
        ("Cyan 2", "film", FILM, "N1", "2", "24-0010", datetime(2024, 5, 1, 10, 0, tzinfo=UTC)),
        ("amber 10", "film", FILM, "N1", "10", "24-0002", datetime(2024, 5, 1, 21, 30, tzinfo=UTC)),
        ("Blue", "convert", CONVERT, "N2", "2", "", datetime(2024, 5, 2, 12, 0, tzinfo=UTC)),
        ("Drum", "film", FILM, "W1", "", "24-0002", datetime(2024, 5, 3, 23, 30, tzinfo=UTC)),
        ("Cyan old", "convert", CONVERT, "N2", "3", "23-9999", datetime(2023, 12, 31, 12, 0, tzinfo=UTC)),
    ]
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        for title, kind, inputs, press, station, job, at in rows:
            meta = {"title": title, "press": press, "station": station, "job_number": job}
            store.create(conn, kind, dict(inputs), meta, CALCULATIONS, now=at)
    return rows


def titles(client, query: str) -> list[str]:
    response = client.get(f"{URL}?{query}")
    assert response.status_code == 200, response.get_data(as_text=True)
    return [s["title"] for s in response.get_json()["snippets"]]


def refused(client, query: str, field: str) -> str:
    response = client.get(f"{URL}?{query}")
    assert response.status_code == 400, (query, response.get_data(as_text=True))
    error = response.get_json()["error"]
    assert error["field"] == field, (query, error)
    return error["message"]


def test_press_station_and_kind_filter_alone_and_together(client, stored):
    assert titles(client, "press=N1") == ["amber 10", "Cyan 2"]
    assert titles(client, "station=2") == ["Blue", "Cyan 2"]
    assert titles(client, "kind=convert") == ["Blue", "Cyan old"]
    assert titles(client, "press=N2&station=3&kind=convert") == ["Cyan old"]
    assert titles(client, "press=N2&kind=film") == []
    assert titles(client, "q=cyan&press=N1") == ["Cyan 2"]
    assert titles(client, "press=") == [s[0] for s in sorted(stored, key=lambda s: s[-1], reverse=True)]


def test_days_are_the_shops_days_as_on_the_saved_page(client, stored):
    # 2024-05-01 21:30 UTC is 23:30 on the 1st in Berlin; 2024-05-03 23:30 UTC is the 4th there.
    assert titles(client, "from=2024-05-01&to=2024-05-01") == ["amber 10", "Cyan 2"]
    assert titles(client, "from=2024-05-03&to=2024-05-03") == []
    assert titles(client, "from=2024-05-02&to=2024-05-03") == ["Blue"]
    assert titles(client, "from=2024-05-04") == ["Drum"]
    assert titles(client, "to=2023-12-31") == ["Cyan old"]
    # The same filters as the page: the page lists the same snippets.
    for query in ("from=2024-05-01&to=2024-05-02", "press=N2&to=2024-05-02", "station=2&kind=film"):
        page = client.get(f"/snippets?{query}").get_data(as_text=True)
        for title in titles(client, query):
            assert f">{title}<" in page
    # UTC times for a program that keeps its own bounds; both kinds of bound apply together.
    assert titles(client, "changed_from=2024-05-01T21:00:00Z&changed_before=2024-05-02T12:00:00Z") == ["amber 10"]
    assert titles(client, "from=2024-05-01&changed_before=2024-05-01T12:00:00Z") == ["Cyan 2"]


def test_every_order_of_the_saved_page(client, stored):
    assert titles(client, "order=newest") == ["Drum", "Blue", "amber 10", "Cyan 2", "Cyan old"]
    assert titles(client, "order=oldest") == ["Cyan old", "Cyan 2", "amber 10", "Blue", "Drum"]
    assert titles(client, "order=title") == ["amber 10", "Blue", "Cyan 2", "Cyan old", "Drum"]
    # Job number A to Z, station next, snippets without a job number last.
    assert titles(client, "order=job") == ["Cyan old", "Drum", "amber 10", "Cyan 2", "Blue"]
    assert set(store.ORDERS) == set(snippets_api.LIST_QUERY["order"]["choices"])


def test_pages_with_the_count(client, stored):
    first = client.get(f"{URL}?limit=2&order=oldest").get_json()
    assert (first["total"], first["page"], first["pages"], first["offset"], first["order"]) == (5, 1, 3, 0, "oldest")
    third = client.get(f"{URL}?limit=2&page=3&order=oldest").get_json()
    assert [s["title"] for s in third["snippets"]] == ["Drum"]
    assert (third["page"], third["offset"]) == (3, 4)
    assert client.get(f"{URL}?limit=2&offset=2&order=oldest").get_json()["page"] == 2
    past = client.get(f"{URL}?limit=2&page=9").get_json()
    assert (past["snippets"], past["total"], past["pages"]) == ([], 5, 3)
    filtered = client.get(f"{URL}?press=N1&limit=1").get_json()
    assert (filtered["total"], filtered["pages"]) == (2, 2)


@pytest.mark.parametrize(
    ("query", "field"),
    [
        ("order=colour", "order"),
        ("order=NEWEST", "order"),
        ("kind=paint", "kind"),
        ("from=yesterday", "from"),
        ("from=2024-02-30", "from"),
        ("to=2024-5-1", "to"),
        ("to=0001-01-01", "to"),
        ("from=9999-12-31", "from"),
        ("from=2024-05-02&to=2024-05-01", "to"),
        ("changed_from=2024-05-01", "changed_from"),
        ("changed_before=2024-02-30T00:00:00Z", "changed_before"),
        ("limit=0", "limit"),
        ("limit=501", "limit"),
        ("offset=-1", "offset"),
        ("page=0", "page"),
        ("page=²", "page"),
        ("page=2&offset=0", "page"),
        (f"press={'p' * 61}", "press"),
        (f"station={'s' * 41}", "station"),
        (f"q={'w' * 201}", "q"),
        ("stattion=3", "stattion"),
        ("sort=title", "sort"),
        ("press=N1&press=N2", "press"),
    ],
)
def test_a_bad_value_is_a_400_naming_the_parameter(client, stored, query, field):
    message = refused(client, query, field)
    assert message


def test_the_saved_page_keeps_its_own_bad_day_beside_the_field(client, stored):
    # The page keeps the typed words and says what is wrong; it never fails on a far day.
    for query in ("from=0001-01-01", "to=9999-12-31", "from=2024-02-30"):
        response = client.get(f"/snippets?{query}")
        assert response.status_code == 200
        assert "must be a date" in response.get_data(as_text=True)


def test_the_description_lists_every_parameter_the_list_checks(client):
    document = client.get("/api/v1/openapi.json").get_json()
    operation = document["paths"]["/snippets"]["get"]
    described = {p["name"]: p["schema"] for p in operation["parameters"]}
    assert set(described) == set(snippets_api.LIST_QUERY)
    assert described["order"]["enum"] == list(store.ORDERS)
    assert described["kind"]["enum"] == sorted(CALCULATIONS)
    assert described["limit"]["maximum"] == 500
    assert described["press"]["maxLength"] == 60
    listing = document["components"]["schemas"] if "Listing" in document["components"]["schemas"] else None
    answer = operation["responses"]["200"]["content"]["application/json"]["schema"]
    if listing is not None and "$ref" in answer:
        answer = listing["Listing"]
    assert {"total", "page", "pages", "order"} <= set(answer["properties"])
