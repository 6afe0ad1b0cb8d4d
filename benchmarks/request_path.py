"""Benchmark: the request path at shop scale, one section per row of the speed issue.

Starts ``inkfilm serve --no-https`` (as the tests do) and, for the first row,
a hello-world WSGI app under the same waitress with the same threads, then
measures within one run, three repeats, and prints the medians:

1. ``static``: the smallest static file vs the hello app (throughput ratio; target >= 0.8x).
2. ``api``: ``/api/v1/film``, ``/equivalents`` and ``/estimate`` (12 stations), p99 each
   against the static file's p99 in the same repeat (target <= 1.3x), and the
   server CPU per 12-station estimate (target <= 3 ms), read from the worker's
   ``/proc/<pid>/stat``.
3. ``pages``: htmx fragment posts of the converter and film pages vs the static
   file (throughput ratio; target >= 0.7x).
4. ``session``: with a browser's session cookie, which answers carry ``Set-Cookie``
   and ``Vary: Cookie`` (targets: none on static files and API answers), and the
   static file's throughput with the cookie against without.
5. ``start``: from launching ``inkfilm serve`` to the first answered calculation
   (target <= 0.4 s), polled every 5 ms; and where the time goes in a
   ``python -c`` (import, ``create_app``, first answer through the test client).
   Measured as an installed server starts again: byte code compiled (in a
   temporary ``PYTHONPYCACHEPREFIX``; pip compiles it at install) and the cache
   folder filled by one start before the three counted.
6. ``wire``: first load of ``/`` in Chromium with the service worker installing,
   bytes received over the wire, headers included (target <= 40 KB), through
   the tests' counting relay.

    python benchmarks/request_path.py [--seconds 4] [--connections 16] [--only static,api,...]

Ratios hold on a busy or a quiet machine alike; absolute figures do not.
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
from urllib.parse import urlencode

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
STATIC = ROOT / "webapp" / "static"

from tests.conftest import drain, free_port, start_server, wait_for  # noqa: E402

REPEATS = 3
FILM_BODY = json.dumps(
    {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 0.5, "plate_to_substrate": 0.5, "ink_density": "1.05 g/cm3"}
).encode()
EQUIVALENTS_BODY = json.dumps({"quantity": "4.5 BCM/in2", "density": "1.05 g/cm3", "coverage": 0.4}).encode()
ESTIMATE_BODY = json.dumps(
    {
        "web_width": "330 mm",
        "run_length": "12000 m",
        "waste": 0.05,
        "stations": [
            {
                "name": f"Station {n}",
                "anilox_volume": f"{2 + n * 0.25} BCM/in2",
                "coverage": 0.3 + n * 0.02,
                "transfer": 0.3,
                "ink_density": "1.0 g/cm3",
                "price_per_kg": 12.5,
            }
            for n in range(12)
        ],
    }
).encode()
CONVERT_BODY = json.dumps({"quantity": "3.5 BCM/in2", "to": "cm3/m2"}).encode()
CONVERT_FORM = urlencode(
    {"value": "4.5", "unit": "BCM/in2", "density": "", "density_unit": "g/cm3", "coverage": "", "answer_in": ""}
).encode()
FILM_FORM = urlencode(
    {
        "anilox_volume": "4.5",
        "anilox_unit": "BCM/in2",
        "anilox_to_plate": "50",
        "plate_to_substrate": "50",
        "ink_density": "1.05",
        "ink_density_unit": "g/cm3",
        "solids_by_volume": "",
        "solids_by_weight": "",
    }
).encode()
JSON = {"Content-Type": "application/json"}
FORM = {"Content-Type": "application/x-www-form-urlencoded", "HX-Request": "true"}
# What a browser sends for every request.
BROWSER = {"Accept-Encoding": "gzip, deflate, br"}

HELLO_APP = """
import sys, waitress
def hello(environ, start_response):
    body = b"hello"
    start_response("200 OK", [("Content-Type", "text/plain"), ("Content-Length", str(len(body)))])
    return [body]
waitress.serve(hello, host="127.0.0.1", port=int(sys.argv[1]), threads=8, ident="hello")
"""


def smallest_static_file() -> str:
    candidates = [p for p in STATIC.rglob("*") if p.is_file() and p.suffix in {".css", ".js", ".json"}]
    return "/static/" + min(candidates, key=lambda p: p.stat().st_size).relative_to(STATIC).as_posix()


def drive(
    port: int, method: str, path: str, body: bytes | None, seconds: float, connections: int, headers=None
) -> dict:
    """``connections`` threads, each on one keep-alive connection, for ``seconds``."""
    latencies: list[list[float]] = [[] for _ in range(connections)]
    failures = [0] * connections
    stop_at = time.perf_counter() + seconds
    sent = {**BROWSER, **(headers or {})}

    def worker(index: int) -> None:
        connection = http.client.HTTPConnection("127.0.0.1", port, timeout=10)
        own = latencies[index]
        while time.perf_counter() < stop_at:
            began = time.perf_counter()
            try:
                connection.request(method, path, body, sent)
                response = connection.getresponse()
                response.read()
                if response.status != 200:
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
        "rps": len(every) / elapsed,
        "p99_ms": every[min(len(every) - 1, int(len(every) * 0.99))] * 1000,
        "failures": sum(failures),
    }


def worker_pid(supervisor: int) -> int:
    """The server process: the supervisor's child (``inkfilm serve`` runs the worker as one)."""
    children = Path(f"/proc/{supervisor}/task/{supervisor}/children").read_text().split()
    return int(children[0]) if children else supervisor


def cpu_seconds(pid: int) -> float:
    fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def one(port: int, method: str, path: str, body=None, headers=None):
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=10)
    connection.request(method, path, body, {**BROWSER, **(headers or {})})
    response = connection.getresponse()
    data = response.read()
    connection.close()
    return response, data


def median_line(name: str, values: list[float], unit: str, target: str) -> str:
    shown = ", ".join(f"{v:.2f}" for v in values)
    return f"{name:<58} {statistics.median(values):7.2f}{unit}  (repeats {shown}; target {target})"


class Server:
    def __init__(self):
        self.folder = tempfile.TemporaryDirectory()
        self.process, base = start_server(Path(self.folder.name))
        drain(self.process)
        self.port = int(base.rsplit(":", 1)[1])

    def close(self):
        self.process.terminate()
        self.process.wait(timeout=10)
        self.process.stdout.close()
        self.folder.cleanup()


def section_static(server: Server, static: str, args) -> list[str]:
    port = free_port()
    hello = subprocess.Popen(
        [sys.executable, "-c", HELLO_APP, str(port)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
    )
    try:
        wait_for(f"http://127.0.0.1:{port}/")
        ratios = []
        for _ in range(REPEATS):
            base = drive(port, "GET", "/", None, args.seconds, args.connections)
            ours = drive(server.port, "GET", static, None, args.seconds, args.connections)
            ratios.append(ours["rps"] / base["rps"])
    finally:
        hello.terminate()
        hello.wait(timeout=10)
    return [median_line(f"1. static {static} / hello WSGI, throughput", ratios, "x", ">= 0.8x")]


def section_api(server: Server, static: str, args) -> list[str]:
    targets = {
        "film": FILM_BODY,
        "equivalents": EQUIVALENTS_BODY,
        "estimate": ESTIMATE_BODY,
    }
    ratios: dict[str, list[float]] = {name: [] for name in targets}
    for _ in range(REPEATS):
        base = drive(server.port, "GET", static, None, args.seconds, args.connections)
        for name, body in targets.items():
            result = drive(server.port, "POST", f"/api/v1/{name}", body, args.seconds, args.connections, JSON)
            ratios[name].append(result["p99_ms"] / base["p99_ms"])
    lines = [
        median_line(f"2. /api/v1/{name} p99 / static p99", values, "x", "<= 1.3x") for name, values in ratios.items()
    ]
    pid = worker_pid(server.process.pid)
    per_call = []
    for _ in range(REPEATS):
        connection = http.client.HTTPConnection("127.0.0.1", server.port, timeout=10)
        calls = 300
        before = cpu_seconds(pid)
        for _ in range(calls):
            connection.request("POST", "/api/v1/estimate", ESTIMATE_BODY, {**BROWSER, **JSON})
            response = connection.getresponse()
            response.read()
            assert response.status == 200
        per_call.append((cpu_seconds(pid) - before) / calls * 1000)
        connection.close()
    lines.append(median_line("2. server CPU per 12-station estimate", per_call, " ms", "<= 3 ms"))
    return lines


def section_pages(server: Server, static: str, args) -> list[str]:
    pages = {"/": CONVERT_FORM, "/film": FILM_FORM}
    ratios: dict[str, list[float]] = {path: [] for path in pages}
    for _ in range(REPEATS):
        base = drive(server.port, "GET", static, None, args.seconds, args.connections)
        for path, form in pages.items():
            result = drive(server.port, "POST", path, form, args.seconds, args.connections, FORM)
            ratios[path].append(result["rps"] / base["rps"])
    return [
        median_line(f"3. page fragment POST {path} / static, throughput", v, "x", ">= 0.7x")
        for path, v in ratios.items()
    ]


def section_session(server: Server, static: str, args) -> list[str]:
    # A calculator page with a result carries the save button and so the session's CSRF token.
    response, _ = one(server.port, "GET", "/film")
    cookie = response.getheader("Set-Cookie", "").split(";", 1)[0]
    if not cookie:
        return ["4. session: no session cookie was handed out by /film"]
    held = {"Cookie": cookie}
    lines = []
    checks = [
        ("static file", "GET", static, None, {}),
        ("API answer (convert)", "POST", "/api/v1/convert", CONVERT_BODY, JSON),
        ("page fragment (convert)", "POST", "/", CONVERT_FORM, FORM),
        ("page (/snippets)", "GET", "/snippets", None, {}),
    ]
    for name, method, path, body, headers in checks:
        response, _ = one(server.port, method, path, body, {**held, **headers})
        vary = response.getheader("Vary", "")
        lines.append(
            f"4. with a session cookie, {name:<24} Set-Cookie: {'yes' if response.getheader('Set-Cookie') else 'no':<3}"
            f"  Vary: Cookie: {'yes' if 'cookie' in vary.lower() else 'no'}"
        )
    ratios = []
    for _ in range(REPEATS):
        without = drive(server.port, "GET", static, None, args.seconds, args.connections)
        with_cookie = drive(server.port, "GET", static, None, args.seconds, args.connections, held)
        ratios.append(with_cookie["rps"] / without["rps"])
    lines.append(median_line("4. static throughput with the cookie / without", ratios, "x", "~1.0x"))
    return lines


# Where a start's time goes, in a fresh interpreter: imports, create_app, the first answer.
START_PARTS = """
import json, sys, tempfile, time
began = time.perf_counter()
import pint
pint_done = time.perf_counter()
import calc.units
units_done = time.perf_counter()
import webapp
imported = time.perf_counter()
app = webapp.create_app({"DATA_DIR": tempfile.mkdtemp()})
created = time.perf_counter()
response = app.test_client().post("/api/v1/convert", data=sys.argv[1], content_type="application/json")
assert response.status_code == 200
answered = time.perf_counter()
print(json.dumps({
    "import pint": pint_done - began,
    "calc.units (pint's registry with the trade units)": units_done - pint_done,
    "import webapp (flask and the rest)": imported - units_done,
    "create_app (blueprints, routes, migrations, static)": created - imported,
    "first answer (test client)": answered - created,
    "python -c, import to first answer": answered - began,
}))
"""


def start_environment(pycache: str) -> dict:
    """As an installed server starts again: byte code compiled (pip does at install), caches made once."""
    env = {key: value for key, value in os.environ.items() if key != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPYCACHEPREFIX"] = pycache
    return env


def section_start(args) -> list[str]:
    times = []
    with tempfile.TemporaryDirectory() as pycache:
        env = start_environment(pycache)
        parts: dict[str, list[float]] = {}
        for run in range(REPEATS + 1):  # the first compiles the byte code and fills the caches: not counted
            result = subprocess.run(
                [sys.executable, "-c", START_PARTS, CONVERT_BODY.decode()],
                cwd=ROOT,
                env=env,
                capture_output=True,
                text=True,
                check=True,
            )
            if run:
                for name, seconds in json.loads(result.stdout).items():
                    parts.setdefault(name, []).append(seconds)
        # One data folder for every start, as a shop's server starts again (its caches are in it).
        with tempfile.TemporaryDirectory() as folder:
            for run in range(REPEATS + 1):
                port = free_port()
                command = [sys.executable, "-m", "webapp.cli", "serve", "--no-https", "--host", "127.0.0.1"]
                command += ["--port", str(port), "--data-dir", folder]
                began = time.perf_counter()
                process = subprocess.Popen(
                    command, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL
                )
                try:
                    while True:
                        try:
                            response, _ = one(port, "POST", "/api/v1/convert", CONVERT_BODY, JSON)
                            if response.status == 200:
                                break
                        except OSError:
                            pass
                        if time.perf_counter() - began > 30:
                            raise SystemExit("the server did not answer within 30 s")
                        time.sleep(0.005)
                    if run:
                        times.append(time.perf_counter() - began)
                finally:
                    process.terminate()
                    process.wait(timeout=10)
    lines = [median_line("5. from `inkfilm serve` to the first calculation answered", times, " s", "<= 0.4 s")]
    for name, values in parts.items():
        target = "<= 0.4 s" if name.startswith("python -c") else "part of the above"
        lines.append(median_line(f"5. {name}", values, " s", target))
    return lines


def section_wire(server: Server, args) -> list[str]:
    from playwright.sync_api import sync_playwright

    from tests.browser.conftest import WireCounter

    sizes = []
    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path="/usr/bin/chromium")
        try:
            for _ in range(REPEATS):
                wire = WireCounter(f"http://127.0.0.1:{server.port}")
                context = browser.new_context(
                    viewport={"width": 390, "height": 844}, base_url=wire.base, service_workers="allow"
                )
                context.add_cookies([{"name": "inkfilm_units", "value": "imperial", "url": wire.base}])
                page = context.new_page()
                wire.reset()
                page.goto("/")
                page.wait_for_function("() => navigator.serviceWorker.controller !== null")
                page.wait_for_function(
                    """async () => {
                        const names = await caches.keys();
                        if (!names.length) return false;
                        const cache = await caches.open(names[0]);
                        return (await cache.keys()).length >= 10;
                    }"""
                )
                page.wait_for_load_state("networkidle")
                sizes.append(wire.reset() / 1024)
                context.close()
                wire.close()
        finally:
            browser.close()
    return [median_line("6. first load of / over the wire (service worker installing)", sizes, " KB", "<= 40 KB")]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--connections", type=int, default=16)
    parser.add_argument("--seconds", type=float, default=4.0)
    parser.add_argument("--only", default="static,api,pages,session,start,wire")
    args = parser.parse_args(argv)
    sections = args.only.split(",")
    static = smallest_static_file()
    lines = [f"machine: {os.cpu_count()} cores; {args.connections} connections; {args.seconds:g} s per target"]
    server = Server()
    try:
        # Warm every path (caches, lazy imports) before measuring.
        drive(server.port, "GET", static, None, 1.0, args.connections)
        drive(server.port, "POST", "/api/v1/estimate", ESTIMATE_BODY, 1.0, args.connections, JSON)
        drive(server.port, "POST", "/", CONVERT_FORM, 1.0, args.connections, FORM)
        for name, run in (("static", section_static), ("api", section_api), ("pages", section_pages)):
            if name in sections:
                lines += run(server, static, args)
                print(lines[-1], flush=True)
        if "session" in sections:
            lines += section_session(server, static, args)
        if "wire" in sections:
            lines += section_wire(server, args)
    finally:
        server.close()
    if "start" in sections:
        lines += section_start(args)
    print("\n".join(lines))
    return 0


if __name__ == "__main__":
    sys.exit(main())
