"""The roll register on the SQLite file: rolls, measurements, cleanings.

Every change raises a roll's (or a log entry's) ``version`` by one; a change
made against an older version is refused with ``Conflict`` carrying the
current one, and nothing is overwritten. A roll is never deleted: it is
retired and keeps its logs. A log entry that a supervisor corrects or
removes keeps its old values in ``roll_entry_change``. Functions here take an
open connection (``webapp.common.db``) and check what they are given with
``webapp.rolls.rules`` before they write; every write is one transaction.
"""

from __future__ import annotations

import json
from datetime import UTC, date, datetime

from calc import InputError
from webapp.common.db import MAX_ID, transaction
from webapp.rolls import rules

ROLL_COLUMNS = (
    "roll_id",
    "screen_lpi",
    "angle",
    "nominal_bcm",
    "certificate_bcm",
    "engraved_on",
    "press",
    "location",
    "status",
    "notes",
)

# The two kinds of log entry: table, date column, columns a form fills, checker.
ENTRIES = {
    "measurement": {
        "table": "roll_measurement",
        "date": "measured_on",
        "columns": ("measured_on", "volume_bcm", "condition", "method", "measured_by"),
        "check": rules.check_measurement,
    },
    "cleaning": {
        "table": "roll_cleaning",
        "date": "cleaned_on",
        "columns": ("cleaned_on", "method", "cleaned_by", "notes"),
        "check": rules.check_cleaning,
    },
}


class NotFound(LookupError):
    """No roll (or log entry) with that id."""

    def __init__(self, what: str, ident):
        super().__init__(f"there is no {what} {ident} here")
        self.what = what
        self.message = str(self)


class Conflict(Exception):
    """Changed by someone else since the version the change was made against."""

    def __init__(self, current: dict, what: str = "roll"):
        super().__init__("changed by someone else meanwhile — here is the newer one")
        self.current = current
        self.what = what
        self.message = str(self)


def now_text(now: datetime | None = None) -> str:
    return (now or datetime.now(UTC)).strftime("%Y-%m-%dT%H:%M:%SZ")


def check_version(version) -> int:
    if isinstance(version, str) and version.strip().isdigit():
        version = int(version)
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise InputError("version", "is required: the version the change was made against")
    return version


# --- reading ------------------------------------------------------------------------------


def get_roll(conn, roll: int) -> dict:
    if not 0 < roll <= MAX_ID:
        raise NotFound("roll", roll)
    row = conn.execute("SELECT * FROM roll WHERE id = ?", (roll,)).fetchone()
    if row is None:
        raise NotFound("roll", roll)
    return dict(row)


def find_roll(conn, roll_id: str) -> dict | None:
    """The roll with the shop's ID ``roll_id`` (case and spacing ignored), or None."""
    row = conn.execute("SELECT * FROM roll WHERE roll_key = ?", (rules.roll_key(roll_id),)).fetchone()
    return None if row is None else dict(row)


def all_rolls(conn) -> list[dict]:
    return [dict(row) for row in conn.execute("SELECT * FROM roll ORDER BY roll_key")]


def logs(conn, roll_ids: list[int] | None = None) -> dict[int, dict[str, list[dict]]]:
    """Each roll's measurements and cleanings (not removed), oldest first; all rolls when ``roll_ids`` is None."""
    every = [row[0] for row in conn.execute("SELECT id FROM roll")] if roll_ids is None else roll_ids
    found: dict[int, dict[str, list[dict]]] = {ident: {"measurement": [], "cleaning": []} for ident in every}
    for kind, spec in ENTRIES.items():
        sql = f"SELECT * FROM {spec['table']} WHERE removed_at IS NULL"
        params: list = []
        if roll_ids is not None:
            if not roll_ids:
                continue
            sql += f" AND roll IN ({', '.join('?' * len(roll_ids))})"
            params = list(roll_ids)
        sql += f" ORDER BY {spec['date']}, id"
        for row in conn.execute(sql, params):
            found.setdefault(row["roll"], {"measurement": [], "cleaning": []})[kind].append(dict(row))
    return found


def get_entry(conn, kind: str, roll: int, entry: int) -> dict:
    spec = ENTRIES[kind]
    if not (0 < roll <= MAX_ID and 0 < entry <= MAX_ID):
        raise NotFound(kind, entry)
    row = conn.execute(
        f"SELECT * FROM {spec['table']} WHERE id = ? AND roll = ? AND removed_at IS NULL", (entry, roll)
    ).fetchone()
    if row is None:
        raise NotFound(kind, entry)
    return dict(row)


def entry_changes(conn, kind: str, entry: int) -> list[dict]:
    rows = conn.execute(
        "SELECT * FROM roll_entry_change WHERE kind = ? AND entry = ? ORDER BY id", (kind, entry)
    ).fetchall()
    return [{**dict(row), "before": json.loads(row["before"])} for row in rows]


def presses(conn) -> list[str]:
    rows = conn.execute("SELECT DISTINCT press FROM roll WHERE press <> '' ORDER BY press").fetchall()
    return [row["press"] for row in rows]


# --- rolls ------------------------------------------------------------------------------------


def _first_log_day(conn, roll: int) -> str | None:
    row = conn.execute(
        "SELECT min(d) FROM (SELECT min(measured_on) AS d FROM roll_measurement WHERE roll = ? AND removed_at IS NULL"
        " UNION ALL SELECT min(cleaned_on) FROM roll_cleaning WHERE roll = ? AND removed_at IS NULL)",
        (roll, roll),
    ).fetchone()
    return row[0]


def _refuse_duplicate(conn, roll_id: str, own: int | None = None) -> None:
    other = find_roll(conn, roll_id)
    if other is not None and other["id"] != own:
        raise InputError("roll_id", f"'{other['roll_id']}' is already in the register; each roll needs its own ID")


def insert_roll(conn, clean: dict, stamp: str) -> int:
    """Insert a checked roll (inside the caller's transaction); its id."""
    _refuse_duplicate(conn, clean["roll_id"])
    cursor = conn.execute(
        f"INSERT INTO roll ({', '.join(ROLL_COLUMNS)}, roll_key, created_at, updated_at, version)"
        f" VALUES ({', '.join('?' * len(ROLL_COLUMNS))}, ?, ?, ?, 1)",
        [clean[name] for name in ROLL_COLUMNS] + [rules.roll_key(clean["roll_id"]), stamp, stamp],
    )
    return cursor.lastrowid


def create_roll(conn, data: dict, *, today: date | None = None, now: datetime | None = None) -> dict:
    clean = rules.check_roll(data, today or date.today())
    with transaction(conn):
        ident = insert_roll(conn, clean, now_text(now))
    return get_roll(conn, ident)


def as_fields(roll: dict) -> dict:
    """A stored roll as the fields ``rules.check_roll`` reads (for an edit on top of it)."""
    return {
        "roll_id": roll["roll_id"],
        "screen": f"{roll['screen_lpi']!r} lpi",
        "angle": roll["angle"],
        "nominal_volume": f"{roll['nominal_bcm']!r} BCM/in2",
        "certificate_volume": None if roll["certificate_bcm"] is None else f"{roll['certificate_bcm']!r} BCM/in2",
        "engraved_on": roll["engraved_on"],
        "press": roll["press"],
        "location": roll["location"],
        "status": roll["status"],
        "notes": roll["notes"],
    }


def update_roll(conn, roll: int, version, changes: dict, *, today: date | None = None, now=None) -> dict:
    """Apply ``changes`` (any roll fields) made against ``version``; the changed roll."""
    version = check_version(version)
    current = get_roll(conn, roll)
    clean = rules.check_roll({**as_fields(current), **changes}, today or date.today())
    with transaction(conn):
        current = get_roll(conn, roll)
        if current["version"] != version:
            raise Conflict(current)
        _refuse_duplicate(conn, clean["roll_id"], own=roll)
        first = _first_log_day(conn, roll)
        if first is not None and clean["engraved_on"] > first:
            raise InputError("engraved_on", f"is after the roll's first log entry ({first})")
        conn.execute(
            f"UPDATE roll SET {', '.join(f'{name} = ?' for name in ROLL_COLUMNS)}, roll_key = ?,"
            " updated_at = ?, version = version + 1 WHERE id = ? AND version = ?",
            [clean[name] for name in ROLL_COLUMNS] + [rules.roll_key(clean["roll_id"]), now_text(now), roll, version],
        )
    return get_roll(conn, roll)


def retire_roll(conn, roll: int, version, *, now=None) -> dict:
    """Retire the roll (it stays in the register with its logs)."""
    version = check_version(version)
    with transaction(conn):
        current = get_roll(conn, roll)
        if current["version"] != version:
            raise Conflict(current)
        conn.execute(
            "UPDATE roll SET status = 'retired', updated_at = ?, version = version + 1 WHERE id = ?",
            (now_text(now), roll),
        )
    return get_roll(conn, roll)


# --- log entries --------------------------------------------------------------------------------


def insert_entry(conn, kind: str, roll: int, clean: dict, stamp: str) -> int:
    spec = ENTRIES[kind]
    columns = spec["columns"]
    cursor = conn.execute(
        f"INSERT INTO {spec['table']} (roll, {', '.join(columns)}, created_at, updated_at, version)"
        f" VALUES (?, {', '.join('?' * len(columns))}, ?, ?, 1)",
        [roll] + [clean[name] for name in columns] + [stamp, stamp],
    )
    return cursor.lastrowid


def insert_entries(conn, kind: str, entries: list[tuple[int, dict]], stamp: str) -> None:
    """Insert checked ``(roll, entry)`` pairs in one statement (inside the caller's transaction; the import)."""
    spec = ENTRIES[kind]
    columns = spec["columns"]
    conn.executemany(
        f"INSERT INTO {spec['table']} (roll, {', '.join(columns)}, created_at, updated_at, version)"
        f" VALUES (?, {', '.join('?' * len(columns))}, ?, ?, 1)",
        ([roll, *(clean[name] for name in columns), stamp, stamp] for roll, clean in entries),
    )


def add_entry(conn, kind: str, roll: int, data: dict, *, today: date | None = None, now=None) -> dict:
    """Log a measurement or cleaning on ``roll``; the new entry."""
    current = get_roll(conn, roll)
    clean = ENTRIES[kind]["check"](data, current["engraved_on"], today or date.today())
    with transaction(conn):
        get_roll(conn, roll)
        ident = insert_entry(conn, kind, roll, clean, now_text(now))
    return get_entry(conn, kind, roll, ident)


def entry_fields(kind: str, entry: dict) -> dict:
    """A stored entry as the fields its checker reads."""
    if kind == "measurement":
        return {
            "measured_on": entry["measured_on"],
            "volume": f"{entry['volume_bcm']!r} BCM/in2",
            "condition": entry["condition"],
            "method": entry["method"],
            "by": entry["measured_by"],
        }
    return {
        "cleaned_on": entry["cleaned_on"],
        "method": entry["method"],
        "by": entry["cleaned_by"],
        "notes": entry["notes"],
    }


def _snapshot(kind: str, entry: dict) -> str:
    return json.dumps({name: entry[name] for name in ENTRIES[kind]["columns"]}, ensure_ascii=False)


def _keep_change(conn, kind: str, roll: int, entry: int, version: int, action: str, reason: str, stamp: str) -> dict:
    """Inside a write transaction: the entry as it is now, refused as a ``Conflict`` if it moved on
    from ``version``, with its values kept in ``roll_entry_change`` before they change."""
    current = get_entry(conn, kind, roll, entry)
    if current["version"] != version:
        raise Conflict(current, kind)
    conn.execute(
        "INSERT INTO roll_entry_change (kind, entry, changed_at, action, before, reason) VALUES (?, ?, ?, ?, ?, ?)",
        (kind, entry, stamp, action, _snapshot(kind, current), reason),
    )
    return current


def correct_entry(conn, kind: str, roll: int, entry: int, version, changes: dict, *, reason="", today=None, now=None):
    """Correct a log entry (supervisor); its old values are kept. The corrected entry."""
    version = check_version(version)
    reason = rules.text(reason, "reason")
    spec = ENTRIES[kind]
    current = get_entry(conn, kind, roll, entry)
    engraved = get_roll(conn, roll)["engraved_on"]
    clean = spec["check"]({**entry_fields(kind, current), **changes}, engraved, today or date.today())
    stamp = now_text(now)
    with transaction(conn):
        _keep_change(conn, kind, roll, entry, version, "corrected", reason, stamp)
        columns = spec["columns"]
        conn.execute(
            f"UPDATE {spec['table']} SET {', '.join(f'{name} = ?' for name in columns)}, updated_at = ?,"
            " version = version + 1 WHERE id = ?",
            [clean[name] for name in columns] + [stamp, entry],
        )
    return get_entry(conn, kind, roll, entry)


def remove_entry(conn, kind: str, roll: int, entry: int, version, *, reason="", now=None) -> dict:
    """Remove a log entry (supervisor): it leaves the logs and the wear picture but is kept as a change."""
    version = check_version(version)
    reason = rules.text(reason, "reason")
    spec = ENTRIES[kind]
    stamp = now_text(now)
    with transaction(conn):
        current = _keep_change(conn, kind, roll, entry, version, "removed", reason, stamp)
        conn.execute(f"UPDATE {spec['table']} SET removed_at = ?, version = version + 1 WHERE id = ?", (stamp, entry))
    return {**current, "removed_at": stamp, "version": current["version"] + 1}
