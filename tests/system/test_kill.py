"""Nothing lost: the server is killed (SIGKILL) again and again while clients save snippets
and log roll measurements.

After every kill the file must pass ``PRAGMA integrity_check`` and hold every
snippet and every measurement whose POST was answered 2xx, exactly once; after
each restart the server must answer for all of them. Traffic stays on 127.0.0.1.
"""

from __future__ import annotations

import contextlib
import http.client
import json
import os
import random
import signal
import sqlite3
import threading
import time

import pytest

from tests.bodies import FILM
from tests.conftest import SCREENSHOTS, drain, start_server
from tests.conftest import stop as stop_server
from webapp.common import db

pytestmark = pytest.mark.slow

KILLS = 8
CLIENTS = 6
MEASURERS = 3  # clients logging measurements on the register's rolls, beside the snippet savers
ROLL = {
    "roll_id": "KILL-1",
    "screen": "800 lpi",
    "angle": 60,
    "nominal_volume": "2.2 BCM/in2",
    "engraved_on": "2020-01-02",
    "status": "in_use",
}


def saver(base: str, name: str, acknowledged: dict, lock: threading.Lock, stop: threading.Event) -> None:
    """Save snippets one after another until the server goes away; note each one answered 201."""
    host, port = base.removeprefix("http://").split(":")
    conn = http.client.HTTPConnection(host, int(port), timeout=10)
    number = 0
    try:
        while not stop.is_set():
            title = f"{name}-{number}"
            number += 1
            body = json.dumps({"kind": "film", "inputs": FILM, "title": title, "job_number": "24-0117"})
            try:
                conn.request("POST", "/api/v1/snippets", body, {"Content-Type": "application/json"})
                response = conn.getresponse()
                answer = response.read()
            except (OSError, http.client.HTTPException):
                return  # killed mid-request: this save was never acknowledged
            if 200 <= response.status < 300:
                with lock:
                    acknowledged[title] = json.loads(answer)["id"]
    finally:
        conn.close()


def measurer(base: str, name: str, roll: int, acknowledged: dict, lock, stop: threading.Event) -> None:
    """Log measurements (each with its own method text) until the server goes away; note each one answered 201."""
    host, port = base.removeprefix("http://").split(":")
    conn = http.client.HTTPConnection(host, int(port), timeout=10)
    number = 0
    try:
        while not stop.is_set():
            method = f"{name}-{number}"
            body = {
                "measured_on": f"2024-{1 + number % 12:02d}-{1 + number % 28:02d}",
                "volume": f"{2.0 + (number % 50) / 1000:.3f} BCM/in2",
                "condition": "as_found" if number % 3 else "after_cleaning",
                "method": method,
                "by": name,
            }
            number += 1
            try:
                conn.request(
                    "POST", f"/api/v1/rolls/{roll}/measurements", json.dumps(body), {"Content-Type": "application/json"}
                )
                response = conn.getresponse()
                answer = response.read()
            except (OSError, http.client.HTTPException):
                return  # killed mid-request: never acknowledged
            if 200 <= response.status < 300:
                with lock:
                    acknowledged[method] = json.loads(answer)["id"]
    finally:
        conn.close()


def stored_measurements(path) -> dict:
    with contextlib.closing(sqlite3.connect(path)) as conn:
        rows = conn.execute("SELECT method, id FROM roll_measurement WHERE removed_at IS NULL").fetchall()
    methods = [method for method, _ in rows]
    assert len(methods) == len(set(methods)), "a measurement was stored twice"
    return dict(rows)


def stored(path) -> dict:
    with contextlib.closing(sqlite3.connect(path)) as conn:
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        rows = conn.execute("SELECT title, id FROM snippet").fetchall()
    titles = [title for title, _ in rows]
    assert len(titles) == len(set(titles)), "a snippet was stored twice"
    return dict(rows)


def test_every_acknowledged_save_survives_sigkill(tmp_path, capsys):
    data = tmp_path / "data"
    path = data / db.FILENAME
    acknowledged: dict[str, int] = {}
    measured: dict[str, int] = {}
    lock = threading.Lock()
    rng = random.Random(20240117)
    roll = None
    for kill in range(KILLS):
        process, base = start_server(data)
        reader = drain(process)
        try:
            with urllib_open(base, "/api/v1/snippets?limit=1") as answer:
                assert answer["total"] >= len(acknowledged)
            if roll is None:
                roll = post_json(base, "/api/v1/rolls", ROLL)["id"]
            stop = threading.Event()
            clients = [
                threading.Thread(target=saver, args=(base, f"k{kill}-c{n}", acknowledged, lock, stop))
                for n in range(CLIENTS)
            ] + [
                threading.Thread(target=measurer, args=(base, f"k{kill}-m{n}", roll, measured, lock, stop))
                for n in range(MEASURERS)
            ]
            for client in clients:
                client.start()
            time.sleep(rng.uniform(0.6, 1.4))
            os.kill(process.pid, signal.SIGKILL)
            process.wait(timeout=10)
            stop.set()
            for client in clients:
                client.join(timeout=15)
        finally:
            if process.poll() is None:
                process.kill()
                process.wait(timeout=10)
            reader.join(timeout=5)
            process.stdout.close()
        found = stored(path)
        missing = {title for title in acknowledged if found.get(title) != acknowledged[title]}
        assert not missing, f"acknowledged but lost after kill {kill + 1}: {sorted(missing)[:5]}"
        found = stored_measurements(path)
        missing = {method for method in measured if found.get(method) != measured[method]}
        assert not missing, f"measurements acknowledged but lost after kill {kill + 1}: {sorted(missing)[:5]}"

    # One last start: the server itself answers for every acknowledged snippet.
    process, base = start_server(data)
    reader = drain(process)
    try:
        with urllib_open(base, "/api/v1/snippets?limit=1") as answer:
            total = answer["total"]
        for title, snippet_id in rng.sample(sorted(acknowledged.items()), min(25, len(acknowledged))):
            with urllib_open(base, f"/api/v1/snippets/{snippet_id}") as snippet:
                assert snippet["title"] == title
        with urllib_open(base, f"/api/v1/rolls/{roll}/measurements") as listing:
            listed = {entry["method"]: entry["id"] for entry in listing["measurements"]}
        assert all(listed.get(method) == ident for method, ident in measured.items())
        with urllib_open(base, f"/api/v1/rolls/{roll}") as answer:
            assert answer["wear"]["latest"] is not None
    finally:
        stop_server(process, reader)

    assert len(acknowledged) > KILLS * CLIENTS, "the clients hardly saved anything; the test proves little"
    assert len(measured) > KILLS * MEASURERS, "the measurers hardly logged anything; the test proves little"
    figures = (
        f"kill test: {KILLS} SIGKILLs, {CLIENTS} clients saving, {len(acknowledged)} saves answered 201, "
        f"all {len(acknowledged)} present after each restart ({total} stored in all, including saves "
        f"committed but cut off before their answer); {MEASURERS} clients logging roll measurements, "
        f"{len(measured)} answered 201, all present once after each restart ({len(listed)} stored in all); "
        "integrity_check ok after every kill"
    )
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    (SCREENSHOTS / "kill-test.txt").write_text(figures + "\n")
    with capsys.disabled():
        print("\n" + figures)


def post_json(base: str, path: str, body: dict) -> dict:
    import urllib.request

    request = urllib.request.Request(
        base + path, json.dumps(body).encode(), {"Content-Type": "application/json"}, method="POST"
    )
    with urllib.request.urlopen(request, timeout=10) as response:
        return json.load(response)


@contextlib.contextmanager
def urllib_open(base: str, path: str):
    import urllib.request

    with urllib.request.urlopen(base + path, timeout=10) as response:
        yield json.load(response)
