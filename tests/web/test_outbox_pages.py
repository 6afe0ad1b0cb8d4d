"""The outbox's server side: the vendored idb-keyval, the /outbox page in the app
shell, the token the phone fetches before sending, and the nav's count slot."""

from __future__ import annotations

import hashlib
import re
from pathlib import Path

import pytest

from tests.conftest import csrf_from
from tests.web.worker import read_worker

ROOT = Path(__file__).resolve().parents[2]
IDB_KEYVAL = ROOT / "webapp" / "static" / "vendor" / "idb-keyval-6.3.0.umd.js"
# sha256 of idb-keyval 6.3.0's dist/umd.js as published on the npm registry
# (npm pack idb-keyval@6.3.0, whose tarball integrity is
# sha512-um+2dgAWmYsu615EXpWVwSmapJhON0G43t3Ka/EVaohzPQXSMqKEqeDK/oIW3Ow+BXaF2PvSc+oBTFp793A5Ow==)
IDB_KEYVAL_SHA256 = "1d5aefa0c1cc78962ef116f11b7608dafeabf4950f71cb99fdab410422921d52"


def text(response) -> str:
    return response.get_data(as_text=True)


def test_vendored_idb_keyval_is_the_published_file():
    assert hashlib.sha256(IDB_KEYVAL.read_bytes()).hexdigest() == IDB_KEYVAL_SHA256
    assert (IDB_KEYVAL.parent / "idb-keyval-6.3.0.LICENCE.txt").read_text().startswith("Copyright 2016")


@pytest.mark.parametrize("path", ["/", "/film", "/outbox", "/snippets"])
def test_every_page_names_the_outbox_code_and_has_the_hidden_count(client, path):
    page = text(client.get(path))
    # Not loaded with the page (the first load's weight): js/inkfilm.js loads it when needed.
    assert "outbox.js" not in "".join(re.findall(r"<script [^>]*>", page))
    link_tag = r'<a class="outbox-link" id="outbox-link" href="/outbox" data-scripts="([^"]+)" hidden>(.*?)</a>'
    found = re.search(link_tag, page)
    scripts, link = found.group(1).split(" "), found.group(2)
    assert re.fullmatch(r"/static/vendor/idb-keyval-6\.3\.0\.umd\.js\?v=[0-9a-f]+", scripts[0])
    assert re.fullmatch(r"/static/js/outbox\.js\?v=[0-9a-f]+", scripts[1])
    for url in scripts:
        with client.get(url) as script:
            assert script.status_code == 200 and script.mimetype == "text/javascript"
    assert link == "waiting to be saved (<span data-outbox-count>0</span>)"
    assert '<div id="new-build" class="reach new-build" role="status" hidden>' in page


@pytest.mark.parametrize("path", ["/outbox", "/offline"])
def test_the_outbox_list_is_on_its_page_and_on_the_offline_page(client, path):
    page = text(client.get(path))
    assert "Waiting to be saved</h" in page
    assert "data-outbox-send" in page and "data-outbox-list" in page and '<template id="outbox-item">' in page
    assert "data-outbox-open" in page and "data-outbox-discard" in page
    # The same for everyone: no session token in it (fetched fresh from /outbox/token).
    assert "csrf_token" not in page
    if path == "/offline":
        assert '<section class="stack outbox-section" data-outbox-section hidden>' in page


def test_the_worker_keeps_the_outbox_page_once_opened(client):
    worker = read_worker(client)
    shell = worker.shell
    # The outbox page is kept once opened (the offline page lists the saves until then): not fetched at install.
    assert "/outbox" not in shell and "/offline" in shell
    # Its code is not fetched at install either (the first load's weight): the worker keeps it,
    # as every static file, once a page has loaded it.
    assert not any("outbox.js" in url or "idb-keyval" in url for url in shell)
    assert worker.has('url.pathname.startsWith("/static/")')
    assert "/outbox" in worker.pages and "/outbox/token" not in worker.pages
    # A new build takes over at once, its cache renamed.
    assert worker.has("self.skipWaiting()") and worker.has("self.clients.claim()")


def test_the_token_is_the_session_s_csrf_token_and_never_cached(client):
    response = client.get("/outbox/token")
    assert response.headers["Cache-Control"] == "no-store"
    token = response.get_json()["csrf_token"]
    assert token == csrf_from(client)
    assert len(token) >= 32


def test_the_outbox_script_sends_the_api_body_with_the_phone_s_id():
    # The stored item is the API request body: what an older build kept, a newer one sends as it is.
    script = (ROOT / "webapp" / "static" / "js" / "outbox.js").read_text()
    assert 'fetch("/api/v1/snippets"' in script and "JSON.stringify(item.body)" in script
    assert 'kv.createStore("inkfilm-outbox", "saves")' in script  # the same store in every build
    assert "innerHTML" not in script  # saved words are shown as text, never as markup


def test_the_save_button_is_marked_for_the_outbox(client):
    page = text(client.post("/film", data={"anilox_volume": "4", "anilox_unit": "BCM/in2"}))
    form = re.search(r'<form method="post" action="/snippets/new" class="save-snippet" data-outbox>', page)
    assert form
