"""The ink list and the ink sets on the SQLite file: inks, sets, density readings.

Every change raises an ink's, a set's or a reading's ``version`` by one; a
change made against an older version is refused with ``Conflict`` carrying
the current one, and nothing is overwritten. An ink that a set uses cannot
be deleted (its sets name it); deleting a set deletes its readings with it.
Functions here take an open connection (``webapp.common.db``) and check
what they are given with ``webapp.inks.rules`` before they write; every
write is one transaction.
"""

from __future__ import annotations

from datetime import UTC, date, datetime

from calc import InputError
from webapp.common.db import MAX_ID, transaction
from webapp.inks import rules

INK_COLUMNS = (
    "name",
    "ink_type",
    "density_g_cm3",
    "solids_by_volume",
    "solids_by_weight",
    "price",
    "price_per",
    "notes",
)
SET_COLUMNS = ("name", "ink", "substrate", "notes")
READING_COLUMNS = ("read_on", "density", "film_um", "anilox_cm3_m2", "transfer", "notes")


class NotFound(LookupError):
    """No ink, set or reading with that id."""

    def __init__(self, what: str, ident):
        super().__init__(f"there is no {what} {ident} here")
        self.what = what
        self.message = str(self)


class Conflict(Exception):
    """Changed by someone else since the version the change was made against."""

    def __init__(self, current: dict, what: str):
        super().__init__("changed by someone else meanwhile — here is the newer one")
        self.current = current
        self.what = what
        self.message = str(self)


class InUse(Exception):
    """An ink that ink sets still use."""

    def __init__(self, ink: dict, sets: list[str]):
        names = ", ".join(sets[:5]) + (" …" if len(sets) > 5 else "")
        super().__init__(f"{ink['name']} is used by {len(sets)} ink set(s) ({names}); delete or change those first")
        self.message = str(self)


def now_text(now: datetime | None = None) -> str:
    return (now or datetime.now(UTC)).strftime("%Y-%m-%dT%H:%M:%SZ")


def check_version(version) -> int:
    if isinstance(version, str) and version.strip().isdigit():
        version = int(version)
    if not isinstance(version, int) or isinstance(version, bool) or version < 1:
        raise InputError("version", "is required: the version the change was made against")
    return version


def _get(conn, table: str, what: str, ident: int, sql_extra: str = "", params=()) -> dict:
    if not 0 < ident <= MAX_ID:
        raise NotFound(what, ident)
    row = conn.execute(f"SELECT * FROM {table} WHERE id = ?{sql_extra}", (ident, *params)).fetchone()
    if row is None:
        raise NotFound(what, ident)
    return dict(row)


# --- inks ----------------------------------------------------------------------------------------


def get_ink(conn, ink: int) -> dict:
    return _get(conn, "ink", "ink", ink)


def all_inks(conn) -> list[dict]:
    return [dict(row) for row in conn.execute("SELECT * FROM ink ORDER BY name_key")]


def find_ink(conn, name: str) -> dict | None:
    row = conn.execute("SELECT * FROM ink WHERE name_key = ?", (rules.name_key(name),)).fetchone()
    return None if row is None else dict(row)


def _refuse_duplicate(conn, table: str, name: str, own: int | None = None) -> None:
    row = conn.execute(f"SELECT id, name FROM {table} WHERE name_key = ?", (rules.name_key(name),)).fetchone()
    if row is not None and row["id"] != own:
        what = "on the ink list" if table == "ink" else "an ink set"
        raise InputError("name", f"'{row['name']}' is already {what}; each needs its own name")


def insert_ink(conn, clean: dict, stamp: str) -> int:
    """Insert a checked ink (inside the caller's transaction); its id."""
    _refuse_duplicate(conn, "ink", clean["name"])
    cursor = conn.execute(
        f"INSERT INTO ink ({', '.join(INK_COLUMNS)}, name_key, created_at, updated_at, version)"
        f" VALUES ({', '.join('?' * len(INK_COLUMNS))}, ?, ?, ?, 1)",
        [clean[name] for name in INK_COLUMNS] + [rules.name_key(clean["name"]), stamp, stamp],
    )
    return cursor.lastrowid


def create_ink(conn, data: dict, *, now=None) -> dict:
    clean = rules.check_ink(data)
    with transaction(conn):
        ident = insert_ink(conn, clean, now_text(now))
    return get_ink(conn, ident)


def ink_fields(ink: dict) -> dict:
    """A stored ink as the fields ``rules.check_ink`` reads."""
    return {
        "name": ink["name"],
        "type": ink["ink_type"],
        "density": f"{ink['density_g_cm3']!r} g/cm3",
        "solids_by_volume": ink["solids_by_volume"],
        "solids_by_weight": ink["solids_by_weight"],
        "price": ink["price"],
        "price_per": ink["price_per"],
        "notes": ink["notes"],
    }


def update_ink(conn, ink: int, version, changes: dict, *, now=None) -> dict:
    version = check_version(version)
    current = get_ink(conn, ink)
    clean = rules.check_ink({**ink_fields(current), **changes})
    with transaction(conn):
        current = get_ink(conn, ink)
        if current["version"] != version:
            raise Conflict(current, "ink")
        _refuse_duplicate(conn, "ink", clean["name"], own=ink)
        conn.execute(
            f"UPDATE ink SET {', '.join(f'{name} = ?' for name in INK_COLUMNS)}, name_key = ?,"
            " updated_at = ?, version = version + 1 WHERE id = ?",
            [clean[name] for name in INK_COLUMNS] + [rules.name_key(clean["name"]), now_text(now), ink],
        )
    return get_ink(conn, ink)


def delete_ink(conn, ink: int, version) -> dict:
    version = check_version(version)
    with transaction(conn):
        current = get_ink(conn, ink)
        if current["version"] != version:
            raise Conflict(current, "ink")
        sets = [row[0] for row in conn.execute("SELECT name FROM ink_set WHERE ink = ? ORDER BY name_key", (ink,))]
        if sets:
            raise InUse(current, sets)
        conn.execute("DELETE FROM ink WHERE id = ?", (ink,))
    return current


# --- ink sets ------------------------------------------------------------------------------------


def get_set(conn, ink_set: int) -> dict:
    return _get(conn, "ink_set", "ink set", ink_set)


def all_sets(conn) -> list[dict]:
    return [dict(row) for row in conn.execute("SELECT * FROM ink_set ORDER BY name_key")]


def find_set(conn, name: str) -> dict | None:
    row = conn.execute("SELECT * FROM ink_set WHERE name_key = ?", (rules.name_key(name),)).fetchone()
    return None if row is None else dict(row)


def _check_ink_there(conn, ink: int) -> None:
    if not 0 < ink <= MAX_ID or conn.execute("SELECT 1 FROM ink WHERE id = ?", (ink,)).fetchone() is None:
        raise InputError("ink", f"there is no ink {ink} on the shop's list; add it to the inks first")


def insert_set(conn, clean: dict, stamp: str) -> int:
    _check_ink_there(conn, clean["ink"])
    _refuse_duplicate(conn, "ink_set", clean["name"])
    cursor = conn.execute(
        f"INSERT INTO ink_set ({', '.join(SET_COLUMNS)}, name_key, created_at, updated_at, version)"
        f" VALUES ({', '.join('?' * len(SET_COLUMNS))}, ?, ?, ?, 1)",
        [clean[name] for name in SET_COLUMNS] + [rules.name_key(clean["name"]), stamp, stamp],
    )
    return cursor.lastrowid


def create_set(conn, data: dict, *, now=None) -> dict:
    clean = rules.check_set(data)
    with transaction(conn):
        ident = insert_set(conn, clean, now_text(now))
    return get_set(conn, ident)


def set_fields(ink_set: dict) -> dict:
    return {name: ink_set[name] for name in SET_COLUMNS}


def update_set(conn, ink_set: int, version, changes: dict, *, now=None) -> dict:
    version = check_version(version)
    current = get_set(conn, ink_set)
    clean = rules.check_set({**set_fields(current), **changes})
    with transaction(conn):
        current = get_set(conn, ink_set)
        if current["version"] != version:
            raise Conflict(current, "ink set")
        _check_ink_there(conn, clean["ink"])
        _refuse_duplicate(conn, "ink_set", clean["name"], own=ink_set)
        conn.execute(
            f"UPDATE ink_set SET {', '.join(f'{name} = ?' for name in SET_COLUMNS)}, name_key = ?,"
            " updated_at = ?, version = version + 1 WHERE id = ?",
            [clean[name] for name in SET_COLUMNS] + [rules.name_key(clean["name"]), now_text(now), ink_set],
        )
    return get_set(conn, ink_set)


def delete_set(conn, ink_set: int, version) -> dict:
    """Delete the set and its readings."""
    version = check_version(version)
    with transaction(conn):
        current = get_set(conn, ink_set)
        if current["version"] != version:
            raise Conflict(current, "ink set")
        conn.execute("DELETE FROM ink_reading WHERE ink_set = ?", (ink_set,))
        conn.execute("DELETE FROM ink_set WHERE id = ?", (ink_set,))
    return current


# --- readings ------------------------------------------------------------------------------------


def readings(conn, set_ids: list[int] | None = None) -> dict[int, list[dict]]:
    """Each set's readings, oldest first; every set's when ``set_ids`` is None."""
    if set_ids is None:
        found: dict[int, list[dict]] = {row[0]: [] for row in conn.execute("SELECT id FROM ink_set")}
        rows = conn.execute("SELECT * FROM ink_reading ORDER BY read_on, id")
    else:
        found = {ident: [] for ident in set_ids}
        if not set_ids:
            return found
        rows = conn.execute(
            f"SELECT * FROM ink_reading WHERE ink_set IN ({', '.join('?' * len(set_ids))}) ORDER BY read_on, id",
            list(set_ids),
        )
    for row in rows:
        found.setdefault(row["ink_set"], []).append(dict(row))
    return found


def get_reading(conn, ink_set: int, reading: int) -> dict:
    if not 0 < ink_set <= MAX_ID:
        raise NotFound("reading", reading)
    return _get(conn, "ink_reading", "reading", reading, " AND ink_set = ?", (ink_set,))


def insert_reading(conn, ink_set: int, clean: dict, stamp: str) -> int:
    cursor = conn.execute(
        f"INSERT INTO ink_reading (ink_set, {', '.join(READING_COLUMNS)}, created_at, updated_at, version)"
        f" VALUES (?, {', '.join('?' * len(READING_COLUMNS))}, ?, ?, 1)",
        [ink_set] + [clean[name] for name in READING_COLUMNS] + [stamp, stamp],
    )
    return cursor.lastrowid


def add_reading(conn, ink_set: int, data: dict, *, today: date | None = None, now=None) -> dict:
    get_set(conn, ink_set)
    clean = rules.check_reading(data, today or date.today())
    with transaction(conn):
        get_set(conn, ink_set)
        ident = insert_reading(conn, ink_set, clean, now_text(now))
    return get_reading(conn, ink_set, ident)


def reading_fields(reading: dict) -> dict:
    """A stored reading as the fields ``rules.check_reading`` reads."""
    fields = {"density": reading["density"], "read_on": reading["read_on"], "notes": reading["notes"]}
    if reading["anilox_cm3_m2"] is not None:
        fields.update(anilox_volume=f"{reading['anilox_cm3_m2']!r} cm3/m2", transfer=reading["transfer"])
    else:
        fields["film"] = f"{reading['film_um']!r} um"
    return fields


def update_reading(conn, ink_set: int, reading: int, version, changes: dict, *, today=None, now=None) -> dict:
    version = check_version(version)
    current = get_reading(conn, ink_set, reading)
    fields = reading_fields(current)
    if {"film", "anilox_volume"} & set(changes):  # a new basis replaces the old one
        for name in ("film", "anilox_volume", "transfer"):
            fields.pop(name, None)
    clean = rules.check_reading({**fields, **changes}, today or date.today())
    with transaction(conn):
        current = get_reading(conn, ink_set, reading)
        if current["version"] != version:
            raise Conflict(current, "reading")
        conn.execute(
            f"UPDATE ink_reading SET {', '.join(f'{name} = ?' for name in READING_COLUMNS)}, updated_at = ?,"
            " version = version + 1 WHERE id = ?",
            [clean[name] for name in READING_COLUMNS] + [now_text(now), reading],
        )
    return get_reading(conn, ink_set, reading)


def delete_reading(conn, ink_set: int, reading: int, version) -> dict:
    version = check_version(version)
    with transaction(conn):
        current = get_reading(conn, ink_set, reading)
        if current["version"] != version:
            raise Conflict(current, "reading")
        conn.execute("DELETE FROM ink_reading WHERE id = ?", (reading,))
    return current
