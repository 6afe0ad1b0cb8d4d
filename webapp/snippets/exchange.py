"""Export and import of saved snippets: a JSON file that re-imports, and CSV for spreadsheets.

An import takes what an export gives: up to ``MAX_IMPORT`` snippets in a file
of up to ``MAX_IMPORT_BYTES`` (20,000 twelve-station estimates make about
91 MB). Every snippet is checked as strictly as a new one before anything is
written, then all are added in one transaction.
"""

from __future__ import annotations

import csv
import io
import json
import re
from datetime import datetime

from calc import InputError
from webapp.calculators import CALCULATIONS
from webapp.common.db import transaction
from webapp.common.formatting import is_number, is_quantity, local_time
from webapp.snippets.rules import check_data, check_kind, check_meta
from webapp.snippets.store import MAX_VERSION, insert_row, now_text, rows_to_snippets

EXPORT_FORMAT = "inkfilm-snippets"
MAX_IMPORT = 20_000
# The body limit of the import (API and page) only; the rest of the app keeps its own.
MAX_IMPORT_BYTES = 100 * 1024 * 1024


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


_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
# = + - @ right after a separator a spreadsheet may split on (, ; tab |) or a line break.
_FORMULA_AFTER_SEPARATOR = re.compile(r"([,;\t|\r\n] *)(?=[=+\-@])")


def spreadsheet_safe(text: str) -> str:
    """``text`` made inert for spreadsheets (OWASP, "CSV Injection").

    A cell starting with ``= + - @``, tab or CR is a formula to a spreadsheet;
    so is any piece after a separator when the sheet splits cells on ``;`` or
    ``|``. Each such piece gets a leading ``'``, which spreadsheets read as
    "this is text".

    >>> spreadsheet_safe("x;=1+1;"), spreadsheet_safe("=1+1"), spreadsheet_safe("Cyan, process")
    ("x;'=1+1;", "'=1+1", 'Cyan, process')
    """
    text = _FORMULA_AFTER_SEPARATOR.sub(r"\1'", text)
    if text[:1] in _FORMULA_START or text.lstrip(" ")[:1] in _FORMULA_START:
        text = "'" + text
    return text


# The figure a snippet is saved for, by kind (else the first quantity of the results):
# the Saved list shows it, the CSV gives it as plain number and unit columns.
HEADLINE = {
    "convert": "result",
    "film": "substrate_wet",
    "estimate": "total_ink_mass",
    "cell": "volume",
    "density_volume_for": "anilox_volume",
    "density_from": "density",
    "density_fit": "d_inf",
}
# A spreadsheet reads a CSV file as UTF-8 only when it starts with the byte-order mark.
CSV_BOM = "\ufeff"
CSV_EXTRA = ("result", "result_value", "result_unit", "created_local", "updated_local")


def headline(snippet: dict):
    """``(name, value)`` of the result a snippet is saved for, or ``None`` (nothing to show)."""
    results = snippet.get("results")
    if not isinstance(results, dict):
        return None
    key = HEADLINE.get(snippet.get("kind"))
    if key in results and (is_quantity(results[key]) or is_number(results[key])):
        return key, results[key]
    for name, value in results.items():
        if is_quantity(value):
            return name, value
    return None


def _headline_cells(snippet: dict) -> list:
    found = headline(snippet)
    if found is None:
        return ["", "", ""]
    name, value = found
    if is_quantity(value):
        return [name, value["value"] if is_number(value["value"]) else "", str(value["unit"])]
    return [name, value, ""]


def export_csv(conn, zone=None) -> str:
    """Every snippet not in the bin as CSV, one row each; inputs and results as JSON text,
    then the headline result as plain number and unit columns and the times in ``zone``
    (``None``: the server's own). Served with ``CSV_BOM`` in front.

    Every text cell is quoted and made inert (``spreadsheet_safe``); the JSON
    export, not this file, is what imports back.
    """
    out = io.StringIO()
    writer = csv.writer(out, quoting=csv.QUOTE_NONNUMERIC)
    writer.writerow(["id", *EXPORT_FIELDS, *CSV_EXTRA])
    rows = conn.execute("SELECT * FROM snippet WHERE deleted_at IS NULL ORDER BY created_at, id").fetchall()
    for snippet in rows_to_snippets(conn, rows):
        cells = [snippet["id"]]
        for name in EXPORT_FIELDS:
            value = snippet[name]
            if name == "tags":
                value = ", ".join(value)
            elif name in ("inputs", "results"):
                value = json.dumps(value, ensure_ascii=False)
            cells.append(spreadsheet_safe(value) if isinstance(value, str) else value)
        cells += [spreadsheet_safe(c) if isinstance(c, str) else c for c in _headline_cells(snippet)]
        cells += [local_time(snippet["created_at"], zone), local_time(snippet["updated_at"], zone)]
        writer.writerow(cells)
    return out.getvalue()


def _check_import_item(item, index: int, calculations: dict) -> dict:
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
    check_kind(item.get("kind"), calculations, field=f"{where}.kind")
    for name in ("inputs", "results"):
        check_data(item.get(name), f"{where}.{name}")
    for name in ("created_at", "updated_at"):
        value = item.get(name)
        try:
            datetime.strptime(value, "%Y-%m-%dT%H:%M:%SZ")
        except (TypeError, ValueError):
            raise InputError(f"{where}.{name}", "must be a time such as 2024-05-01T13:45:00Z") from None
    version = item.get("version", 1)
    if not isinstance(version, int) or isinstance(version, bool) or not 1 <= version <= MAX_VERSION:
        raise InputError(f"{where}.version", f"must be a whole number from 1 to {MAX_VERSION:,}")
    kept = {name: item[name] for name in ("uid", "kind", "inputs", "results", "created_at", "updated_at")}
    return {**meta, **kept, "version": version}


def import_all(conn, data, calculations: dict | None = None) -> dict:
    """Add the snippets of an export file; those already here (same ``uid``) are left as they are.

    All or nothing: every snippet is checked first (a uid twice in the file,
    an unknown kind, inputs or results that could not be kept or shown), and
    one bad snippet means none is added. Returns the counts
    ``{"added": n, "already_here": m}``.
    """
    calculations = CALCULATIONS if calculations is None else calculations
    if isinstance(data, dict):
        if data.get("format") not in (None, EXPORT_FORMAT):
            raise InputError("format", "this is not an inkfilm snippets export")
        items = data.get("snippets")
    else:
        items = data
    if not isinstance(items, list):
        raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")
    if len(items) > MAX_IMPORT:
        raise InputError("snippets", f"at most {MAX_IMPORT:,} snippets in one import (this file has {len(items):,})")
    first_at: dict[str, int] = {}
    checked = []
    for index, item in enumerate(items):
        row = _check_import_item(item, index, calculations)
        if row["uid"] in first_at:
            first = first_at[row["uid"]]
            raise InputError(f"snippets[{index}].uid", f"repeats the uid of snippets[{first}]: each snippet once")
        first_at[row["uid"]] = index
        checked.append(row)
    del first_at
    added = 0
    with transaction(conn):
        for row in checked:
            if insert_row(conn, row).rowcount == 1:
                added += 1
    return {"added": added, "already_here": len(checked) - added}
