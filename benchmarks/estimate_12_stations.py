"""Benchmark: a twelve-station job ink estimate against a static file from the same waitress process.

Starts ``inkfilm serve`` on a free loopback port (as the tests do) and drives, one after the other
and with the same number of concurrent keep-alive connections for the same time:

- ``GET`` the smallest stylesheet or script (the like-for-like baseline of ``api_vs_static.py``);
- ``POST /api/v1/estimate`` with a twelve-station labels job: across and around, make-ready, and
  for every station a price, a system fill and ink on hand (every figure the answer can hold);
- ``POST /estimate`` with ``HX-Request`` and the same job as the page's form sends it: the result
  fragment the page swaps in while it is edited (rendering, chart and "how this was worked out").

It prints requests/s and p50/p99 latency of each and the p99 ratios to the static file.

    python benchmarks/estimate_12_stations.py [--connections 16] [--seconds 10]

Target (issue 11, following the foundation's target in ``api_vs_static.py``): the API answer's p99
within 2x the static file's. The page fragment's ratio is reported, with no target. Ratios are
measured within one run, so they hold on a busy or a quiet machine alike; absolute figures do not.
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import sys
import tempfile
from pathlib import Path
from urllib.parse import urlencode

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from benchmarks.api_vs_static import drive, smallest_static_file, start_and_time  # noqa: E402

STATIONS = 12
FORM_HEADERS = {"Content-Type": "application/x-www-form-urlencoded", "HX-Request": "true"}
INKS = [  # (name, anilox cm3/m2, coverage share, transfer share, density g/cm3, price per kg, fill l, on hand kg)
    ("Process cyan", 3.5, 0.35, 0.30, 1.0, 18.0, 1.5, 4.0),
    ("Opaque white", 6.0, 0.80, 0.30, 1.4, 14.0, 2.0, 1.0),
    ("Spot green", 4.0, 0.20, 0.25, 1.05, 24.0, 1.0, 2.5),
    ("Overprint varnish", 5.0, 0.90, 0.30, 1.0, 9.0, 2.0, 6.0),
]


def station(index: int) -> tuple:
    name, *rest = INKS[index % len(INKS)]
    return (f"{index + 1} {name}", *rest)


def api_body() -> bytes:
    stations = [
        {
            "name": name,
            "anilox_volume": f"{volume} cm3/m2",
            "coverage": coverage,
            "transfer": transfer,
            "ink_density": f"{density} g/cm3",
            "price_per_kg": price,
            "fill": f"{fill} l",
            "on_hand": f"{on_hand} kg",
        }
        for name, volume, coverage, transfer, density, price, fill, on_hand in map(station, range(STATIONS))
    ]
    job = {"web_width": "330 mm", "labels": 120000, "across": 3, "around": 4, "repeat": "12 in"}
    return json.dumps(job | {"makeready": "150 m", "waste": 0.05, "stations": stations}).encode()


def form_body() -> bytes:
    """The same job as the page's form posts it (percentages typed as the page shows them)."""
    fields = {
        "station_count": STATIONS, "web_width": 330, "web_width_unit": "mm", "run_basis": "labels",
        "labels": 120000, "repeat": 12, "repeat_unit": "in", "across": 3, "around": 4,
        "makeready": 150, "makeready_unit": "m", "waste": 5, "_event": "input",
    }  # fmt: skip
    for i in range(STATIONS):
        name, volume, coverage, transfer, density, price, fill, on_hand = station(i)
        p = f"stations[{i}]."
        fields |= {
            p + "name": name, p + "anilox_volume": volume, p + "anilox_unit": "cm3/m2",
            p + "coverage": round(coverage * 100), p + "transfer": round(transfer * 100),
            p + "ink_density": density, p + "ink_density_unit": "g/cm3", p + "price_per_kg": price,
            p + "price_unit": "kg", p + "fill": fill, p + "fill_unit": "l", p + "on_hand": on_hand,
            p + "on_hand_unit": "kg",
        }  # fmt: skip
    return urlencode(fields).encode()


def check_answers(port: int, api: bytes, form: bytes) -> None:
    """Both targets answer the whole twelve-station job before anything is timed."""
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=10)
    connection.request("POST", "/api/v1/estimate", api, {"Content-Type": "application/json"})
    response = connection.getresponse()
    answer = json.loads(response.read())
    if response.status != 200 or len(answer.get("stations", [])) != STATIONS or "cost_per_1000_labels" not in answer:
        raise SystemExit(f"the API did not answer the twelve-station job: {response.status} {answer}")
    connection.request("POST", "/estimate", form, FORM_HEADERS)
    response = connection.getresponse()
    page = response.read().decode()
    connection.close()
    if response.status != 200 or 'data-key="total_mass"' not in page or page.count("<tr>") < STATIONS:
        raise SystemExit(f"the page did not answer the twelve-station job: {response.status}")
    if 'class="field-error"' in page:
        raise SystemExit("the page marked a field of the benchmark's form as wrong")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--connections", type=int, default=16)
    parser.add_argument("--seconds", type=float, default=10.0)
    args = parser.parse_args(argv)
    static_path = smallest_static_file()
    api, form = api_body(), form_body()
    targets = [
        (f"GET {static_path}", "GET", static_path, None, {}),
        ("POST /api/v1/estimate (12 stations)", "POST", "/api/v1/estimate", api, {}),
        ("POST /estimate fragment (12 stations)", "POST", "/estimate", form, FORM_HEADERS),
    ]
    results = {}
    with tempfile.TemporaryDirectory() as data_dir:
        process, port, _ = start_and_time(data_dir)
        try:
            check_answers(port, api, form)
            for _name, method, path, body, extra in targets:  # warm caches and lazy imports
                drive(port, method, path, body, args.connections, 1.0, extra)
            for name, method, path, body, extra in targets:
                results[name] = drive(port, method, path, body, args.connections, args.seconds, extra)
        finally:
            process.terminate()
            process.wait(timeout=10)
            process.stdout.close()

    print(f"machine: {os.cpu_count()} cores; {args.connections} connections; {args.seconds:g} s per target; loopback")
    for name, result in results.items():
        print(
            f"{name:<40} {result['rps']:8.0f} req/s  p50 {result['p50_ms']:7.2f} ms  "
            f"p99 {result['p99_ms']:7.2f} ms  ({result['requests']} requests, {result['failures']} failed)"
        )
    static, api_result, page_result = results.values()
    api_ratio = api_result["p99_ms"] / static["p99_ms"]
    page_ratio = page_result["p99_ms"] / static["p99_ms"]
    print(f"ratio API/static: p50 {api_result['p50_ms'] / static['p50_ms']:.2f}x, p99 {api_ratio:.2f}x (target <= 2x)")
    print(f"ratio page fragment/static: p50 {page_result['p50_ms'] / static['p50_ms']:.2f}x, p99 {page_ratio:.2f}x")
    failed = any(result["failures"] for result in results.values())
    return 0 if api_ratio <= 2.0 and not failed else 1


if __name__ == "__main__":
    sys.exit(main())
