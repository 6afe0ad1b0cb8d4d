"""Benchmark: snippet search (``?q=``) and the Saved page on a big store.

Runs the app in this process (Flask's test client, no network) on a data folder
filled by ``benchmarks/store_fill.py`` and times, three times over:

- the live search as the Saved page sends it (``/snippets?q=…`` with htmx's
  headers), for words a shop types: job numbers, parts of them as they are
  typed, inks, substrates, customers, tags;
- the API's search (``/api/v1/snippets?q=…``);
- the Saved page itself (``/snippets``), and with a filter or another sort.

    python benchmarks/store_fill.py /tmp/store-1m --count 1000000
    python benchmarks/store_list.py /tmp/store-1m [--per-query 5]

Prints p50/p99 per group (medians of the three runs). Targets (issue 16): search
p99 ≤ 50 ms and the Saved page ≤ 100 ms at 1M snippets. The same script runs
against older code (``PYTHONPATH=<old checkout>``); unknown parameters are ignored
there.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.append(str(ROOT))

from webapp import create_app  # noqa: E402

WORDS = [
    "24-0117",
    "25-3",
    "25-31",
    "25-318",
    "c",
    "cy",
    "cya",
    "cyan",
    "opaque white",
    "bopp",
    "alder",
    "repeat",
    "handover",
    "metallic foil",
    "station 3",
    "magenta bo",
    "kraft violet 2",
    "nothing-like-this",
]
HX = {"HX-Request": "true", "HX-Target": "snippet-results"}
PAGES = [
    "/snippets",
    "/snippets?press=N2",
    "/snippets?kind=estimate",
    "/snippets?sort=title",
    "/snippets?sort=job",
    "/snippets?page=3",
    "/snippets?from=2024-03-01&to=2024-03-31",
]


def percentile(values: list[float], share: float) -> float:
    ordered = sorted(values)
    return ordered[min(len(ordered) - 1, int(round(share * (len(ordered) - 1))))]


def timed(client, url: str, headers=None) -> float:
    began = time.perf_counter()
    response = client.get(url, headers=headers or {})
    seconds = time.perf_counter() - began
    if response.status_code != 200:
        raise SystemExit(f"{url}: {response.status_code} {response.get_data(as_text=True)[:200]}")
    return seconds


def one_run(client, per_query: int) -> dict[str, list[float]]:
    groups: dict[str, list[float]] = {"live search": [], "api search": [], "saved page": [], "filtered pages": []}
    for _ in range(per_query):
        for word in WORDS:
            groups["live search"].append(timed(client, f"/snippets?q={word}", HX))
            groups["api search"].append(timed(client, f"/api/v1/snippets?q={word}"))
        groups["saved page"].append(timed(client, PAGES[0]))
        for url in PAGES[1:]:
            groups["filtered pages"].append(timed(client, url))
    return groups


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("data_dir", type=Path)
    parser.add_argument("--per-query", type=int, default=5, help="times each query runs per repeat")
    parser.add_argument("--repeats", type=int, default=3)
    args = parser.parse_args(argv)
    app = create_app({"TESTING": True, "DATA_DIR": str(args.data_dir)})
    client = app.test_client()
    timed(client, "/snippets")  # open the file once (caches warm, as on a running server)
    runs = [one_run(client, args.per_query) for _ in range(args.repeats)]
    print(f"{'what':<16} {'n':>5} {'p50 ms':>9} {'p99 ms':>9} {'max ms':>9}   (median of {args.repeats} runs)")
    for group in runs[0]:
        p50 = statistics.median(percentile(run[group], 0.5) for run in runs) * 1000
        p99 = statistics.median(percentile(run[group], 0.99) for run in runs) * 1000
        worst = statistics.median(max(run[group]) for run in runs) * 1000
        print(f"{group:<16} {len(runs[0][group]):>5} {p50:>9.1f} {p99:>9.1f} {worst:>9.1f}")
    for url in PAGES:
        times = [timed(client, url) for _ in range(3)]
        print(f"  {url:<48} median {statistics.median(times) * 1000:8.1f} ms")


if __name__ == "__main__":
    main()
