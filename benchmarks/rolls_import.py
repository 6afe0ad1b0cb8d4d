"""Benchmark: importing a 10,000-row measurements CSV into the roll register.

Builds a rolls file (50 invented rolls, 200 to 1,200 lpi) and a measurements
file (10,000 readings over each roll's life: as-found readings drifting down
between cleanings, after-cleaning readings along a slow wear line, a few
methods and people), starts ``inkfilm serve`` on a fresh data folder as the
tests do, and imports both through the real endpoint
(``POST /api/v1/rolls/import/<table>``). Then imports the measurements file
again (every row "already here"), and, as the yardstick, logs a few hundred
measurements one request (one transaction) at a time through
``POST /api/v1/rolls/<id>/measurements``.

    python benchmarks/rolls_import.py [--rows 10000] [--rolls 50] [--single 300]

Printed: the seconds for each import, rows a second, and the ratio of the
import's time per row to one logged measurement's (measured within one run,
so it holds on a busy machine as on a quiet one; absolute figures do not).
Target (issue 13): the 10,000-row file imports in a few seconds, far below a
row-at-a-time import.
"""

from __future__ import annotations

import argparse
import csv
import http.client
import io
import json
import random
import sys
import tempfile
import time
from datetime import date, timedelta
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.conftest import drain, start_server  # noqa: E402  (the server exactly as the tests start it)
from tests.conftest import stop as stop_server  # noqa: E402

SCREENS = (200, 250, 300, 360, 400, 440, 500, 550, 600, 700, 800, 900, 1000, 1200)
METHODS = ("spread test", "3-D microscope", "volumetric liquid")
PEOPLE = ("R. Okafor", "M. Lindqvist", "T. Baptiste", "S. Varga")


def nominal_for(screen: int) -> float:
    """A usual volume for the screen (BCM/in²): finer screens hold less ink (common practice)."""
    return round(max(0.9, 1200 / screen * 1.1), 2)


def build_files(rows: int, rolls: int, seed: int = 13) -> tuple[str, str]:
    """(rolls CSV, measurements CSV) for an invented shop; ``rows`` readings spread over ``rolls`` rolls."""
    rng = random.Random(seed)
    today = date.today()
    roll_out = io.StringIO()
    writer = csv.writer(roll_out, lineterminator="\r\n")
    writer.writerow(["roll_id", "screen", "angle", "nominal_volume", "certificate_volume", "engraved_on", "status"])
    specs = []
    for number in range(rolls):
        screen = SCREENS[number % len(SCREENS)]
        nominal = nominal_for(screen)
        certificate = round(nominal * rng.uniform(0.96, 1.04), 2)
        engraved = today - timedelta(days=rng.randint(500, 2500))
        roll_id = f"BM-{number + 1:03d}"
        writer.writerow(
            [roll_id, f"{screen} lpi", 60, f"{nominal} BCM/in2", f"{certificate} BCM/in2", engraved, "in_use"]
        )
        specs.append((roll_id, certificate, engraved, rng.uniform(0.02, 0.08)))
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\r\n")
    writer.writerow(["roll_id", "measured_on", "volume", "condition", "method", "by"])
    per_roll, extra = divmod(rows, rolls)
    for index, (roll_id, start, engraved, wear_per_year) in enumerate(specs):
        count = per_roll + (1 if index < extra else 0)
        life = (today - engraved).days
        for reading in range(count):
            day = engraved + timedelta(days=1 + reading * (life - 1) // max(count, 1))
            years = (day - engraved).days / 365.25
            line = start * (1 - wear_per_year * years)
            if reading % 4 == 3:
                volume, condition = line * rng.uniform(0.985, 1.01), "after_cleaning"
            else:
                volume, condition = line * (1 - 0.04 * (reading % 4) - rng.uniform(0, 0.03)), "as_found"
            writer.writerow(
                [roll_id, day.isoformat(), f"{volume:.3f} BCM/in2", condition, rng.choice(METHODS), rng.choice(PEOPLE)]
            )
    return roll_out.getvalue(), out.getvalue()


def post(conn, path: str, body: dict) -> tuple[int, dict, float]:
    payload = json.dumps(body)
    began = time.perf_counter()
    conn.request("POST", path, payload, {"Content-Type": "application/json"})
    response = conn.getresponse()
    answer = json.loads(response.read())
    return response.status, answer, time.perf_counter() - began


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--rows", type=int, default=10_000)
    parser.add_argument("--rolls", type=int, default=50)
    parser.add_argument("--single", type=int, default=300, help="measurements logged one request at a time")
    options = parser.parse_args()

    rolls_csv, measurements_csv = build_files(options.rows, options.rolls)
    print(
        f"files: {options.rolls} rolls ({len(rolls_csv) / 1024:.0f} KiB), "
        f"{options.rows} measurements ({len(measurements_csv) / 1024:.0f} KiB)"
    )
    with tempfile.TemporaryDirectory(prefix="inkfilm-bench-") as data:
        process, base = start_server(Path(data) / "data")
        reader = drain(process)
        try:
            host, port = base.removeprefix("http://").split(":")
            conn = http.client.HTTPConnection(host, int(port), timeout=300)
            status, answer, seconds = post(conn, "/api/v1/rolls/import/rolls", {"csv": rolls_csv})
            if status != 200:
                raise SystemExit(f"rolls import refused: {status} {answer}")
            print(f"rolls import: {answer['added']} rolls in {seconds:.2f} s")

            status, answer, first = post(conn, "/api/v1/rolls/import/measurements", {"csv": measurements_csv})
            if status != 200 or answer["added"] != options.rows:
                raise SystemExit(f"measurements import: {status} {answer}")
            print(
                f"measurements import: {answer['added']} rows added in {first:.2f} s "
                f"({answer['added'] / first:,.0f} rows/s)"
            )
            status, answer, again = post(conn, "/api/v1/rolls/import/measurements", {"csv": measurements_csv})
            if status != 200 or answer["added"] != 0 or answer["already_here"] != options.rows:
                raise SystemExit(f"re-import added rows: {status} {answer}")
            print(f"the same file again: 0 added, {answer['already_here']} already here, in {again:.2f} s")

            conn.request("GET", "/api/v1/rolls")
            listing = json.loads(conn.getresponse().read())
            ident = listing["rolls"][0]["id"]
            single = []
            for number in range(options.single):
                status, answer, seconds = post(
                    conn,
                    f"/api/v1/rolls/{ident}/measurements",
                    {
                        "measured_on": date.today().isoformat(),
                        "volume": f"{3 + number / 1000:.3f} BCM/in2",
                        "condition": "as_found",
                        "method": f"yardstick {number}",
                    },
                )
                if status != 201:
                    raise SystemExit(f"single measurement refused: {status} {answer}")
                single.append(seconds)
            per_request = sorted(single)[len(single) // 2]
            started = time.perf_counter()
            conn.request("GET", f"/api/v1/rolls/{ident}")
            conn.getresponse().read()
            roll_read = time.perf_counter() - started
            conn.close()
        finally:
            stop_server(process, reader)

    per_row = first / options.rows
    print(
        f"one measurement logged per request: median {per_request * 1000:.1f} ms; "
        f"{options.rows} that way would take about {per_request * options.rows:.0f} s"
    )
    print(
        f"ratio: the import spends {per_row * 1000:.3f} ms a row, "
        f"{per_request / per_row:.0f}x less than one logged measurement"
    )
    measured = options.rows // options.rolls + options.single
    print(f"reading one roll with {measured} measurements: {roll_read * 1000:.0f} ms")


if __name__ == "__main__":
    main()
