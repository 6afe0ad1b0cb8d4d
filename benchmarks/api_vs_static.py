"""Benchmark: /api/v1/convert against a static file from the same waitress process.

Starts ``inkfilm serve`` on a free loopback port, measures the time from
start-up to the first calculation answered, then drives each target with the
same number of concurrent keep-alive connections for the same time and prints
requests/s and p50/p99 latency of both, and their ratios.

    python benchmarks/api_vs_static.py [--connections 16] [--seconds 10]

Target (issue: foundation): the calculation's p99 within 2x the static file's,
and start-up to first answer under 2 s. Ratios are measured within one run, so
they hold on a busy or a quiet machine alike; absolute figures do not.
"""

from __future__ import annotations

import argparse
import http.client
import json
import os
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
STATIC = ROOT / "webapp" / "static"

from tests.conftest import drain, start_server  # noqa: E402  (the server exactly as the tests start it)

CONVERT_BODY = json.dumps({"quantity": "3.5 BCM/in2", "to": "cm3/m2"}).encode()


def smallest_static_file() -> str:
    """The smallest stylesheet or script in static/, a fair like-for-like page asset."""
    candidates = [p for p in STATIC.rglob("*") if p.is_file() and p.suffix in {".css", ".js", ".json"}]
    if not candidates:
        raise SystemExit("no static file to compare against")
    return "/static/" + min(candidates, key=lambda p: p.stat().st_size).relative_to(STATIC).as_posix()


def start_and_time(data_dir: str) -> tuple[subprocess.Popen, int, float]:
    """Start the server as the tests do; seconds from launch to the first calculation answered."""
    began = time.perf_counter()
    process, base = start_server(Path(data_dir))
    drain(process)
    port = int(base.rsplit(":", 1)[1])
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=5)
    connection.request("POST", "/api/v1/convert", CONVERT_BODY, {"Content-Type": "application/json"})
    if connection.getresponse().status != 200:
        raise SystemExit("the first calculation was not answered")
    connection.close()
    return process, port, time.perf_counter() - began


def drive(
    port: int,
    method: str,
    path: str,
    body: bytes | None,
    connections: int,
    seconds: float,
    extra: dict | None = None,
    *,
    requests: list[tuple[str, str, bytes | None]] | None = None,
) -> dict:
    """``connections`` threads, each on one keep-alive connection, for ``seconds`` (``extra``: more headers).

    Each sends ``method path body`` again and again, or, given ``requests``, goes round that
    list of ``(method, path, body)`` (thread ``i`` starting at its ``i``-th entry). Any answer
    but a 2xx counts as a failure."""
    latencies: list[list[float]] = [[] for _ in range(connections)]
    failures = [0] * connections
    stop_at = time.perf_counter() + seconds
    rounds = requests or [(method, path, body)]

    def worker(index: int) -> None:
        connection = http.client.HTTPConnection("127.0.0.1", port, timeout=10)
        own = latencies[index]
        turn = index
        while time.perf_counter() < stop_at:
            verb, target, payload = rounds[turn % len(rounds)]
            turn += 1
            headers = {"Accept-Encoding": "gzip"}
            if payload:
                headers["Content-Type"] = "application/json"
            headers |= extra or {}
            began = time.perf_counter()
            try:
                connection.request(verb, target, payload, headers)
                response = connection.getresponse()
                response.read()
                if not 200 <= response.status < 300:
                    failures[index] += 1
            except OSError:
                failures[index] += 1
                connection.close()
                connection = http.client.HTTPConnection("127.0.0.1", port, timeout=10)
                continue
            own.append(time.perf_counter() - began)
        connection.close()

    threads = [threading.Thread(target=worker, args=(i,)) for i in range(connections)]
    began = time.perf_counter()
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    elapsed = time.perf_counter() - began
    every = sorted(x for own in latencies for x in own)
    if not every:
        raise SystemExit(f"no answers from {path}")
    return {
        "requests": len(every),
        "failures": sum(failures),
        "rps": len(every) / elapsed,
        "p50_ms": statistics.median(every) * 1000,
        "p99_ms": every[min(len(every) - 1, int(len(every) * 0.99))] * 1000,
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--connections", type=int, default=16)
    parser.add_argument("--seconds", type=float, default=10.0)
    parser.add_argument("--static", default=None, help="static path to compare with (default: smallest css/js)")
    args = parser.parse_args(argv)
    static_path = args.static or smallest_static_file()

    with tempfile.TemporaryDirectory() as data_dir:
        process, port, startup = start_and_time(data_dir)
        try:
            # Warm both paths (caches, lazy imports) before measuring.
            drive(port, "GET", static_path, None, args.connections, 1.0)
            drive(port, "POST", "/api/v1/convert", CONVERT_BODY, args.connections, 1.0)
            static = drive(port, "GET", static_path, None, args.connections, args.seconds)
            convert = drive(port, "POST", "/api/v1/convert", CONVERT_BODY, args.connections, args.seconds)
        finally:
            process.terminate()
            process.wait(timeout=10)
            process.stdout.close()

    print(f"machine: {os.cpu_count()} cores; {args.connections} connections; {args.seconds:g} s per target; loopback")
    print(f"start-up to first calculation answered: {startup:.2f} s (target < 2 s)")
    for name, result in ((f"GET {static_path}", static), ("POST /api/v1/convert", convert)):
        print(
            f"{name:<34} {result['rps']:8.0f} req/s  p50 {result['p50_ms']:6.2f} ms  "
            f"p99 {result['p99_ms']:6.2f} ms  ({result['requests']} requests, {result['failures']} failed)"
        )
    p99_ratio = convert["p99_ms"] / static["p99_ms"]
    print(
        f"ratio convert/static: p50 {convert['p50_ms'] / static['p50_ms']:.2f}x, p99 {p99_ratio:.2f}x "
        f"(target p99 <= 2x); throughput {convert['rps'] / static['rps']:.2f}x"
    )
    return 0 if p99_ratio <= 2.0 and startup < 2.0 and not convert["failures"] and not static["failures"] else 1


if __name__ == "__main__":
    sys.exit(main())
