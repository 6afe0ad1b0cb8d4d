"""Import reads back what export writes (issue 10, point 11): the Saved work CSV, as inkfilm
writes it or as a spreadsheet saves it again, imports through the page and the API; into an
empty store it gives the same snippets, into the same store it adds nothing; a file edited
badly by hand is refused naming the row and the column, and nothing of it is added."""

from __future__ import annotations

import contextlib
import csv
import gzip
import io
import json
from datetime import UTC, datetime

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from calc import InputError
from tests.bodies import BY_KIND, FILM, fresh
from tests.conftest import csrf_from
from webapp import create_app
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import exchange, rules, store

URL = "/api/v1/snippets"
KEPT = (
    "uid",
    "kind",
    "inputs",
    "results",
    "title",
    "job_number",
    "press",
    "station",
    "notes",
    "tags",
    "saved_by",
    "changed_by",
    "created_at",
    "updated_at",
    "version",
)
# Texts a spreadsheet would take for formulas, separators, quotes, line breaks, other scripts.
AWKWARD = [
    "=SUM(A1:A3)",
    "'=already marked",
    "-5 % on the cyan",
    "@press",
    'Cyan, process; 2nd "pass"',
    "Crème – 1,5 cm³/m²",
    "x;=1+1|+2",
    "+",
    "''''-x",
]


def new_app(tmp_path, name: str):
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / name)})


@contextlib.contextmanager
def opened(app):
    with contextlib.closing(db.connect(db.database_path(app))) as conn:
        yield conn


def fill(app) -> list[dict]:
    """One snippet of every kind, with awkward text in every field, saved at known times, one edited."""
    made = []
    with opened(app) as conn:
        for number, (kind, body) in enumerate(sorted(BY_KIND.items())):
            text = AWKWARD[number % len(AWKWARD)]
            meta = {
                "title": f"{text} {kind}",
                "job_number": f"24-{number:04d}",
                "press": "N1" if number % 2 else "Wide web 2",
                "station": str(number + 1),
                "notes": f'line one\nline two, {text}\r\nthird; "quoted"',
                "tags": f"{kind}, repeat job",
                "saved_by": "Ada",
            }
            at = datetime(2024, 5, 1 + number, 6, number, 7, tzinfo=UTC)
            made.append(store.create(conn, kind, fresh(body), meta, CALCULATIONS, now=at))
        edited = store.update(
            conn, made[0]["id"], 1, {"notes": "=changed"}, by="Bea", now=datetime(2024, 6, 1, tzinfo=UTC)
        )
        made[0] = edited
    return made


def kept(snippets) -> list[dict]:
    return sorted(({name: s[name] for name in KEPT} for s in snippets), key=lambda s: s["uid"])


def everything(app) -> list[dict]:
    with opened(app) as conn:
        rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL").fetchall()
        return store.rows_to_snippets(conn, rows)


def post_csv(client, body: bytes):
    return client.post(f"{URL}/import", data=body, content_type="text/csv")


def error_of(response, status=400) -> dict:
    assert response.status_code == status, response.get_data(as_text=True)[:500]
    return response.get_json()["error"]


@pytest.fixture
def exported(tmp_path):
    source = new_app(tmp_path, "source")
    made = fill(source)
    response = source.test_client().get(f"{URL}/export.csv")
    assert response.status_code == 200
    return made, response.get_data()


def test_every_kind_round_trips_into_an_empty_store_and_adds_nothing_twice(tmp_path, exported):
    made, body = exported
    assert body.startswith(exchange.CSV_BOM.encode())
    assert {s["kind"] for s in made} == set(CALCULATIONS)
    target = new_app(tmp_path, "target")
    client = target.test_client()
    assert post_csv(client, body).get_json() == {"added": len(made), "already_here": 0}
    assert kept(everything(target)) == kept(made)
    assert post_csv(client, body).get_json() == {"added": 0, "already_here": len(made)}
    assert len(everything(target)) == len(made)
    # The edited one keeps who changed it and its version; its history stays with the shop it came from.
    first = next(s for s in everything(target) if s["uid"] == made[0]["uid"])
    assert (first["changed_by"], first["version"], first["notes"]) == ("Bea", 2, "=changed")


def test_the_import_page_takes_the_csv_and_says_what_it_added(tmp_path, exported):
    made, body = exported
    client = new_app(tmp_path, "target").test_client()
    form = {"csrf_token": csrf_from(client), "file": (io.BytesIO(body), "inkfilm-snippets.csv")}
    response = client.post("/snippets/import", data=form, content_type="multipart/form-data")
    assert response.status_code == 303
    listing = client.get(URL).get_json()
    assert listing["total"] == len(made)
    page = client.get("/snippets").get_data(as_text=True)
    assert f"Imported {len(made)} snippets; 0 were here already." in page
    form = {"csrf_token": csrf_from(client), "file": (io.BytesIO(body), "again.csv")}
    assert client.post("/snippets/import", data=form, content_type="multipart/form-data").status_code == 303
    assert f"Imported 0 snippets; {len(made)} were here already." in client.get("/snippets").get_data(as_text=True)


def _saved_again(body: bytes, *, delimiter=",", bom=True, quoting=csv.QUOTE_MINIMAL, marks=True, crlf=True) -> bytes:
    """``body`` as a spreadsheet may write it back: other quoting and separator, no BOM, its
    text marks (the leading ``'``) dropped as the sheet shows the cells."""
    rows = list(csv.reader(io.StringIO(body.decode("utf-8-sig"), newline="")))
    if not marks:
        rows = [[exchange.spreadsheet_text(cell) for cell in row] for row in rows]
    out = io.StringIO(newline="")
    csv.writer(out, delimiter=delimiter, quoting=quoting, lineterminator="\r\n" if crlf else "\n").writerows(rows)
    out.write("\r\n\r\n" if crlf else "\n")  # the empty lines a spreadsheet leaves at the end
    return (exchange.CSV_BOM if bom else "").encode() + out.getvalue().encode("utf-8")


@pytest.mark.parametrize(
    "variant",
    [
        {},
        {"bom": False},
        {"delimiter": ";"},
        {"quoting": csv.QUOTE_ALL, "crlf": False},
        {"marks": False},
        {"delimiter": ";", "bom": False, "marks": False},
    ],
)
def test_a_csv_saved_again_by_a_spreadsheet_imports_the_same(tmp_path, exported, variant):
    made, body = exported
    target = new_app(tmp_path, "target")
    answer = post_csv(target.test_client(), _saved_again(body, **variant))
    assert answer.get_json() == {"added": len(made), "already_here": 0}, answer.get_data(as_text=True)
    expected = kept(made)
    if variant.get("marks") is False:
        # A sheet that wrote the cells as it shows them: each text as shown. Only a text that
        # itself has a quote before a formula sign ("'=already marked") loses that quote.
        texts = ("title", "job_number", "press", "station", "notes", "saved_by", "changed_by")
        expected = [{**s, **{name: exchange.spreadsheet_text(s[name]) for name in texts}} for s in expected]
        assert expected != kept(made)
    assert kept(everything(target)) == expected


def test_a_gzip_compressed_csv_imports(tmp_path, exported):
    made, body = exported
    target = new_app(tmp_path, "target")
    assert post_csv(target.test_client(), gzip.compress(body)).get_json()["added"] == len(made)


def _edited(body: bytes, row: int, column: str, value: str) -> bytes:
    """``body`` with the cell of ``column`` in spreadsheet row ``row`` (the header is row 1) set to ``value``."""
    rows = list(csv.reader(io.StringIO(body.decode("utf-8-sig"), newline="")))
    rows[row - 1][rows[0].index(column)] = value
    out = io.StringIO(newline="")
    csv.writer(out).writerows(rows)
    return out.getvalue().encode("utf-8")


@pytest.mark.parametrize(
    ("row", "column", "value", "field", "words"),
    [
        (3, "kind", "flim", "row 3, kind", "must be one of"),
        (2, "inputs", '{"anilox_volume": "4 BCM/in2",', "row 2, inputs", "not the JSON"),
        (4, "inputs", "[1, 2]", "row 4, inputs", "JSON object"),
        (5, "title", "", "row 5, title", "required"),
        (6, "title", "t" * 121, "row 6, title", "at most 120"),
        (7, "station", "s" * 41, "row 7, station", "at most 40"),
        (2, "uid", "not-a-uid", "row 2, uid", "32-letter"),
        (3, "created_at", "01/05/2024 06:00", "row 3, created_at", "such as 2024-05-01T13:45:00Z"),
        (4, "version", "two", "row 4, version", "whole number"),
        (5, "changed_by", "b" * 61, "row 5, changed_by", "at most 60"),
        (6, "tags", ", ".join(f"t{n}" for n in range(13)), "row 6, tags", "at most 12"),
    ],
)
def test_a_bad_hand_edit_names_the_row_and_column_and_adds_nothing(
    tmp_path, exported, row, column, value, field, words
):
    made, body = exported
    target = new_app(tmp_path, "target")
    client = target.test_client()
    error = error_of(post_csv(client, _edited(body, row, column, value)))
    assert error["field"] == field
    assert words in error["message"]
    assert everything(target) == []
    # The page says the same, beside the file field.
    form = {"csrf_token": csrf_from(client), "file": (io.BytesIO(_edited(body, row, column, value)), "x.csv")}
    page = client.post("/snippets/import", data=form, content_type="multipart/form-data")
    assert page.status_code == 400
    assert f"Nothing was imported. {field}:" in page.get_data(as_text=True)
    assert everything(target) == []


def test_rows_and_columns_that_do_not_fit_are_named(tmp_path, exported):
    made, body = exported
    client = new_app(tmp_path, "target").test_client()
    text = body.decode("utf-8-sig")
    lines = text.split("\r\n")
    # A uid twice: the second row names the first.
    rows = list(csv.reader(io.StringIO(text, newline="")))
    twice = io.StringIO(newline="")
    csv.writer(twice).writerows([*rows, rows[1]])
    error = error_of(post_csv(client, twice.getvalue().encode()))
    assert (error["field"], "row 2" in error["message"]) == (f"row {len(rows) + 1}, uid", True)
    # A column taken out.
    without = [[cell for at, cell in enumerate(row) if at != rows[0].index("results")] for row in rows]
    out = io.StringIO(newline="")
    csv.writer(out).writerows(without)
    error = error_of(post_csv(client, out.getvalue().encode()))
    assert error["field"] == "row 1" and "results" in error["message"]
    # A cell too many on one row.
    out = io.StringIO(newline="")
    csv.writer(out).writerows([*rows[:3], [*rows[3], "extra"], *rows[4:]])
    error = error_of(post_csv(client, out.getvalue().encode()))
    assert error["field"] == "row 4" and "cells" in error["message"]
    # Saved in a single-byte code page: the row with the first non-UTF-8 letter is named.
    latin = body.decode("utf-8-sig").replace("³", "3").replace("–", "-").encode("latin-1")
    error = error_of(post_csv(client, latin))
    assert error["field"].startswith("row ") and "UTF-8" in error["message"]
    assert lines[0].startswith('"id"')
    assert client.get(URL).get_json()["total"] == 0


def test_an_api_body_of_another_type_is_refused_and_csv_only_where_taken(client):
    # text/plain is what any page of another site may post: never taken.
    assert error_of(client.post(f"{URL}/import", data=b"uid,kind", content_type="text/plain"), 415)["field"] is None
    assert error_of(client.post(URL, data=b"uid,kind", content_type="text/csv"), 415)["field"] is None


# --- every text, through the store functions (no HTTP) -------------------------------------------

TEXT = st.text(st.characters(blacklist_categories=("Cs",)), max_size=40)


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=60))
def test_the_spreadsheet_marks_are_taken_off_exactly(text):
    assert exchange.spreadsheet_text(exchange.spreadsheet_safe(text)) == text
    safe = exchange.spreadsheet_safe(text)
    assert safe[:1] not in ("=", "+", "-", "@", "\t", "\r")


@pytest.fixture
def two(tmp_path):
    conns = []
    with contextlib.ExitStack() as stack:
        for name in ("a", "b"):
            path = tmp_path / f"{name}.sqlite3"
            db.migrate(path)
            conns.append(stack.enter_context(contextlib.closing(db.connect(path))))
        yield conns


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    title=TEXT.filter(lambda t: t.split() and len(" ".join(t.split())) <= rules.LIMITS["title"]),
    notes=TEXT,
    press=TEXT,
    tags=st.lists(st.text(st.characters(blacklist_categories=("Cs",), blacklist_characters=","), max_size=10)),
    kind=st.sampled_from(sorted(BY_KIND)),
)
def test_any_snippet_a_person_can_save_comes_back_from_its_csv(two, title, notes, press, tags, kind):
    source, target = two
    for conn in two:
        conn.execute("DELETE FROM snippet")
    try:
        made = store.create(
            source,
            kind,
            fresh(BY_KIND[kind]),
            {"title": title, "notes": notes, "press": press, "tags": tags},
            CALCULATIONS,
        )
    except InputError:
        return  # refused when saved (too many tags, …): nothing to export
    body = (exchange.CSV_BOM + exchange.export_csv(source)).encode("utf-8")
    assert exchange.import_csv_stream(target, io.BytesIO(body)) == {"added": 1, "already_here": 0}
    back = store.rows_to_snippets(target, target.execute("SELECT * FROM snippet").fetchall())
    assert kept(back) == kept([made])
    assert exchange.import_csv_stream(target, io.BytesIO(body)) == {"added": 0, "already_here": 1}


def test_the_json_and_the_csv_export_import_the_same_snippets(tmp_path, exported):
    made, body = exported
    by_csv, by_json = new_app(tmp_path, "csv"), new_app(tmp_path, "json")
    post_csv(by_csv.test_client(), body)
    with opened(by_csv) as conn:
        export = json.dumps(exchange.export_all(conn))
    by_json.test_client().post(f"{URL}/import", data=export, content_type="application/json")
    assert kept(everything(by_json)) == kept(everything(by_csv)) == kept(made)
    assert FILM  # the bodies come from tests.bodies


def test_an_upload_without_a_telling_name_is_read_by_what_it_holds(tmp_path, exported):
    made, body = exported
    client = new_app(tmp_path, "target").test_client()
    for name in ("export", "inkfilm-snippets.txt"):
        form = {"csrf_token": csrf_from(client), "file": (io.BytesIO(body), name)}
        assert client.post("/snippets/import", data=form, content_type="multipart/form-data").status_code == 303
    assert client.get(URL).get_json()["total"] == len(made)
    export = client.get(f"{URL}/export").get_data()
    other = new_app(tmp_path, "other").test_client()
    form = {"csrf_token": csrf_from(other), "file": (io.BytesIO(gzip.compress(export)), "backup")}
    assert other.post("/snippets/import", data=form, content_type="multipart/form-data").status_code == 303
    assert other.get(URL).get_json()["total"] == len(made)


# --- the JSON import's quick reading --------------------------------------------------------------


def test_an_export_read_quickly_gives_what_the_careful_reading_gives(tmp_path, exported):
    made, _ = exported
    source = new_app(tmp_path, "source")
    raw = source.test_client().get(f"{URL}/export").get_data()
    assert raw.startswith(b'{"format": "inkfilm-snippets"')
    assert exchange._laid_out_as_export(raw[: exchange._HEAD_BYTES]) == "snippets.item"
    assert exchange._laid_out_as_export(raw[: len(raw) // 2]) == "snippets.item"  # a head ends mid-snippet
    assert exchange._laid_out_as_export(b"[" + raw[raw.index(b"{", 2) : len(raw) // 2]) == "item"
    quick = list(exchange._json_items(io.BufferedReader(io.BytesIO(raw))))
    careful = list(exchange._stream_items(io.BufferedReader(io.BytesIO(raw))))
    assert quick == careful and len(quick) == len(made)
    bare = json.dumps(json.loads(raw)["snippets"]).encode()
    assert exchange._laid_out_as_export(bare) == "item"
    assert list(exchange._json_items(io.BufferedReader(io.BytesIO(bare)))) == careful
    # Another layout is read carefully: format after the list, or another format.
    later = json.dumps({"snippets": json.loads(raw)["snippets"], "format": "other"}).encode()
    assert exchange._laid_out_as_export(later) is None
    with pytest.raises(InputError) as info:
        list(exchange._json_items(io.BufferedReader(io.BytesIO(later))))
    assert info.value.field == "format"
    # A cut export names the snippet it stopped in, and nothing is added.
    target = new_app(tmp_path, "target").test_client()
    cut = target.post(f"{URL}/import", data=raw[: len(raw) // 2], content_type="application/json")
    field = error_of(cut)["field"]
    assert field.startswith("snippets[") and 0 < int(field[9:].split("]")[0]) < len(made)
    assert target.get(URL).get_json()["total"] == 0
    # Imported twice: nothing the second time, and the search index holds each once.
    for added in (len(made), 0):
        assert target.post(f"{URL}/import", data=raw, content_type="application/json").get_json()["added"] == added
    assert target.get(f"{URL}?q=repeat").get_json()["total"] == len(made)
    assert target.get(f"{URL}?q=sum").get_json()["total"] == 1


def test_the_search_triggers_are_back_after_an_import_that_worked_or_failed(tmp_path, exported):
    made, body = exported
    target = new_app(tmp_path, "target")
    client = target.test_client()
    with opened(target) as conn:
        triggers = conn.execute(exchange._SEARCH_TRIGGERS).fetchall()
    assert len(triggers) == 5
    error_of(post_csv(client, _edited(body, 3, "kind", "flim")))
    assert post_csv(client, body).get_json()["added"] == len(made)
    with opened(target) as conn:
        assert conn.execute(exchange._SEARCH_TRIGGERS).fetchall() == triggers
        searched = conn.execute("SELECT count(*) FROM snippet_search").fetchone()[0]
    assert searched == len(made)
    saved = client.post(URL, json={"kind": "film", "inputs": FILM, "title": "Violet after import", "tags": ["late"]})
    assert saved.status_code == 201
    assert [s["title"] for s in client.get(f"{URL}?q=violet late").get_json()["snippets"]] == ["Violet after import"]
