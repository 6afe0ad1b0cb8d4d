"""The demo shop's inks and ink sets, for ``inkfilm serve --demo``: an invented converter's ink list.

Six inks (water-based, solvent-based and UV) and three ink sets whose
readings follow a Tollenaar–Ernst curve with a little noise, as a
densitometer reads real prints: two sets read by anilox volume and
transfer, one by wet film. The curves' numbers are invented. Dates count
back from the day the folder is filled. Nothing is added to a list that has
inks already.
"""

from __future__ import annotations

import contextlib
import math
import random
from datetime import date, timedelta
from pathlib import Path

from calc.units import Q_
from webapp.common import db
from webapp.inks import rules, store

# name, type, density g/cm³, solids by volume, by weight, price, per, notes
INKS = [
    ("Process cyan WB-2", "water_based", 1.03, 0.31, 0.40, 7.80, "kg", "Press-ready at 24 s on the shop's cup."),
    ("Process magenta WB-2", "water_based", 1.04, 0.30, 0.39, 8.40, "kg", ""),
    ("Process black SB", "solvent_based", 0.98, 0.27, 0.35, 3.95, "lb", "Thin with the house solvent blend only."),
    ("Opaque white SB", "solvent_based", 1.36, 0.34, 0.55, 4.40, "lb", "Stir before use: the pigment settles."),
    ("Spot orange UV", "uv", 1.12, 0.98, 0.99, 21.50, "kg", "Keep the can closed and out of daylight."),
    ("Gloss varnish UV", "uv", 1.08, 0.99, 0.99, 14.90, "kg", ""),
]
# set name, ink, substrate, D∞, m [1/µm], noise (sd), readings: ("volume", BCM/in², transfer) or ("film", µm)
SETS = [
    (
        "Cyan, water-based, on white PE film",
        "Process cyan WB-2",
        "white PE film, 80 µm, corona treated",
        1.58,
        0.85,
        0.012,
        [("volume", v, 0.25) for v in (1.5, 2.2, 3.0, 3.8, 4.5, 6.0, 8.0)],
    ),
    (
        "Magenta, water-based, on gloss paper label",
        "Process magenta WB-2",
        "gloss coated paper label stock",
        1.46,
        1.15,
        0.015,
        [("film", x) for x in (0.4, 0.7, 1.0, 1.3, 1.7, 2.2, 3.0)],
    ),
    (
        "Orange UV on clear BOPP",
        "Spot orange UV",
        "clear BOPP film, 50 µm",
        1.34,
        0.62,
        0.018,
        [("volume", v, 0.3) for v in (2.0, 3.0, 4.0, 5.0, 6.5, 8.0)],
    ),
]
STAFF = ("Ines", "Tomas", "Mirela", "Jon")


def fill(data_dir: Path, today: date | None = None) -> int:
    """Add the demo shop's inks and ink sets to the database in ``data_dir`` if it has no inks; inks added."""
    path = Path(data_dir) / db.FILENAME
    db.migrate(path)
    today = today or date.today()
    rng = random.Random(1502)
    with contextlib.closing(db.connect(path)) as conn:
        if conn.execute("SELECT count(*) FROM ink").fetchone()[0]:
            return 0
        stamp = store.now_text()
        with db.transaction(conn):
            ids = {}
            for name, kind, density, by_volume, by_weight, price, per, notes in INKS:
                fields = {
                    "name": name,
                    "type": kind,
                    "density": f"{density} g/cm3",
                    "solids_by_volume": by_volume,
                    "solids_by_weight": by_weight,
                    "price": price,
                    "price_per": per,
                    "notes": notes,
                }
                ids[name] = store.insert_ink(conn, rules.check_ink(fields), stamp)
            for number, (name, ink, substrate, d_inf, m, noise, readings) in enumerate(SETS):
                ident = store.insert_set(
                    conn,
                    rules.check_set({"name": name, "ink": ids[ink], "substrate": substrate, "notes": ""}),
                    stamp,
                )
                day = today - timedelta(days=40 - 9 * number)
                for index, reading in enumerate(readings):
                    if reading[0] == "volume":
                        _, volume, transfer = reading
                        film = Q_(volume, "BCM/in2").to("cm3/m2").magnitude * transfer  # 1 cm³/m² lays 1 µm
                        fields = {"anilox_volume": f"{volume} BCM/in2", "transfer": transfer}
                    else:
                        film = reading[1]
                        fields = {"film": f"{film} um"}
                    density = d_inf * (1.0 - math.exp(-m * film)) + rng.gauss(0.0, noise)
                    fields.update(
                        density=round(density, 2),
                        read_on=(day + timedelta(days=index // 3)).isoformat(),
                        notes=f"read by {rng.choice(STAFF)}",
                    )
                    store.insert_reading(conn, ident, rules.check_reading(fields, today), stamp)
        return len(INKS)
