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
from webapp.common.db import transaction
from webapp.inks import rules, store

COLUMNS = {
    "inks": ("name", "type", "density", "solids_by_volume", "solids_by_weight", "price", "price_per", "notes"),
    "readings": ("ink_set", "read_on", "density", "film", "anilox_volume", "transfer", "notes"),
}
REQUIRED = {"inks": ("name", "type", "density"), "readings": ("ink_set", "density")}
MAX_ROWS = 20_000
MAX_REPORTED = 50


class ImportRefused(Exception):
    """Some rows are wrong; nothing was imported. ``errors``: ``[{"row", "field", "message"}]``."""

    def __init__(self, errors: list[dict]):
        super().__init__(f"{len(errors)} problems; nothing was imported")
        self.errors = errors


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


def _same(value):
    """A value as compared for "already here": floats to 6 significant digits (the export's own precision)."""
    return float(f"{value:.6g}") if isinstance(value, float) else value


def _reading_key(ink_set: int, reading: dict) -> tuple:
    """What makes two readings the same; the film of one printed by volume follows from volume × transfer."""
    by_volume = reading["anilox_cm3_m2"] is not None
    return (
        ink_set,
        reading["read_on"],
        _same(reading["density"]),
        None if by_volume else _same(reading["film_um"]),
        _same(reading["anilox_cm3_m2"]),
        _same(reading["transfer"]),
        reading["notes"],
    )


def import_csv(conn, table: str, text: str, *, today: date | None = None) -> dict:
    """Check every row of ``text``, then add them all in one transaction; ``{"added", "already_here"}``."""
    today = today or date.today()
    rows = _rows(table, text)
    errors: list[dict] = []
    checked: list = []
    already = 0
    if table == "inks":
        known = {rules.name_key(ink["name"]) for ink in store.all_inks(conn)}
        seen: dict[str, int] = {}
        for number, row in rows:
            try:
                clean = rules.check_ink(_ink_row(row))
            except InputError as exc:
                errors.append({"row": number, "field": exc.field, "message": exc.message})
                continue
            key = rules.name_key(clean["name"])
            if key in seen:
                errors.append(
                    {"row": number, "field": "name", "message": f"'{clean['name']}' is also on row {seen[key]}"}
                )
                continue
            seen[key] = number
            if key in known:
                already += 1
                continue
            checked.append(clean)
    else:
        sets = {rules.name_key(item["name"]): item for item in store.all_sets(conn)}
        logged = set()
        for ident, readings in store.readings(conn).items():
            for reading in readings:
                logged.add(_reading_key(ident, reading))
        for number, row in rows:
            name = (row.get("ink_set") or "").strip()
            ink_set = sets.get(rules.name_key(name))
            if ink_set is None:
                message = "is required" if not name else f"no ink set '{name}' here; add the set first"
                errors.append({"row": number, "field": "ink_set", "message": message})
                continue
            try:
                clean = rules.check_reading(row, today)
            except InputError as exc:
                errors.append({"row": number, "field": exc.field, "message": exc.message})
                continue
            key = _reading_key(ink_set["id"], clean)
            if key in logged:
                already += 1
                continue
            logged.add(key)
            checked.append((ink_set["id"], clean))
    if errors:
        raise ImportRefused(errors[:MAX_REPORTED])
    stamp = store.now_text()
    with transaction(conn):
        for item in checked:
            if table == "inks":
                store.insert_ink(conn, item, stamp)
            else:
                store.insert_reading(conn, item[0], item[1], stamp)
    return {"added": len(checked), "already_here": already}
