"""Shared fixtures: an app on a temporary data folder, its test client, and a
live waitress server for browser tests and benchmarks."""

from __future__ import annotations

import contextlib
import io
import os
import re
import socket
import subprocess
import sys
import threading
import time
import urllib.request
from pathlib import Path

import pytest
from hypothesis import settings

from webapp import create_app

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = os.environ.get("INKFILM_CHROMIUM", "/usr/bin/chromium")
SCREENSHOTS = ROOT / "tests" / "screenshots"

# Speed is measured by the scripts in benchmarks/, not by timed tests: Hypothesis's per-example deadline
# (200 ms) only fails a property test when the machine is busy, so it is off.
settings.register_profile("inkfilm", deadline=None)
settings.load_profile("inkfilm")


@pytest.fixture
def app(tmp_path):
    return create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data")})


@pytest.fixture
def client(app):
    return app.test_client()


def free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def wait_for(url: str, seconds: float = 15.0) -> float:
    """Poll ``url`` until it answers; return the seconds it took."""
    start = time.monotonic()
    while True:
        try:
            with urllib.request.urlopen(url, timeout=1) as response:
                response.read()
                return time.monotonic() - start
        except OSError:
            if time.monotonic() - start > seconds:
                raise
            time.sleep(0.02)


def start_server(data_dir: Path, *extra: str, env: dict | None = None):
    """Start ``inkfilm serve --no-https`` (waitress alone) on a free loopback port; return (process, base URL).

    The HTTPS front (Caddy) is tested in tests/system/test_https_serve.py."""
    port = free_port()
    process = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "webapp.cli",
            "serve",
            "--no-https",
            "--host",
            "127.0.0.1",
            "--port",
            str(port),
            "--data-dir",
            str(data_dir),
            *extra,
        ],
        cwd=ROOT,
        env={**os.environ, **(env or {})},
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
    )
    base = f"http://127.0.0.1:{port}"
    try:
        wait_for(base + "/healthz")
    except OSError:
        process.kill()
        raise
    return process, base


def drain(process) -> threading.Thread:
    """Read the server's output so that a full pipe never stalls it (waitress
    warns on stderr whenever its task queue backs up under load)."""

    def read():
        for _line in process.stdout:
            pass

    thread = threading.Thread(target=read, daemon=True)
    thread.start()
    return thread


def stop(process, reader: threading.Thread | None = None, timeout: float = 10.0) -> None:
    """Stop a server started by ``start_server`` (SIGTERM, then SIGKILL if it lingers)."""
    if process.poll() is None:
        process.terminate()
        try:
            process.wait(timeout=timeout)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait(timeout=timeout)
    if reader is not None:
        reader.join(timeout=5)
    if process.stdout is not None:
        process.stdout.close()


@contextlib.contextmanager
def serving(data_dir: Path, *extra: str, env: dict | None = None, timeout: float = 10.0):
    """A real server for the block: ``(process, base URL)``; its output drained, stopped at the end."""
    process, base = start_server(data_dir, *extra, env=env)
    reader = drain(process)
    try:
        yield process, base
    finally:
        stop(process, reader, timeout)


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    """A real waitress server, as the README starts it, for browser tests."""
    with serving(tmp_path_factory.mktemp("live-data")) as (_process, base):
        yield base


CSRF_INPUT = re.compile(r'name="csrf_token" value="([^"]+)"')


def csrf_from(client) -> str:
    """The CSRF token of ``client``'s session, as a page's form carries it."""
    page = client.get("/snippets/import").get_data(as_text=True)
    return CSRF_INPUT.search(page).group(1)


@pytest.fixture
def csrf_token(client) -> str:
    """The CSRF token of the ``client`` fixture's session."""
    return csrf_from(client)


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args):
    # pytest-playwright cannot find Debian's chromium by itself, and the
    # machine has no network beyond loopback: keep Chromium from calling out.
    return {
        **browser_type_launch_args,
        "executable_path": CHROMIUM,
        "args": [
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
        ],
    }


def post_file(client, url: str, fields: dict, name: str, data: bytes, filename: str):
    """A form post with one file, its body made in memory.

    The test client would spool a body over 500 KB to a temporary file that it
    never closes (a ResourceWarning, an error in this suite, in whichever test
    runs when it is collected).
    """
    from werkzeug.datastructures import FileStorage
    from werkzeug.test import encode_multipart

    upload = FileStorage(stream=io.BytesIO(data), filename=filename, content_type="application/json")
    boundary, body = encode_multipart({**fields, name: upload})
    return client.post(url, data=body, content_type=f"multipart/form-data; boundary={boundary}")
