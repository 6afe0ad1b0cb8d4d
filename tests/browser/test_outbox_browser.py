"""The outbox on a phone (390 px, service worker on): saves made with the server
out of reach wait on the phone, are sent when it answers, and arrive exactly
once; a save the server refuses (passcode) waits with the reason shown.

Each test has a server of its own, so that the snippets on it are exactly the
ones the test saved."""

from __future__ import annotations

import contextlib
import json
import shutil
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest
from playwright.sync_api import Error as PlaywrightError
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from tests.browser.test_offline_and_budget import wait_for_worker
from tests.conftest import ROOT, free_port, serving, stop, wait_for

pytestmark = pytest.mark.browser

SHOP = "Press-floor-2741"


def snippets_on(base: str) -> list[dict]:
    with urllib.request.urlopen(f"{base}/api/v1/snippets?limit=500", timeout=5) as response:
        return json.load(response)["snippets"]


def wait_for_snippets(base: str, count: int, seconds: float = 15.0) -> None:
    """Until the server lists ``count`` snippets (the last answer may still be on its way to the page)."""
    deadline = time.monotonic() + seconds
    while len(snippets_on(base)) < count and time.monotonic() < deadline:
        time.sleep(0.2)


def result_on_screen(page, path: str, field: str, value: str, shown: str):
    """Open ``path``, type ``value`` into ``field`` and wait for the server's answer ``shown``."""
    page.goto(path)
    page.get_by_label(field, exact=True).fill(value)
    expect(page.locator(".result").first).to_contain_text(shown)
    expect(page.get_by_role("button", name="Save this…")).to_be_visible()


def test_two_saves_made_offline_arrive_once_each_when_the_server_answers(open_context, tmp_path, screenshots):
    with serving(tmp_path / "data") as (_process, base):
        context = open_context(PHONE, service_workers="allow", base_url=base)
        convert = context.new_page()
        convert.goto("/")
        wait_for_worker(convert)
        # First load online: the answers come from the server.
        result_on_screen(convert, "/", "Value", "4.5 BCM/in2", "6.98")
        film = context.new_page()
        # 4 BCM/in² = 6.2000 µm (NIST SP 811: 1 in = 25.4 mm) × 50 % × 50 % = 1.55 µm on the substrate
        result_on_screen(film, "/film", "Anilox volume", "4", "1.55")

        context.set_offline(True)
        film.get_by_role("button", name="Save this…").click()
        expect(film.locator(".outbox-note")).to_contain_text("waits on this phone")
        expect(film.locator("#outbox-link")).to_have_text("waiting to be saved (1)")
        convert.get_by_role("button", name="Save this…").click()
        expect(convert.locator("#outbox-link")).to_have_text("waiting to be saved (2)")
        convert.screenshot(path=str(screenshots / "outbox-saved-offline-phone.png"), full_page=True)
        assert snippets_on(base) == []  # nothing reached the server

        # The outbox opens without the server (never opened here: the offline page lists the saves).
        film.goto("/outbox")
        expect(film.get_by_role("heading", name="Waiting to be saved")).to_be_visible()
        expect(film.locator(".outbox-item")).to_have_count(2)
        expect(film.locator(".outbox-item").first).to_contain_text("waiting for the server")
        film.screenshot(path=str(screenshots / "outbox-page-offline-phone.png"), full_page=True)

        # Back online: sent by themselves (the "online" event), each kept once.
        context.set_offline(False)
        expect(film.locator(".outbox-item")).to_have_count(0, timeout=15_000)
        expect(film.locator("#outbox-link")).to_be_hidden()
        film.goto("/outbox")  # the outbox page itself, now that the server answers
        expect(film.get_by_role("heading", name="Waiting to be saved", exact=True)).to_be_visible()
        expect(film.locator("[data-outbox-empty]")).to_be_visible()
        film.screenshot(path=str(screenshots / "outbox-page-sent-phone.png"), full_page=True)
        saved = snippets_on(base)
        assert sorted(s["kind"] for s in saved) == ["equivalents", "film"]
        by_kind = {s["kind"]: s for s in saved}
        assert by_kind["equivalents"]["inputs"]["quantity"] == "4.5 BCM/in2"
        assert by_kind["film"]["inputs"]["anilox_volume"] == "4.0 BCM/in2"
        assert by_kind["film"]["title"].startswith("Film chain")

        # Sent again (a reload, the other page coming back): still once each.
        convert.reload()
        convert.get_by_label("Value").fill("7")
        expect(convert.locator("#outbox-link")).to_be_hidden()
        film.get_by_role("button", name="Send now").click()
        expect(film.locator("[data-outbox-status]")).to_be_visible()
        assert len(snippets_on(base)) == 2


def test_a_save_that_needs_the_passcode_waits_with_the_reason_and_can_be_opened_or_discarded(
    open_context, tmp_path, screenshots
):
    with serving(tmp_path / "data", env={"INKFILM_SHOP_PASSCODE": SHOP}) as (_process, base):
        context = open_context(PHONE, service_workers="allow", base_url=base)
        page = context.new_page()
        page.goto("/film")
        wait_for_worker(page)
        result_on_screen(page, "/film", "Anilox volume", "4", "1.55")
        context.set_offline(True)
        save = page.get_by_role("button", name="Save this…")
        save.click()
        expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (1)")
        save.click()  # a second save, to be discarded
        expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (2)")

        context.set_offline(False)
        # Sent, refused: both stay, the nav says something needs this person.
        expect(page.locator("#outbox-link")).to_have_class("outbox-link outbox-refused", timeout=15_000)
        expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (2)")
        page.locator("#outbox-link").click()
        items = page.locator(".outbox-item")
        expect(items).to_have_count(2)
        expect(items.first.locator(".form-error")).to_contain_text("needs the shop passcode")
        page.screenshot(path=str(screenshots / "outbox-refused-passcode-phone.png"), full_page=True)
        assert snippets_on(base) == []

        # Discard one (asked first).
        page.once("dialog", lambda dialog: dialog.accept())
        items.nth(1).get_by_role("button", name="Discard").click()
        expect(items).to_have_count(1)

        # Open the other: the save form, with the passcode field; saved there, it leaves the outbox.
        items.first.get_by_role("button", name="Open").click()
        expect(page.get_by_role("heading", name="Save this film chain")).to_be_visible()
        page.get_by_label("Shop passcode").fill(SHOP)
        page.get_by_role("button", name="Save", exact=True).click()
        expect(page.get_by_text("Saved. Anyone on the shop network")).to_be_visible()
        expect(page.locator("#outbox-link")).to_be_hidden(timeout=15_000)
        page.screenshot(path=str(screenshots / "outbox-opened-and-saved-phone.png"), full_page=True)
        saved = snippets_on(base)
        assert len(saved) == 1 and saved[0]["kind"] == "film"


# --- a new build -----------------------------------------------------------------------------------------


def build(tmp_path, name: str, mark: str | None = None) -> Path:
    """A copy of the app as a build of its own; ``mark`` changes a template, so the build's version differs."""
    folder = tmp_path / name
    for package in ("webapp", "calc"):
        shutil.copytree(ROOT / package, folder / package, ignore=shutil.ignore_patterns("__pycache__"))
    if mark:
        offline = folder / "webapp" / "templates" / "offline.html"
        offline.write_text(offline.read_text(encoding="utf-8") + f"{{# {mark} #}}\n", encoding="utf-8")
    return folder


@contextlib.contextmanager
def serve_build(folder: Path, data: Path, port: int):
    """``inkfilm serve`` from ``folder`` (its own copy of the code) on ``port``."""
    command = [sys.executable, "-m", "webapp.cli", "serve", "--no-https", "--host", "127.0.0.1", "--port", str(port)]
    process = subprocess.Popen(
        [*command, "--data-dir", str(data)], cwd=folder, stdout=subprocess.DEVNULL, stderr=subprocess.STDOUT
    )
    try:
        wait_for(f"http://127.0.0.1:{port}/healthz")
        yield
    finally:
        stop(process)


OUTBOX_EMPTY = """async () => {
    if (!window.idbKeyval) return false;  // loaded by js/inkfilm.js when saves wait
    const kept = await idbKeyval.values(idbKeyval.createStore("inkfilm-outbox", "saves"));
    return kept.length === 0;
}"""


def wait_for_empty_outbox(page, seconds: float = 15.0) -> None:
    """Until the phone's outbox is empty (its items leave it only once the server acknowledged them).

    Polled from here: ``wait_for_function`` does not wait for an async predicate (its Promise counts
    as true at once), and a test asleep in Python holds every request of the page, since conftest's
    route decides in this process; each ``wait_for_timeout`` lets those requests go on.
    """
    deadline = time.monotonic() + seconds
    while True:
        try:
            if page.evaluate(OUTBOX_EMPTY):
                return
        except PlaywrightError:  # the page was navigating
            pass
        assert time.monotonic() < deadline, "the save is still waiting in the outbox"
        page.wait_for_timeout(200)


def build_of(page) -> str:
    return page.evaluate("() => new URL(document.querySelector('link[rel=stylesheet]').href).searchParams.get('v')")


def test_a_new_build_is_taken_up_and_sends_what_the_old_one_kept(open_context, tmp_path, screenshots):
    old, new = build(tmp_path, "old"), build(tmp_path, "new", mark="the next build")
    data, port = tmp_path / "data", free_port()
    base = f"http://127.0.0.1:{port}"
    context = open_context(PHONE, service_workers="allow", base_url=base)
    page = context.new_page()
    with serve_build(old, data, port):
        page.goto("/film")
        wait_for_worker(page)
        result_on_screen(page, "/film", "Anilox volume", "4", "1.55")
        old_build = build_of(page)
    # The server is stopped (out of reach for real): the save waits, made by the old build.
    page.get_by_role("button", name="Save this…").click()
    expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (1)")

    with serve_build(new, data, port):
        # Hold the saves back for a moment, so that the new build is the one that sends them.
        context.route("**/api/v1/snippets", lambda route: route.abort())
        page.reload()
        assert build_of(page) == old_build  # drawn from the old build's cache, once more
        note = page.locator("#new-build")
        expect(note).to_be_visible(timeout=15_000)  # the new build's worker took over
        expect(note).to_contain_text("A new version of inkfilm is here")
        page.screenshot(path=str(screenshots / "outbox-new-build-phone.png"))
        assert snippets_on(base) == []
        context.unroute("**/api/v1/snippets")
        note.get_by_role("button", name="Reload to use it").click()
        wait_for_empty_outbox(page)
        expect(page.locator("#outbox-link")).to_be_hidden()
        assert build_of(page) != old_build
        expect(page.locator("#new-build")).to_be_hidden()
        wait_for_snippets(base, 1)
        saved = snippets_on(base)
        assert len(saved) == 1 and saved[0]["inputs"]["anilox_volume"] == "4.0 BCM/in2"
