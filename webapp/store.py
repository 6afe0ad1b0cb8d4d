"""Saved calculations ("snippets"): checks, reads and writes on the SQLite file.

A snippet is one calculation as the API knows it: its ``kind`` (a key of
``webapp.api.CALCULATIONS``), its ``inputs`` (the API request body) and its
``results`` (the API's answer), with a title, an optional job number, press
and station, notes, tags, who saved it and when. Every change raises its
``version`` by one; a change made against an older version is refused with
``Conflict`` and nothing is overwritten. A deleted snippet lies in the bin
for ``BIN_DAYS`` days and can be restored until then.

Functions here take an open connection (``webapp.db``) and plain data; they
raise ``calc.InputError`` for anything a user typed wrong.
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
import uuid
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta

from calc import InputError
from webapp.db import transaction

BIN_DAYS = 30
EXPORT_FORMAT = "inkfilm-snippets"
MAX_IMPORT = 10_000

# Longest text a field takes, in characters.
LIMITS = {
    "title": 120,
    "job_number": 40,
    "press": 60,
    "station": 40,
    "notes": 4000,
    "saved_by": 60,
}
MAX_TAGS = 12
MAX_TAG = 30
META_FIELDS = ("title", "job_number", "press", "station", "notes", "tags", "saved_by")
KIND_PATTERN = re.compile(r"^[a-z][a-z0-9_]{0,39}$")
# Relative tolerance when a re-run is compared with what was saved.
RERUN_TOLERANCE = 1e-9


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


# --- checking what users send ------------------------------------------------


def parse_tags(value) -> list[str]:
    """Tags from ``"white, opaque"`` or ``["white", "opaque"]``: trimmed, lower case, each once.

    >>> parse_tags(" Opaque white, repeat job,,opaque white ")
    ['opaque white', 'repeat job']
    """
    if value is None:
        return []
    if isinstance(value, str):
        items = value.split(",")
    elif isinstance(value, list) and all(isinstance(item, str) for item in value):
        items = value
    else:
        raise InputError("tags", "must be text, tags separated by commas")
    tags: list[str] = []
    for item in items:
        tag = " ".join(item.split()).lower()
        if tag and tag not in tags:
            if len(tag) > MAX_TAG:
                raise InputError("tags", f"a tag may be at most {MAX_TAG} characters long ('{tag[:MAX_TAG]}…')")
            tags.append(tag)
    if len(tags) > MAX_TAGS:
        raise InputError("tags", f"at most {MAX_TAGS} tags, please (this has {len(tags)})")
    return tags


def check_meta(data: dict, *, partial: bool = False) -> dict:
    """The title, job number, press, station, notes, tags and name in ``data``, checked.

    With ``partial`` only the fields present are checked (an edit); otherwise a
    title is required.
    """
    clean: dict = {}
    for name in META_FIELDS:
        if name not in data:
            continue
        value = data[name]
        if name == "tags":
            clean["tags"] = parse_tags(value)
            continue
        if value is None:
            value = ""
        if not isinstance(value, str):
            raise InputError(name, "must be text")
        # Notes keep their line breaks; one-line fields lose stray spaces.
        value = value.strip() if name == "notes" else " ".join(value.split())
        value = value.replace("\r\n", "\n")
        if len(value) > LIMITS[name]:
            raise InputError(name, f"may be at most {LIMITS[name]} characters long (this is {len(value)})")
        clean[name] = value
    if (not partial or "title" in clean) and not clean.get("title"):
        raise InputError("title", "is required: a few words to find this by")
    return clean


def check_kind(kind, calculations: dict) -> str:
    if not isinstance(kind, str) or kind not in calculations:
        raise InputError("kind", f"must be one of: {', '.join(sorted(calculations))}")
    return kind


def compute(kind: str, inputs, calculations: dict) -> dict:
    """The API's answer for ``inputs``; a bad input is reported inside ``inputs``."""
    if not isinstance(inputs, dict):
        raise InputError("inputs", "must be a JSON object: the calculation's request body")
    try:
        return calculations[kind](dict(inputs))
    except InputError as exc:
        raise exc.within("inputs") from None


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


def _rows_to_snippets(conn, rows) -> list[dict]:
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
    for word in (q or "").split()[:10]:
        pattern = _like(word)
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
    return _rows_to_snippets(conn, rows), total


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
    return _rows_to_snippets(conn, rows.fetchall())


def purge_date(snippet: dict) -> str:
    """When a snippet in the bin goes for good."""
    deleted = datetime.strptime(snippet["deleted_at"], "%Y-%m-%dT%H:%M:%SZ")
    return (deleted + timedelta(days=BIN_DAYS)).strftime("%Y-%m-%d")


# --- writing ---------------------------------------------------------------------


def _write_tags(conn, snippet_id: int, tags: list[str]) -> None:
    conn.execute("DELETE FROM snippet_tag WHERE snippet_id = ?", (snippet_id,))
    conn.executemany("INSERT INTO snippet_tag (snippet_id, tag) VALUES (?, ?)", [(snippet_id, tag) for tag in tags])


def _insert(conn, row: dict):
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
    with transaction(conn):
        cursor = _insert(conn, row)
    return get(conn, cursor.lastrowid)


def _check_version(version) -> int:
    if isinstance(version, str) and version.strip().isdigit():
        version = int(version)
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise InputError("version", "is required: the version the change was made against")
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


# --- re-running ----------------------------------------------------------------------


@dataclass(frozen=True)
class Change:
    """One result that came out differently today."""

    where: str
    saved: object
    today: object


@dataclass(frozen=True)
class Rerun:
    results: dict | None
    changes: list[Change]
    error: InputError | None = None

    @property
    def same(self) -> bool:
        return self.error is None and not self.changes


def rerun(snippet: dict, calculations: dict) -> Rerun:
    """Work the snippet's inputs out again with today's core and say what came out differently."""
    try:
        check_kind(snippet["kind"], calculations)
        today = compute(snippet["kind"], snippet["inputs"], calculations)
    except InputError as exc:
        return Rerun(None, [], exc)
    return Rerun(today, compare(snippet["results"], today))


def _is_quantity(value) -> bool:
    return isinstance(value, dict) and set(value) == {"value", "unit"}


def compare(saved, today, where: str = "") -> list[Change]:
    """Where ``today`` differs from ``saved``: numbers beyond ``RERUN_TOLERANCE`` (relative), anything else exactly.

    >>> compare({"dry": {"value": 1.0, "unit": "um"}}, {"dry": {"value": 1.0 + 1e-12, "unit": "um"}})
    []
    >>> compare({"dry": {"value": 1.0, "unit": "um"}}, {"dry": {"value": 1.1, "unit": "um"}})
    [Change(where='dry', saved={'value': 1.0, 'unit': 'um'}, today={'value': 1.1, 'unit': 'um'})]
    """
    if _is_quantity(saved) and _is_quantity(today):
        if saved["unit"] != today["unit"] or not _same_number(saved["value"], today["value"]):
            return [Change(where, saved, today)]
        return []
    if isinstance(saved, dict) and isinstance(today, dict):
        changes = []
        for key in list(saved) + [k for k in today if k not in saved]:
            inner = f"{where}.{key}" if where else str(key)
            if key not in today:
                changes.append(Change(inner, saved[key], None))
            elif key not in saved:
                changes.append(Change(inner, None, today[key]))
            else:
                changes += compare(saved[key], today[key], inner)
        return changes
    if isinstance(saved, list) and isinstance(today, list):
        changes = []
        for index in range(max(len(saved), len(today))):
            inner = f"{where}[{index}]"
            if index >= len(today):
                changes.append(Change(inner, saved[index], None))
            elif index >= len(saved):
                changes.append(Change(inner, None, today[index]))
            else:
                changes += compare(saved[index], today[index], inner)
        return changes
    if _is_number(saved) and _is_number(today):
        return [] if _same_number(saved, today) else [Change(where, saved, today)]
    return [] if saved == today else [Change(where, saved, today)]


def _is_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _same_number(a, b) -> bool:
    if not (_is_number(a) and _is_number(b)):
        return a == b
    return math.isclose(a, b, rel_tol=RERUN_TOLERANCE, abs_tol=1e-300)


# --- export and import -----------------------------------------------------------------

EXPORT_FIELDS = (
    "uid",
    "kind",
    "title",
    "job_number",
    "press",
    "station",
    "notes",
    "tags",
    "saved_by",
    "inputs",
    "results",
    "created_at",
    "updated_at",
    "version",
)


def export_all(conn, now: datetime | None = None) -> dict:
    """Every snippet not in the bin, oldest first, as the JSON export file holds them."""
    rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL ORDER BY created_at, id").fetchall()
    snippets = [{name: snippet[name] for name in EXPORT_FIELDS} for snippet in _rows_to_snippets(conn, rows)]
    return {"format": EXPORT_FORMAT, "format_version": 1, "exported_at": now_text(now), "snippets": snippets}


def _spreadsheet_safe(text: str) -> str:
    # A cell starting with = + - @ is a formula to a spreadsheet: keep it text.
    return "'" + text if text[:1] in ("=", "+", "-", "@", "\t", "\r") else text


def export_csv(conn) -> str:
    """Every snippet not in the bin as CSV, one row each; inputs and results as JSON text."""
    out = io.StringIO()
    writer = csv.writer(out)
    writer.writerow(["id", *EXPORT_FIELDS])
    rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL ORDER BY created_at, id").fetchall()
    for snippet in _rows_to_snippets(conn, rows):
        cells = [snippet["id"]]
        for name in EXPORT_FIELDS:
            value = snippet[name]
            if name == "tags":
                value = ", ".join(value)
            elif name in ("inputs", "results"):
                value = json.dumps(value, ensure_ascii=False)
            cells.append(_spreadsheet_safe(value) if isinstance(value, str) else value)
        writer.writerow(cells)
    return out.getvalue()


def _check_import_item(item, index: int) -> dict:
    where = f"snippets[{index}]"
    if not isinstance(item, dict):
        raise InputError(where, "must be a JSON object")
    try:
        meta = check_meta(item)
    except InputError as exc:
        raise exc.within(where) from None
    uid = item.get("uid")
    if not isinstance(uid, str) or not re.fullmatch(r"[0-9a-f]{32}", uid):
        raise InputError(f"{where}.uid", "must be the 32-letter id an inkfilm export gives")
    if not isinstance(item.get("kind"), str) or not KIND_PATTERN.match(item["kind"]):
        raise InputError(f"{where}.kind", "must be a calculation's name such as 'film'")
    for name in ("inputs", "results"):
        if not isinstance(item.get(name), dict):
            raise InputError(f"{where}.{name}", "must be a JSON object")
    for name in ("created_at", "updated_at"):
        value = item.get(name)
        try:
            datetime.strptime(value, "%Y-%m-%dT%H:%M:%SZ")
        except (TypeError, ValueError):
            raise InputError(f"{where}.{name}", "must be a time such as 2024-05-01T13:45:00Z") from None
    version = item.get("version", 1)
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise InputError(f"{where}.version", "must be a whole number from 1")
    kept = {name: item[name] for name in ("uid", "kind", "inputs", "results", "created_at", "updated_at")}
    return {**meta, **kept, "version": version}


def import_all(conn, data) -> dict:
    """Add the snippets of an export file; those already here (same ``uid``) are left as they are.

    All or nothing: one bad snippet and none is added. Returns the counts
    ``{"added": n, "already_here": m}``.
    """
    if isinstance(data, dict):
        if data.get("format") not in (None, EXPORT_FORMAT):
            raise InputError("format", "this is not an inkfilm snippets export")
        items = data.get("snippets")
    else:
        items = data
    if not isinstance(items, list):
        raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")
    if len(items) > MAX_IMPORT:
        raise InputError("snippets", f"at most {MAX_IMPORT} snippets in one import")
    checked = [_check_import_item(item, index) for index, item in enumerate(items)]
    added = 0
    with transaction(conn):
        for item in checked:
            if _insert(conn, item).rowcount == 1:
                added += 1
    return {"added": added, "already_here": len(checked) - added}
