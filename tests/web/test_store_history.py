"""Snippet history: every change keeps the version before (with who and when), an earlier
version can be brought back, the bin says who deleted; the migration that added this
keeps every snippet of a file from the schema before."""

from __future__ import annotations

import contextlib
import json
import sqlite3
from datetime import UTC, datetime, timedelta

import pytest

from calc import InputError
from tests.bodies import FILM
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import store

T0 = datetime(2026, 3, 2, 8, 0, tzinfo=UTC)


def save(conn, **meta):
    return store.create(conn, "film", FILM, {"title": "Station 3", "saved_by": "Ada", **meta}, CALCULATIONS, now=T0)


def test_every_change_keeps_the_version_before_with_who_and_when(conn):
    s = save(conn, press="Press 2")
    store.update(conn, s["id"], 1, {"press": "Press 4"}, by="Bea", now=T0 + timedelta(hours=1))
    changed = store.update(conn, s["id"], 2, {"notes": "Slow"}, by="Cy", now=T0 + timedelta(hours=2))
    assert (changed["saved_by"], changed["changed_by"]) == ("Ada", "Cy")
    kept = store.history(conn, s["id"])
    assert [v["version"] for v in kept] == [3, 2, 1]
    assert [(v["changed_by"], v["event"]) for v in kept] == [("Cy", "edited"), ("Bea", "edited"), ("Ada", "saved")]
    assert [v["press"] for v in kept] == ["Press 4", "Press 4", "Press 2"]
    assert [v["notes"] for v in kept] == ["Slow", "", ""]
    assert kept[2]["changed_at"] == "2026-03-02T08:00:00Z"
    assert kept[1]["changed_at"] == "2026-03-02T09:00:00Z"
    assert store.version_of(conn, s["id"], 1)["inputs"] == FILM


def test_an_earlier_version_comes_back_as_a_new_version(conn):
    s = save(conn, press="Press 2", tags="white")
    store.update(conn, s["id"], 1, {"press": "Press 4", "tags": "opaque", "title": "Renamed"}, by="Bea")
    back = store.restore_version(conn, s["id"], 1, 2, by="Sue")
    assert (back["version"], back["press"], back["tags"], back["title"]) == (3, "Press 2", ["white"], "Station 3")
    assert back["changed_by"] == "Sue"
    kept = store.history(conn, s["id"])
    assert kept[0]["event"] == "reverted" and kept[0]["restored_from"] == 1
    assert kept[1]["press"] == "Press 4"  # the version it replaced is kept too
    with pytest.raises(store.Conflict):
        store.restore_version(conn, s["id"], 1, 2)  # made against a stale version
    with pytest.raises(store.NotFound):
        store.restore_version(conn, s["id"], 99, 3)


def test_the_bin_says_who_deleted_and_restoring_clears_it(conn):
    s = save(conn)
    gone = store.delete(conn, s["id"], 1, by="Sue", now=T0)
    assert (gone["deleted_by"], gone["deleted_at"]) == ("Sue", "2026-03-02T08:00:00Z")
    assert [b["deleted_by"] for b in store.in_bin(conn, now=T0)] == ["Sue"]
    assert store.history(conn, s["id"])[0]["event"] == "deleted"
    back = store.restore(conn, s["id"], by="Ola")
    assert (back["deleted_by"], back["changed_by"]) == ("", "Ola")
    assert [v["event"] for v in store.history(conn, s["id"])] == ["restored", "deleted", "saved"]


def test_a_name_too_long_is_refused_with_nothing_changed(conn):
    s = save(conn)
    with pytest.raises(InputError, match="at most"):
        store.update(conn, s["id"], 1, {"press": "P"}, by="x" * 200)
    assert store.get(conn, s["id"])["version"] == 1


def test_migrate_from_the_schema_before_keeps_snippets_and_starts_their_history(path):
    before = db.version_before("snippet_history")
    with contextlib.closing(sqlite3.connect(path)) as old:
        for script in db.MIGRATIONS[:before]:
            for statement in db._statements(script):
                old.execute(statement)
        old.execute(f"PRAGMA user_version = {before}")
        old.execute(
            "INSERT INTO snippet (uid, kind, title, saved_by, inputs, results, created_at, updated_at, version)"
            " VALUES ('u1', 'film', 'Old one', 'Ada', ?, '{}', '2024-01-02T03:04:05Z', '2024-01-03T03:04:05Z', 4)",
            (json.dumps(FILM),),
        )
        old.execute("INSERT INTO snippet_tag (snippet_id, tag) VALUES (1, 'white')")
        old.commit()
    assert db.migrate(path) == before
    with contextlib.closing(db.connect(path)) as conn:
        snippet = store.get(conn, 1)
        assert (snippet["title"], snippet["tags"], snippet["version"]) == ("Old one", ["white"], 4)
        assert (snippet["changed_by"], snippet["deleted_by"]) == ("", "")
        assert [v["event"] for v in store.history(conn, 1)] == ["found"]
        store.update(conn, 1, 4, {"press": "Press 9"}, by="Bea")
        kept = store.history(conn, 1)
        assert [(v["version"], v["press"], v["event"]) for v in kept] == [(5, "Press 9", "edited"), (4, "", "found")]
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
