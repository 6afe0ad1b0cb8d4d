"""Saved snippets on the SQLite file: reads and writes.

Every change raises a snippet's ``version`` by one; a change made against an
older version is refused with ``Conflict`` and nothing is overwritten. A
deleted snippet lies in the bin for ``BIN_DAYS`` days and can be restored
until then. Functions here take an open connection (``webapp.common.db``)
and plain data checked by ``webapp.snippets.rules``.
"""

from __future__ import annotations

import hashlib
import json
import re
import uuid
from datetime import UTC, datetime, timedelta

from calc import InputError
from webapp.common.db import MAX_ID, transaction
from webapp.snippets.rules import META_FIELDS, check_client_id, check_kind, check_meta, compute

BIN_DAYS = 30
# A version counts changes; the largest one taken keeps clear of SQLite's integers.
MAX_VERSION = 10**15
# Search: SQLite refuses LIKE patterns over 50,000 bytes; no word a person types is this long.
MAX_WORDS = 10
MAX_WORD = 100


class NotFound(LookupError):
    """No snippet with that id (or not in the place asked for: list or bin)."""


class IdTaken(Exception):
    """A new snippet's ``client_id`` is the id of a snippet saved with other contents."""

    def __init__(self, current: dict):
        super().__init__(
            f"this id was used for another save (snippet {current['id']}, “{current['title']}”); "
            "make a new id for a new snippet"
        )
        self.current = current
        self.message = str(self)


class Conflict(Exception):
    """The snippet changed since the version the edit was made against."""

    def __init__(self, current: dict):
        super().__init__("changed by someone else meanwhile — here is the newer one")
        self.current = current
        self.message = str(self)


def now_text(now: datetime | None = None) -> str:
    return (now or datetime.now(UTC)).strftime("%Y-%m-%dT%H:%M:%SZ")


# --- reading -------------------------------------------------------------------


def _tags_of(conn, ids: list[int]) -> dict[int, list[str]]:
    """Each snippet's tags, in one query for a whole page of snippets."""
    tags: dict[int, list[str]] = {snippet_id: [] for snippet_id in ids}
    for start in range(0, len(ids), 500):
        chunk = ids[start : start + 500]
        marks = ", ".join("?" * len(chunk))
        rows = conn.execute(
            f"SELECT snippet_id, tag FROM snippet_tag WHERE snippet_id IN ({marks}) ORDER BY tag", chunk
        )
        for row in rows:
            tags[row["snippet_id"]].append(row["tag"])
    return tags


def rows_to_snippets(conn, rows) -> list[dict]:
    tags = _tags_of(conn, [row["id"] for row in rows])
    return [_row_to_snippet(conn, row, tags[row["id"]]) for row in rows]


def _row_to_snippet(conn, row, tags: list[str] | None = None) -> dict:
    if tags is None:
        tags = _tags_of(conn, [row["id"]])[row["id"]]
    return {
        "id": row["id"],
        "uid": row["uid"],
        "kind": row["kind"],
        "title": row["title"],
        "job_number": row["job_number"],
        "press": row["press"],
        "station": row["station"],
        "notes": row["notes"],
        "tags": tags,
        "saved_by": row["saved_by"],
        "inputs": json.loads(row["inputs"]),
        "results": json.loads(row["results"]),
        "created_at": row["created_at"],
        "updated_at": row["updated_at"],
        "version": row["version"],
        "deleted_at": row["deleted_at"],
    }


def get(conn, snippet_id: int, *, deleted: bool = False) -> dict:
    """The snippet ``snippet_id``; from the bin when ``deleted``."""
    if not 0 < snippet_id <= MAX_ID:
        raise NotFound(snippet_id)
    row = conn.execute(
        "SELECT * FROM snippet WHERE id = ? AND (deleted_at IS NOT NULL) = ?", (snippet_id, bool(deleted))
    ).fetchone()
    if row is None:
        raise NotFound(snippet_id)
    return _row_to_snippet(conn, row)


def _like(word: str) -> str:
    return "%" + word.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_") + "%"


def search(conn, q: str = "", *, press: str = "", kind: str = "", limit: int = 50, offset: int = 0):
    """Snippets (newest change first) whose title, job number, notes or tags hold every word of ``q``.

    Returns ``(snippets, total)``: one page and the number of all matches.
    """
    where = ["s.deleted_at IS NULL"]
    params: list = []
    for word in (q or "").split()[:MAX_WORDS]:
        pattern = _like(word[:MAX_WORD])
        where.append(
            "(s.title LIKE ? ESCAPE '\\' OR s.job_number LIKE ? ESCAPE '\\' OR s.notes LIKE ? ESCAPE '\\'"
            " OR EXISTS (SELECT 1 FROM snippet_tag t WHERE t.snippet_id = s.id AND t.tag LIKE ? ESCAPE '\\'))"
        )
        params += [pattern] * 4
    if press:
        where.append("s.press = ?")
        params.append(press)
    if kind:
        where.append("s.kind = ?")
        params.append(kind)
    condition = " AND ".join(where)
    total = conn.execute(f"SELECT count(*) FROM snippet s WHERE {condition}", params).fetchone()[0]
    rows = conn.execute(
        f"SELECT s.* FROM snippet s WHERE {condition} ORDER BY s.updated_at DESC, s.id DESC LIMIT ? OFFSET ?",
        [*params, limit, offset],
    ).fetchall()
    return rows_to_snippets(conn, rows), total


def presses(conn) -> list[str]:
    """The presses named on snippets not in the bin, for a filter."""
    rows = conn.execute(
        "SELECT DISTINCT press FROM snippet WHERE deleted_at IS NULL AND press <> '' ORDER BY press"
    ).fetchall()
    return [row["press"] for row in rows]


def in_bin(conn, now: datetime | None = None) -> list[dict]:
    """Snippets in the bin, most recently deleted first (older than ``BIN_DAYS`` are purged first)."""
    purge(conn, now)
    rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NOT NULL ORDER BY deleted_at DESC, id DESC")
    return rows_to_snippets(conn, rows.fetchall())


def purge_date(snippet: dict) -> str:
    """When a snippet in the bin goes for good."""
    deleted = datetime.strptime(snippet["deleted_at"], "%Y-%m-%dT%H:%M:%SZ")
    return (deleted + timedelta(days=BIN_DAYS)).strftime("%Y-%m-%d")


# --- writing ---------------------------------------------------------------------


def _write_tags(conn, snippet_id: int, tags: list[str]) -> None:
    conn.execute("DELETE FROM snippet_tag WHERE snippet_id = ?", (snippet_id,))
    conn.executemany("INSERT INTO snippet_tag (snippet_id, tag) VALUES (?, ?)", [(snippet_id, tag) for tag in tags])


def insert_row(conn, row: dict):
    """Insert one snippet and its tags, unless its ``uid`` is here already; the cursor
    (``rowcount`` 0 when it was)."""
    cursor = conn.execute(
        "INSERT INTO snippet (uid, kind, title, job_number, press, station, notes, saved_by,"
        " inputs, results, created_at, updated_at, version)"
        " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT (uid) DO NOTHING",
        (
            row["uid"],
            row["kind"],
            row["title"],
            row.get("job_number", ""),
            row.get("press", ""),
            row.get("station", ""),
            row.get("notes", ""),
            row.get("saved_by", ""),
            json.dumps(row["inputs"], ensure_ascii=False),
            json.dumps(row["results"], ensure_ascii=False),
            row["created_at"],
            row["updated_at"],
            row["version"],
        ),
    )
    if cursor.rowcount == 1:
        _write_tags(conn, cursor.lastrowid, row.get("tags", []))
    return cursor


def create(conn, kind: str, inputs: dict, meta: dict, calculations: dict, *, now: datetime | None = None) -> dict:
    """Work out ``inputs`` with today's core and save it with ``meta``; the new snippet."""
    return create_once(conn, None, kind, inputs, meta, calculations, now=now)[0]


def _digest(kind: str, inputs, meta: dict) -> str:
    """What a save held, as one digest: every meta field (absent ones as empty), the kind and inputs."""
    whole = {name: meta.get(name, [] if name == "tags" else "") for name in META_FIELDS}
    text = json.dumps([kind, inputs, whole], sort_keys=True, ensure_ascii=False, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()


def _saved_under(conn, client_id: str, digest: str) -> dict | None:
    """The snippet saved with ``client_id`` (in the bin or not), if any; ``IdTaken`` if it held something else."""
    row = conn.execute("SELECT id, client_digest, deleted_at FROM snippet WHERE client_id = ?", (client_id,)).fetchone()
    if row is None:
        return None
    snippet = get(conn, row["id"], deleted=row["deleted_at"] is not None)
    if row["client_digest"] != digest:
        raise IdTaken(snippet)
    return snippet


def create_once(
    conn, client_id, kind: str, inputs: dict, meta: dict, calculations: dict, *, now: datetime | None = None
) -> tuple[dict, bool]:
    """Like ``create``, kept once per ``client_id`` (the sender's id for this save): ``(snippet, created)``.

    The same id with the same contents again gives the snippet saved the first
    time (``created`` false), even if it was edited since; the same id with other
    contents raises ``IdTaken``. Without an id every call saves a new snippet.
    """
    client_id = check_client_id(client_id)
    kind = check_kind(kind, calculations)
    meta = check_meta(meta)
    digest = _digest(kind, inputs, meta) if client_id else None
    if client_id and (found := _saved_under(conn, client_id, digest)) is not None:
        return found, False  # a repeat: found before the core is asked, so today's core cannot refuse it
    results = compute(kind, inputs, calculations)
    stamp = now_text(now)
    row = {
        **meta,
        "uid": uuid.uuid4().hex,
        "kind": kind,
        "inputs": inputs,
        "results": results,
        "created_at": stamp,
        "updated_at": stamp,
        "version": 1,
    }
    with transaction(conn):
        if client_id and (found := _saved_under(conn, client_id, digest)) is not None:
            return found, False  # sent twice at once: the other request saved it first
        cursor = insert_row(conn, row)
        if client_id:
            conn.execute(
                "UPDATE snippet SET client_id = ?, client_digest = ? WHERE id = ?",
                (client_id, digest, cursor.lastrowid),
            )
    return get(conn, cursor.lastrowid), True


def _check_version(version) -> int:
    # ASCII digits only: "²".isdigit() is true, but int("²") fails.
    if isinstance(version, str) and re.fullmatch(r"[0-9]{1,16}", version.strip()):
        version = int(version)
    if not isinstance(version, int) or isinstance(version, bool) or not 1 <= version <= MAX_VERSION:
        raise InputError("version", "is required: the version the change was made against (a whole number)")
    return version


def update(
    conn,
    snippet_id: int,
    version,
    changes: dict,
    *,
    results: dict | None = None,
    now: datetime | None = None,
) -> dict:
    """Apply ``changes`` (title, notes, …) made against ``version``; the changed snippet.

    ``results``, when given, replaces the saved results (a re-run kept). Raises
    ``Conflict`` with the newer snippet if someone changed it meanwhile.
    """
    version = _check_version(version)
    meta = check_meta(changes, partial=True)
    with transaction(conn):
        current = get(conn, snippet_id)
        if current["version"] != version:
            raise Conflict(current)
        columns = [name for name in META_FIELDS if name in meta and name != "tags"]
        assignments = [f"{name} = ?" for name in columns]
        params = [meta[name] for name in columns]
        if results is not None:
            assignments.append("results = ?")
            params.append(json.dumps(results, ensure_ascii=False))
        assignments += ["updated_at = ?", "version = version + 1"]
        params += [now_text(now), snippet_id, version]
        # The column names come from META_FIELDS, never from the request.
        cursor = conn.execute(
            f"UPDATE snippet SET {', '.join(assignments)} WHERE id = ? AND version = ? AND deleted_at IS NULL",
            params,
        )
        if cursor.rowcount != 1:  # pragma: no cover - the transaction holds the write lock
            raise Conflict(get(conn, snippet_id))
        if "tags" in meta:
            _write_tags(conn, snippet_id, meta["tags"])
    return get(conn, snippet_id)


def delete(conn, snippet_id: int, version=None, *, now: datetime | None = None) -> dict:
    """Move the snippet to the bin (refused as a ``Conflict`` if ``version`` is given and stale)."""
    with transaction(conn):
        current = get(conn, snippet_id)
        if version not in (None, "") and current["version"] != _check_version(version):
            raise Conflict(current)
        conn.execute(
            "UPDATE snippet SET deleted_at = ?, version = version + 1 WHERE id = ?", (now_text(now), snippet_id)
        )
    return get(conn, snippet_id, deleted=True)


def restore(conn, snippet_id: int, *, now: datetime | None = None) -> dict:
    """Take the snippet back out of the bin."""
    with transaction(conn):
        get(conn, snippet_id, deleted=True)
        conn.execute(
            "UPDATE snippet SET deleted_at = NULL, updated_at = ?, version = version + 1 WHERE id = ?",
            (now_text(now), snippet_id),
        )
    return get(conn, snippet_id)


def purge(conn, now: datetime | None = None) -> int:
    """Delete for good what has lain in the bin longer than ``BIN_DAYS``; how many went."""
    cutoff = now_text((now or datetime.now(UTC)) - timedelta(days=BIN_DAYS))
    with transaction(conn):
        return conn.execute("DELETE FROM snippet WHERE deleted_at IS NOT NULL AND deleted_at < ?", (cutoff,)).rowcount
