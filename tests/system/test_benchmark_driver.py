"""The benchmarks' one load driver (``benchmarks/api_vs_static.py::drive``), as ``request_path.py`` calls it:
keep-alive connections for a while, a browser's headers with the caller's on top, failures counted."""

from __future__ import annotations

import threading
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer

import pytest

from benchmarks import request_path


class Recorder(BaseHTTPRequestHandler):
    protocol_version = "HTTP/1.1"  # keep-alive, as the driver's connections expect
    seen: list[dict] = []

    def answer(self) -> None:
        length = int(self.headers.get("Content-Length") or 0)
        self.rfile.read(length)
        Recorder.seen.append(dict(self.headers))
        status = 404 if self.path == "/missing" else 200
        self.send_response(status)
        self.send_header("Content-Length", "2")
        self.end_headers()
        self.wfile.write(b"ok")

    do_GET = do_POST = answer

    def log_message(self, *args) -> None:
        pass


@pytest.fixture
def port():
    server = ThreadingHTTPServer(("127.0.0.1", 0), Recorder)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    Recorder.seen = []
    yield server.server_address[1]
    server.shutdown()
    server.server_close()


def test_request_path_drives_with_a_browser_s_headers_and_its_own_on_top(port):
    result = request_path.drive(port, "POST", "/", b"value=4.5", 0.3, 2, request_path.FORM)
    assert result["failures"] == 0 and result["rps"] > 0 and result["p99_ms"] > 0
    assert Recorder.seen, "no request reached the server"
    headers = Recorder.seen[0]
    assert headers["Accept-Encoding"] == request_path.BROWSER["Accept-Encoding"]
    assert headers["Content-Type"] == "application/x-www-form-urlencoded" and headers["HX-Request"] == "true"
    Recorder.seen = []
    request_path.drive(port, "GET", "/", None, 0.2, 1)
    assert "Content-Type" not in Recorder.seen[0]


def test_answers_other_than_200_are_counted_as_failures(port):
    result = request_path.drive(port, "GET", "/missing", None, 0.2, 1)
    assert result["failures"] > 0 and result["failures"] == len(Recorder.seen)
