"""The store at 10,000 snippets (the CI-sized version of benchmarks/store_*.py): search, the
Saved page's live search and filter menus, export and import give the right answers at that size.

The file is made once per module by the benchmark's filler (one executemany per 20,000 rows) and
copied for the tests that write. Answers are checked against plain SQL and Python over every row.
"""

from __future__ import annotations

import contextlib
import csv
import gzip
import io
import json
import re
import shutil
import sqlite3
import zlib

import pytest

from benchmarks.store_fill import fill
from webapp import create_app
from webapp.common import db
from webapp.snippets import exchange, store

COUNT = 10_000
WORD = re.compile(r"[^\W_]+")


@pytest.fixture(scope="module")
def filled(tmp_path_factory):
    return fill(tmp_path_factory.mktemp("store10k"), COUNT, seed=16, quiet=True, per_kind=12)


@pytest.fixture
def conn(filled):
    with contextlib.closing(db.connect(filled)) as conn:
        yield conn


@pytest.fixture
def client(filled, tmp_path):
    data = tmp_path / "data"
    data.mkdir()
    shutil.copy(filled, data / db.FILENAME)
    return create_app({"TESTING": True, "DATA_DIR": str(data)}).test_client()


def _live(conn) -> list[sqlite3.Row]:
    return conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL").fetchall()


def _words(conn, row) -> set[str]:
    tags = " ".join(t for (t,) in conn.execute("SELECT tag FROM snippet_tag WHERE snippet_id = ?", (row["id"],)))
    text = " ".join([row["title"], row["job_number"], row["notes"], tags])
    return set(WORD.findall(text.lower()))


def test_the_file_has_ten_thousand_snippets_some_in_the_bin(conn):
    assert conn.execute("SELECT count(*) FROM snippet").fetchone()[0] == COUNT
    assert 0 < conn.execute("SELECT count(*) FROM snippet WHERE deleted_at IS NOT NULL").fetchone()[0] < COUNT // 10


def test_search_finds_exactly_the_snippets_holding_every_word_whole_or_by_its_start(conn):
    live = _live(conn)
    words = {row["id"]: _words(conn, row) for row in live}
    for typed in ("cyan", "cya", "c", "mag film", "rep job", "xyzzy"):
        wanted = {
            id_
            for id_, have in words.items()
            if all((w in have) if len(w) == 1 else any(h.startswith(w) for h in have) for w in typed.lower().split())
        }
        found, total = store.search(conn, typed, limit=len(live))
        assert total == len(wanted), typed
        assert {s["id"] for s in found} == wanted, typed


def test_filters_and_pages_match_plain_sql(conn):
    press = conn.execute("SELECT press FROM snippet WHERE press != '' LIMIT 1").fetchone()[0]
    expected = [
        r["id"]
        for r in conn.execute(
            "SELECT id FROM snippet WHERE deleted_at IS NULL AND press = ? ORDER BY updated_at DESC, id DESC", (press,)
        )
    ]
    pages, offset = [], 0
    while True:
        page, total = store.search(conn, press=press, limit=700, offset=offset)
        assert total == len(expected)
        if not page:
            break
        pages.extend(s["id"] for s in page)
        offset += 700
    assert sorted(pages) == sorted(expected)
    assert len(set(pages)) == len(pages)


def test_the_filter_menus_list_every_press_and_station_in_use(conn):
    for column, listed in (("press", store.presses(conn)), ("station", store.stations(conn))):
        distinct = {
            v
            for (v,) in conn.execute(
                f"SELECT DISTINCT {column} FROM snippet WHERE deleted_at IS NULL AND {column} != ''"
            )
        }
        assert set(listed) == distinct and len(listed) == len(distinct)


def test_the_saved_page_live_search_answers_from_the_index_as_words_are_typed(client, filled):
    with contextlib.closing(db.connect(filled)) as conn:
        presses = store.presses(conn)
        for typed in ("c", "cy", "cyan", "cyan fi"):
            _, total = store.search(conn, typed)
            response = client.get(
                "/snippets", query_string={"q": typed}, headers={"HX-Request": "true", "HX-Target": "snippet-results"}
            )
            assert response.status_code == 200
            page = response.get_data(as_text=True)
            assert f"{total:,}" in page or str(total) in page, typed
        full = client.get("/snippets").get_data(as_text=True)
    for press in presses:
        assert f'value="{press}"' in full


def test_the_export_streams_compressed_every_live_snippet_and_imports_back(client, conn, tmp_path):
    # What a browser sends: Flask-Compress streams zstd, br or deflate (never gzip for a stream).
    browser = client.get("/api/v1/snippets/export", headers={"Accept-Encoding": "gzip, deflate, br, zstd"})
    assert browser.is_streamed and browser.headers["Content-Encoding"] in ("zstd", "br", "deflate")
    response = client.get("/api/v1/snippets/export", headers={"Accept-Encoding": "deflate"})
    assert response.status_code == 200
    assert response.is_streamed
    assert response.headers["Content-Encoding"] == "deflate"
    wire = response.get_data()
    raw = zlib.decompress(wire)
    assert len(wire) < len(raw) / 4
    data = json.loads(raw)
    live = _live(conn)
    assert data["format"] == exchange.EXPORT_FORMAT
    assert [s["uid"] for s in data["snippets"]] == [
        r["uid"] for r in conn.execute("SELECT uid FROM snippet WHERE deleted_at IS NULL ORDER BY created_at, id")
    ]
    assert len(data["snippets"]) == len(live)
    first = data["snippets"][0]
    assert first == {
        name: store.get(conn, conn.execute("SELECT id FROM snippet WHERE uid = ?", (first["uid"],)).fetchone()[0])[name]
        for name in exchange.EXPORT_FIELDS
    }

    # The realistic 10k export (over the app's 8 MiB body limit) imports back through the page and the API.
    assert len(raw) > 8 * 1024 * 1024
    other = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "other")}).test_client()
    response = other.post("/api/v1/snippets/import", data=raw, content_type="application/json")
    assert response.status_code == 200, response.get_data(as_text=True)[:300]
    assert response.get_json() == {"added": len(live), "already_here": 0}
    again = other.post("/api/v1/snippets/import", data=gzip.compress(raw), content_type="application/json")
    assert again.get_json() == {"added": 0, "already_here": len(live)}
    back = json.loads(other.get("/api/v1/snippets/export").get_data())
    assert [s["uid"] for s in back["snippets"]] == [s["uid"] for s in data["snippets"]]


def test_a_cut_export_or_a_repeated_snippet_at_the_end_adds_nothing(client, tmp_path):
    raw = client.get("/api/v1/snippets/export").get_data()
    other = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "other")}).test_client()
    cut = other.post("/api/v1/snippets/import", data=raw[: len(raw) - 5000], content_type="application/json")
    assert cut.status_code == 400
    assert cut.get_json()["error"]["field"].startswith("snippets[")
    data = json.loads(raw)
    data["snippets"].append(data["snippets"][0])
    last = len(data["snippets"]) - 1
    repeated = other.post("/api/v1/snippets/import", data=json.dumps(data), content_type="application/json")
    assert repeated.status_code == 400
    assert repeated.get_json()["error"]["field"] == f"snippets[{last}].uid"
    assert other.get("/api/v1/snippets").get_json()["total"] == 0


def test_the_csv_export_streams_one_row_per_live_snippet(client, conn):
    response = client.get("/api/v1/snippets/export.csv", headers={"Accept-Encoding": "deflate"})
    assert response.is_streamed and response.headers["Content-Encoding"] == "deflate"
    rows = list(csv.reader(io.StringIO(zlib.decompress(response.get_data()).decode())))
    assert len(rows) == 1 + len(_live(conn))
