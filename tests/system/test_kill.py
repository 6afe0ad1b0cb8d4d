"""Nothing lost: the server is killed (SIGKILL) again and again while clients save snippets.

After every kill the file must pass ``PRAGMA integrity_check`` and hold every
snippet whose save was answered 2xx, exactly once; after each restart the
server must answer for all of them. Traffic stays on 127.0.0.1.
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
    lock = threading.Lock()
    rng = random.Random(20240117)
    for kill in range(KILLS):
        process, base = start_server(data)
        reader = drain(process)
        try:
            with urllib_open(base, "/api/v1/snippets?limit=1") as answer:
                assert answer["total"] >= len(acknowledged)
            stop = threading.Event()
            clients = [
                threading.Thread(target=saver, args=(base, f"k{kill}-c{n}", acknowledged, lock, stop))
                for n in range(CLIENTS)
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

    # One last start: the server itself answers for every acknowledged snippet.
    process, base = start_server(data)
    reader = drain(process)
    try:
        with urllib_open(base, "/api/v1/snippets?limit=1") as answer:
            total = answer["total"]
        for title, snippet_id in rng.sample(sorted(acknowledged.items()), min(25, len(acknowledged))):
            with urllib_open(base, f"/api/v1/snippets/{snippet_id}") as snippet:
                assert snippet["title"] == title
    finally:
        stop_server(process, reader)

    assert len(acknowledged) > KILLS * CLIENTS, "the clients hardly saved anything; the test proves little"
    figures = (
        f"kill test: {KILLS} SIGKILLs, {CLIENTS} clients saving, {len(acknowledged)} saves answered 201, "
        f"all {len(acknowledged)} present after each restart ({total} stored in all, including saves "
        "committed but cut off before their answer), integrity_check ok after every kill"
    )
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    (SCREENSHOTS / "kill-test.txt").write_text(figures + "\n")
    with capsys.disabled():
        print("\n" + figures)


@contextlib.contextmanager
def urllib_open(base: str, path: str):
    import urllib.request

    with urllib.request.urlopen(base + path, timeout=10) as response:
        yield json.load(response)
