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
from webapp.common.csvimport import ImportRefused, import_rows, one_per_file, read_rows, same, unless_here
from webapp.rolls import rules, store

__all__ = ["COLUMNS", "REQUIRED", "MAX_ROWS", "ImportRefused", "export_csv", "import_csv"]

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


def _entry_check(conn, rolls: dict, kind: str, today: date):
    """Each log row through its entry check for the roll it names; one identical to a logged entry is counted."""
    spec = store.ENTRIES[kind]
    logged = set()
    for ident, log in store.logs(conn).items():
        for entry in log[kind]:
            logged.add((ident, *(same(entry[name]) for name in spec["columns"])))

    def check(_number: int, row: dict):
        roll = rolls.get(rules.roll_key(row.get("roll_id") or ""))
        if roll is None:
            message = (
                "is required"
                if not (row.get("roll_id") or "").strip()
                else (f"no roll '{row['roll_id'].strip()}' in the register; import the rolls file first")
            )
            raise InputError("roll_id", message)
        clean = spec["check"](row, roll["engraved_on"], today)
        key = (roll["id"], *(same(clean[name]) for name in spec["columns"]))
        return unless_here(logged, key, (roll["id"], clean))

    return check


def import_csv(conn, table: str, text: str, *, today: date | None = None) -> dict:
    """Check every row of ``text``, then add them all in one transaction; ``{"added", "already_here"}``."""
    today = today or date.today()
    rows = read_rows(text, table, COLUMNS[table], REQUIRED[table], MAX_ROWS)
    rolls = {rules.roll_key(roll["roll_id"]): roll for roll in store.all_rolls(conn)}

    def add(checked: list) -> None:
        stamp = store.now_text()
        if table == "rolls":
            for item in checked:
                store.insert_roll(conn, item, stamp)
        else:
            store.insert_entries(conn, KIND[table], checked, stamp)

    if table == "rolls":
        check = one_per_file("roll_id", rules.roll_key, rolls, lambda row: rules.check_roll(row, today))
    else:
        check = _entry_check(conn, rolls, KIND[table], today)
    return import_rows(conn, rows, check, add)
