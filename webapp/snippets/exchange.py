"""Export and import of saved snippets: a JSON file that re-imports, and CSV for spreadsheets."""

from __future__ import annotations

import csv
import io
import json
import re
from datetime import datetime

from calc import InputError
from webapp.common.db import transaction
from webapp.snippets.rules import KIND_PATTERN, check_meta
from webapp.snippets.store import insert_row, now_text, rows_to_snippets

EXPORT_FORMAT = "inkfilm-snippets"
MAX_IMPORT = 10_000


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
    snippets = [{name: snippet[name] for name in EXPORT_FIELDS} for snippet in rows_to_snippets(conn, rows)]
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
    for snippet in rows_to_snippets(conn, rows):
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
            if insert_row(conn, item).rowcount == 1:
                added += 1
    return {"added": added, "already_here": len(checked) - added}
