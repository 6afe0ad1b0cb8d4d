"""Browser-only fixtures: contexts at phone and tablet sizes on the live
server, a record of every request a page makes, axe-core, screenshots."""

from __future__ import annotations

import socket
import threading
from pathlib import Path
from urllib.parse import urlsplit

import pytest

ROOT = Path(__file__).resolve().parents[2]
SCREENSHOTS = ROOT / "tests" / "screenshots"
AXE = ROOT / "tests" / "browser" / "node_modules" / "axe-core" / "axe.min.js"

PHONE = {"width": 390, "height": 844}
TABLET = {"width": 820, "height": 1180}
NARROW = {"width": 360, "height": 740}


@pytest.fixture(scope="session")
def axe_source() -> str:
    if not AXE.exists():
        pytest.fail(f"axe-core is missing at {AXE}: run `npm ci --prefix tests/browser`")
    return AXE.read_text(encoding="utf-8")


@pytest.fixture(scope="session")
def check_axe(axe_source):
    """``check_axe(page, label)``: run axe-core on the page in light and dark;
    fail on any serious or critical violation. The page's context must bypass
    the CSP, which (rightly) refuses axe's injected script otherwise."""

    def check(page, label: str) -> None:
        page.add_script_tag(content=axe_source)
        for scheme in ("light", "dark"):
            page.emulate_media(color_scheme=scheme)
            result = page.evaluate("async () => await axe.run(document, {resultTypes: ['violations']})")
            serious = [
                (v["id"], v["impact"], [n["target"] for n in v["nodes"]][:3])
                for v in result["violations"]
                if v["impact"] in ("serious", "critical")
            ]
            assert serious == [], f"{label} ({scheme})"

    return check


@pytest.fixture(scope="session")
def screenshots() -> Path:
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    return SCREENSHOTS


class Requests:
    """Every request the context made (pages, fragments, service worker)."""

    def __init__(self):
        self.urls: list[str] = []

    def hosts(self) -> set[str]:
        return {urlsplit(url).netloc for url in self.urls if urlsplit(url).scheme in ("http", "https", "ws", "wss")}


@pytest.fixture
def open_context(browser, live_server):
    """Make a browser context on the live server: ``open_context(viewport, **options)``.

    Service workers are blocked unless ``service_workers="allow"`` is passed, so
    that most tests see every request go to the server. Requests to any other
    host are recorded and refused.
    """
    contexts = []

    def make(viewport=PHONE, guard=True, base_url=None, **options):
        options.setdefault("service_workers", "block")
        base = base_url or live_server
        context = browser.new_context(
            viewport=viewport,
            base_url=base,
            device_scale_factor=1,
            has_touch=viewport["width"] < 700,
            is_mobile=viewport["width"] < 700,
            **options,
        )
        context.set_default_timeout(10_000)
        requests = Requests()
        context.on("request", lambda request: requests.urls.append(request.url))
        own = urlsplit(base).netloc

        def outside(route):
            route.abort()

        if guard:  # routing turns off the HTTP cache, so the page-weight test records only
            context.route(lambda url: urlsplit(url).netloc not in (own, ""), outside)
        context.requests = requests
        contexts.append(context)
        return context

    yield make
    for context in contexts:
        context.close()


class WireCounter:
    """A loopback TCP relay in front of the live server that counts the bytes
    the browser receives: what a page costs over the wire, service worker and
    all, whatever the browser's own accounting says."""

    def __init__(self, target: str):
        parts = urlsplit(target)
        self.target = (parts.hostname, parts.port)
        self.lock = threading.Lock()
        self.received = 0
        self.sockets: list[socket.socket] = []
        self.listener = socket.socket()
        self.listener.bind(("127.0.0.1", 0))
        self.listener.listen(64)
        self.base = f"http://127.0.0.1:{self.listener.getsockname()[1]}"
        self.running = True
        threading.Thread(target=self._accept, daemon=True).start()

    def reset(self) -> int:
        with self.lock:
            received, self.received = self.received, 0
        return received

    def _accept(self):
        while self.running:
            try:
                client, _ = self.listener.accept()
            except OSError:
                return
            upstream = socket.create_connection(self.target)
            with self.lock:
                self.sockets += [client, upstream]
            threading.Thread(target=self._pipe, args=(client, upstream, False), daemon=True).start()
            threading.Thread(target=self._pipe, args=(upstream, client, True), daemon=True).start()

    def _pipe(self, source, sink, count):
        try:
            while data := source.recv(65536):
                if count:
                    with self.lock:
                        self.received += len(data)
                sink.sendall(data)
        except OSError:
            pass
        finally:
            try:
                sink.shutdown(socket.SHUT_WR)
            except OSError:
                pass

    def close(self):
        self.running = False
        self.listener.close()
        with self.lock:
            for sock in self.sockets:
                sock.close()


@pytest.fixture
def wire(live_server):
    counter = WireCounter(live_server)
    yield counter
    counter.close()


_measured_this_run: list[str] = []


def record_measurement(line: str) -> None:
    """Print a measured figure and keep this run's figures in tests/screenshots/page-measurements.txt."""
    print(line)
    _measured_this_run.append(line)
    SCREENSHOTS.mkdir(parents=True, exist_ok=True)
    (SCREENSHOTS / "page-measurements.txt").write_text("\n".join(_measured_this_run) + "\n", encoding="utf-8")
