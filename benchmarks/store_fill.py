"""Fill a data folder with many realistic saved snippets, fast (direct SQL, not the API).

The snippets are what an invented label and pouch shop would save over a few
years: film chains, ink estimates (one to eight stations), converter answers,
roll fits, cell geometry and ink-strength fits, with job numbers (``24-0117``),
presses, stations, titles, notes, tags and names. Inputs and results are real:
each kind's answers are worked out once by today's core for a few hundred input
sets and reused, so the file holds what the app would have written.

    python benchmarks/store_fill.py DATA_DIR [--count 1000000] [--seed 16]

The schema is the one the code on ``sys.path`` migrates to, so the same script
fills a file for the code before and after a change. About 1,000,000 snippets
take a few minutes on two cores and make a file of about 1.5 GB.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import random
import sys
import time
import uuid
from datetime import UTC, datetime, timedelta
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.append(str(ROOT))

from webapp.calculators import CALCULATIONS  # noqa: E402
from webapp.common import db  # noqa: E402

PRESSES = ["N1", "N2", "N3", "W1", "W2", "CI-8", "Narrow 4", "Pouch line"]
STATIONS = [str(n) for n in range(1, 11)] + ["White", "Varnish", "Cold foil"]
INKS = ["Cyan", "Magenta", "Yellow", "Black", "Opaque white", "Orange", "Green", "Violet", "Spot red", "Metallic"]
SUBSTRATES = ["BOPP", "PE film", "paper label", "PET", "foil lid", "kraft", "shrink sleeve", "coated board"]
CUSTOMERS = ["Alder Foods", "Brook Dairy", "Cobble Pet", "Dune Snacks", "Elm Cosmetics", "Fjord Fish", "Gable Tea"]
NAMES = ["Ana", "Bo", "Chidi", "Dana", "Eero", "Femi", "Gus", "Hana", "Ivo", "Jun", "Kai", "Lena"]
TAGS = ["white", "repeat job", "process", "spot", "handover", "trial", "customer proof", "low migration", "uv"]
NOTES = [
    "",
    "",
    "",
    "Checked against the proof; density on target.",
    "Changed the roll after the first reel.\nKeep for the repeat.",
    "Customer wants more opacity next time.",
    "Trial on the new plate material.",
    "- cleaned anilox before start\n- viscosity 22 s",
]
KINDS = [
    ("film", 30),
    ("estimate", 20),
    ("equivalents", 18),
    ("convert", 12),
    ("fit", 8),
    ("cell", 6),
    ("density_from", 3),
    ("density_volume_for", 2),
    ("density_fit", 1),
]
READINGS = [
    {"film": f"{film} um", "density": density}
    for film, density in ((1, 0.8), (2, 1.15), (3, 1.33), (4, 1.43), (6, 1.52), (8, 1.56))
]


def _inputs(kind: str, rng: random.Random) -> dict:
    bcm = round(rng.uniform(1.2, 9.0), 1)
    if kind == "film":
        return {
            "anilox_volume": f"{bcm} BCM/in2",
            "anilox_to_plate": round(rng.uniform(0.3, 0.6), 2),
            "plate_to_substrate": round(rng.uniform(0.4, 0.6), 2),
            "solids_by_volume": round(rng.uniform(0.2, 0.5), 2),
            "solids_by_weight": round(rng.uniform(0.3, 0.6), 2),
            "ink_density": f"{round(rng.uniform(0.95, 1.4), 2)} g/cm3",
        }
    if kind == "estimate":
        stations = [
            {
                "name": rng.choice(INKS),
                "anilox_volume": f"{round(rng.uniform(1.5, 8), 1)} BCM/in2",
                "coverage": round(rng.uniform(0.05, 0.95), 2),
                "transfer": round(rng.uniform(0.2, 0.35), 2),
                "ink_density": f"{round(rng.uniform(0.95, 1.4), 2)} g/cm3",
                "price_per_kg": round(rng.uniform(6, 40), 2),
            }
            for _ in range(rng.choice([1, 1, 2, 3, 4, 4, 6, 8]))
        ]
        return {
            "web_width": f"{rng.choice([250, 330, 410, 530, 850, 1270])} mm",
            "run_length": f"{rng.randrange(1000, 60000, 500)} m",
            "waste": round(rng.uniform(0.02, 0.1), 2),
            "stations": stations,
        }
    if kind == "equivalents":
        unit = rng.choice(["BCM/in2", "cm3/m2", "um"])
        return {"quantity": f"{bcm} {unit}", "density": "1.05 g/cm3", "coverage": round(rng.uniform(0.2, 1), 2)}
    if kind == "convert":
        return {"quantity": f"{bcm} BCM/in2", "to": "cm3/m2"}
    if kind == "fit":
        return {
            "plate_screen": f"{rng.choice([100, 120, 133, 150, 175])} lpi",
            "work": rng.choice(["process", "line", "solid"]),
            "anilox_screen": f"{rng.choice([600, 800, 900, 1000, 1200])} lpi",
            "anilox_volume": f"{round(rng.uniform(1.2, 4), 1)} BCM/in2",
        }
    if kind == "cell":
        return {
            "screen": f"{rng.choice([400, 600, 800, 1000])} lpi",
            "wall": f"{rng.choice([2, 3, 4])} um",
            "angle": 60,
            "shape": "bowl",
            "depth": f"{rng.choice([8, 10, 12, 15])} um",
        }
    if kind == "density_fit":
        return {"readings": READINGS}
    if kind == "density_volume_for":
        return {"readings": READINGS, "target_density": round(rng.uniform(1.1, 1.45), 2), "transfer": 0.25}
    return {"readings": READINGS, "anilox_volume": f"{bcm} BCM/in2", "transfer": 0.25}


def templates(rng: random.Random, per_kind: int = 200) -> dict[str, list[tuple[str, str, str]]]:
    """For each kind, ``per_kind`` (inputs JSON, results JSON, a short label) worked out by today's core."""
    made: dict[str, list[tuple[str, str, str]]] = {}
    for kind, _weight in KINDS:
        made[kind] = []
        while len(made[kind]) < per_kind:
            inputs = _inputs(kind, rng)
            try:
                results = CALCULATIONS[kind](dict(inputs))
            except Exception:  # noqa: BLE001 - an odd random combination; draw again
                continue
            label = inputs.get("anilox_volume") or inputs.get("quantity") or inputs.get("plate_screen") or ""
            if isinstance(label, str) and label:
                label = label.replace("BCM/in2", "BCM").replace("cm3/m2", "cm³/m²")
            made[kind].append(
                (json.dumps(inputs, ensure_ascii=False), json.dumps(results, ensure_ascii=False), str(label or ""))
            )
    return made


def rows(count: int, rng: random.Random, made: dict, start: datetime):
    kinds = [kind for kind, weight in KINDS for _ in range(weight)]
    span = 3 * 365 * 24 * 3600
    for number in range(count):
        kind = rng.choice(kinds)
        inputs, results, label = rng.choice(made[kind])
        # Roughly in the order they were saved, as a real file grows.
        created = start + timedelta(seconds=int(span * number / count) + rng.randrange(0, 3600))
        updated = created + timedelta(hours=rng.choice([0, 0, 0, 0, 1, 26, 24 * 40]))
        year = created.year % 100
        job = f"{year:02d}-{rng.randrange(1, 4000):04d}" if rng.random() < 0.8 else ""
        ink = rng.choice(INKS)
        title = rng.choice(
            [
                f"{ink} {label} on {rng.choice(SUBSTRATES)}",
                f"{rng.choice(CUSTOMERS)} {ink.lower()} {label}",
                f"{ink} station {rng.choice(STATIONS)}",
                f"Repeat of job {job or '23-0042'} {ink.lower()}",
            ]
        ).strip()
        tags = rng.sample(TAGS, rng.choice([0, 0, 1, 1, 2, 3]))
        deleted = (updated + timedelta(days=2)).strftime("%Y-%m-%dT%H:%M:%SZ") if rng.random() < 0.02 else None
        yield (
            (
                uuid.UUID(int=rng.getrandbits(128)).hex,
                kind,
                title[:120],
                job,
                rng.choice(PRESSES) if rng.random() < 0.85 else "",
                rng.choice(STATIONS) if rng.random() < 0.6 else "",
                rng.choice(NOTES),
                rng.choice(NAMES) if rng.random() < 0.9 else "",
                inputs,
                results,
                created.strftime("%Y-%m-%dT%H:%M:%SZ"),
                updated.strftime("%Y-%m-%dT%H:%M:%SZ"),
                1 if updated == created else 2,
                deleted,
            ),
            tags,
        )


def fill(data_dir: Path, count: int, seed: int = 16, quiet: bool = False, per_kind: int = 200) -> Path:
    """``count`` snippets added to the file in ``data_dir`` (created and migrated first), their
    inputs drawn from ``per_kind`` calculations worked out per kind (fewer: faster, for tests)."""
    rng = random.Random(seed)
    data_dir.mkdir(parents=True, exist_ok=True)
    path = data_dir / db.FILENAME
    db.migrate(path)
    made = templates(rng, per_kind)
    began = time.perf_counter()
    with contextlib.closing(db.connect(path)) as conn:
        conn.execute("PRAGMA synchronous = OFF")
        next_id = (conn.execute("SELECT max(id) FROM snippet").fetchone()[0] or 0) + 1
        batch, tag_rows = [], []

        def flush():
            with db.transaction(conn):
                conn.executemany(
                    "INSERT INTO snippet (id, uid, kind, title, job_number, press, station, notes, saved_by,"
                    " inputs, results, created_at, updated_at, version, deleted_at)"
                    " VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                    batch,
                )
                conn.executemany("INSERT INTO snippet_tag (snippet_id, tag) VALUES (?, ?)", tag_rows)
            batch.clear()
            tag_rows.clear()

        for row, tags in rows(count, rng, made, datetime(2023, 1, 9, 6, 0, tzinfo=UTC)):
            batch.append((next_id, *row))
            tag_rows.extend((next_id, tag) for tag in tags)
            next_id += 1
            if len(batch) >= 20_000:
                flush()
                if not quiet:
                    print(f"\r{next_id - 1:,} snippets, {time.perf_counter() - began:.0f} s", end="", flush=True)
        if batch:
            flush()
        conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        conn.execute("ANALYZE")
    if not quiet:
        size = path.stat().st_size / 1e6
        print(f"\r{count:,} snippets in {time.perf_counter() - began:.0f} s: {path} ({size:.0f} MB)")
    return path


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("data_dir", type=Path)
    parser.add_argument("--count", type=int, default=1_000_000)
    parser.add_argument("--seed", type=int, default=16)
    args = parser.parse_args(argv)
    fill(args.data_dir, args.count, args.seed)


if __name__ == "__main__":
    main()
