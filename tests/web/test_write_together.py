"""Group commit (``db.write_together``) and reads beside writers: correctness under concurrency, not speed.

- many threads saving at once: every acknowledged save is there exactly once, with its own id and
  its own contents, and the saves queued meanwhile were committed together (one transaction);
- an error in one write of a batch (a bad save, an exception after its SQL ran) undoes that write
  only, and its caller alone gets the error;
- a full disk (SQLite's own SQLITE_FULL, via ``max_page_count``) fails every write of the batch,
  and over HTTP each save is a 503 with nothing added;
- reads never wait for the write lock: a search and a snippet are answered while a writer holds it.
"""

from __future__ import annotations

import contextlib
import sqlite3
import threading
import time

import pytest

from tests.bodies import FILM
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import store

URL = "/api/v1/snippets"
DISK_MESSAGE = "the server cannot write its data (disk full or read-only); nothing was saved"
# Not a speed limit: a guard so that a hang fails the test instead of stalling the suite.
HANG_GUARD_S = 60


def insert(writer, uid: str, title: str, notes: str = "") -> int:
    """A bare snippet row, as the store writes one; its id."""
    return writer.execute(
        "INSERT INTO snippet (uid, kind, title, notes, inputs, results, created_at, updated_at, version)"
        " VALUES (?, 'film', ?, ?, '{}', '{}', '2026-12-02T15:00:00Z', '2026-12-02T15:00:00Z', 1)",
        (uid, title, notes),
    ).lastrowid


@pytest.fixture
def path(tmp_path):
    path = tmp_path / db.FILENAME
    db.migrate(path)
    return path


def in_threads(count: int, target) -> list:
    """``target(n)`` in ``count`` threads started together; each one's value or exception, in order."""
    outcomes: list = [None] * count
    start = threading.Barrier(count)

    def run(n: int) -> None:
        start.wait()
        try:
            outcomes[n] = target(n)
        except Exception as exc:  # noqa: BLE001 - the outcome under test
            outcomes[n] = exc

    threads = [threading.Thread(target=run, args=(n,)) for n in range(count)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(HANG_GUARD_S)
        assert not thread.is_alive(), "a writer hung"
    return outcomes


def rows(path) -> dict[int, str]:
    with contextlib.closing(sqlite3.connect(path)) as conn:
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        return dict(conn.execute("SELECT id, title FROM snippet"))


def test_many_threads_saving_at_once_each_get_their_own_snippet_exactly_once(path):
    count = 24

    def save(n: int) -> dict:
        with contextlib.closing(db.connect(path)) as conn:
            return store.create(conn, "film", FILM, {"title": f"saver {n}", "tags": [f"t{n}"]}, CALCULATIONS)

    saved = in_threads(count, save)
    assert all(isinstance(snippet, dict) for snippet in saved), saved
    assert [snippet["title"] for snippet in saved] == [f"saver {n}" for n in range(count)]
    assert [snippet["tags"] for snippet in saved] == [[f"t{n}"] for n in range(count)]
    ids = [snippet["id"] for snippet in saved]
    assert len(set(ids)) == count
    assert rows(path) == {snippet["id"]: snippet["title"] for snippet in saved}


def test_writes_queued_while_one_commits_are_committed_together_on_one_connection(path):
    """The first write holds its batch open until every other one has queued; they then go in one batch."""
    count = 12
    queued = threading.Event()
    ran_on: dict[int, int] = {}

    def work(n: int):
        def one(writer):
            if n == 0:
                assert queued.wait(HANG_GUARD_S), "the other writes never queued"
            ran_on[n] = id(writer)
            return insert(writer, f"uid-{n}", f"batch {n}")

        return one

    connections = [db.connect(path) for _ in range(count)]
    try:
        group = connections[0].write_group

        outcomes: dict[int, object] = {}

        def first() -> None:
            outcomes[0] = db.write_together(connections[0], work(0))

        leader = threading.Thread(target=first)
        leader.start()
        while not group.leading:  # the first write has taken its batch
            time.sleep(0.001)

        def rest(n: int):
            return db.write_together(connections[n + 1], work(n + 1))

        followers = threading.Thread(target=lambda: outcomes.update(enumerate(in_threads(count - 1, rest), 1)))
        followers.start()
        while True:
            with group.guard:
                if len(group.pending) == count - 1:
                    break
            time.sleep(0.001)
        queued.set()
        leader.join(HANG_GUARD_S)
        followers.join(HANG_GUARD_S)
    finally:
        for conn in connections:
            conn.close()
    assert sorted(outcomes) == list(range(count))
    assert len({outcomes[n] for n in range(count)}) == count, outcomes
    # The eleven that queued behind the first went in one batch: on one connection, one commit.
    assert len({ran_on[n] for n in range(1, count)}) == 1
    assert rows(path) == {outcomes[n]: f"batch {n}" for n in range(count)}


def test_a_write_queued_longer_than_the_busy_timeout_gives_up_and_the_queue_goes_on(path, monkeypatch):
    """Behind a commit that takes too long, a queued write fails as "database is locked" and is not
    done; the commit still ends, and the next write leads a commit of its own."""
    monkeypatch.setattr(db, "BUSY_TIMEOUT_S", 0.3)
    release = threading.Event()
    outcomes: dict[str, object] = {}
    first, second, third = (db.connect(path) for _ in range(3))
    try:
        group = first.write_group

        def slow(writer):
            assert release.wait(HANG_GUARD_S)
            return insert(writer, "uid-slow", "slow")

        leader = threading.Thread(target=lambda: outcomes.update(slow=db.write_together(first, slow)))
        leader.start()
        while not group.leading:
            time.sleep(0.001)
        with pytest.raises(sqlite3.OperationalError, match="database is locked"):
            db.write_together(second, lambda writer: insert(writer, "uid-late", "late"))
        with group.guard:
            assert group.pending == []
        release.set()
        leader.join(HANG_GUARD_S)
        outcomes["next"] = db.write_together(third, lambda writer: insert(writer, "uid-next", "next"))
        with group.guard:
            assert not group.leading and group.pending == []
    finally:
        for conn in (first, second, third):
            conn.close()
    assert rows(path) == {outcomes["slow"]: "slow", outcomes["next"]: "next"}


def test_an_error_in_one_write_of_a_batch_undoes_that_write_only(path):
    """Every other write fails after its INSERT ran: those are undone, their callers get their own error."""
    count = 16

    class Refused(Exception):
        pass

    def write(n: int):
        def work(writer):
            snippet_id = insert(writer, f"uid-{n}", f"write {n}")
            writer.execute("INSERT INTO snippet_tag (snippet_id, tag) VALUES (?, 'x')", (snippet_id,))
            if n % 2:
                raise Refused(n)
            return snippet_id

        with contextlib.closing(db.connect(path)) as conn:
            return db.write_together(conn, work)

    outcomes = in_threads(count, write)
    for n, outcome in enumerate(outcomes):
        if n % 2:
            assert isinstance(outcome, Refused) and outcome.args == (n,)
        else:
            assert isinstance(outcome, int), outcome
    kept = {outcomes[n]: f"write {n}" for n in range(0, count, 2)}
    assert rows(path) == kept
    with contextlib.closing(sqlite3.connect(path)) as conn:
        assert sorted(row[0] for row in conn.execute("SELECT snippet_id FROM snippet_tag")) == sorted(kept)


def test_bad_saves_among_good_ones_over_http_are_400s_and_the_good_ones_are_saved(app):
    count = 16

    def save(n: int):
        body = {"kind": "film", "inputs": FILM if n % 4 else {**FILM, "anilox_volume": "3 parsecs"}}
        response = app.test_client().post(URL, json={**body, "title": f"http {n}"})
        return response.status_code, response.get_json()

    outcomes = in_threads(count, save)
    saved = {}
    for n, (status, answer) in enumerate(outcomes):
        if n % 4:
            assert status == 201, answer
            assert answer["title"] == f"http {n}"
            saved[answer["id"]] = f"http {n}"
        else:
            assert status == 400 and answer["error"]["field"] == "inputs.anilox_volume", answer
    assert len(saved) == count - count // 4
    assert rows(db.database_path(app)) == saved


def full_disk(conn) -> None:
    """The file may not grow any more on ``conn``: SQLite answers SQLITE_FULL as on a full disk."""
    pages = conn.execute("PRAGMA page_count").fetchone()[0]
    conn.execute(f"PRAGMA max_page_count = {pages}")


def test_on_a_full_disk_every_write_of_the_batch_fails_with_the_disk_error_and_nothing_is_added(path):
    count = 12
    before = rows(path)
    blob = "x" * 200_000  # more than the free pages of the file

    def write(n: int):
        with contextlib.closing(db.connect(path)) as conn:
            full_disk(conn)
            return db.write_together(
                conn,
                lambda writer: insert(writer, f"uid-{n}", "full", blob),
            )

    outcomes = in_threads(count, write)
    assert all(isinstance(outcome, sqlite3.Error) for outcome in outcomes), outcomes
    assert all(db.is_storage_failure(outcome) for outcome in outcomes), outcomes
    assert rows(path) == before


def test_on_a_full_disk_each_of_many_saves_at_once_is_a_503_and_the_others_still_read(app, monkeypatch):
    client = app.test_client()
    assert client.post(URL, json={"kind": "film", "inputs": FILM, "title": "before"}).status_code == 201
    real_connect = db.connect

    def connect_to_a_full_disk(path):
        conn = real_connect(path)
        full_disk(conn)
        return conn

    monkeypatch.setattr(db, "connect", connect_to_a_full_disk)
    notes = "n" * 3_900  # with the rest, more than the free room in the pages of the file

    def save(n: int):
        response = app.test_client().post(
            URL, json={"kind": "film", "inputs": FILM, "title": f"full {n}", "notes": notes}
        )
        return response.status_code, response.get_json()

    outcomes = in_threads(12, save)
    assert outcomes == [(503, {"error": {"field": None, "message": DISK_MESSAGE}})] * 12
    answer = client.get(URL).get_json()
    assert [snippet["title"] for snippet in answer["snippets"]] == ["before"]


def test_reads_are_answered_while_a_writer_holds_the_write_lock(app):
    client = app.test_client()
    saved = client.post(URL, json={"kind": "film", "inputs": FILM, "title": "Cyan on BOPP"}).get_json()
    answers: list = []

    def read() -> None:
        reader = app.test_client()
        answers.append(reader.get(f"{URL}?q=cyan").get_json()["total"])
        answers.append(reader.get(f"{URL}/{saved['id']}").get_json()["title"])
        answers.append(reader.get("/snippets").status_code)

    with contextlib.closing(db.connect(db.database_path(app))) as writer, db.transaction(writer):
        insert(writer, "uncommitted", "Cyan uncommitted")
        assert writer.write_lock.locked()
        thread = threading.Thread(target=read)
        thread.start()
        thread.join(HANG_GUARD_S)
        assert not thread.is_alive(), "a read waited for the writer"
    # The reader saw the file as it was before the writer's uncommitted row.
    assert answers == [1, "Cyan on BOPP", 200]


# --- a request's connection kept for the thread's next request ---------------------------------------------


def request_connection(app) -> sqlite3.Connection:
    with app.app_context():
        return db.get_db()


def test_a_threads_next_request_reuses_its_connection_and_another_thread_gets_its_own(app):
    first = request_connection(app)
    assert request_connection(app) is first
    assert first.execute("SELECT count(*) FROM snippet").fetchone()[0] == 0  # kept open, not closed
    elsewhere = in_threads(1, lambda _n: request_connection(app))[0]
    assert elsewhere is not first


def test_a_connection_left_in_a_transaction_is_closed_not_kept(app):
    with app.app_context():
        left = db.get_db()
        left.execute("BEGIN")
    with pytest.raises(sqlite3.ProgrammingError):
        left.execute("SELECT 1")
    assert request_connection(app) is not left


def test_a_connection_made_by_another_connect_is_not_reused(app, monkeypatch):
    kept = request_connection(app)
    made: list = []

    def counting(path):
        made.append(path)
        return sqlite3.connect(path, isolation_level=None, check_same_thread=False)

    monkeypatch.setattr(db, "connect", counting)
    with app.app_context():
        assert db.get_db() is not kept
    assert len(made) == 1
