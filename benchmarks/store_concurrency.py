"""Benchmark: saves under load, and reads while they run, against the real server.

Fills a temporary data folder with a realistic store (``benchmarks/store_fill.py``),
starts ``inkfilm serve --no-https`` on it exactly as the tests do (waitress, the
README's command), and then, three times over:

1. reads alone: ``--readers`` clients going round the API search
   (``/api/v1/snippets?q=…``), one snippet (``/api/v1/snippets/<id>``) and the
   Saved page (``/snippets``) → reads/s;
2. ``--writers`` clients saving (``POST /api/v1/snippets``, realistic bodies of
   every kind, titles, job numbers, notes and tags) for ``--seconds`` → saves/s,
   p50, p99;
3. the same writers with the readers at the same time → saves/s, p99, reads/s
   and reads' ratio to their solo rate.

    python benchmarks/store_concurrency.py [--count 100000] [--seconds 30] [--writers 32]
    python benchmarks/store_concurrency.py --count 5000 --seconds 5 --repeats 1   # a smoke run

Prints each repeat and the medians in a table. Targets (issue 16): saves/s ≥ 300
and p99 ≤ 300 ms with 32 clients saving; reads while writers run ≥ 0.8× their
solo rate. ``--server-arg`` passes an option on to ``inkfilm serve`` (for
instance ``--server-arg=--threads=8`` to compare thread counts).
"""

from __future__ import annotations

import argparse
import json
import multiprocessing
import os
import random
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

import store_fill  # noqa: E402  (the realistic store and its snippets)
from api_vs_static import drive  # noqa: E402  (the load driver)
from store_list import WORDS  # noqa: E402  (what a shop types into the search)

from tests.conftest import serving  # noqa: E402  (the server exactly as the tests start it)

TARGET_SAVES = 300.0
TARGET_P99_MS = 300.0
TARGET_READ_RATIO = 0.8


def save_bodies(how_many: int, seed: int) -> list[tuple[str, str, bytes]]:
    """``POST /api/v1/snippets`` requests with what a shop saves (the filler's snippets, as sent)."""
    rng = random.Random(seed)
    made = store_fill.templates(rng, per_kind=20)
    bodies = []
    start = store_fill.datetime(2026, 12, 1, tzinfo=store_fill.UTC)
    for row, tags in store_fill.rows(how_many, rng, made, start):
        _uid, kind, title, job, press, station, notes, saved_by, inputs, *_rest = row
        body = {"kind": kind, "inputs": json.loads(inputs), "title": title, "job_number": job, "press": press}
        body.update(station=station, notes=notes, saved_by=saved_by, tags=tags)
        bodies.append(("POST", "/api/v1/snippets", json.dumps(body).encode()))
    return bodies


def read_requests(count: int, seed: int) -> list[tuple[str, str, None]]:
    """Searches, single snippets and the Saved page, shuffled together."""
    rng = random.Random(seed)
    reads = [("GET", f"/api/v1/snippets?q={word.replace(' ', '+')}", None) for word in WORDS]
    reads += [("GET", f"/api/v1/snippets/{rng.randrange(1, count + 1)}", None) for _ in range(len(WORDS))]
    reads += [("GET", "/snippets", None)] * 4
    rng.shuffle(reads)
    return reads


def _drive_elsewhere(results, port: int, connections: int, seconds: float, requests) -> None:
    results.put(drive(port, "POST", "", None, connections, seconds, requests=requests))


def write_load(port: int, args, saves) -> tuple[multiprocessing.Process, multiprocessing.Queue]:
    """The writers in a process of their own, so that they do not take the readers' interpreter."""
    results = multiprocessing.Queue()
    process = multiprocessing.Process(target=_drive_elsewhere, args=(results, port, args.writers, args.seconds, saves))
    process.start()
    return process, results


def cpu_seconds(pid: int) -> float:
    """User and system CPU seconds of a process so far (Linux ``/proc``)."""
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def one_repeat(port: int, worker: int, args, saves, reads) -> dict:
    solo = drive(port, "GET", "", None, args.readers, args.read_seconds, requests=reads)
    cpu_before = cpu_seconds(worker)
    process, results = write_load(port, args, saves)
    writes = results.get()
    process.join()
    cpu_per_save = (cpu_seconds(worker) - cpu_before) / max(1, writes["requests"]) * 1000
    process, results = write_load(port, args, saves)
    settle = min(1.0, args.seconds / 10)
    time.sleep(settle)  # the writers at full pace before the reads are counted
    mixed = drive(port, "GET", "", None, args.readers, max(1.0, args.seconds - 2 * settle), requests=reads)
    together = {"writes": results.get()}
    process.join()
    return {
        "cpu_per_save": cpu_per_save,
        "reads_solo": solo["rps"],
        "saves": writes["rps"],
        "save_p50": writes["p50_ms"],
        "save_p99": writes["p99_ms"],
        "saves_mixed": together["writes"]["rps"],
        "save_p99_mixed": together["writes"]["p99_ms"],
        "reads_mixed": mixed["rps"],
        "read_p99_solo": solo["p99_ms"],
        "read_p99_mixed": mixed["p99_ms"],
        "ratio": mixed["rps"] / solo["rps"],
        "failures": solo["failures"] + writes["failures"] + together["writes"]["failures"] + mixed["failures"],
    }


COLUMNS = [
    ("saves/s", "saves", "{:8.0f}"),
    ("p50 ms", "save_p50", "{:8.0f}"),
    ("p99 ms", "save_p99", "{:8.0f}"),
    ("reads/s solo", "reads_solo", "{:13.0f}"),
    ("saves/s +reads", "saves_mixed", "{:15.0f}"),
    ("p99 +reads", "save_p99_mixed", "{:11.0f}"),
    ("reads/s +writers", "reads_mixed", "{:17.0f}"),
    ("ratio", "ratio", "{:6.2f}x"),
    ("failed", "failures", "{:7.0f}"),
    ("server CPU ms/save", "cpu_per_save", "{:19.1f}"),
]


def table(rows: list[tuple[str, dict]]) -> str:
    head = f"{'':<8}" + "".join(f"{name:>{len(fmt.format(0))}}" for name, _key, fmt in COLUMNS)
    lines = [head]
    for label, figures in rows:
        lines.append(f"{label:<8}" + "".join(fmt.format(figures[key]) for _name, key, fmt in COLUMNS))
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--count", type=int, default=100_000, help="snippets in the store before the run")
    parser.add_argument("--seconds", type=float, default=30.0, help="seconds of saving per phase")
    parser.add_argument("--read-seconds", type=float, default=10.0, help="seconds of reads alone")
    parser.add_argument("--writers", type=int, default=32)
    parser.add_argument("--readers", type=int, default=4)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--data-dir", type=Path, default=None, help="a filled folder to copy instead of filling one")
    parser.add_argument("--server-arg", action="append", default=[], help="an option for inkfilm serve")
    args = parser.parse_args(argv)

    with tempfile.TemporaryDirectory() as temp:
        data = Path(temp) / "data"
        began = time.perf_counter()
        if args.data_dir:
            import shutil

            shutil.copytree(args.data_dir, data)
        else:
            store_fill.fill(data, args.count, quiet=True, per_kind=50)
        filled = time.perf_counter() - began
        saves = save_bodies(2000, seed=1612)
        reads = read_requests(args.count, seed=1613)
        with serving(data, *args.server_arg) as (process, base):
            port = int(base.rsplit(":", 1)[1])
            # ``inkfilm serve`` supervises the server: the worker is its one child.
            worker = int(Path(f"/proc/{process.pid}/task/{process.pid}/children").read_text().split()[0])
            drive(port, "GET", "", None, args.readers, 2.0, requests=reads)  # warm: caches, lazy imports
            drive(port, "POST", "", None, args.writers, 2.0, requests=saves)
            repeats = []
            for number in range(args.repeats):
                repeats.append(one_repeat(port, worker, args, saves, reads))
                print(table([(f"run {number + 1}", repeats[-1])]).splitlines()[1], flush=True)

    medians = {key: statistics.median(run[key] for run in repeats) for _name, key, _fmt in COLUMNS}
    print()
    print(
        f"machine: {os.cpu_count()} cores; store of {args.count:,} snippets (filled in {filled:.0f} s); "
        f"{args.writers} clients saving for {args.seconds:g} s, {args.readers} reading; "
        f"server options: {' '.join(args.server_arg) or 'the defaults'}"
    )
    print(table([*((f"run {n + 1}", run) for n, run in enumerate(repeats)), ("median", medians)]))
    met = (
        medians["saves"] >= TARGET_SAVES
        and medians["save_p99"] <= TARGET_P99_MS
        and medians["ratio"] >= TARGET_READ_RATIO
        and not medians["failures"]
    )
    print(
        f"targets: saves/s >= {TARGET_SAVES:.0f}, p99 <= {TARGET_P99_MS:.0f} ms, reads with writers >= "
        f"{TARGET_READ_RATIO}x solo: {'met' if met else 'NOT met'}"
    )
    return 0 if met else 1


if __name__ == "__main__":
    sys.exit(main())
