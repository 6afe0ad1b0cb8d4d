"""Importing a CSV file that checks every row first: the roll register's files and the inks' files.

``read_rows`` reads the header (every column known, every required one there) and the rows, each
with its row number as a spreadsheet counts them (the header is row 1; blank rows are skipped).
``import_rows`` checks every row with the feature's own check, collects each problem as
``{"row", "field", "message"}`` and, if there is any, refuses the whole file (``ImportRefused``,
at most ``MAX_REPORTED`` problems); else it adds every checked row in one transaction. A row
the check finds already here (``ALREADY_HERE``) is counted, not added; ``one_per_file`` is that
check for files of named things.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Callable, Iterable

from calc import InputError
from webapp.common.db import transaction

MAX_REPORTED = 50
ALREADY_HERE = object()  # what a row check answers for a row that is already here


class ImportRefused(Exception):
    """Some rows are wrong; nothing was imported. ``errors``: ``[{"row", "field", "message"}]``."""

    def __init__(self, errors: list[dict]):
        super().__init__(f"{len(errors)} problems; nothing was imported")
        self.errors = errors


def read_rows(
    text: str, table: str, columns: Iterable[str], required: Iterable[str], max_rows: int
) -> list[tuple[int, dict]]:
    """The rows of ``text`` as ``(row number, {column: cell})``; a bad header or row refuses the file."""
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
        if name and name not in columns:
            problems.append({"row": 1, "field": name, "message": f"is not a column of the {table} file"})
    for name in required:
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
            if len(rows) > max_rows:
                raise ImportRefused([{"row": number, "field": "row", "message": f"at most {max_rows} rows per file"}])
    except csv.Error as exc:
        problems.append({"row": reader.line_num, "field": "row", "message": f"cannot be read as CSV ({exc})"})
    if problems:
        raise ImportRefused(problems)
    return rows


def import_rows(conn, rows: list[tuple[int, dict]], check: Callable, add: Callable[[list], None]) -> dict:
    """Check every row, then add them all in one transaction; ``{"added", "already_here"}``.

    ``check(number, row)`` gives the row's checked item, or ``ALREADY_HERE``; it raises
    ``InputError`` naming the column for a wrong row. ``add(items)`` writes the items
    (inside the transaction).
    """
    errors: list[dict] = []
    checked: list = []
    already = 0
    for number, row in rows:
        try:
            item = check(number, row)
        except InputError as exc:
            errors.append({"row": number, "field": exc.field, "message": exc.message})
            continue
        if item is ALREADY_HERE:
            already += 1
        else:
            checked.append(item)
    if errors:
        raise ImportRefused(errors[:MAX_REPORTED])
    with transaction(conn):
        add(checked)
    return {"added": len(checked), "already_here": already}


def one_per_file(field: str, key_of: Callable, known, check_row: Callable) -> Callable:
    """A row check for a file of named things (inks by name, rolls by roll ID): ``check_row(row)``, then
    a name on an earlier row of the file is refused, one that is here already (``key_of(name) in known``)
    counted."""
    seen: dict = {}

    def check(number: int, row: dict):
        clean = check_row(row)
        key = key_of(clean[field])
        if key in seen:
            raise InputError(field, f"'{clean[field]}' is also on row {seen[key]}")
        seen[key] = number
        return ALREADY_HERE if key in known else clean

    return check


def unless_here(seen: set, key, item):
    """``ALREADY_HERE`` for a row whose ``key`` is in ``seen`` (stored already, or on an earlier row); else
    ``item``, its key now seen."""
    if key in seen:
        return ALREADY_HERE
    seen.add(key)
    return item


def same(value):
    """A value as compared for "already here": floats to 6 significant digits (the exports' own precision)."""
    return float(f"{value:.6g}") if isinstance(value, float) else value
