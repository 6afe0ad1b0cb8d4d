"""A real server keeps answering while clients send unit spellings that once froze it.

pint evaluates exponents exactly, and ``m**9**9**9`` (9 to the 9**9) held the
GIL of the one interpreter waitress's threads share, so ``/healthz`` stopped
answering along with everything else. Traffic stays on 127.0.0.1.
"""

from __future__ import annotations

import http.client
import json
import subprocess
import threading
import time

import pytest

from tests.conftest import drain, start_server

HEALTH_S = 2.0
STATION = {"name": "Cyan", "anilox_volume": "3 BCM/in2", "coverage": 0.3, "transfer": 0.25, "ink_density": "1 g/cm3"}
FREEZING = [
    ("/api/v1/convert", {"quantity": "1 m", "to": "m**9**9**9"}, "to"),
    ("/api/v1/convert", {"quantity": "1 m³³³³", "to": "m"}, "quantity"),
    (
        "/api/v1/film",
        {"anilox_volume": "1 m**9**9**9", "anilox_to_plate": 0.5, "plate_to_substrate": 0.5},
        "anilox_volume",
    ),
    (
        "/api/v1/estimate",
        {"web_width": "330 mm", "run_length": "1000 m", "stations": [{**STATION, "ink_density": "1 g/cm**9**9**9"}]},
        "stations[0].ink_density",
    ),
    ("/api/v1/equivalents", {"quantity": "1 m^9^9^9"}, "quantity"),
]


@pytest.fixture
def server(tmp_path):
    process, base = start_server(tmp_path / "data")
    reader = drain(process)
    yield base
    process.terminate()
    try:
        process.wait(timeout=10)
    except subprocess.TimeoutExpired:
        process.kill()
        process.wait(timeout=10)
    reader.join(timeout=5)
    process.stdout.close()


def call(base: str, method: str, path: str, body=None, timeout: float = 10.0) -> tuple[int, bytes]:
    host, port = base.removeprefix("http://").split(":")
    conn = http.client.HTTPConnection(host, int(port), timeout=timeout)
    try:
        data = None if body is None else json.dumps(body)
        conn.request(method, path, data, {"Content-Type": "application/json"})
        response = conn.getresponse()
        return response.status, response.read()
    finally:
        conn.close()


def healthy_within(base: str, seconds: float) -> float:
    """Seconds ``/healthz`` took to answer; fails the test if it took longer than ``seconds``."""
    start = time.monotonic()
    try:
        status, _ = call(base, "GET", "/healthz", timeout=seconds)
    except TimeoutError:
        pytest.fail(f"/healthz did not answer within {seconds} s")
    assert status == 200
    return time.monotonic() - start


def test_freezing_spellings_get_400_while_healthz_keeps_answering(server):
    results: dict[int, object] = {}
    requests = FREEZING * 2

    def send(index: int, path: str, body: dict) -> None:
        try:
            results[index] = call(server, "POST", path, body, timeout=30)
        except OSError as exc:
            results[index] = exc

    threads = [
        threading.Thread(target=send, args=(index, path, body), daemon=True)
        for index, (path, body, _) in enumerate(requests)
    ]
    for thread in threads:
        thread.start()
    checks = 0
    quiet_until = time.monotonic() + 1.0
    while checks < 5 or time.monotonic() < quiet_until or any(thread.is_alive() for thread in threads):
        healthy_within(server, HEALTH_S)
        checks += 1
        time.sleep(0.05)
    for thread in threads:
        thread.join(timeout=5)
    for index, (_, _, field) in enumerate(requests):
        status, body = results[index]
        assert status == 400, (requests[index], body)
        assert json.loads(body)["error"]["field"] == field


def test_an_imported_snippet_with_a_freezing_unit_is_refused_or_reruns_promptly(server):
    item = {
        "uid": "ab" * 16,
        "kind": "convert",
        "title": "Imported with a tower of powers",
        "inputs": {"quantity": "1 m", "to": "m**9**9**9"},
        "results": {"result": {"value": 1.0, "unit": "m"}},
        "created_at": "2024-05-01T13:45:00Z",
        "updated_at": "2024-05-01T13:45:00Z",
    }
    export = {"format": "inkfilm-snippets", "snippets": [item]}
    status, body = call(server, "POST", "/api/v1/snippets/import", export, timeout=HEALTH_S)
    answer = json.loads(body)
    if status == 400:  # refused at import: fine too
        assert answer["error"]["field"] == "snippets[0].inputs.to"
        return
    assert status == 200 and answer["added"] == 1, answer
    status, body = call(server, "GET", "/api/v1/snippets?q=tower", timeout=HEALTH_S)
    snippet_id = json.loads(body)["snippets"][0]["id"]

    try:
        status, body = call(server, "GET", f"/api/v1/snippets/{snippet_id}/rerun", timeout=HEALTH_S)
    except TimeoutError:
        pytest.fail(f"the re-run did not answer within {HEALTH_S} s")
    rerun = json.loads(body)
    assert status == 200
    assert rerun["error"]["field"] == "inputs.to"
    assert rerun["today"] is None and rerun["saved"] == item["results"]

    try:  # the snippet's page, re-run from its button
        status, body = call(server, "GET", f"/snippets/{snippet_id}?rerun=1", timeout=HEALTH_S)
    except TimeoutError:
        pytest.fail(f"the snippet page's re-run did not answer within {HEALTH_S} s")
    assert status == 200
    healthy_within(server, HEALTH_S)
