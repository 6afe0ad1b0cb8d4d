"""CSV export and import of the ink list and of the ink sets' density readings.

Each file has a header row. Quantities carry their unit in the cell
(``1.02 g/cm3``, ``4.2 BCM/in2``, ``1.1 um``), shares are numbers from 0 to 1,
dates are ISO (``2024-03-05``). An import checks every row first and reports
each problem by row number (the header is row 1, as a spreadsheet counts)
and column; a file with any problem imports nothing. Importing the same file
again adds nothing twice: an ink whose name is on the list already, and a
reading identical to one the set has, are counted as already here. A
readings row names its set by name; the set must exist.
"""

from __future__ import annotations

import csv
import io
from datetime import date

from calc import InputError
from webapp.common.csvimport import ImportRefused, import_rows, one_per_file, read_rows, same, unless_here
from webapp.inks import rules, store

__all__ = ["COLUMNS", "REQUIRED", "MAX_ROWS", "ImportRefused", "export_csv", "import_csv"]

COLUMNS = {
    "inks": ("name", "type", "density", "solids_by_volume", "solids_by_weight", "price", "price_per", "notes"),
    "readings": ("ink_set", "read_on", "density", "film", "anilox_volume", "transfer", "notes"),
}
REQUIRED = {"inks": ("name", "type", "density"), "readings": ("ink_set", "density")}
MAX_ROWS = 20_000


def _number(value) -> str:
    return "" if value is None else f"{value:.6g}"


def export_csv(conn, table: str) -> str:
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow(COLUMNS[table])
    if table == "inks":
        for ink in store.all_inks(conn):
            writer.writerow(
                [
                    ink["name"],
                    ink["ink_type"],
                    f"{_number(ink['density_g_cm3'])} g/cm3",
                    _number(ink["solids_by_volume"]),
                    _number(ink["solids_by_weight"]),
                    "" if ink["price"] is None else f"{ink['price']:.6g}",
                    ink["price_per"],
                    ink["notes"],
                ]
            )
        return out.getvalue()
    readings = store.readings(conn)
    for ink_set in store.all_sets(conn):
        for row in readings.get(ink_set["id"], []):
            by_volume = row["anilox_cm3_m2"] is not None
            writer.writerow(
                [
                    ink_set["name"],
                    row["read_on"],
                    _number(row["density"]),
                    "" if by_volume else f"{_number(row['film_um'])} um",
                    f"{_number(row['anilox_cm3_m2'])} cm3/m2" if by_volume else "",
                    _number(row["transfer"]) if by_volume else "",
                    row["notes"],
                ]
            )
    return out.getvalue()


def _ink_row(row: dict) -> dict:
    """A CSV row as ``rules.check_ink`` reads it: shares and the price as numbers."""
    fields = dict(row)
    for name in ("solids_by_volume", "solids_by_weight", "price"):
        cell = (fields.get(name) or "").strip()
        if not cell:
            fields[name] = None
            continue
        try:
            fields[name] = float(cell.replace(",", "."))
        except ValueError:
            raise InputError(name, "must be a number" + (" from 0 to 1" if name != "price" else "")) from None
    return fields


def _reading_key(ink_set: int, reading: dict) -> tuple:
    """What makes two readings the same; the film of one printed by volume follows from volume × transfer."""
    by_volume = reading["anilox_cm3_m2"] is not None
    return (
        ink_set,
        reading["read_on"],
        same(reading["density"]),
        None if by_volume else same(reading["film_um"]),
        same(reading["anilox_cm3_m2"]),
        same(reading["transfer"]),
        reading["notes"],
    )


def _reading_check(conn, today: date):
    """Each readings row through ``rules.check_reading`` for the set it names; one the set has is counted."""
    sets = {rules.name_key(item["name"]): item for item in store.all_sets(conn)}
    logged = set()
    for ident, readings in store.readings(conn).items():
        for reading in readings:
            logged.add(_reading_key(ident, reading))

    def check(_number: int, row: dict):
        name = (row.get("ink_set") or "").strip()
        ink_set = sets.get(rules.name_key(name))
        if ink_set is None:
            raise InputError("ink_set", "is required" if not name else f"no ink set '{name}' here; add the set first")
        clean = rules.check_reading(row, today)
        return unless_here(logged, _reading_key(ink_set["id"], clean), (ink_set["id"], clean))

    return check


def import_csv(conn, table: str, text: str, *, today: date | None = None) -> dict:
    """Check every row of ``text``, then add them all in one transaction; ``{"added", "already_here"}``."""
    today = today or date.today()
    rows = read_rows(text, table, COLUMNS[table], REQUIRED[table], MAX_ROWS)

    def add(checked: list) -> None:
        stamp = store.now_text()
        for item in checked:
            if table == "inks":
                store.insert_ink(conn, item, stamp)
            else:
                store.insert_reading(conn, item[0], item[1], stamp)

    if table == "inks":
        known = {rules.name_key(ink["name"]) for ink in store.all_inks(conn)}
        check = one_per_file("name", rules.name_key, known, lambda row: rules.check_ink(_ink_row(row)))
    else:
        check = _reading_check(conn, today)
    return import_rows(conn, rows, check, add)
