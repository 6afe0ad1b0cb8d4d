"""Export and import of saved snippets: a JSON file that re-imports, and CSV for spreadsheets.

Both are streams. An export is written a few hundred snippets at a time from one
read snapshot on its own connection (constant memory at any size; Flask-Compress
compresses the stream on the wire). An import is parsed as it arrives (ijson, its C
backend): each snippet is checked as strictly as a new one and added inside one
transaction, so one bad snippet, anywhere in the file, means none is added. Up to
``MAX_IMPORT`` snippets in a file of up to ``MAX_IMPORT_BYTES`` (a million
twelve-station estimates make about 4.5 GB; the shop's usual 10k export about 11 MB);
a gzip-compressed export (``.json.gz``) imports as well.
"""

from __future__ import annotations

import contextlib
import csv
import gzip
import io
import itertools
import json
import re
import sqlite3
from collections.abc import Iterable, Iterator
from datetime import datetime
from decimal import Decimal

import ijson

from calc import InputError
from webapp.calculators import CALCULATIONS
from webapp.common import jsontext
from webapp.common.db import connect, transaction
from webapp.common.formatting import is_number, is_quantity, local_time
from webapp.snippets.rules import check_data, check_kind, check_meta
from webapp.snippets.store import MAX_VERSION, check_by, insert_rows, now_text, rows_to_snippets

EXPORT_FORMAT = "inkfilm-snippets"
MAX_IMPORT = 2_000_000
# The body limit of the import (API and page) only; the rest of the app keeps its own.
# The file is parsed as a stream, so this bounds the disk and time an import takes, not memory.
MAX_IMPORT_BYTES = 8 * 1024**3
# Snippets read from the file per batch of an export.
EXPORT_BATCH = 500


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
    "changed_by",
    "inputs",
    "results",
    "created_at",
    "updated_at",
    "version",
)


def _live_rows(conn) -> Iterator[list]:
    """Every snippet not in the bin, oldest first, a batch at a time."""
    # Named, so the first rows come at once from the index rather than after sorting them all.
    cursor = conn.execute(
        "SELECT * FROM snippet INDEXED BY snippet_live_created WHERE deleted_at IS NULL ORDER BY created_at, id"
    )
    while rows := cursor.fetchmany(EXPORT_BATCH):
        yield rows_to_snippets(conn, rows)


def export_all(conn, now: datetime | None = None) -> dict:
    """Every snippet not in the bin, oldest first, as the JSON export file holds them (in memory:
    for small stores and tests; the pages and the API send ``export_stream``)."""
    snippets = [{name: s[name] for name in EXPORT_FIELDS} for batch in _live_rows(conn) for s in batch]
    return {"format": EXPORT_FORMAT, "format_version": 1, "exported_at": now_text(now), "snippets": snippets}


@contextlib.contextmanager
def _reading(path):
    """A connection of its own on the file at ``path`` holding one read snapshot: a stream outlives
    the request's connection, and the file it sends is the store at one moment."""
    with contextlib.closing(connect(path)) as conn:
        conn.execute("BEGIN")
        try:
            yield conn
        finally:
            conn.rollback()


def export_stream(path, now: datetime | None = None) -> Iterator[str]:
    """The JSON export of the file at ``path`` (the same file as ``export_all`` gives), in pieces."""
    with _reading(path) as conn:
        head = {"format": EXPORT_FORMAT, "format_version": 1, "exported_at": now_text(now)}
        yield json.dumps(head, ensure_ascii=False)[:-1] + ', "snippets": ['
        separator = "\n"
        for batch in _live_rows(conn):
            pieces = [json.dumps({name: s[name] for name in EXPORT_FIELDS}, ensure_ascii=False) for s in batch]
            yield separator + ",\n".join(pieces)
            separator = ",\n"
        yield "\n]}\n"


_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
# = + - @ right after a separator a spreadsheet may split on (, ; tab |) or a line break; quotes
# already there are counted in, so that the change can be undone exactly (``spreadsheet_text``).
_FORMULA_AFTER_SEPARATOR = re.compile(r"([,;\t|\r\n] *)(?='*[=+\-@])")
_MARK_AFTER_SEPARATOR = re.compile(r"([,;\t|\r\n] *)'(?='*[=+\-@])")


def _starts_formula(text: str) -> bool:
    rest = text.lstrip("'")
    return rest[:1] in _FORMULA_START or rest.lstrip(" ")[:1] in _FORMULA_START


def spreadsheet_safe(text: str) -> str:
    """``text`` made inert for spreadsheets (OWASP, "CSV Injection").

    A cell starting with ``= + - @``, tab or CR is a formula to a spreadsheet;
    so is any piece after a separator when the sheet splits cells on ``;`` or
    ``|``. Each such piece gets a leading ``'``, which spreadsheets read as
    "this is text" (a piece that starts with quotes and then a formula sign gets one
    more, so that ``spreadsheet_text`` gives back exactly what was written).

    >>> spreadsheet_safe("x;=1+1;"), spreadsheet_safe("=1+1"), spreadsheet_safe("Cyan, process")
    ("x;'=1+1;", "'=1+1", 'Cyan, process')
    """
    text = _FORMULA_AFTER_SEPARATOR.sub(r"\1'", text)
    if _starts_formula(text):
        text = "'" + text
    return text


def spreadsheet_text(cell: str) -> str:
    """The text ``spreadsheet_safe`` made ``cell`` from (the marks it added taken off).

    >>> spreadsheet_text("x;'=1+1;"), spreadsheet_text("''=1"), spreadsheet_text("it's")
    ('x;=1+1;', "'=1", "it's")
    """
    if cell[:1] == "'" and _starts_formula(cell[1:]):
        cell = cell[1:]
    return _MARK_AFTER_SEPARATOR.sub(r"\1", cell)


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
    """Every snippet not in the bin as CSV (see ``export_csv_stream``), in memory, without the BOM."""
    return "".join(_csv_pieces(conn, zone))


def export_csv_stream(path, zone=None) -> Iterator[str]:
    """Every snippet not in the bin of the file at ``path`` as CSV, ``CSV_BOM`` first, in pieces,
    from one snapshot."""
    yield CSV_BOM
    with _reading(path) as conn:
        yield from _csv_pieces(conn, zone)


def _csv_pieces(conn, zone=None) -> Iterator[str]:
    """One row per snippet; inputs and results as JSON text, then the headline result as plain
    number and unit columns and the times in ``zone`` (``None``: the server's own).

    Every text cell is quoted and made inert (``spreadsheet_safe``); ``import_csv_stream``
    reads such a file back (``spreadsheet_text`` undoes the marks).
    """
    out = io.StringIO()
    writer = csv.writer(out, quoting=csv.QUOTE_NONNUMERIC)
    writer.writerow(["id", *EXPORT_FIELDS, *CSV_EXTRA])
    for batch in _live_rows(conn):
        for snippet in batch:
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
        yield out.getvalue()
        out.seek(0)
        out.truncate()
    if out.tell():
        yield out.getvalue()


_STAMP = re.compile(r"[0-9]{4}-[0-9]{2}-[0-9]{2}T[0-9]{2}:[0-9]{2}:[0-9]{2}Z")


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
            # The pattern first, then a real day and time (fromisoformat is many times quicker than strptime).
            if not isinstance(value, str) or not _STAMP.fullmatch(value):
                raise ValueError(value)
            datetime.fromisoformat(value[:-1])
        except ValueError:
            raise InputError(f"{where}.{name}", "must be a time such as 2024-05-01T13:45:00Z") from None
    version = item.get("version", 1)
    if not isinstance(version, int) or isinstance(version, bool) or not 1 <= version <= MAX_VERSION:
        raise InputError(f"{where}.version", f"must be a whole number from 1 to {MAX_VERSION:,}")
    changed_by = item.get("changed_by")
    try:
        changed_by = check_by(changed_by if changed_by is not None else "")
    except InputError as exc:
        raise InputError(f"{where}.changed_by", exc.message) from None
    kept = {name: item[name] for name in ("uid", "kind", "inputs", "results", "created_at", "updated_at")}
    return {**meta, **kept, "version": version, "changed_by": changed_by}


class NotJSON(ValueError):
    """The file is not JSON (or not all of it is); ``str()`` says where it stopped."""


def import_all(conn, data, calculations: dict | None = None) -> dict:
    """Add the snippets of an export file already read (``data``: the export object or its list).

    See ``import_stream`` for what is checked; the counts ``{"added": n, "already_here": m}``.
    """
    if isinstance(data, dict):
        if data.get("format") not in (None, EXPORT_FORMAT):
            raise InputError("format", "this is not an inkfilm snippets export")
        items = data.get("snippets")
    else:
        items = data
    if not isinstance(items, list):
        raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")
    return _add_all(conn, items, calculations)


def import_stream(conn, stream, calculations: dict | None = None) -> dict:
    """Add the snippets of the export file read from the binary ``stream`` as it arrives.

    The file may be the export object or its bare list, UTF-8 with or without a byte-order
    mark, plain or gzip-compressed. Snippets already here (same ``uid``) are left as they
    are. All or nothing: a snippet that could not be saved new (an unknown kind, inputs or
    results that could not be kept or shown), a uid twice in the file, a file that is not
    JSON or ends early, and none is added (``InputError`` naming the place, or ``NotJSON``).
    """
    return _add_all(conn, _json_items(_opened(stream)), calculations)


def _json_place(index: int) -> str:
    return f"snippets[{index}]"


def _csv_place(index: int) -> str:
    return f"row {index + 2}"  # as a spreadsheet numbers them: the header is row 1


def _placed(exc: InputError, index: int, place) -> InputError:
    """An error of ``_check_import_item`` (named ``snippets[i]…``) named by ``place`` instead."""
    prefix = _json_place(index)
    if place is _json_place or not exc.field or not exc.field.startswith(prefix):
        return exc
    rest = exc.field[len(prefix) :].lstrip(".")
    return InputError(f"{place(index)}, {rest}" if rest else place(index), exc.message)


# Snippets added per statement of an import.
IMPORT_BATCH = 500
_SEARCH_TRIGGERS = "SELECT name, sql FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'snippet_search%'"


def _add_all(conn, items: Iterable, calculations: dict | None, place=_json_place) -> dict:
    """Check and add ``items`` in one transaction, ``IMPORT_BATCH`` at a time.

    The search index's triggers are set aside inside the transaction (an index row written
    and then rewritten per tag costs more than the snippet) and the index rows of the new
    snippets are written in one statement at the end, before the triggers come back; any
    error rolls all of it back, triggers included.
    """
    calculations = CALCULATIONS if calculations is None else calculations
    added = count = 0
    with transaction(conn):
        # The uids of this file so far, on disk beside the file (a million would not fit in memory
        # for free); gone with the transaction.
        conn.execute("CREATE TEMP TABLE import_seen (uid TEXT PRIMARY KEY, at INTEGER NOT NULL)")
        triggers = conn.execute(_SEARCH_TRIGGERS).fetchall()
        for name, _ in triggers:
            conn.execute(f'DROP TRIGGER "{name}"')  # names from the file's own schema
        last_id = conn.execute("SELECT coalesce(max(id), 0) FROM snippet").fetchone()[0]
        batch: list[dict] = []
        try:
            for index, item in enumerate(items):
                if index >= MAX_IMPORT:
                    raise InputError("snippets", f"at most {MAX_IMPORT:,} snippets in one import")
                try:
                    row = _check_import_item(item, index, calculations)
                except InputError as exc:
                    raise _placed(exc, index, place) from None
                try:
                    conn.execute("INSERT INTO temp.import_seen VALUES (?, ?)", (row["uid"], index))
                except sqlite3.IntegrityError:
                    first = conn.execute("SELECT at FROM temp.import_seen WHERE uid = ?", (row["uid"],)).fetchone()[0]
                    raise _placed(
                        InputError(f"snippets[{index}].uid", f"repeats the uid of {place(first)}: each snippet once"),
                        index,
                        place,
                    ) from None
                batch.append(row)
                if len(batch) >= IMPORT_BATCH:
                    added += insert_rows(conn, batch)
                    batch = []
                count = index + 1
            added += insert_rows(conn, batch)
            conn.execute(
                "INSERT INTO snippet_search (rowid, title, job_number, notes, tags)"
                " SELECT s.id, s.title, s.job_number, s.notes,"
                " coalesce((SELECT group_concat(t.tag, ' ') FROM snippet_tag t WHERE t.snippet_id = s.id), '')"
                " FROM snippet s WHERE s.id > ? AND s.deleted_at IS NULL",
                (last_id,),
            )
            for _, sql in triggers:
                conn.execute(sql)
        finally:
            conn.execute("DROP TABLE temp.import_seen")
    return {"added": added, "already_here": count - added}


# The columns a CSV import needs; the others of an export (id, the headline and local times) are
# worked out again, and columns a spreadsheet added are left out.
CSV_NEEDED = ("uid", "kind", "title", "inputs", "results", "created_at", "updated_at")
CSV_READ = tuple(name for name in EXPORT_FIELDS)


def import_csv_stream(conn, stream, calculations: dict | None = None) -> dict:
    """Add the snippets of a CSV file that ``export_csv`` wrote (perhaps saved again by a
    spreadsheet: with or without the byte-order mark, cells quoted or not, ``;`` between them),
    read from the binary ``stream`` as it arrives. Same rules as ``import_stream``: snippets
    already here (same ``uid``) are left, and a bad row anywhere adds nothing; an error names
    the row (as a spreadsheet numbers them) and the column."""
    return _add_all(conn, _csv_items(_opened(stream)), calculations, place=_csv_place)


def import_any(conn, stream, filename: str = "", calculations: dict | None = None) -> dict:
    """``import_stream`` or ``import_csv_stream`` for an upload: by its name (``.json``, ``.csv``,
    either with ``.gz``), else by what the file holds."""
    source = _opened(stream)
    name = filename.lower().removesuffix(".gz")
    head = source.peek(64)[:64].lstrip()
    if name.endswith(".json") or (not name.endswith(".csv") and (head[:1] in (b"{", b"[") or not head)):
        return _add_all(conn, _json_items(source), calculations)
    return _add_all(conn, _csv_items(source), calculations, place=_csv_place)


def _csv_items(source) -> Iterator[dict]:
    """The snippets of a CSV export, one dict per row, as ``_check_import_item`` takes them."""
    text = io.TextIOWrapper(source, encoding="utf-8", newline="")
    row_number = 1
    try:
        first = text.readline()
        delimiter = ";" if ";" in first and "," not in first else ","
        header = next(csv.reader([first], delimiter=delimiter), [])
        header = [name.strip().lstrip("\ufeff") for name in header]
        if not any(header):
            raise InputError("row 1", "is empty: an inkfilm CSV export starts with its column names")
        for name in CSV_NEEDED:
            if name not in header:
                raise InputError(
                    "row 1", f"has no column {name} (an inkfilm export has {', '.join(['id', *EXPORT_FIELDS])})"
                )
        for name in header:
            if name and header.count(name) > 1:
                raise InputError("row 1", f"has the column {name} twice")
        columns = {name: header.index(name) for name in CSV_READ if name in header}
        for cells in csv.reader(text, delimiter=delimiter):
            row_number += 1
            if not any(cell.strip() for cell in cells):
                continue  # an empty line (spreadsheets add some at the end)
            if len(cells) != len(header):
                raise InputError(f"row {row_number}", f"has {len(cells)} cells; the header has {len(header)}")
            yield _csv_item(cells, columns, row_number)
    except UnicodeDecodeError:
        raise InputError(f"row {row_number + 1}", "is not UTF-8 text (save the file as CSV UTF-8)") from None
    except csv.Error as exc:
        raise InputError(f"row {row_number + 1}", f"is not CSV an export gives ({exc})") from None


def _csv_item(cells: list[str], columns: dict, row_number: int) -> dict:
    item: dict = {}
    for name, at in columns.items():
        value = spreadsheet_text(cells[at])
        if name in ("inputs", "results"):
            try:
                value = jsontext.loads(value)
            except InputError as exc:
                raise InputError(f"row {row_number}, {name}", exc.message) from None
            except ValueError as exc:
                raise InputError(f"row {row_number}, {name}", f"is not the JSON an export gives ({exc})") from None
        elif name == "version":
            value = value.strip()
            if not value:
                continue
            value = int(value) if re.fullmatch(r"[0-9]{1,16}", value) else value
        elif name in ("created_at", "updated_at", "uid", "kind"):
            value = value.strip()
        item[name] = value
    return item


class _Reader(io.RawIOBase):
    """``stream`` read again from the start after ``head`` was taken off it, stopping at ``limit`` bytes."""

    def __init__(self, head: bytes, stream, limit: int):
        self.head, self.stream, self.left = head, stream, limit

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        if self.head:
            data, self.head = self.head[: len(buffer)], self.head[len(buffer) :]
        else:
            data = self.stream.read(len(buffer))
        self.left -= len(data)
        if self.left < 0:
            raise InputError(None, f"the file is larger than {MAX_IMPORT_BYTES // 1024**3} GiB an import may be")
        buffer[: len(data)] = data
        return len(data)


def _opened(stream):
    """The export's text bytes: a gzip file opened, a byte-order mark dropped, the size bounded."""
    head = stream.read(2)
    if head == b"\x1f\x8b":
        stream = gzip.GzipFile(fileobj=io.BufferedReader(_Reader(head, stream, MAX_IMPORT_BYTES)))
        head = stream.read(2)
    head += stream.read(1)
    if head.startswith(b"\xef\xbb\xbf"):
        head = head[3:]
    return io.BufferedReader(_Reader(head, stream, MAX_IMPORT_BYTES), buffer_size=64 * 1024)


# How much of the file's start is read to see whether it is laid out as an export writes it.
_HEAD_BYTES = 64 * 1024


def _json_items(source) -> Iterator:
    """The snippets of a JSON export file. A file laid out as inkfilm writes it (``format`` before
    the ``snippets`` list, or a bare list) is parsed by ijson's C parser alone; any other file,
    and the place of an error in it, by the event-by-event reading of ``_stream_items``, which
    checks ``format`` wherever it stands and names the key a parse error stopped at."""
    head = b""
    while len(head) < _HEAD_BYTES and (piece := source.read(_HEAD_BYTES - len(head))):
        head += piece
    source = io.BufferedReader(_Reader(head, source, MAX_IMPORT_BYTES), buffer_size=_HEAD_BYTES)
    prefix = _laid_out_as_export(head)
    if prefix is None:
        return _stream_items(source)
    return _quick_items(source, prefix)


def _laid_out_as_export(head: bytes) -> str | None:
    """``"item"`` (a bare list) or ``"snippets.item"`` (``format`` of inkfilm before the list) when
    ``head``, the start of the file, shows that layout; else ``None``."""
    format_seen = False
    try:
        # Small pieces: the C parser gives a piece's events only once the whole piece parsed, and
        # the head ends in the middle of a snippet.
        for prefix, event, value in ijson.parse(io.BytesIO(head), buf_size=256):
            if prefix == "":
                if event == "start_array":
                    return "item"
                if event != "start_map" and event != "map_key":
                    return None
            elif prefix == "format":
                if event != "string" or value != EXPORT_FORMAT:
                    return None
                format_seen = True
            elif prefix == "snippets":
                return "snippets.item" if event == "start_array" and format_seen else None
    except (ijson.JSONError, UnicodeDecodeError):
        return None  # cut off by the head's end, or not JSON: the careful reading says which
    return None


# What an upload that is not a readable export raises while it is parsed (not JSON, cut short,
# not UTF-8, a bad gzip file).
PARSE_ERRORS = (ijson.JSONError, UnicodeDecodeError, EOFError, OSError)


def _parse_reason(exc: BaseException) -> str:
    """The first line of a parse error, or "the file ends early" when it says nothing."""
    return str(exc).splitlines()[0].strip() if str(exc).strip() else "the file ends early"


def _not_export_json(field: str, reason: str) -> InputError:
    return InputError(field, f"is not JSON an export gives ({reason}); nothing was imported")


def _quick_items(source, prefix: str) -> Iterator:
    count = 0
    # Floats as floats: an export never holds a number past a float's range (it would be a
    # parse error here, naming the snippet).
    items = ijson.items(source, prefix, use_float=True)
    while True:
        try:
            item = next(items)
        except StopIteration:
            return
        except PARSE_ERRORS as exc:
            raise _not_export_json(f"snippets[{count}]", _parse_reason(exc)) from None
        count += 1
        yield item


def _stream_items(source) -> Iterator:
    """The snippets of an export file, one at a time, from the ijson events of ``source``."""
    place = _Place()
    events = _events(source, place)
    try:
        first = next(events)
    except StopIteration:
        raise NotJSON("the file is empty") from None
    events = itertools.chain([first], events)
    if first[1] == "start_array":
        place.top = "item"
        yield from map(_floats, ijson.items(events, "item"))
        return
    if first[1] != "start_map":
        raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")
    place.top = "snippets.item"
    found = []

    def checked(events):
        for prefix, event, value in events:
            if prefix == "format" and (event != "string" or value != EXPORT_FORMAT) and event != "null":
                raise InputError("format", "this is not an inkfilm snippets export")
            if prefix == "snippets" and not found:
                if event != "start_array":
                    raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")
                found.append(True)
            yield prefix, event, value

    yield from map(_floats, ijson.items(checked(events), "snippets.item"))
    if not found:
        raise InputError("snippets", "must be a list of snippets (an inkfilm JSON export)")


class _Place:
    """Where the parse is: the snippet's number and the last key, to name the place of an error."""

    top = ""
    index = -1
    prefix = ""
    key = ""

    def field(self) -> str | None:
        if not self.top or self.index < 0 or not self.prefix.startswith(self.top):
            return None
        rest = [part for part in self.prefix[len(self.top) :].split(".") if part and part != "item"]
        return ".".join([f"snippets[{self.index}]", *rest, *([self.key] if self.key else [])])


def _events(source, place: _Place) -> Iterator:
    """ijson's parse events (numbers other than whole ones as ``Decimal``, so that ``1e400`` is
    read and then refused by the checks as any infinite number is); a parse error (not JSON,
    cut short, not UTF-8, a bad gzip file) as an ``InputError`` naming the snippet and key it
    stopped at, or ``NotJSON`` before the first snippet."""
    events = ijson.parse(source)
    while True:
        try:
            event = next(events)
        except StopIteration:
            return
        except PARSE_ERRORS as exc:
            reason = _parse_reason(exc)
            field = place.field()
            if field is None:
                raise NotJSON(reason) from None
            raise _not_export_json(field, reason) from None
        prefix, kind, value = event
        if place.top and prefix == place.top and kind == "start_map":
            place.index += 1
        place.prefix, place.key = prefix, (value if kind == "map_key" else "")
        yield event


def _floats(item):
    """``item`` with every ``Decimal`` as the float ``json.loads`` would give (walked without recursion)."""
    if isinstance(item, Decimal):
        return float(item)
    stack = [item]
    while stack:
        value = stack.pop()
        pairs = value.items() if isinstance(value, dict) else enumerate(value) if isinstance(value, list) else ()
        for key, inner in pairs:
            if isinstance(inner, Decimal):
                value[key] = float(inner)
            elif isinstance(inner, dict | list):
                stack.append(inner)
    return item
