"""CSV export and import of the register: one file each for rolls, measurements and cleanings.

Each file has a header row. Volumes and screens carry their unit in the cell
(``4.2 BCM/in2``, ``165 lpcm``), dates are ISO (``2024-03-05``). An import
checks every row first and reports each problem by row number (the header is
row 1, as a spreadsheet counts) and column; a file with any problem imports
nothing. Importing the same file again adds nothing twice: a roll whose ID
is already in the register, and a log entry identical to one already logged
for that roll, are counted as already here.
"""

from __future__ import annotations

import csv
import io
from datetime import date

from calc import InputError
from webapp.common.db import transaction
from webapp.rolls import rules, store

COLUMNS = {
    "rolls": (
        "roll_id",
        "screen",
        "angle",
        "nominal_volume",
        "certificate_volume",
        "engraved_on",
        "press",
        "location",
        "status",
        "notes",
    ),
    "measurements": ("roll_id", "measured_on", "volume", "condition", "method", "by"),
    "cleanings": ("roll_id", "cleaned_on", "method", "by", "notes"),
}
REQUIRED = {
    "rolls": ("roll_id", "screen", "angle", "nominal_volume", "engraved_on"),
    "measurements": ("roll_id", "measured_on", "volume", "condition"),
    "cleanings": ("roll_id", "cleaned_on"),
}
KIND = {"measurements": "measurement", "cleanings": "cleaning"}
MAX_ROWS = 50_000
MAX_REPORTED = 50


class ImportRefused(Exception):
    """Some rows are wrong; nothing was imported. ``errors``: ``[{"row", "field", "message"}]``."""

    def __init__(self, errors: list[dict]):
        super().__init__(f"{len(errors)} problems; nothing was imported")
        self.errors = errors


def _number(value: float) -> str:
    return f"{value:.6g}"


def export_csv(conn, table: str) -> str:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow(COLUMNS[table])
    rolls = {roll["id"]: roll for roll in store.all_rolls(conn)}
    if table == "rolls":
        for roll in rolls.values():
            writer.writerow(
                [
                    roll["roll_id"],
                    f"{_number(roll['screen_lpi'])} lpi",
                    roll["angle"],
                    f"{_number(roll['nominal_bcm'])} BCM/in2",
                    "" if roll["certificate_bcm"] is None else f"{_number(roll['certificate_bcm'])} BCM/in2",
                    roll["engraved_on"],
                    roll["press"],
                    roll["location"],
                    roll["status"],
                    roll["notes"],
                ]
            )
        return out.getvalue()
    logs = store.logs(conn)
    for ident, roll in rolls.items():
        for entry in logs.get(ident, {}).get(KIND[table], []):
            if table == "measurements":
                writer.writerow(
                    [
                        roll["roll_id"],
                        entry["measured_on"],
                        f"{entry['volume_bcm']!r} BCM/in2",
                        entry["condition"],
                        entry["method"],
                        entry["measured_by"],
                    ]
                )
            else:
                writer.writerow(
                    [roll["roll_id"], entry["cleaned_on"], entry["method"], entry["cleaned_by"], entry["notes"]]
                )
    return out.getvalue()


def _rows(table: str, text: str) -> list[tuple[int, dict]]:
    reader = csv.reader(io.StringIO(text.lstrip("\ufeff")))
    try:
        header = next(reader)
    except StopIteration:
        raise ImportRefused([{"row": 1, "field": "header", "message": "the file is empty"}]) from None
    except csv.Error as exc:
        raise ImportRefused([{"row": 1, "field": "header", "message": f"not a CSV file ({exc})"}]) from None
    names = [name.strip().lower() for name in header]
    problems = []
    for name in names:
        if name and name not in COLUMNS[table]:
            problems.append({"row": 1, "field": name, "message": f"is not a column of the {table} file"})
    for name in REQUIRED[table]:
        if name not in names:
            problems.append({"row": 1, "field": name, "message": "this column is missing"})
    if problems:
        raise ImportRefused(problems)
    rows = []
    try:
        for number, cells in enumerate(reader, start=2):
            if not any(cell.strip() for cell in cells):
                continue
            if len(cells) > len(names):
                problems.append(
                    {"row": number, "field": "row", "message": f"has {len(cells)} cells, the header {len(names)}"}
                )
                continue
            rows.append((number, {name: cell for name, cell in zip(names, cells, strict=False) if name}))
            if len(rows) > MAX_ROWS:
                raise ImportRefused([{"row": number, "field": "row", "message": f"at most {MAX_ROWS} rows per file"}])
    except csv.Error as exc:
        problems.append({"row": reader.line_num, "field": "row", "message": f"cannot be read as CSV ({exc})"})
    if problems:
        raise ImportRefused(problems)
    return rows


def import_csv(conn, table: str, text: str, *, today: date | None = None) -> dict:
    """Check every row of ``text``, then add them all in one transaction; ``{"added", "already_here"}``."""
    today = today or date.today()
    rows = _rows(table, text)
    errors: list[dict] = []
    checked = []
    rolls = {rules.roll_key(roll["roll_id"]): roll for roll in store.all_rolls(conn)}
    seen: dict[str, int] = {}
    already = 0
    if table == "rolls":
        for number, row in rows:
            try:
                clean = rules.check_roll(row, today)
            except InputError as exc:
                errors.append({"row": number, "field": exc.field, "message": exc.message})
                continue
            key = rules.roll_key(clean["roll_id"])
            if key in seen:
                errors.append(
                    {"row": number, "field": "roll_id", "message": f"'{clean['roll_id']}' is also on row {seen[key]}"}
                )
                continue
            seen[key] = number
            if key in rolls:
                already += 1
                continue
            checked.append(clean)
    else:
        kind = KIND[table]
        spec = store.ENTRIES[kind]
        logged = set()
        for ident, log in store.logs(conn).items():
            for entry in log[kind]:
                logged.add((ident, *(_same(entry[name]) for name in spec["columns"])))
        for number, row in rows:
            roll = rolls.get(rules.roll_key(row.get("roll_id") or ""))
            if roll is None:
                message = (
                    "is required"
                    if not (row.get("roll_id") or "").strip()
                    else (f"no roll '{row['roll_id'].strip()}' in the register; import the rolls file first")
                )
                errors.append({"row": number, "field": "roll_id", "message": message})
                continue
            try:
                clean = spec["check"](row, roll["engraved_on"], today)
            except InputError as exc:
                errors.append({"row": number, "field": exc.field, "message": exc.message})
                continue
            key = (roll["id"], *(_same(clean[name]) for name in spec["columns"]))
            if key in logged:
                already += 1
                continue
            logged.add(key)
            checked.append((roll["id"], clean))
    if errors:
        raise ImportRefused(errors[:MAX_REPORTED])
    stamp = store.now_text()
    with transaction(conn):
        if table == "rolls":
            for item in checked:
                store.insert_roll(conn, item, stamp)
        else:
            store.insert_entries(conn, KIND[table], checked, stamp)
    return {"added": len(checked), "already_here": already}


def _same(value):
    """A value as compared for "already logged": volumes to 6 significant digits (the export's own precision)."""
    return float(f"{value:.6g}") if isinstance(value, float) else value
