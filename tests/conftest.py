"""Shared fixtures: an app on a temporary data folder, its test client, and a
live waitress server for browser tests and benchmarks."""

from __future__ import annotations

import os
import socket
import subprocess
import sys
import threading
import time
import urllib.request
from pathlib import Path

import pytest

from webapp import create_app

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = os.environ.get("INKFILM_CHROMIUM", "/usr/bin/chromium")
SCREENSHOTS = ROOT / "tests" / "screenshots"


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


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    """A real waitress server, as the README starts it, for browser tests."""
    process, base = start_server(tmp_path_factory.mktemp("live-data"))
    reader = drain(process)
    yield base
    process.terminate()
    process.wait(timeout=10)
    reader.join(timeout=5)
    process.stdout.close()


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
