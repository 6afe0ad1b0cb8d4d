"""The snippets store and its SQLite file: migrations, versions, the bin, export and import, backup."""

from __future__ import annotations

import contextlib
import json
import sqlite3
from datetime import UTC, datetime, timedelta

import pytest

from calc import InputError
from tests.bodies import ESTIMATE_UNPRICED, FILM
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import exchange, store
from webapp.snippets import rerun as reruns


def save(conn, title="Station 3", **meta):
    return store.create(conn, "film", FILM, {"title": title, **meta}, CALCULATIONS)


# --- migrations -------------------------------------------------------------------


def test_migrate_an_empty_file_to_the_latest_schema(path):
    path.touch()
    assert db.migrate(path) == 0
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
        assert conn.execute("PRAGMA busy_timeout").fetchone()[0] == db.BUSY_TIMEOUT_S * 1000
        tables = {row[0] for row in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    assert {"snippet", "snippet_tag"} <= tables


def test_migrate_twice_changes_nothing(path):
    db.migrate(path)
    assert db.migrate(path) == db.SCHEMA_VERSION


def test_migrate_from_the_first_schema_keeps_snippets_and_splits_tags(path):
    with contextlib.closing(sqlite3.connect(path)) as old:
        old.executescript(db.MIGRATIONS[0])
        old.execute("PRAGMA user_version = 1")
        old.execute(
            "INSERT INTO snippet (uid, kind, title, tags, inputs, results, created_at, updated_at)"
            " VALUES (?, 'film', 'Old one', ?, ?, '{}', '2024-01-02T03:04:05Z', '2024-01-02T03:04:05Z')",
            ("a" * 32, " White,  repeat job ,,white", json.dumps(FILM)),
        )
        old.commit()
    assert db.migrate(path) == 1
    with contextlib.closing(db.connect(path)) as conn:
        snippet = store.get(conn, 1)
        columns = {row["name"] for row in conn.execute("PRAGMA table_info(snippet)")}
    assert snippet["title"] == "Old one"
    assert snippet["tags"] == ["repeat job", "white"]
    assert snippet["inputs"] == FILM
    assert "tags" not in columns


def test_a_newer_file_is_refused_untouched(path):
    with contextlib.closing(sqlite3.connect(path)) as newer:
        newer.execute(f"PRAGMA user_version = {db.SCHEMA_VERSION + 1}")
    with pytest.raises(db.NewerDatabaseError, match="newer"):
        db.migrate(path)


def test_a_failing_migration_leaves_the_file_as_it_was(path, monkeypatch):
    db.migrate(path)
    monkeypatch.setattr(db, "MIGRATIONS", [*db.MIGRATIONS, "CREATE TABLE extra (x); SELECT nonsense FROM nowhere;"])
    monkeypatch.setattr(db, "SCHEMA_VERSION", len(db.MIGRATIONS))
    with pytest.raises(sqlite3.OperationalError):
        db.migrate(path)
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION - 1
        assert conn.execute("SELECT count(*) FROM sqlite_master WHERE name = 'extra'").fetchone()[0] == 0


def test_foreign_keys_remove_tags_with_their_snippet(conn):
    snippet = save(conn, tags="white")
    conn.execute("DELETE FROM snippet WHERE id = ?", (snippet["id"],))
    assert conn.execute("SELECT count(*) FROM snippet_tag").fetchone()[0] == 0


# --- saving and reading ------------------------------------------------------------------


def test_create_works_the_results_out_with_todays_core(conn):
    snippet = save(conn, job_number="24-0117", press="N2", station="3", notes="ok", tags="White, handover")
    assert snippet["results"] == CALCULATIONS["film"](FILM)
    assert snippet["version"] == 1
    assert snippet["tags"] == ["handover", "white"]
    assert len(snippet["uid"]) == 32
    assert snippet["created_at"].endswith("Z")


@pytest.mark.parametrize(
    ("kind", "inputs", "meta"),
    [
        ("film", FILM, {"title": "Only a title"}),
        (
            "estimate",
            ESTIMATE_UNPRICED,
            {
                "title": "  Pouch   quote ",
                "job_number": "24-0117",
                "press": "W1",
                "station": "3",
                "notes": 'Über "quoted" ✓\r\nline two\n',
                "tags": "Weiß, opaque white, Ärger, zebra, apple, Weiß",
                "saved_by": "Ana",
            },
        ),
    ],
)
def test_a_save_answers_and_keeps_exactly_what_reading_it_back_gives(conn, kind, inputs, meta):
    # The answer and the first kept version are made before the write (nothing read back):
    # they must be what the file holds, to the byte for the kept version.
    snippet, created = store.create_once(conn, None, kind, inputs, meta, CALCULATIONS)
    assert created
    assert snippet == store.get(conn, snippet["id"])
    data, changed_by, changed_at = conn.execute(
        "SELECT data, changed_by, changed_at FROM snippet_version WHERE snippet_id = ? AND version = 1",
        (snippet["id"],),
    ).fetchone()
    assert data == json.dumps({**store._state(snippet), "event": "saved"}, ensure_ascii=False)
    assert (changed_by, changed_at) == (snippet["saved_by"], snippet["created_at"])
    assert [v["event"] for v in store.history(conn, snippet["id"])] == ["saved"]


@pytest.mark.parametrize(
    ("meta", "field", "words"),
    [
        ({"title": ""}, "title", "required"),
        ({"title": "x" * 121}, "title", "at most 120"),
        ({"title": "ok", "notes": "n" * 4001}, "notes", "at most 4000"),
        ({"title": "ok", "job_number": "j" * 41}, "job_number", "at most 40"),
        ({"title": "ok", "tags": ",".join(f"t{i}" for i in range(13))}, "tags", "at most 12"),
        ({"title": "ok", "tags": "t" * 31}, "tags", "at most 30"),
        ({"title": 5}, "title", "text"),
    ],
)
def test_limits_are_named_with_the_field(conn, meta, field, words):
    with pytest.raises(InputError) as info:
        store.create(conn, "film", FILM, meta, CALCULATIONS)
    assert info.value.field == field
    assert words in info.value.message


def test_bad_inputs_are_reported_inside_inputs(conn):
    with pytest.raises(InputError) as info:
        store.create(conn, "film", {**FILM, "anilox_to_plate": 2}, {"title": "x"}, CALCULATIONS)
    assert info.value.field == "inputs.anilox_to_plate"
    with pytest.raises(InputError) as info:
        store.create(conn, "nonsense", FILM, {"title": "x"}, CALCULATIONS)
    assert info.value.field == "kind"
    assert conn.execute("SELECT count(*) FROM snippet").fetchone()[0] == 0


def test_search_matches_title_job_notes_and_whole_tags(conn):
    save(conn, "White under-print", job_number="24-0093", press="N1", tags="white")
    save(conn, "Cyan", job_number="24-0117", press="N2", notes="blade changed at 14:00")
    estimate = store.create(conn, "estimate", ESTIMATE_UNPRICED, {"title": "Pouch quote", "press": "W1"}, CALCULATIONS)

    def titles(*args, **kwargs):
        return [s["title"] for s in store.search(conn, *args, **kwargs)[0]]

    assert titles("0117") == ["Cyan"]
    assert titles("BLADE") == ["Cyan"]
    assert titles("white") == ["White under-print"]
    assert titles("24-0") == ["Cyan", "White under-print"]
    assert titles("24- cyan") == ["Cyan"]
    assert titles("100%") == []
    assert titles("_") == []
    assert titles(press="N1") == ["White under-print"]
    assert titles(kind="estimate") == [estimate["title"]]
    assert store.search(conn, limit=1)[1] == 3
    assert store.presses(conn) == ["N1", "N2", "W1"]


# --- versions ----------------------------------------------------------------------------


def test_an_edit_against_an_older_version_is_refused_with_the_newer_one(conn):
    snippet = save(conn)
    first = store.update(conn, snippet["id"], 1, {"notes": "from the tablet"})
    assert first["version"] == 2
    with pytest.raises(store.Conflict) as info:
        store.update(conn, snippet["id"], 1, {"notes": "from the phone"})
    assert info.value.current["notes"] == "from the tablet"
    assert info.value.current["version"] == 2
    assert "someone else" in info.value.message
    assert store.get(conn, snippet["id"])["notes"] == "from the tablet"


def test_update_needs_a_version_and_keeps_untouched_fields(conn):
    snippet = save(conn, job_number="24-0117", tags="a, b")
    with pytest.raises(InputError, match="version"):
        store.update(conn, snippet["id"], None, {"notes": "x"})
    changed = store.update(conn, snippet["id"], "1", {"tags": "c"})
    assert changed["job_number"] == "24-0117"
    assert changed["tags"] == ["c"]


# --- the bin -------------------------------------------------------------------------------


def test_delete_goes_to_the_bin_and_can_be_undone(conn):
    snippet = save(conn)
    store.delete(conn, snippet["id"])
    assert store.search(conn)[1] == 0
    with pytest.raises(store.NotFound):
        store.get(conn, snippet["id"])
    assert [s["id"] for s in store.in_bin(conn)] == [snippet["id"]]
    back = store.restore(conn, snippet["id"])
    assert back["title"] == snippet["title"]
    assert back["version"] == 3
    assert store.in_bin(conn) == []


def test_the_bin_keeps_snippets_for_30_days(conn):
    snippet = save(conn)
    deleted_at = datetime(2024, 3, 1, 12, 0, tzinfo=UTC)
    store.delete(conn, snippet["id"], now=deleted_at)
    assert store.purge_date(store.get(conn, snippet["id"], deleted=True)) == "2024-03-31"
    assert len(store.in_bin(conn, now=deleted_at + timedelta(days=29))) == 1
    assert store.in_bin(conn, now=deleted_at + timedelta(days=31)) == []
    assert conn.execute("SELECT count(*) FROM snippet").fetchone()[0] == 0


def test_delete_with_a_stale_version_is_refused(conn):
    snippet = save(conn)
    store.update(conn, snippet["id"], 1, {"notes": "newer"})
    with pytest.raises(store.Conflict):
        store.delete(conn, snippet["id"], 1)
    assert store.get(conn, snippet["id"])["notes"] == "newer"


# --- re-run --------------------------------------------------------------------------------


def test_rerun_with_the_same_core_gives_the_same_results(conn):
    rerun = reruns.rerun(save(conn), CALCULATIONS)
    assert rerun.same
    assert rerun.changes == []


def test_rerun_names_each_value_that_came_out_differently():
    snippet = {"kind": "film", "inputs": FILM, "results": CALCULATIONS["film"](FILM)}
    snippet["results"]["substrate_wet"]["value"] *= 1.01
    snippet["results"]["plate_wet"]["value"] *= 1 + 1e-12
    rerun = reruns.rerun(snippet, CALCULATIONS)
    assert not rerun.same
    assert [change.where for change in rerun.changes] == ["substrate_wet"]


def test_compare_reports_removed_and_list_changes_but_not_fields_only_today_answers():
    saved = {"stations": [{"ink_mass": {"value": 1.0, "unit": "kg"}}], "total_cost": 3}
    today = {"stations": [{"ink_mass": {"value": 1.0, "unit": "g"}}, {"x": 1}], "extra": "y"}
    where = [change.where for change in reruns.compare(saved, today)]
    # "extra" is new in today's answer (a newer core answers more): not a difference.
    assert where == ["stations[0].ink_mass", "stations[1]", "total_cost"]


def test_rerun_of_inputs_todays_core_refuses_says_why():
    snippet = {"kind": "film", "inputs": {**FILM, "anilox_to_plate": 7}, "results": {}}
    rerun = reruns.rerun(snippet, CALCULATIONS)
    assert rerun.error is not None and rerun.error.field == "inputs.anilox_to_plate"
    assert not rerun.same


# --- export and import ------------------------------------------------------------------------


def test_export_import_round_trip_gives_the_same_data(conn, tmp_path):
    save(conn, "One", job_number="24-0117", tags="white, handover", notes="line 1\nline 2", saved_by="Ana")
    store.create(conn, "estimate", ESTIMATE_UNPRICED, {"title": "Two", "press": "W1"}, CALCULATIONS)
    third = save(conn, "Three")
    store.update(conn, third["id"], 1, {"notes": "edited"})
    exported = json.loads(json.dumps(exchange.export_all(conn)))
    other_path = tmp_path / "other.sqlite3"
    db.migrate(other_path)
    with contextlib.closing(db.connect(other_path)) as other:
        assert exchange.import_all(other, exported) == {"added": 3, "already_here": 0}
        again = exchange.export_all(other)
        assert exchange.import_all(other, exported) == {"added": 0, "already_here": 3}
        assert other.execute("SELECT count(*) FROM snippet").fetchone()[0] == 3
    assert again["snippets"] == exported["snippets"]


def test_a_bad_snippet_in_an_import_adds_nothing(conn):
    good = exchange.export_all(conn)
    save(conn)
    items = exchange.export_all(conn)["snippets"]
    broken = {**items[0], "uid": "b" * 32, "title": "x" * 500}
    data = {**good, "snippets": [{**items[0], "uid": "c" * 32}, broken]}
    with pytest.raises(InputError) as info:
        exchange.import_all(conn, data)
    assert info.value.field == "snippets[1].title"
    assert conn.execute("SELECT count(*) FROM snippet").fetchone()[0] == 1


@pytest.mark.parametrize(
    ("data", "field"),
    [
        ({"format": "something else", "snippets": []}, "format"),
        ({"snippets": "no"}, "snippets"),
        ([{"title": "x"}], "snippets[0].uid"),
        ([{"title": "x", "uid": "a" * 32, "kind": "Film!"}], "snippets[0].kind"),
        ([{"title": "x", "uid": "a" * 32, "kind": "film", "inputs": {}, "results": []}], "snippets[0].results"),
        (
            [{"title": "x", "uid": "a" * 32, "kind": "film", "inputs": {}, "results": {}, "created_at": "yesterday"}],
            "snippets[0].created_at",
        ),
    ],
)
def test_import_names_what_is_wrong(conn, data, field):
    with pytest.raises(InputError) as info:
        exchange.import_all(conn, data)
    assert info.value.field == field


def test_csv_export_has_one_row_per_snippet_and_keeps_formulas_as_text(conn):
    save(conn, "=HYPERLINK(1)", notes="a, b\nc")
    lines = exchange.export_csv(conn).splitlines()
    assert lines[0].startswith('"id","uid","kind","title"')
    assert "'=HYPERLINK(1)" in lines[1]


# --- backup --------------------------------------------------------------------------------------


def test_backup_is_a_consistent_copy_while_a_writer_holds_the_file(conn, path, tmp_path):
    for number in range(5):
        save(conn, f"Snippet {number}")
    target = tmp_path / "copy.sqlite3"
    with contextlib.closing(db.connect(path)) as writer:
        writer.execute("BEGIN IMMEDIATE")
        writer.execute("UPDATE snippet SET title = 'half-done' WHERE id = 1")
        db.backup(path, target)
        writer.execute("ROLLBACK")
    with contextlib.closing(sqlite3.connect(target)) as copy:
        assert copy.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        assert copy.execute("SELECT count(*) FROM snippet").fetchone()[0] == 5
        assert copy.execute("SELECT title FROM snippet WHERE id = 1").fetchone()[0] == "Snippet 0"
    assert not (tmp_path / "copy.sqlite3.partial").exists()
