"""Saved snippets on the SQLite file: reads and writes.

Every change raises a snippet's ``version`` by one; a change made against an
older version is refused with ``Conflict`` and nothing is overwritten. A
deleted snippet lies in the bin for ``BIN_DAYS`` days and can be restored
until then. Functions here take an open connection (``webapp.common.db``)
and plain data checked by ``webapp.snippets.rules``.
"""

from __future__ import annotations

import json
import re
import uuid
from datetime import UTC, datetime, timedelta

from calc import InputError
from webapp.common.db import MAX_ID, snapshot, transaction, write_together
from webapp.snippets.rules import META_FIELDS, check_kind, check_meta, compute

BIN_DAYS = 30
# A version counts changes; the largest one taken keeps clear of SQLite's integers.
MAX_VERSION = 10**15
# Search: at most this many words of at most this many characters are looked for.
MAX_WORDS = 10
MAX_WORD = 100


class NotFound(LookupError):
    """No snippet with that id (or not in the place asked for: list or bin)."""


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


# The list's sort orders: date (newest change first), title (A to Z), job (highest job number first).
SORTS = {
    "date": "s.updated_at DESC, s.id DESC",
    "title": "s.title COLLATE NOCASE, s.id",
    "job": "s.job_number DESC, s.updated_at DESC, s.id DESC",
}
# Above this many matches a page is found by walking the sort order and keeping the matches;
# below it, by fetching the matches and sorting them.
_WALK_ABOVE = 3_000
_DATE = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}")
_WORD_PIECES = re.compile(r"[^\W_]+")


def match_query(q: str) -> str:
    """The FTS5 query for what a person typed: every word, each found whole or by its start.

    Only letters and digits reach FTS5, each word as one quoted phrase, so no text
    can be read as FTS5's own syntax (``AND``, ``NEAR``, ``*``, quotes, column names).
    A one-letter word is matched whole (as a prefix it would match nearly everything).
    ``""`` when nothing searchable was typed.

    >>> match_query('24-01 Cyan "x" OR')
    '"24 01"* "cyan"* "x" "or"*'
    """
    phrases = []
    for word in (q or "").split()[:MAX_WORDS]:
        pieces = _WORD_PIECES.findall(word[:MAX_WORD].lower())
        if not pieces:
            continue
        phrase = '"' + " ".join(pieces) + '"'
        phrases.append(phrase + "*" if len(pieces) > 1 or len(pieces[0]) > 1 else phrase)
    return " ".join(phrases)


def _day(value: str, field: str) -> str:
    value = (value or "").strip()
    if not value:
        return ""
    if not _DATE.fullmatch(value):
        raise InputError(field, "must be a date such as 2024-05-01")
    try:
        datetime.strptime(value, "%Y-%m-%d")
    except ValueError:
        raise InputError(field, "must be a date such as 2024-05-01 (that day does not exist)") from None
    return value


def _filters(press, station, kind, since, until) -> tuple[list[str], list]:
    """The WHERE terms (beside ``deleted_at IS NULL``) of the list's filters, and their parameters."""
    where: list[str] = []
    params: list = []
    for column, value in (("press", press), ("station", station), ("kind", kind)):
        if value:
            where.append(f"s.{column} = ?")
            params.append(value)
    since, until = _day(since, "since"), _day(until, "until")
    if since and until and until < since:
        raise InputError("until", "must be on or after the first day")
    if since:
        where.append("s.updated_at >= ?")
        params.append(since)
    if until:
        # Up to the end of that day: every stamp of the day sorts before the next day's date.
        where.append("s.updated_at < ?")
        params.append((datetime.strptime(until, "%Y-%m-%d") + timedelta(days=1)).strftime("%Y-%m-%d"))
    return where, params


def search(
    conn,
    q: str = "",
    *,
    press: str = "",
    kind: str = "",
    limit: int = 50,
    offset: int = 0,
    station: str = "",
    since: str = "",
    until: str = "",
    sort: str = "date",
):
    """Snippets not in the bin whose title, job number, notes or tags hold every word of ``q``
    (whole, or as the start of a word), filtered by press, station, kind and a range of days
    of their last change (``since``/``until``, ``YYYY-MM-DD``, inclusive), in the order
    ``sort`` (a key of ``SORTS``).

    Returns ``(snippets, total)``: one page and the number of all matches, both from one
    snapshot of the file. Words go to the FTS5 index ``snippet_search`` (see ``match_query``).
    """
    order = SORTS.get(sort)
    if order is None:
        raise InputError("sort", f"must be one of: {', '.join(SORTS)}")
    where, params = _filters(press, station, kind, since, until)
    match = match_query(q)
    if (q or "").strip() and not match:
        return [], 0  # only signs typed (``_``, ``%``): nothing holds them as a word
    limit, offset = max(0, int(limit)), max(0, int(offset))
    with snapshot(conn):
        if match:
            if where:
                total = conn.execute(
                    "SELECT count(*) FROM snippet s WHERE s.deleted_at IS NULL AND "
                    "s.id IN (SELECT rowid FROM snippet_search WHERE snippet_search MATCH ?) AND "
                    + " AND ".join(where),
                    [match, *params],
                ).fetchone()[0]
            else:
                # The index holds no snippet of the bin: its count is the answer.
                total = conn.execute(
                    "SELECT count(*) FROM snippet_search WHERE snippet_search MATCH ?", (match,)
                ).fetchone()[0]
            if total == 0 or offset >= total:
                return [], total
            # Few matches: look each up and sort them. Many: walk the sort order's index and keep
            # the matches ("+s.id" stops SQLite from looking every match up first).
            id_term = "s.id" if total <= _WALK_ABOVE else "+s.id"
            matching = f"{id_term} IN (SELECT rowid FROM snippet_search WHERE snippet_search MATCH ?)"
            condition = " AND ".join(["s.deleted_at IS NULL", matching, *where])
            params = [match, *params]
        else:
            condition = " AND ".join(["s.deleted_at IS NULL", *where])
            total = conn.execute(f"SELECT count(*) FROM snippet s WHERE {condition}", params).fetchone()[0]
            if total == 0 or offset >= total:
                return [], total
        # ``order`` and the terms come from SORTS and _filters, never from the request.
        rows = conn.execute(
            f"SELECT s.* FROM snippet s WHERE {condition} ORDER BY {order} LIMIT ? OFFSET ?",
            [*params, limit, offset],
        ).fetchall()
        return rows_to_snippets(conn, rows), total


def _distinct(conn, column: str) -> list[str]:
    """The distinct non-empty values of ``column`` among snippets not in the bin, in order.

    One index seek per value (the partial indexes ``snippet_live_press``/``_station``), not a
    scan of every snippet: a shop has a few presses and a million snippets.
    """
    # ``column`` is "press" or "station", never from a request.
    found: list[str] = []
    while True:
        row = conn.execute(
            f"SELECT {column} FROM snippet INDEXED BY snippet_live_{column}"
            f" WHERE deleted_at IS NULL AND {column} > ? ORDER BY {column} LIMIT 1",
            (found[-1] if found else "",),
        ).fetchone()
        if row is None:
            return found
        found.append(row[0])


def presses(conn) -> list[str]:
    """The presses named on snippets not in the bin, for a filter."""
    return _distinct(conn, "press")


def stations(conn) -> list[str]:
    """The stations named on snippets not in the bin, for a filter (numbers in number order)."""
    return sorted(_distinct(conn, "station"), key=lambda name: (not name.isdigit(), name.zfill(8).lower()))


def same_as(conn, kind: str, inputs, meta: dict) -> dict | None:
    """A snippet not in the bin with the same kind, inputs, title and job number, if there is one."""
    if not isinstance(inputs, dict):
        return None
    title = " ".join(str(meta.get("title") or "").split())
    job = " ".join(str(meta.get("job_number") or "").split())
    rows = conn.execute(
        "SELECT * FROM snippet WHERE deleted_at IS NULL AND title = ? COLLATE NOCASE AND title = ?"
        " AND kind = ? AND job_number = ? ORDER BY id LIMIT 50",
        (title, title, kind, job),
    ).fetchall()
    for row in rows:
        try:
            if json.loads(row["inputs"]) == inputs:
                return _row_to_snippet(conn, row)
        except ValueError:  # pragma: no cover - the store writes JSON only
            continue
    return None


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
    kind = check_kind(kind, calculations)
    meta = check_meta(meta)
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
    # Committed together with the saves of other requests queued meanwhile (group commit).
    snippet_id = write_together(conn, lambda writer: insert_row(writer, row).lastrowid)
    return get(conn, snippet_id)


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
