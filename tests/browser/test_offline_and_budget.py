"""The installable app: service worker and offline state, page weight over
the wire, and the time from the last keystroke to the updated result."""

from __future__ import annotations

import statistics

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE, record_measurement

pytestmark = pytest.mark.browser

# Bytes over the wire, headers included, for the first load of the converter page with the
# worker installing: measured 47,520 (issue 16; 56,970 before), the rest a margin for small changes.
BUDGET = 50 * 1024


def wait_for_worker(page):
    """Until the service worker controls the page and has cached the app shell."""
    page.wait_for_function("() => navigator.serviceWorker.controller !== null")
    page.wait_for_function(
        """async () => {
            const names = await caches.keys();
            if (!names.length) return false;
            const cache = await caches.open(names[0]);
            return (await cache.keys()).length >= 10;
        }"""
    )


def test_the_app_opens_offline_and_says_the_server_is_out_of_reach(open_context, screenshots):
    context = open_context(PHONE, service_workers="allow")
    page = context.new_page()
    page.goto("/")
    wait_for_worker(page)
    expect(page.locator("#reach")).to_be_hidden()
    context.set_offline(True)
    page.reload()
    expect(page.get_by_role("heading", name="Convert a value")).to_be_visible()
    expect(page.locator("#reach")).to_be_visible()
    expect(page.locator("#reach")).to_contain_text("out of reach")
    page.get_by_label("Value").fill("4.5")  # a calculation that cannot reach the server: worked out on the phone
    expect(page.locator(".offline-note")).to_be_visible()
    expect(page.locator("#reach")).to_contain_text("worked out on this phone")
    page.screenshot(path=str(screenshots / "offline-converters-phone.png"), full_page=True)
    page.goto("/film")  # every page of the shell opens
    expect(page.get_by_role("heading", name="Film chain")).to_be_visible()
    page.goto("/snippets")  # live data is never served from the cache
    expect(page.get_by_role("heading", name="The inkfilm server is out of reach")).to_be_visible()
    context.set_offline(False)
    page.goto("/")
    page.get_by_label("Value").fill("4.5")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("6.98")
    expect(page.locator("#reach")).to_be_hidden()


def test_page_weight_first_and_repeat_load(open_context, wire):
    context = open_context(PHONE, service_workers="allow", guard=False, base_url=wire.base)
    # Someone who chose imperial: the remembered choice must not cost a fetch on each load.
    context.add_cookies([{"name": "inkfilm_units", "value": "imperial", "url": wire.base}])
    page = context.new_page()
    wire.reset()
    page.goto("/")
    wait_for_worker(page)
    page.wait_for_load_state("networkidle")
    first = wire.reset()
    record_measurement(f"first load of / (page, service worker and its app-shell cache): {first} bytes over the wire")
    assert first <= BUDGET

    over_the_wire = []

    def finished(request):
        response = request.response()
        if response is not None and not response.from_service_worker:
            over_the_wire.append((request.method, request.url, request.headers.get("hx-request")))

    context.on("requestfinished", finished)
    page.reload()
    expect(page.get_by_role("heading", name="Convert a value")).to_be_visible()
    page.wait_for_load_state("networkidle")
    page.get_by_label("Value").fill("4.5")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("0.275 mil")
    page.wait_for_load_state("networkidle")
    page.wait_for_timeout(300)  # time for any fetch the service worker might start
    repeat = wire.reset()
    record_measurement(f"repeat load of / and one calculation: {repeat} bytes over the wire; requests {over_the_wire}")
    # Two small fragments and, once, the outbox's code (not part of the first load: fetched when
    # the server has answered with a save button, so that a save made offline later can wait).
    gets = sorted(url.split("?")[0].rsplit("/", 1)[1] for method, url, _ in over_the_wire if method == "GET")
    assert gets in ([], ["idb-keyval-6.3.0.umd.js", "outbox.js"])
    assert repeat < (8 + 5) * 1024
    assert over_the_wire, "the calculation went to the server"
    assert all(method == "POST" and hx == "true" for method, _, hx in over_the_wire if method != "GET")

    over_the_wire.clear()
    page.get_by_label("Value").fill("5")
    expect(page.locator('[data-group="film_thickness"]')).to_contain_text("0.305 mil")
    page.wait_for_load_state("networkidle")
    page.wait_for_timeout(300)
    again = wire.reset()
    record_measurement(f"one more calculation: {again} bytes over the wire; requests {over_the_wire}")
    assert again < 8 * 1024  # fragments, nothing else
    assert over_the_wire and all(method == "POST" and hx == "true" for method, _, hx in over_the_wire)


def test_time_from_last_keystroke_to_result(open_context):
    page = open_context(PHONE).new_page()
    page.goto("/")
    page.evaluate(
        """() => {
            window.swaps = [];
            document.getElementById('value').addEventListener('keydown', () => { window.lastKey = performance.now(); });
            document.body.addEventListener('htmx:afterSwap', (event) => {
                if (event.detail.target.id !== 'converter-result') return;
                window.swaps.push(performance.now() - window.lastKey);
            });
        }"""
    )
    field = page.get_by_label("Value")
    timings = []
    for trial in range(7):
        field.click()
        field.press("Control+A")
        before = page.evaluate("() => window.swaps.length")
        field.press_sequentially(f"{trial + 2}.{trial}5", delay=25)
        page.wait_for_function("(before) => window.swaps.length > before", arg=before)
        expect(page.locator('[data-group="volume_per_area"] li').nth(1)).to_contain_text(f"{trial + 2}.{trial}5")
        timings.append(page.evaluate("() => window.swaps[window.swaps.length - 1]"))
    median = statistics.median(timings)
    record_measurement(
        "last keystroke to updated result (90 ms debounce included), loopback: "
        f"median {median:.0f} ms, max {max(timings):.0f} ms over {len(timings)} tries"
    )
    # The 150 ms target is a speed figure, recorded above and read from the measurements file;
    # this bound only catches a result that no longer follows typing (a lost debounce, a stall).
    assert median < 1000
