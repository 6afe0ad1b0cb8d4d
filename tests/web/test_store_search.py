"""Search and the Saved list's store queries: FTS5 kept in step by triggers, migrated for old files,
any typed text safe, filters, sorts, distinct presses and stations, duplicates."""

from __future__ import annotations

import contextlib
import sqlite3
from datetime import date, timedelta

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from calc import InputError
from tests.bodies import FILM
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import store

BEFORE = db.version_before("snippet_search")


def save(conn, title="Station 3", **meta):
    return store.create(conn, "film", FILM, {"title": title, **meta}, CALCULATIONS)


def titles(conn, *args, **kwargs):
    return [s["title"] for s in store.search(conn, *args, **kwargs)[0]]


def test_a_file_of_the_version_before_is_migrated_and_its_snippets_are_found(path):
    with contextlib.closing(sqlite3.connect(path)) as old:
        for script in db.MIGRATIONS[:BEFORE]:
            old.executescript(script)
        old.execute(f"PRAGMA user_version = {BEFORE}")
        rows = [
            (1, "a" * 32, "Opaque white on kraft", "24-0117", "N1", "3", "blade changed", None),
            (2, "b" * 32, "Cyan proof", "24-0200", "W1", "1", "", None),
            (3, "c" * 32, "Binned white", "24-0300", "N2", "", "", "2024-05-02T00:00:00Z"),
        ]
        old.executemany(
            "INSERT INTO snippet (id, uid, kind, title, job_number, press, station, notes, inputs, results,"
            " created_at, updated_at, deleted_at) VALUES (?, ?, 'film', ?, ?, ?, ?, ?, '{}', '{}',"
            " '2024-05-01T00:00:00Z', '2024-05-01T00:00:00Z', ?)",
            rows,
        )
        old.execute("INSERT INTO snippet_tag (snippet_id, tag) VALUES (2, 'handover')")
        old.commit()
    assert db.migrate(path) == BEFORE
    with contextlib.closing(db.connect(path)) as conn:
        assert titles(conn, "white") == ["Opaque white on kraft"]
        assert titles(conn, "hand") == ["Cyan proof"]
        assert titles(conn, "0117") == ["Opaque white on kraft"]
        assert titles(conn, "blade") == ["Opaque white on kraft"]
        assert store.presses(conn) == ["N1", "W1"]
        assert store.stations(conn) == ["1", "3"]


def test_the_index_follows_edits_tags_the_bin_and_restores(conn):
    snippet = save(conn, "Magenta", tags="trial")
    assert titles(conn, "mag") == ["Magenta"]
    assert titles(conn, "tri") == ["Magenta"]
    store.update(conn, snippet["id"], 1, {"title": "Violet", "tags": "repeat job"})
    assert titles(conn, "mag") == []
    assert titles(conn, "trial") == []
    assert titles(conn, "viol repeat") == ["Violet"]
    store.delete(conn, snippet["id"])
    assert store.search(conn, "violet") == ([], 0)
    store.restore(conn, snippet["id"])
    assert titles(conn, "violet") == ["Violet"]
    store.delete(conn, snippet["id"])
    conn.execute("DELETE FROM snippet WHERE id = ?", (snippet["id"],))
    assert conn.execute("SELECT count(*) FROM snippet_search").fetchone()[0] == 0


def test_words_and_prefixes_as_they_are_typed(conn):
    save(conn, "Crème opaque", job_number="24-0117")
    save(conn, "Cyan", job_number="25-0001")
    assert titles(conn, "creme") == ["Crème opaque"]
    assert titles(conn, "24-01") == ["Crème opaque"]
    assert titles(conn, "24-0") == ["Crème opaque"]
    assert titles(conn, "c") == []  # one letter: a whole word only
    assert sorted(titles(conn, "cr cy")) == []
    assert titles(conn, "cy 25") == ["Cyan"]
    assert titles(conn, "NEAR(cyan)") == []
    assert titles(conn, 'cyan"') == ["Cyan"]


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.text(max_size=300))
def test_any_typed_text_searches_without_an_error(conn, text):
    if not conn.execute("SELECT 1 FROM snippet LIMIT 1").fetchone():
        save(conn, 'Cyan "NEAR" AND * title:x ^ - OR', notes="a")
    snippets, total = store.search(conn, text)
    assert total >= len(snippets) >= 0


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    st.lists(
        st.sampled_from(['"', "*", "-", "^", "(", ")", ":", "NEAR", "AND", "OR", "NOT", "+", "title"]), max_size=12
    )
)
def test_fts_syntax_typed_is_taken_as_words(conn, pieces):
    store.search(conn, "".join(pieces))
    store.search(conn, " ".join(pieces), press="N1")


def test_filters_sorts_pages_and_counts(conn):
    save(conn, "b first", press="N1", station="2", job_number="24-0002")
    save(conn, "A second", press="N2", station="10", job_number="24-0010")
    store.create(conn, "convert", {"quantity": "4 BCM/in2", "to": "cm3/m2"}, {"title": "c third"}, CALCULATIONS)
    assert titles(conn) == ["c third", "A second", "b first"]
    assert titles(conn, order="oldest") == ["b first", "A second", "c third"]
    assert titles(conn, order="title") == ["A second", "b first", "c third"]
    assert titles(conn, order="job") == ["b first", "A second", "c third"]  # no job number last
    assert titles(conn, station="10") == ["A second"]
    assert titles(conn, kind="convert") == ["c third"]
    assert titles(conn, press="N1", q="first") == ["b first"]
    assert store.search(conn, limit=1, offset=1)[1] == 3
    assert titles(conn, limit=1, offset=1) == ["A second"]
    assert store.search(conn, offset=10) == ([], 3)
    today = store.now_text()[:10]
    tomorrow = (date.fromisoformat(today) + timedelta(days=1)).isoformat()
    day = {"changed_from": today + "T00:00:00Z", "changed_before": tomorrow + "T00:00:00Z"}
    assert len(titles(conn, **day)) == 3
    assert titles(conn, changed_before="2000-01-01T00:00:00Z") == []
    assert titles(conn, changed_from=tomorrow + "T00:00:00Z") == []
    assert store.stations(conn) == ["2", "10"]
    for field, bad in (("changed_from", "yesterday"), ("changed_before", "2024-02-30")):
        with pytest.raises(InputError) as info:
            store.search(conn, **{field: bad})
        assert info.value.field == field
    with pytest.raises(InputError) as info:
        store.search(conn, order="colour")
    assert info.value.field == "order"


def test_many_matches_walk_the_sort_order_and_agree_with_few(conn, monkeypatch):
    for number in range(12):
        save(conn, f"Cyan {number}", job_number=f"24-{number:04d}")
    few = store.search(conn, "cyan", limit=5, offset=2)
    monkeypatch.setattr(store, "_ROW_COST", 10**9)
    assert store.search(conn, "cyan", limit=5, offset=2) == few
    assert few[1] == 12


def test_an_exact_duplicate_is_found(conn):
    first = save(conn, "Cyan", job_number="24-0117")
    assert store.same_as(conn, "film", dict(FILM), {"title": " Cyan ", "job_number": "24-0117"})["id"] == first["id"]
    assert store.same_as(conn, "film", dict(FILM), {"title": "Cyan", "job_number": "24-0118"}) is None
    assert (
        store.same_as(conn, "film", {**FILM, "anilox_to_plate": 0.4}, {"title": "Cyan", "job_number": "24-0117"})
        is None
    )
    assert store.same_as(conn, "convert", dict(FILM), {"title": "Cyan", "job_number": "24-0117"}) is None
