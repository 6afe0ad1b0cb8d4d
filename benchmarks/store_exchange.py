"""Export and import of a big store: snippets per second and memory growth, three repeats, medians.

    python benchmarks/store_exchange.py /tmp/store100k --count 100000       # fills the folder first if empty
    python benchmarks/store_exchange.py /tmp/store1m --count 1000000         # the 1M row (about 10 minutes)

The export is streamed from ``exchange.export_stream`` (what the API sends) into a file; the
import reads that file with ``exchange.import_stream`` into an empty store. Memory growth is the
rise of this process's peak resident size (``ru_maxrss``) over the run, measured in a fresh child
per step so one step's peak does not hide the next one's.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def _peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def step(kind: str, store: Path, file: Path) -> dict:
    from webapp.common import db
    from webapp.snippets import exchange

    before = _peak_mb()
    started = time.perf_counter()
    if kind == "export":
        count = 0
        with file.open("w", encoding="utf-8") as out:
            for piece in exchange.export_stream(store):
                out.write(piece)
        with contextlib.closing(db.connect(store)) as conn:
            count = conn.execute("SELECT count(*) FROM snippet WHERE deleted_at IS NULL").fetchone()[0]
    else:
        store.unlink(missing_ok=True)
        db.migrate(store)
        with contextlib.closing(db.connect(store)) as conn, file.open("rb") as source:
            count = exchange.import_stream(conn, source)["added"]
    seconds = time.perf_counter() - started
    return {"count": count, "seconds": seconds, "growth_mb": _peak_mb() - before, "bytes": file.stat().st_size}


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("data_dir", type=Path)
    parser.add_argument("--count", type=int, default=100_000)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--step", choices=("export", "import"), help=argparse.SUPPRESS)
    parser.add_argument("--file", type=Path, help=argparse.SUPPRESS)
    parser.add_argument("--target", type=Path, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.step:
        print(json.dumps(step(args.step, args.target, args.file)))
        return
    from benchmarks.store_fill import fill
    from webapp.common import db

    store = args.data_dir / db.FILENAME
    if not store.exists():
        fill(args.data_dir, args.count)
    with tempfile.TemporaryDirectory() as scratch:
        file = Path(scratch) / "export.json"
        into = Path(scratch) / "imported.sqlite3"
        results: dict[str, list[dict]] = {"export": [], "import": []}
        for _ in range(args.repeats):
            for kind, target in (("export", store), ("import", into)):
                out = subprocess.run(
                    [sys.executable, __file__, str(args.data_dir), "--step", kind, "--file", str(file)]
                    + ["--target", str(target)],
                    check=True,
                    capture_output=True,
                    text=True,
                ).stdout
                results[kind].append(json.loads(out.strip().splitlines()[-1]))
        for kind, runs in results.items():
            rate = statistics.median(r["count"] / r["seconds"] for r in runs)
            growth = statistics.median(r["growth_mb"] for r in runs)
            seconds = statistics.median(r["seconds"] for r in runs)
            print(
                f"{kind}: {runs[0]['count']:,} snippets ({runs[0]['bytes'] / 1e6:.0f} MB file) in {seconds:.1f} s,"
                f" {rate:,.0f} snippets/s, memory growth {growth:.0f} MB (medians of {len(runs)})"
            )


if __name__ == "__main__":
    main()
