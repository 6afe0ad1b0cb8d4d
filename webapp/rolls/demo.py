"""The demo shop's anilox rolls, for ``inkfilm serve --demo``: an invented converter's register.

About twenty rolls across three presses and the rack, each with one to two
years of quarterly measurements and cleanings, worked out from a wear rate
per roll so that the story is the same every time: most healthy, some
drifting, one plugged and recovered after a deep clean, one found plugged and waiting for a clean, one due for
replacement, one new roll off spec, one sent out, one retired. Dates count
back from the day the folder is filled. Nothing is added to a register that
has rolls already.
"""

from __future__ import annotations

import contextlib
import random
from datetime import date, timedelta
from pathlib import Path

from webapp.common import db
from webapp.rolls import rules, store

# shop ID, lpi, nominal BCM/in², certificate (or None), days since engraving, press, place, status,
# wear per year as a share of nominal, story
ROLLS = [
    ("NW-101", 1000, 1.5, 1.53, 700, "Narrow 1", "station 1", "in_use", 0.025, "healthy"),
    ("NW-102", 1000, 1.5, 1.49, 700, "Narrow 1", "station 2", "in_use", 0.03, "healthy"),
    ("NW-103", 900, 1.8, 1.82, 640, "Narrow 1", "station 3", "in_use", 0.035, "healthy"),
    ("NW-104", 900, 1.8, None, 640, "Narrow 1", "station 4", "in_use", 0.04, "plugged"),
    ("NW-105", 440, 3.6, 3.62, 720, "Narrow 1", "station 5", "in_use", 0.03, "healthy"),
    ("NW-106", 250, 7.5, 7.4, 560, "Narrow 1", "station 6", "in_use", 0.05, "dirty"),
    ("NW-201", 1200, 1.2, 1.22, 520, "Narrow 2", "station 1", "in_use", 0.02, "healthy"),
    ("NW-202", 1200, 1.2, 1.18, 520, "Narrow 2", "station 2", "in_use", 0.03, "healthy"),
    ("NW-203", 800, 2.2, 2.25, 730, "Narrow 2", "station 3", "in_use", 0.1, "worn"),
    ("NW-204", 400, 4.0, 4.05, 480, "Narrow 2", "station 4", "in_use", 0.04, "healthy"),
    ("NW-205", 180, 10.0, 10.2, 700, "Narrow 2", "station 5", "in_use", 0.06, "drifting"),
    ("WW-301", 800, 2.5, 2.52, 610, "Wide 3", "station 1", "in_use", 0.03, "healthy"),
    ("WW-302", 800, 2.5, 2.46, 610, "Wide 3", "station 2", "in_use", 0.035, "healthy"),
    ("WW-303", 600, 3.0, 3.05, 690, "Wide 3", "station 3", "in_use", 0.045, "drifting"),
    ("WW-304", 360, 5.0, 5.1, 20, "Wide 3", "station 4", "in_use", 0.0, "off_spec"),
    ("RK-01", 1000, 1.5, 1.52, 400, "", "rack A-1", "spare", 0.02, "healthy"),
    ("RK-02", 700, 2.6, 2.6, 450, "", "rack A-2", "spare", 0.03, "healthy"),
    ("RK-03", 500, 3.8, 3.85, 380, "", "rack A-3", "spare", 0.025, "healthy"),
    ("RK-04", 300, 6.0, None, 700, "", "rack B-1", "spare", 0.03, "stale"),
    ("RK-05", 165, 12.0, 12.3, 730, "", "engraver", "sent_out", 0.05, "healthy"),
    ("RK-06", 600, 3.0, 3.0, 730, "", "rack C-9", "retired", 0.09, "worn"),
]
STAFF = ("Ines", "Tomas", "Mirela", "Jon")
METHODS = ("spread test", "3-D microscope")


def _history(story: str, nominal: float, certificate, age: int, wear: float, rng: random.Random):
    """Measurements and cleanings of one roll, as dicts for the store."""
    start = certificate or nominal
    measurements, cleanings = [], []
    if story == "off_spec":
        measurements.append((age - 2, start * 1.13, "after_cleaning"))
        return measurements, cleanings
    last = 10 if story != "stale" else 160
    days = list(range(age - 3, last, -91)) + [last]
    for index, ago in enumerate(sorted(set(days), reverse=True)):
        years = (age - ago) / 365.25
        on_line = start - wear * nominal * years
        noise = rng.uniform(-0.006, 0.006) * nominal
        if story == "plugged" and ago == last:
            # Plugged as found, deep-cleaned, measured again: back on the line.
            measurements.append((ago + 6, on_line * 0.84, "as_found"))
            cleanings.append((ago + 5, "ultrasonic", "deep clean after low as-found reading"))
            measurements.append((ago, on_line + noise, "after_cleaning"))
            continue
        if story == "dirty" and ago == last:
            # Found plugged at the latest audit and not cleaned yet.
            measurements.append((ago, on_line * 0.86, "as_found"))
            continue
        found = on_line * rng.uniform(0.93, 0.97)
        measurements.append((ago + 1, found, "as_found"))
        if index % 2 == 0 or story != "healthy":
            cleanings.append((ago, rng.choice(("soda blast", "chemical", "wash on press")), ""))
        measurements.append((ago, on_line + noise, "after_cleaning"))
    return measurements, cleanings


def fill(data_dir: Path, today: date | None = None) -> int:
    """Add the demo shop's rolls to the database in ``data_dir`` if it has none; how many were added."""
    path = Path(data_dir) / db.FILENAME
    db.migrate(path)
    today = today or date.today()
    rng = random.Random(1301)
    with contextlib.closing(db.connect(path)) as conn:
        if conn.execute("SELECT count(*) FROM roll").fetchone()[0]:
            return 0
        stamp = store.now_text()
        with db.transaction(conn):
            for roll_id, lpi, nominal, certificate, age, press, place, status, wear, story in ROLLS:
                engraved = today - timedelta(days=age)
                fields = {
                    "roll_id": roll_id,
                    "screen": f"{lpi} lpi",
                    "angle": 60,
                    "nominal_volume": f"{nominal} BCM/in2",
                    "certificate_volume": None if certificate is None else f"{certificate} BCM/in2",
                    "engraved_on": engraved.isoformat(),
                    "press": press,
                    "location": place,
                    "status": status,
                    "notes": "",
                }
                ident = store.insert_roll(conn, rules.check_roll(fields, today), stamp)
                measurements, cleanings = _history(story, nominal, certificate, age, wear, rng)
                for ago, volume, condition in measurements:
                    entry = {
                        "measured_on": (today - timedelta(days=ago)).isoformat(),
                        "volume": f"{volume:.3f} BCM/in2",
                        "condition": condition,
                        "method": rng.choice(METHODS),
                        "by": rng.choice(STAFF),
                    }
                    store.insert_entry(
                        conn, "measurement", ident, rules.check_measurement(entry, engraved.isoformat(), today), stamp
                    )
                for ago, method, notes in cleanings:
                    entry = {
                        "cleaned_on": (today - timedelta(days=ago)).isoformat(),
                        "method": method,
                        "by": rng.choice(STAFF),
                        "notes": notes,
                    }
                    store.insert_entry(
                        conn, "cleaning", ident, rules.check_cleaning(entry, engraved.isoformat(), today), stamp
                    )
        return len(ROLLS)
