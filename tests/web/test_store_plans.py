"""The Saved list's queries at any size: every plan ``store.search`` can choose gives the page a
plain filter-and-sort in Python gives; each query names a live-snippet index and never sorts the
whole store; the kept counts (``snippet_tally``) follow every save, edit, bin, restore, purge
and import, and a file of the version before is migrated with its counts."""

from __future__ import annotations

import contextlib
import random
import re
import sqlite3
from datetime import UTC, datetime, timedelta

import pytest

from tests.bodies import FILM
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import exchange, store

BEFORE = db.version_before("snippet_list_plans")
PRESSES = ["", "N1", "N2", "W1"]
STATIONS = ["", "1", "3", "White"]
KINDS = ["film", "convert"]
WORDS = ["cyan", "magenta", "opaque", "white", "kraft", "bopp"]
CONVERT = {"quantity": "4.5 BCM/in2", "to": "cm3/m2"}


def fill(conn, count=80, seed=16):
    """``count`` snippets of mixed kinds, presses, stations, titles, job numbers and tags, with
    changes at times that tie now and then; a few in the bin. Returns the live ones' rows."""
    rng = random.Random(seed)
    start = datetime(2025, 3, 1, tzinfo=UTC)
    for number in range(count):
        kind = rng.choice(KINDS)
        meta = {
            "title": " ".join(rng.sample(WORDS, rng.randint(1, 3))).capitalize() + f" {number}",
            "job_number": rng.choice(["", f"25-{rng.randint(1, 40):04d}"]),
            "press": rng.choice(PRESSES),
            "station": rng.choice(STATIONS),
            "tags": rng.choice(["", "trial", "repeat job"]),
        }
        inputs = FILM if kind == "film" else CONVERT
        store.create(conn, kind, dict(inputs), meta, CALCULATIONS, now=start + timedelta(hours=rng.randint(0, 60)))
    for snippet_id in rng.sample(range(1, count + 1), count // 10):
        store.delete(conn, snippet_id)
    return conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL").fetchall()


def expected(conn, rows, q="", order="newest", press="", station="", kind="", since="", before=""):
    """The ids ``store.search`` should give, worked out in Python from every live row."""
    tags = {}
    for snippet_id, tag in conn.execute("SELECT snippet_id, tag FROM snippet_tag"):
        tags.setdefault(snippet_id, []).extend(tag.lower().split())

    def columns(row):
        return [row["title"], row["job_number"], row["notes"], " ".join(tags.get(row["id"], []))]

    def found(typed, text):
        # A typed word is a phrase of its letter-and-digit pieces, the last one found by its start.
        pieces, words = re.findall(r"[^\W_]+", typed.lower()), re.findall(r"[^\W_]+", text.lower())
        return any(
            words[i : i + len(pieces) - 1] == pieces[:-1] and words[i + len(pieces) - 1].startswith(pieces[-1])
            for i in range(len(words) - len(pieces) + 1)
        )

    def holds(row):
        return all(any(found(typed, text) for text in columns(row)) for typed in q.split())

    kept = [
        r
        for r in rows
        if holds(r)
        and (not press or r["press"] == press)
        and (not station or r["station"] == station)
        and (not kind or r["kind"] == kind)
        and (not since or r["updated_at"] >= since)
        and (not before or r["updated_at"] < before)
    ]
    keys = {
        "newest": lambda r: (r["updated_at"], r["id"]),
        "oldest": lambda r: (r["updated_at"], r["id"]),
        "title": lambda r: (r["title"].lower(), r["id"]),
        "job": lambda r: (r["job_number"] == "", r["job_number"].lower(), r["station"], r["id"]),
    }
    kept.sort(key=keys[order], reverse=order == "newest")
    return [r["id"] for r in kept]


ASKED = [
    {},
    {"press": "N2"},
    {"kind": "convert"},
    {"station": "3", "press": "N1"},
    {"press": "W1", "kind": "film", "station": "White"},
    {"since": "2025-03-02T00:00:00Z"},
    {"since": "2025-03-01T12:00:00Z", "before": "2025-03-02T06:00:00Z", "press": "N2"},
    {"q": "cyan"},
    {"q": "cy wh"},
    {"q": "kraft", "press": "N1"},
    {"q": "opaque", "kind": "film", "since": "2025-03-02T00:00:00Z"},
    {"q": "trial"},
    {"q": "25-00"},
]


@pytest.mark.parametrize("row_cost", [0, store._ROW_COST, 10**9], ids=["always-fetch", "as-shipped", "always-walk"])
def test_every_plan_gives_the_page_a_plain_sort_gives(conn, monkeypatch, row_cost):
    monkeypatch.setattr(store, "_ROW_COST", row_cost)
    rows = fill(conn)
    for asked in ASKED:
        for order in store.ORDERS:
            want = expected(conn, rows, order=order, **asked)
            for limit, offset in ((7, 0), (7, 5), (100, 0), (3, len(want) - 2)):
                args = {k: v for k, v in asked.items() if k not in ("since", "before")}
                snippets, total = store.search(
                    conn,
                    **args,
                    changed_from=asked.get("since", ""),
                    changed_before=asked.get("before", ""),
                    order=order,
                    limit=limit,
                    offset=max(offset, 0),
                )
                assert total == len(want), (asked, order)
                assert [s["id"] for s in snippets] == want[max(offset, 0) : max(offset, 0) + limit], (asked, order)


def plans_of(conn, call) -> list[str]:
    """The query plans of the SELECTs on ``snippet`` that ``call`` makes."""
    statements: list[str] = []
    conn.set_trace_callback(statements.append)
    try:
        call()
    finally:
        conn.set_trace_callback(None)
    plans = []
    for sql in statements:
        if sql.startswith("SELECT") and " snippet s " in sql:
            # The trace gives the statement with its values in place: plan it as it ran.
            plans.append(" / ".join(row[3] for row in conn.execute("EXPLAIN QUERY PLAN " + sql)))
    return plans


def mislead(conn):
    """Statistics like a big shop's file after ANALYZE: "deleted_at IS NULL" looks rare. The
    named indexes must not care."""
    conn.execute("ANALYZE")
    conn.execute("DELETE FROM sqlite_stat1 WHERE idx = 'snippet_binned'")
    conn.execute("INSERT INTO sqlite_stat1 VALUES ('snippet', 'snippet_binned', '1000000 1 1')")
    conn.execute("UPDATE sqlite_stat1 SET stat = '1000000 100000 1 1 1 1' WHERE idx LIKE 'snippet_live_%'")
    conn.commit()
    conn.execute("ANALYZE sqlite_master")  # the planner reads the statistics again


@pytest.mark.parametrize(
    "asked",
    [{}, {"press": "N2"}, {"kind": "film"}, {"station": "3"}, {"press": "N1", "kind": "film"}, {"q": "cyan"}],
    ids=lambda asked: ",".join(asked) or "nothing",
)
@pytest.mark.parametrize("order", list(store.ORDERS))
def test_a_page_of_many_matches_walks_a_named_index_and_never_sorts_them_all(conn, monkeypatch, asked, order):
    fill(conn, count=60)
    mislead(conn)
    monkeypatch.setattr(store, "_ROW_COST", 10**9)  # as with many matches in a big store
    plans = plans_of(conn, lambda: store.search(conn, **asked, order=order, limit=5))
    assert plans, "search ran no query on snippet"
    for plan in plans:
        assert "INDEX snippet_live_" in plan, plan
        # A sort of the ties of one job number ("RIGHT PART") is fine; a sort of all is not.
        assert "USE TEMP B-TREE FOR ORDER BY" not in plan, plan
        assert "SCAN s " not in plan.replace("SCAN s USING", ""), plan  # an index walk, not the table


def test_a_page_of_few_matches_sorts_only_them(conn, monkeypatch):
    fill(conn, count=60)
    mislead(conn)
    monkeypatch.setattr(store, "_ROW_COST", 0)
    plans = plans_of(conn, lambda: store.search(conn, "cyan", press="N2", order="title", limit=5))
    assert plans and all("INDEX snippet_live_press (press=?)" in plan for plan in plans), plans


def tally_is_right(conn) -> bool:
    kept = conn.execute(
        "SELECT kind, press, station, live FROM snippet_tally WHERE live != 0 ORDER BY 1, 2, 3"
    ).fetchall()
    counted = conn.execute(
        "SELECT kind, press, station, count(*) FROM snippet WHERE deleted_at IS NULL GROUP BY 1, 2, 3 ORDER BY 1, 2, 3"
    ).fetchall()
    return [tuple(r) for r in kept] == [tuple(r) for r in counted]


def test_the_kept_counts_follow_saves_edits_the_bin_restores_purges_and_imports(conn):
    fill(conn, count=30)
    assert tally_is_right(conn)
    snippet = store.create(conn, "film", dict(FILM), {"title": "Cyan", "press": "N1"}, CALCULATIONS)
    store.update(conn, snippet["id"], 1, {"press": "W1", "station": "3"})
    assert tally_is_right(conn)
    assert store.search(conn, press="W1", station="3")[1] >= 1
    store.delete(conn, snippet["id"])
    assert tally_is_right(conn)
    store.restore(conn, snippet["id"])
    assert tally_is_right(conn)
    store.delete(conn, snippet["id"])
    store.purge(conn, now=datetime.now(UTC) + timedelta(days=store.BIN_DAYS + 1))
    assert tally_is_right(conn)
    exported = exchange.export_all(conn)
    conn.execute("DELETE FROM snippet")  # as if a new server: the import brings them all back
    conn.commit()
    assert tally_is_right(conn) and store.search(conn)[1] == 0
    exchange.import_all(conn, exported)
    assert tally_is_right(conn)
    assert store.search(conn)[1] == len(exported["snippets"])


def test_a_file_of_the_version_before_is_migrated_with_its_counts(path):
    with contextlib.closing(sqlite3.connect(path)) as old:
        for script in db.MIGRATIONS[:BEFORE]:
            old.executescript(script)
        old.execute(f"PRAGMA user_version = {BEFORE}")
        old.executemany(
            "INSERT INTO snippet (uid, kind, title, press, station, inputs, results, created_at, updated_at,"
            " deleted_at) VALUES (?, ?, ?, ?, '', '{}', '{}', '2024-05-01T00:00:00Z', ?, ?)",
            [
                ("a" * 32, "film", "Cyan", "N1", "2024-05-02T00:00:00Z", None),
                ("b" * 32, "film", "Magenta", "N1", "2024-05-03T00:00:00Z", None),
                ("c" * 32, "convert", "White", "N2", "2024-05-01T00:00:00Z", None),
                ("d" * 32, "film", "Binned", "N1", "2024-05-04T00:00:00Z", store.now_text()),
            ],
        )
        old.commit()
    assert db.migrate(path) == BEFORE
    with contextlib.closing(db.connect(path)) as conn:
        assert tally_is_right(conn)
        assert store.search(conn, press="N1") == (store.search(conn, press="N1")[0], 2)
        assert [s["title"] for s in store.search(conn, order="title")[0]] == ["Cyan", "Magenta", "White"]
        assert [s["title"] for s in store.in_bin(conn)] == ["Binned"]
