"""The Saved list as a register of job records (issue 10, point 7): each snippet's headline
result, pages past 100 with a count, sorting, filters by press, station, kind and date, and
a warning before saving an exact duplicate."""

from __future__ import annotations

import contextlib
import csv
import html
import io
import json
import re
from datetime import UTC, datetime, timedelta

import pytest

from tests.bodies import CONVERT, ESTIMATE, ESTIMATE_BY_IMPRESSIONS, ESTIMATE_UNPRICED, FILM
from tests.conftest import csrf_from
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import store


def text(response) -> str:
    return html.unescape(response.get_data(as_text=True))


def save(client, title, kind="film", inputs=FILM, **fields):
    form = {"csrf_token": csrf_from(client), "kind": kind, "inputs": json.dumps(inputs), "title": title, **fields}
    return client.post("/snippets", data=form)


def rounded(data):
    """Floats to 12 significant digits (a form writes 1.0 where the body said 1), all else as it is."""
    if isinstance(data, dict):
        return {k: rounded(v) for k, v in data.items()}
    if isinstance(data, list):
        return [rounded(v) for v in data]
    return float(f"{data:.12g}") if isinstance(data, float) else data


def titles(page: str) -> list[str]:
    return re.findall(r'<span class="snippet-title">([^<]*)</span>', page)


def test_each_snippet_shows_its_headline_result(client):
    assert save(client, "Film A").status_code == 303
    assert save(client, "Convert A", kind="convert", inputs=CONVERT).status_code == 303
    page = text(client.get("/snippets"))
    # FILM on the substrate: 1.55 µm (the film calculator's headline); CONVERT gives 5.43 cm³/m².
    assert re.search(r"Substrate wet: <strong><span class=\"num\">1\.55</span> µm", page)
    assert re.search(r"Result: <strong><span class=\"num\">5\.43</span> cm³/m²", page)


def test_saved_by_and_changed_by_are_shown_apart(client):
    saved = save(client, "Film A", saved_by="Ada")
    snippet_id = int(saved.headers["Location"].rsplit("/", 1)[1])
    form = {"csrf_token": csrf_from(client), "version": "1", "title": "Film A", "saved_by": "Ada", "changed_by": "Bea"}
    assert client.post(f"/snippets/{snippet_id}/edit", data=form).status_code == 303
    page = text(client.get("/snippets"))
    assert re.search(r"saved by Ada \S+ \S+ \S+ · changed by Bea ", page)


def _many(app, count: int, now: datetime):
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        for number in range(count):
            store.create(
                conn,
                "film",
                FILM,
                {
                    "title": f"Film {number:03d}",
                    "job_number": f"J-{count - number:03d}",
                    "station": str(number % 4 + 1),
                },
                CALCULATIONS,
                now=now - timedelta(minutes=count - number),
            )


def test_pages_past_100_with_a_count(app, client):
    _many(app, 230, datetime(2026, 3, 1, 12, tzinfo=UTC))
    first = text(client.get("/snippets"))
    assert "230 saved, showing 1–100 (page 1 of 3)." in first
    assert len(titles(first)) == 100 and titles(first)[0] == "Film 229"
    assert 'rel="next" href="/snippets?page=2"' in first and "Next 100" in first
    last = text(client.get("/snippets?page=3"))
    assert "showing 201–230 (page 3 of 3)" in last and len(titles(last)) == 30 and titles(last)[-1] == "Film 000"
    assert 'rel="prev"' in last and 'rel="next"' not in last
    # Past the end, or not a page number: still a list, never an error.
    assert "page 3 of 3" in text(client.get("/snippets?page=99"))
    assert "page 1 of 3" in text(client.get("/snippets?page=%C2%B2"))


def test_sorts_by_date_title_or_job_and_keeps_the_sort_across_pages(app, client):
    _many(app, 120, datetime(2026, 3, 1, 12, tzinfo=UTC))
    assert titles(text(client.get("/snippets?sort=oldest")))[0] == "Film 000"
    assert titles(text(client.get("/snippets?sort=title")))[:2] == ["Film 000", "Film 001"]
    by_job = text(client.get("/snippets?sort=job"))
    assert titles(by_job)[0] == "Film 119"  # job J-001
    assert 'href="/snippets?sort=job&amp;page=2"' in client.get("/snippets?sort=job").get_data(as_text=True)
    # An unknown sort is the default, newest first.
    assert titles(text(client.get("/snippets?sort=drop+table")))[0] == "Film 119"


def test_filters_by_station_kind_press_and_date_range(app, client):
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        store.create(
            conn,
            "film",
            FILM,
            {"title": "Early", "station": "3", "press": "N1"},
            CALCULATIONS,
            now=datetime(2026, 1, 10, 12, tzinfo=UTC),
        )
        store.create(
            conn,
            "film",
            FILM,
            {"title": "Late", "station": "5", "press": "N1"},
            CALCULATIONS,
            now=datetime(2026, 2, 20, 12, tzinfo=UTC),
        )
        store.create(
            conn, "convert", CONVERT, {"title": "Other"}, CALCULATIONS, now=datetime(2026, 2, 21, 12, tzinfo=UTC)
        )
    assert titles(text(client.get("/snippets?station=3"))) == ["Early"]
    assert titles(text(client.get("/snippets?kind=convert"))) == ["Other"]
    assert titles(text(client.get("/snippets?press=N1&sort=oldest"))) == ["Early", "Late"]
    assert titles(text(client.get("/snippets?from=2026-02-01"))) == ["Other", "Late"]
    assert titles(text(client.get("/snippets?to=2026-02-20"))) == ["Late", "Early"]
    assert titles(text(client.get("/snippets?from=2026-02-20&to=2026-02-20"))) == ["Late"]
    page = text(client.get("/snippets"))
    assert '<option value="3" >3</option>' in page and '<option value="5" >5</option>' in page
    # A date that is no date: the message beside the field, the typed words kept, the list unfiltered.
    bad = text(client.get("/snippets?from=20.02.2026"))
    assert 'id="e-from">must be a date (YYYY-MM-DD)' in bad and 'value="20.02.2026"' in bad
    assert len(titles(bad)) == 3


def test_saving_an_exact_duplicate_warns_first_and_saves_a_copy_only_when_asked(client):
    assert save(client, "Film A", job_number="24-0117").status_code == 303
    again = save(client, "Film A", job_number="24-0117")
    assert again.status_code == 409
    page = text(again)
    assert "Exactly this is saved already" in page and "Save a second copy" in page
    assert 'name="duplicate_ok" value="1"' in page and 'value="24-0117"' in page
    assert text(client.get("/snippets")).count("Film A") == 1
    # Anything different is no duplicate; asked for, the copy is saved.
    assert save(client, "Film A", job_number="24-0118").status_code == 303
    assert save(client, "Film A", job_number="24-0117", duplicate_ok="1").status_code == 303
    assert "3 saved" in text(client.get("/snippets"))


@pytest.mark.parametrize(
    "body", [ESTIMATE, ESTIMATE_BY_IMPRESSIONS, ESTIMATE_UNPRICED], ids=["run", "impressions", "unpriced"]
)
def test_an_estimate_opens_in_its_calculator_with_every_station(client, body):
    saved = save(client, "Job ink", kind="estimate", inputs=body)
    assert saved.status_code == 303, saved.get_data(as_text=True)
    page = client.get(saved.headers["Location"]).get_data(as_text=True)
    link = re.search(r'href="(/estimate\?[^"]+)">Open in the calculator', page).group(1)
    calculator = text(client.get(html.unescape(link)))
    inputs = json.loads(re.search(r"name=\"inputs\" value='([^']*)'", calculator).group(1))
    # The same job, station by station, worked out the same, ready to change and save as new.
    assert len(inputs["stations"]) == len(body["stations"])
    assert rounded(CALCULATIONS["estimate"](inputs)) == rounded(CALCULATIONS["estimate"](body))


def test_an_estimate_with_an_input_the_form_has_no_field_for_opens_no_calculator():
    from webapp.snippets.reopen import calculator_link

    by_label = {**ESTIMATE, "stations": [{**ESTIMATE["stations"][0], "inked_area_per_label": "10 cm2"}]}
    assert calculator_link("estimate", by_label) is None
    assert calculator_link("estimate", {**ESTIMATE, "stations": []}) is None
    assert calculator_link("estimate", ESTIMATE).startswith("/estimate?")


def test_csv_for_spreadsheets_has_a_bom_plain_numbers_and_local_times(tmp_path):
    from webapp import create_app

    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path), "TIME_ZONE": "Europe/Berlin"})
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        store.create(
            conn, "film", FILM, {"title": "Film A"}, CALCULATIONS, now=datetime(2026, 5, 1, 13, 45, tzinfo=UTC)
        )
        store.create(conn, "convert", CONVERT, {"title": "Convert A"}, CALCULATIONS)
    client = app.test_client()
    for url in ("/snippets/export.csv", "/api/v1/snippets/export.csv"):
        response = client.get(url)
        raw = response.get_data()
        assert raw.startswith(b"\xef\xbb\xbf") and response.mimetype == "text/csv"
        assert "charset=utf-8" in response.headers["Content-Type"]
        rows = list(csv.reader(io.StringIO(raw.decode("utf-8-sig"))))
        header = rows[0]
        assert header[:4] == ["id", "uid", "kind", "title"]
        film = dict(zip(header, rows[1], strict=True))
        # FILM's substrate film: 1.55 µm (the film calculator's headline), a bare number in µm.
        assert (film["result"], film["result_unit"]) == ("substrate_wet", "um")
        assert float(film["result_value"]) == pytest.approx(1.5500031, rel=1e-6)
        assert film["created_local"] == "2026-05-01 15:45 CEST"
        convert = dict(zip(header, rows[2], strict=True))
        assert convert["result"] == "result" and convert["result_unit"] == "cm3/m2"
    # Numbers are bare in the file (a spreadsheet reads them as numbers), text is quoted.
    line = client.get("/snippets/export.csv").get_data(as_text=True).splitlines()[1]
    assert re.search(r',1\.55000\d*,"um",', line)
