"""A phone on the shop network, by name, over HTTPS: the service worker and installation work.

Chromium maps ``inkfilm.test`` to loopback (``--host-resolver-rules``), so the
page is not on localhost and only a real secure context lets the service
worker in. The shop root is trusted in an NSS database in the test's own HOME
(as a phone trusts it after the set-up page); certificate errors are not
ignored.
"""

from __future__ import annotations

import os
import shutil
import subprocess

import pytest
from playwright.sync_api import expect

from tests.browser.conftest import PHONE
from tests.conftest import CHROMIUM
from tests.system.test_https_serve import NAME, caddy_processes, start_https
from webapp.https.front import fingerprint

pytestmark = pytest.mark.browser


def trust_root(home, root) -> None:
    certutil = shutil.which("certutil")
    if certutil is None:
        pytest.fail("certutil is missing: apt-get install -y libnss3-tools")
    nssdb = home / ".pki" / "nssdb"
    nssdb.mkdir(parents=True, exist_ok=True)
    subprocess.run([certutil, "-d", f"sql:{nssdb}", "-N", "--empty-password"], check=True)
    subprocess.run(
        [certutil, "-d", f"sql:{nssdb}", "-A", "-t", "C,,", "-n", "inkfilm-shop", "-i", str(root)], check=True
    )


def test_a_phone_by_name_gets_the_service_worker_installs_and_opens_offline(browser_type, tmp_path, screenshots):
    server = start_https(tmp_path / "server")
    context = None
    try:
        home = tmp_path / "phone-home"
        trust_root(home, server.root)
        # A persistent (not incognito) profile, as on a phone: installability is judged in full.
        context = browser_type.launch_persistent_context(
            str(home / "profile"),
            executable_path=CHROMIUM,
            args=[
                "--no-sandbox",
                "--disable-gpu",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--no-first-run",
                f"--host-resolver-rules=MAP {NAME} 127.0.0.1",
            ],
            env={**os.environ, "HOME": str(home)},
            viewport=PHONE,
            is_mobile=True,
            has_touch=True,
            service_workers="allow",
        )
        context.set_default_timeout(15_000)
        page = context.pages[0] if context.pages else context.new_page()
        app = f"https://{NAME}:{server.https_port}/"

        # Plain HTTP by name: the set-up page, not the app.
        page.goto(f"http://{NAME}:{server.http_port}/")
        assert page.url == f"http://{NAME}:{server.http_port}/setup"
        expect(page.get_by_role("heading", name="Set up a phone for inkfilm")).to_be_visible()
        assert page.evaluate("() => window.isSecureContext") is False
        link = page.get_by_role("link", name="Download the shop root")
        href = link.get_attribute("href")
        assert href.endswith(".crt")
        # What the phone's browser downloads from that link (fetched by the page itself, through its resolver).
        kind, pem = page.evaluate(
            "async (href) => { const r = await fetch(href); return [r.headers.get('content-type'), await r.text()]; }",
            href,
        )
        assert kind == "application/x-x509-ca-cert"
        assert pem == server.root.read_text(encoding="ascii")
        expect(page.locator("#root-fingerprint")).to_have_text(fingerprint(pem))
        page.screenshot(path=str(screenshots / "phone-setup-http.png"), full_page=True)

        # HTTPS by name: a secure context, the worker takes control, the manifest is installable.
        page.goto(app)
        assert page.evaluate("() => window.isSecureContext") is True
        page.wait_for_function("() => navigator.serviceWorker && navigator.serviceWorker.ready.then(() => true)")
        page.reload()
        page.wait_for_function("() => navigator.serviceWorker.controller !== null")
        page.wait_for_function(
            """async () => {
                const names = await caches.keys();
                if (!names.length) return false;
                return (await (await caches.open(names[0])).keys()).length >= 10;
            }"""
        )
        cdp = context.new_cdp_session(page)
        errors = cdp.send("Page.getInstallabilityErrors")["installabilityErrors"]
        assert all(error["errorId"] != "not-from-secure-origin" for error in errors), errors
        assert errors == [], errors  # installable
        page.screenshot(path=str(screenshots / "phone-app-https.png"), full_page=True)

        # Out of reach at this name over HTTPS: the answer is worked out on the phone, a save waits
        # in the outbox and is sent once when the network is back.
        page.get_by_label("Value").fill("7")  # an answer from the server, with a save button
        expect(page.locator('[data-group="film_thickness"]')).to_contain_text("7")
        page.wait_for_function("() => window.inkfilmOutboxReady === true")
        context.set_offline(True)
        page.get_by_label("Value").fill("4.5 BCM/in2")
        expect(page.locator(".offline-note")).to_be_visible()
        expect(page.locator('[data-group="volume_per_area"]')).to_contain_text("6.98")
        page.get_by_role("button", name="Save this…").click()
        expect(page.locator("#outbox-link")).to_have_text("waiting to be saved (1)")
        page.screenshot(path=str(screenshots / "phone-https-offline-save.png"), full_page=True)
        context.set_offline(False)
        expect(page.locator("#outbox-link")).to_be_hidden(timeout=20_000)
        kept = page.evaluate("async () => (await (await fetch('/api/v1/snippets')).json()).snippets")
        assert [(s["kind"], s["inputs"]["quantity"]) for s in kept] == [("equivalents", "4.5 BCM/in2")]

        # The server goes away; the app shell still opens.
        assert server.stop() == 0
        assert caddy_processes(server.data_dir) == []
        page.reload()
        expect(page.get_by_role("heading", name="Convert a value")).to_be_visible()
        page.get_by_label("Value").fill("4.5")
        expect(page.locator("#reach")).to_be_visible()
        page.screenshot(path=str(screenshots / "phone-app-https-offline.png"), full_page=True)
    finally:
        if context is not None:
            context.close()
        if server.process.poll() is None:
            server.stop()
