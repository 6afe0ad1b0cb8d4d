"""Saved snippets on the SQLite file: reads and writes.

Every change raises a snippet's ``version`` by one; a change made against an
older version is refused with ``Conflict`` and nothing is overwritten. A
deleted snippet lies in the bin for ``BIN_DAYS`` days and can be restored
until then. Every version is kept in ``snippet_version`` (with who made it
and when), so an earlier one can be looked at and brought back, and an edit
made against an older version can be merged (``webapp.snippets.merge``).
Functions here take an open connection (``webapp.common.db``) and plain data checked by ``webapp.snippets.rules``.
"""

from __future__ import annotations

import hashlib
import json
import re
import uuid
from datetime import UTC, datetime, timedelta

from calc import InputError
from webapp.common.db import MAX_ID, snapshot, transaction, write_together
from webapp.common.jsontext import has_lone_surrogate
from webapp.snippets.rules import META_FIELDS, check_client_id, check_kind, check_meta, compute

BIN_DAYS = 30
# A version counts changes; the largest one taken keeps clear of SQLite's integers.
MAX_VERSION = 10**15
# Search: at most this many words of at most this many characters are looked for.
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
        "changed_by": row["changed_by"],
        "deleted_by": row["deleted_by"],
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


# The orders the Saved list offers; the SQL comes from here, never from the request.
ORDERS = {
    "newest": "s.updated_at DESC, s.id DESC",
    "oldest": "s.updated_at, s.id",
    "title": "s.title COLLATE NOCASE, s.id",
    "job": "s.job_number = '', s.job_number COLLATE NOCASE, s.station, s.id",
}
# The partial indexes of live snippets (migration snippet_list_plans) each query names, so
# that its plan never rests on the statistics SQLite happens to hold. Every one holds kind,
# press, station and the last change beside its own order, so a filter is checked in the index.
_ORDER_INDEX = {
    "newest": "snippet_live_updated",
    "oldest": "snippet_live_updated",
    "title": "snippet_live_title",
    "job": "snippet_live_job",
}
_FILTER_INDEX = {"press": "snippet_live_press", "station": "snippet_live_station", "kind": "snippet_live_kind"}
# Reading a snippet's row by its id costs about as much as passing this many index entries
# (measured on a 1M-snippet file): the page is found by walking the order's index when that
# passes fewer than ``matches * _ROW_COST`` entries, else by fetching the matches and sorting.
_ROW_COST = 20
_WORD_PIECES = re.compile(r"[^\W_]+")
_STAMP = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z")
_MATCHING = "s.id IN (SELECT rowid FROM snippet_search WHERE snippet_search MATCH ?)"


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


def check_stamp(value: str, field: str) -> str:
    """``value`` if it is a UTC stamp as ``now_text`` writes (or empty), else an ``InputError`` naming ``field``."""
    value = value or ""
    if not value:
        return ""
    try:
        if not isinstance(value, str) or not _STAMP.fullmatch(value):
            raise ValueError(value)
        datetime.strptime(value, "%Y-%m-%dT%H:%M:%SZ")
    except ValueError:
        raise InputError(field, "must be a UTC time such as 2024-05-01T00:00:00Z") from None
    return value


def _filters(press, station, kind, changed_from, changed_before) -> tuple[dict, list[str], list]:
    """The list's filters: the equal-to ones by column, and the WHERE terms (beside
    ``deleted_at IS NULL``) of them all with their parameters."""
    equal = {column: value for column, value in (("press", press), ("station", station), ("kind", kind)) if value}
    where = [f"s.{column} = ?" for column in equal]
    params: list = list(equal.values())
    changed_from = check_stamp(changed_from, "changed_from")
    changed_before = check_stamp(changed_before, "changed_before")
    if changed_from:
        where.append("s.updated_at >= ?")
        params.append(changed_from)
    if changed_before:
        where.append("s.updated_at < ?")
        params.append(changed_before)
    return equal, where, params


def _tally(conn, equal: dict) -> int:
    """How many snippets not in the bin have the ``equal`` kind, press and station (kept by triggers)."""
    # The columns come from _filters, never from the request.
    terms = " AND ".join(f"{column} = ?" for column in equal) or "1"
    return conn.execute(
        f"SELECT coalesce(sum(live), 0) FROM snippet_tally WHERE {terms}", list(equal.values())
    ).fetchone()[0]


def search(
    conn,
    q: str = "",
    *,
    press: str = "",
    kind: str = "",
    station: str = "",
    changed_from: str = "",
    changed_before: str = "",
    order: str = "newest",
    limit: int = 50,
    offset: int = 0,
):
    """Snippets not in the bin whose title, job number, notes or tags hold every word of ``q``
    (whole, or as the start of a word), filtered by press, station and kind and by the time of
    their last change (``changed_from`` inclusive, ``changed_before`` exclusive: UTC stamps as
    ``now_text`` gives), in the order ``order`` (a key of ``ORDERS``; another is an
    ``InputError`` naming ``order``).

    Returns ``(snippets, total)``: one page and the number of all matches, both from one
    snapshot of the file. Words go to the FTS5 index ``snippet_search`` (see ``match_query``).

    Each query names its index (see ``_page_index``): counts without words or dates come from
    ``snippet_tally``; others go through the index of the rarest filter, which holds the other
    filters; the page is found by walking the order's index or by fetching the few matches.
    """
    sql_order = ORDERS.get(order) if isinstance(order, str) else None
    if sql_order is None:
        raise InputError("order", f"must be one of: {', '.join(ORDERS)}")
    equal, where, params = _filters(press, station, kind, changed_from, changed_before)
    match = match_query(q)
    if (q or "").strip() and not match:
        return [], 0  # only signs typed (``_``, ``%``): nothing holds them as a word
    limit, offset = max(0, int(limit)), max(0, int(offset))
    with snapshot(conn):
        live = _tally(conn, {})
        counts = {column: _tally(conn, {column: value}) for column, value in equal.items()}
        rarest = min(counts, key=counts.get) if counts else None
        count_index = _FILTER_INDEX[rarest] if rarest else "snippet_live_updated"
        ranged = len(where) > len(equal)
        if match:
            where, params = [_MATCHING, *where], [match, *params]
        condition = " AND ".join(["s.deleted_at IS NULL", *where])
        if not match and not ranged:
            total = _tally(conn, equal)
        elif match and not equal and not ranged:
            # The word index holds no snippet of the bin: its count is the answer.
            total = conn.execute(
                "SELECT count(*) FROM snippet_search WHERE snippet_search MATCH ?", (match,)
            ).fetchone()[0]
        else:
            # ``count_index`` comes from _FILTER_INDEX, never from the request.
            total = conn.execute(
                f"SELECT count(*) FROM snippet s INDEXED BY {count_index} WHERE {condition}", params
            ).fetchone()[0]
        if total == 0 or offset >= total:
            return [], total
        page_index = _page_index(
            order,
            count_index,
            counts.get(rarest, live),
            live,
            total,
            bool(match),
            bool(equal or ranged),
            limit + offset,
        )
        # The ids of the page first (from the index alone when it is walked), then their rows:
        # the rows skipped by ``offset`` are never read.
        ids = [
            row[0]
            for row in conn.execute(
                f"SELECT s.id FROM snippet s {page_index} WHERE {condition} ORDER BY {sql_order} LIMIT ? OFFSET ?",
                [*params, limit, offset],
            )
        ]
        return _snippets_by_id(conn, ids), total


def _page_index(order, count_index, filtered, live, total, match, filtered_or_ranged, reach) -> str:
    """The ``INDEXED BY`` (or ``NOT INDEXED``) clause that finds the page: walk an index in the
    order asked (the rarest filter's, ``count_index``, for the order of change, else the order's
    own), passing about ``reach`` / share-of-matches entries; or read every match and sort them,
    which costs ``_ROW_COST`` entries a match. ``filtered``: the snippets ``count_index`` holds.

    Index names come from ``_ORDER_INDEX`` and ``_FILTER_INDEX``, never from a request.
    """
    walk_index = count_index if order in ("newest", "oldest") else _ORDER_INDEX[order]
    span = filtered if walk_index == count_index else live
    walked = min(span, reach * span / total)
    if walked <= total * _ROW_COST or (not match and walk_index == count_index):
        return f"INDEXED BY {walk_index}"
    if match and not filtered_or_ranged:
        return "NOT INDEXED"  # each match's row by its id
    return f"INDEXED BY {count_index}"


def _snippets_by_id(conn, ids: list[int]) -> list[dict]:
    """The snippets with ``ids``, in that order."""
    if not ids:
        return []
    marks = ",".join("?" * len(ids))
    rows = {row["id"]: row for row in conn.execute(f"SELECT * FROM snippet WHERE id IN ({marks})", ids)}
    return rows_to_snippets(conn, [rows[i] for i in ids if i in rows])


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
    """The station names in use, for the list's filter (numbers in number order, then names)."""
    return sorted(
        _distinct(conn, "station"), key=lambda v: (not v.isdecimal(), int(v) if v.isdecimal() else 0, v.lower())
    )


def same_as(conn, kind: str, inputs, meta: dict) -> dict | None:
    """A snippet not in the bin that saving ``kind``/``inputs`` with ``meta`` would repeat
    exactly (same kind, inputs, title, job number, press and station), or ``None``."""
    try:
        meta = check_meta(meta)
    except InputError:
        return None  # saving it is refused anyway, naming the field
    typed = json.dumps(inputs, ensure_ascii=False)
    if has_lone_surrogate(typed) or has_lone_surrogate(str(kind)):
        return None  # refused when it is saved, naming the field (SQLite cannot even be asked)
    row = conn.execute(
        "SELECT * FROM snippet WHERE deleted_at IS NULL AND kind = ? AND inputs = ? AND title = ?"
        " AND job_number = ? AND press = ? AND station = ? ORDER BY id LIMIT 1",
        (
            kind,
            typed,
            *(str(meta.get(name) or "") for name in ("title", "job_number", "press", "station")),
        ),
    ).fetchone()
    return rows_to_snippets(conn, [row])[0] if row else None


def by_job(conn, job_number: str) -> list[dict]:
    """Every snippet of one job number not in the bin, station by station (3 before 10, then
    named ones), then oldest first: the job's record."""
    job_number = " ".join(str(job_number).split())
    if not job_number or len(job_number) > 100:
        return []
    rows = conn.execute(
        "SELECT * FROM snippet WHERE deleted_at IS NULL AND job_number = ? ORDER BY created_at, id", (job_number,)
    ).fetchall()

    def station_order(snippet):
        station = snippet["station"]
        return (station == "", not station.isdecimal(), int(station) if station.isdecimal() else 0, station.lower())

    return sorted(rows_to_snippets(conn, rows), key=station_order)


def in_bin(conn, now: datetime | None = None) -> list[dict]:
    """Snippets in the bin, most recently deleted first (older than ``BIN_DAYS`` are purged first)."""
    purge(conn, now)
    rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NOT NULL ORDER BY deleted_at DESC, id DESC")
    return rows_to_snippets(conn, rows.fetchall())


def purge_at(snippet: dict) -> str:
    """When a snippet in the bin goes for good, as a stored time (for showing in the shop's zone)."""
    deleted = datetime.strptime(snippet["deleted_at"], "%Y-%m-%dT%H:%M:%SZ")
    return now_text(deleted + timedelta(days=BIN_DAYS))


def purge_date(snippet: dict) -> str:
    """When a snippet in the bin goes for good."""
    deleted = datetime.strptime(snippet["deleted_at"], "%Y-%m-%dT%H:%M:%SZ")
    return (deleted + timedelta(days=BIN_DAYS)).strftime("%Y-%m-%d")


# --- writing ---------------------------------------------------------------------


def _write_tags(conn, snippet_id: int, tags: list[str]) -> None:
    conn.execute("DELETE FROM snippet_tag WHERE snippet_id = ?", (snippet_id,))
    conn.executemany("INSERT INTO snippet_tag (snippet_id, tag) VALUES (?, ?)", [(snippet_id, tag) for tag in tags])


def insert_row(conn, row: dict, values: tuple | None = None):
    """Insert one snippet and its tags, unless its ``uid`` is here already; the cursor
    (``rowcount`` 0 when it was). ``values``: ``_row_values(row)`` if the caller has made them."""
    cursor = conn.execute(
        "INSERT INTO snippet (uid, kind, title, job_number, press, station, notes, saved_by, changed_by,"
        " inputs, results, created_at, updated_at, version)"
        " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT (uid) DO NOTHING",
        values if values is not None else _row_values(row),
    )
    if cursor.rowcount == 1:
        _write_tags(conn, cursor.lastrowid, row.get("tags", []))
    return cursor


def insert_rows(conn, rows: list[dict]) -> int:
    """Insert the snippets of ``rows`` (as ``insert_row`` takes them) whose ``uid`` is not here yet,
    in one statement, and their tags in another; how many were new. The uids of ``rows`` differ."""
    if not rows:
        return 0
    uids = [row["uid"] for row in rows]
    here = {
        found for (found,) in conn.execute(f"SELECT uid FROM snippet WHERE uid IN ({', '.join('?' * len(uids))})", uids)
    }
    new = [row for row in rows if row["uid"] not in here]
    conn.executemany(
        "INSERT INTO snippet (uid, kind, title, job_number, press, station, notes, saved_by, changed_by,"
        " inputs, results, created_at, updated_at, version) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
        [_row_values(row) for row in new],
    )
    conn.executemany(
        "INSERT INTO snippet_tag (snippet_id, tag) SELECT id, ? FROM snippet WHERE uid = ?",
        [(tag, row["uid"]) for row in new for tag in row.get("tags", [])],
    )
    return len(new)


def _row_values(row: dict) -> tuple:
    return (
        row["uid"],
        row["kind"],
        row["title"],
        row.get("job_number", ""),
        row.get("press", ""),
        row.get("station", ""),
        row.get("notes", ""),
        row.get("saved_by", ""),
        row.get("changed_by", ""),
        json.dumps(row["inputs"], ensure_ascii=False),
        json.dumps(row["results"], ensure_ascii=False),
        row["created_at"],
        row["updated_at"],
        row["version"],
    )


def create(conn, kind: str, inputs: dict, meta: dict, calculations: dict, *, now: datetime | None = None) -> dict:
    """Work out ``inputs`` with today's core and save it with ``meta``; the new snippet."""
    return create_once(conn, None, kind, inputs, meta, calculations, now=now)[0]


def _digest(kind: str, inputs, meta: dict) -> str:
    """What a save held, as one digest: every meta field (absent ones as empty), the kind and inputs."""
    whole = {name: meta.get(name, [] if name == "tags" else "") for name in META_FIELDS}
    text = json.dumps([kind, inputs, whole], sort_keys=True, ensure_ascii=False, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()


def saved_under(conn, client_id: str) -> bool:
    """Whether a snippet was saved with ``client_id`` (a form sent again is its repeat, not a duplicate)."""
    if not client_id:
        return False
    return conn.execute("SELECT 1 FROM snippet WHERE client_id = ?", (client_id,)).fetchone() is not None


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
    # Made once, before the write: the row's values and the JSON texts, the first kept version
    # and the answer (the snippet exactly as ``get`` would read it back), so that the write
    # itself is plain SQL and nothing is read back or parsed again.
    values = _row_values(row)
    snippet = _new_snippet(row, values)
    version_text = _version_text(snippet, values, "saved")

    def add(writer) -> tuple[int | None, dict | None]:
        if client_id and (found := _saved_under(writer, client_id, digest)) is not None:
            return None, found  # sent twice at once: the other request saved it first
        cursor = insert_row(writer, row, values)
        if client_id:
            writer.execute(
                "UPDATE snippet SET client_id = ?, client_digest = ? WHERE id = ?",
                (client_id, digest, cursor.lastrowid),
            )
        writer.execute(
            "INSERT OR IGNORE INTO snippet_version (snippet_id, version, data, changed_by, changed_at)"
            " VALUES (?, 1, ?, ?, ?)",
            (cursor.lastrowid, version_text, snippet["saved_by"], stamp),
        )
        return cursor.lastrowid, None

    # Committed together with the saves of other requests queued meanwhile (group commit).
    snippet_id, found = write_together(conn, add)
    if found is not None:
        return found, False
    return {**snippet, "id": snippet_id}, True


# Where ``_row_values`` puts the inputs' and the results' JSON texts.
_INPUTS_AT, _RESULTS_AT = 9, 10


def _new_snippet(row: dict, values: tuple) -> dict:
    """The snippet ``insert_row`` writes from ``row``/``values`` as ``get`` reads it back (``id`` aside):
    the columns as written, the tags in the index's order, inputs and results parsed from their texts."""
    return {
        "id": None,
        "uid": row["uid"],
        "kind": row["kind"],
        "title": row["title"],
        "job_number": row.get("job_number", ""),
        "press": row.get("press", ""),
        "station": row.get("station", ""),
        "notes": row.get("notes", ""),
        # SQLite orders text by its UTF-8 bytes, which is code point order (no lone surrogates here).
        "tags": sorted(row.get("tags", [])),
        "saved_by": row.get("saved_by", ""),
        "changed_by": row.get("changed_by", ""),
        "deleted_by": "",
        "inputs": json.loads(values[_INPUTS_AT]),
        "results": json.loads(values[_RESULTS_AT]),
        "created_at": row["created_at"],
        "updated_at": row["updated_at"],
        "version": row["version"],
        "deleted_at": None,
    }


def _version_text(snippet: dict, values: tuple, event: str) -> str:
    """The ``data`` ``_record`` keeps for ``snippet`` and ``event``, with the inputs' and results' JSON
    texts of ``values`` put in as they are instead of dumped again (the same text: a JSON text
    ``json.dumps`` wrote is what it writes again for its own parse)."""
    head = json.dumps({name: snippet[name] for name in META_FIELDS}, ensure_ascii=False)
    return (
        f'{head[:-1]}, "inputs": {values[_INPUTS_AT]}, "results": {values[_RESULTS_AT]},'
        f' "event": {json.dumps(event, ensure_ascii=False)}}}'
    )


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
    by: str = "",
    now: datetime | None = None,
) -> dict:
    """Apply ``changes`` (title, notes, …) made against ``version``; the changed snippet.

    ``results``, when given, replaces the saved results (a re-run kept). ``by``
    is who made the change (shown as "changed by"). The version before is kept.
    Raises ``Conflict`` with the newer snippet if someone changed it meanwhile.
    """
    version = _check_version(version)
    meta = check_meta(changes, partial=True)
    by = check_by(by)
    stamp = now_text(now)
    with transaction(conn):
        current = get(conn, snippet_id)
        if current["version"] != version:
            raise Conflict(current)
        _record_as_found(conn, current)
        columns = [name for name in META_FIELDS if name in meta and name != "tags"]
        assignments = [f"{name} = ?" for name in columns]
        params = [meta[name] for name in columns]
        if results is not None:
            assignments.append("results = ?")
            params.append(json.dumps(results, ensure_ascii=False))
        assignments += ["changed_by = ?", "updated_at = ?", "version = version + 1"]
        params += [by, stamp, snippet_id, version]
        # The column names come from META_FIELDS, never from the request.
        cursor = conn.execute(
            f"UPDATE snippet SET {', '.join(assignments)} WHERE id = ? AND version = ? AND deleted_at IS NULL",
            params,
        )
        if cursor.rowcount != 1:  # pragma: no cover - the transaction holds the write lock
            raise Conflict(get(conn, snippet_id))
        if "tags" in meta:
            _write_tags(conn, snippet_id, meta["tags"])
        event = "edited" if meta or results is None else "results"
        _record(conn, get(conn, snippet_id), event, by, stamp)
    return get(conn, snippet_id)


def delete(conn, snippet_id: int, version=None, *, by: str = "", now: datetime | None = None) -> dict:
    """Move the snippet to the bin (refused as a ``Conflict`` if ``version`` is given and stale);
    ``by`` is who deleted it (the bin says so)."""
    by = check_by(by)
    stamp = now_text(now)
    with transaction(conn):
        current = get(conn, snippet_id)
        if version not in (None, "") and current["version"] != _check_version(version):
            raise Conflict(current)
        _record_as_found(conn, current)
        conn.execute(
            "UPDATE snippet SET deleted_at = ?, deleted_by = ?, version = version + 1 WHERE id = ?",
            (stamp, by, snippet_id),
        )
        _record(conn, get(conn, snippet_id, deleted=True), "deleted", by, stamp)
    return get(conn, snippet_id, deleted=True)


def restore(conn, snippet_id: int, *, by: str = "", now: datetime | None = None) -> dict:
    """Take the snippet back out of the bin."""
    by = check_by(by)
    stamp = now_text(now)
    with transaction(conn):
        current = get(conn, snippet_id, deleted=True)
        _record_as_found(conn, current)
        conn.execute(
            "UPDATE snippet SET deleted_at = NULL, deleted_by = '', changed_by = ?, updated_at = ?,"
            " version = version + 1 WHERE id = ?",
            (by, stamp, snippet_id),
        )
        _record(conn, get(conn, snippet_id), "restored", by, stamp)
    return get(conn, snippet_id)


def purge(conn, now: datetime | None = None) -> int:
    """Delete for good what has lain in the bin longer than ``BIN_DAYS``; how many went."""
    cutoff = now_text((now or datetime.now(UTC)) - timedelta(days=BIN_DAYS))
    with transaction(conn):
        return conn.execute("DELETE FROM snippet WHERE deleted_at IS NOT NULL AND deleted_at < ?", (cutoff,)).rowcount


# --- versions and history ---------------------------------------------------------

# What a kept version holds: everything a person or a re-run can change.
VERSION_FIELDS = (*META_FIELDS, "inputs", "results")
# How a version came about, as the history page says it.
EVENTS = {
    "saved": "saved",
    "edited": "edited",
    "results": "today's results kept",
    "deleted": "moved to the bin",
    "restored": "taken back out of the bin",
    "reverted": "an earlier version brought back",
    "found": "as it was when history began",
}


def check_by(by) -> str:
    """Who made a change: a name as the "saved by" field takes it (may be empty)."""
    if by in (None, ""):
        return ""
    return check_meta({"saved_by": by}, partial=True)["saved_by"]


def _state(snippet: dict) -> dict:
    return {name: snippet[name] for name in VERSION_FIELDS}


def _record(conn, snippet: dict, event: str, by: str, at: str, **extra) -> None:
    """Keep ``snippet`` as its version (once: a version already kept stays as it was)."""
    data = {**_state(snippet), "event": event, **extra}
    conn.execute(
        "INSERT OR IGNORE INTO snippet_version (snippet_id, version, data, changed_by, changed_at)"
        " VALUES (?, ?, ?, ?, ?)",
        (snippet["id"], snippet["version"], json.dumps(data, ensure_ascii=False), by, at),
    )


def _record_as_found(conn, current: dict) -> None:
    """Before a change: keep the version about to be replaced, if it was made before
    history was kept (a snippet from an older inkfilm, or imported)."""
    first = current["version"] == 1
    by = current["saved_by"] if first else current["changed_by"]
    _record(conn, current, "saved" if first else "found", by, current["updated_at"])


def _version_row(row) -> dict:
    data = json.loads(row["data"])
    event = data.pop("event", "edited")
    restored_from = data.pop("restored_from", None)
    return {
        **data,
        "version": row["version"],
        "changed_by": row["changed_by"],
        "changed_at": row["changed_at"],
        "event": event,
        "event_text": EVENTS.get(event, event),
        "restored_from": restored_from,
    }


def _snippet_any(conn, snippet_id: int) -> dict:
    try:
        return get(conn, snippet_id)
    except NotFound:
        return get(conn, snippet_id, deleted=True)


def history(conn, snippet_id: int) -> list[dict]:
    """Every kept version of the snippet, newest first (the current one too, also in the bin):
    its fields, inputs and results, ``version``, ``changed_by``, ``changed_at`` and ``event``."""
    current = _snippet_any(conn, snippet_id)
    rows = conn.execute(
        "SELECT * FROM snippet_version WHERE snippet_id = ? ORDER BY version DESC", (snippet_id,)
    ).fetchall()
    versions = [_version_row(row) for row in rows]
    if not versions or versions[0]["version"] != current["version"]:
        first = current["version"] == 1
        versions.insert(
            0,
            {
                **_state(current),
                "version": current["version"],
                "changed_by": current["saved_by"] if first else current["changed_by"],
                "changed_at": current["deleted_at"] or current["updated_at"],
                "event": "saved" if first else "found",
                "event_text": EVENTS["saved" if first else "found"],
                "restored_from": None,
            },
        )
    return versions


def version_of(conn, snippet_id: int, version) -> dict:
    """The snippet as it was at ``version`` (``NotFound`` if that version was not kept)."""
    version = _check_version(version)
    for kept in history(conn, snippet_id):
        if kept["version"] == version:
            return kept
    raise NotFound(snippet_id)


def restore_version(conn, snippet_id: int, old_version, version, *, by: str = "", now: datetime | None = None) -> dict:
    """Bring back the fields, inputs and results of ``old_version`` as a new version,
    made against ``version`` (``Conflict`` if that is stale); the version it replaces is kept."""
    version = _check_version(version)
    by = check_by(by)
    stamp = now_text(now)
    with transaction(conn):
        current = get(conn, snippet_id)
        if current["version"] != version:
            raise Conflict(current)
        old = version_of(conn, snippet_id, old_version)
        _record_as_found(conn, current)
        meta = check_meta({name: old[name] for name in META_FIELDS})
        columns = [name for name in META_FIELDS if name != "tags"]
        conn.execute(
            f"UPDATE snippet SET {', '.join(f'{name} = ?' for name in columns)}, inputs = ?, results = ?,"
            " changed_by = ?, updated_at = ?, version = version + 1 WHERE id = ? AND version = ?",
            [
                *(meta[name] for name in columns),
                json.dumps(old["inputs"], ensure_ascii=False),
                json.dumps(old["results"], ensure_ascii=False),
                by,
                stamp,
                snippet_id,
                version,
            ],
        )
        _write_tags(conn, snippet_id, meta["tags"])
        _record(conn, get(conn, snippet_id), "reverted", by, stamp, restored_from=old["version"])
    return get(conn, snippet_id)
