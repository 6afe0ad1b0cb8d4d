"""Static files compressed once and cached for long; the session cookie only when it changes.

Static files are answered by WhiteNoise in front of the Flask app
(``webapp.common.assets``) from a copy made once per build in the cache folder;
the session cookie is sent only when the session changes
(``SESSION_REFRESH_EACH_REQUEST=False``), and answers that do not read the
session do not say ``Vary: Cookie``.
"""

from __future__ import annotations

import gzip
import re

import brotli
import pytest

from tests.bodies import FILM
from tests.conftest import csrf_from
from webapp import create_app
from webapp.common import assets

CONVERT = {"quantity": "3.5 BCM/in2", "to": "cm3/m2"}
CONVERT_FORM = {"value": "4.5", "unit": "BCM/in2", "density": "", "density_unit": "g/cm3", "coverage": ""}
SHOP = "Shop-4711-passcode"


def versioned_addresses(client) -> list[str]:
    page = client.get("/").get_data(as_text=True)
    # every address, also each of a space-separated list (the outbox's data-scripts)
    return sorted(set(re.findall(r'(/static/[^"?\s]+\?v=[^"\s]+)', page)))


def holding_a_session(client) -> str:
    """A browser with the session cookie (a page with a save button hands out the CSRF token)."""
    response = client.get("/film")
    assert "inkfilm_session=" in response.headers.get("Set-Cookie", "")
    assert client.get_cookie("inkfilm_session") is not None
    return response.headers["Set-Cookie"]


def no_cookie_business(response) -> None:
    assert "Set-Cookie" not in response.headers
    assert "cookie" not in response.headers.get("Vary", "").lower()


# --- the session cookie ---------------------------------------------------------------------


def test_a_browser_holding_the_session_gets_no_cookie_on_static_files_and_api_answers(client):
    holding_a_session(client)
    for url in versioned_addresses(client) + ["/static/css/inkfilm.css", "/sw.js"]:
        with client.get(url) as response:
            assert response.status_code == 200, url
            no_cookie_business(response)
    for kind, body in (("convert", CONVERT), ("film", FILM)):
        with client.post(f"/api/v1/{kind}", json=body) as response:
            assert response.status_code == 200
            no_cookie_business(response)
    with client.post("/api/v1/film", json={}) as response:  # an error answer too
        assert response.status_code == 400
        no_cookie_business(response)
    with client.get("/api/v1/openapi.json") as response:
        no_cookie_business(response)


def test_pages_send_the_cookie_only_when_the_session_changes(tmp_path):
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data"), "SHOP_PASSCODE": SHOP})
    client = app.test_client()
    first = holding_a_session(client)
    # Pages and fragments that only read the session: no new cookie (but Vary: Cookie, they show its token).
    for _ in range(2):
        for response in (client.get("/film"), client.post("/", data=CONVERT_FORM, headers={"HX-Request": "true"})):
            assert response.status_code == 200
            assert "Set-Cookie" not in response.headers
            assert "Cookie" in response.headers["Vary"]
    # An unlock changes the session: a new cookie.
    response = client.post("/unlock", data={"csrf_token": csrf_from(client), "passcode": SHOP, "next": "/"})
    assert response.status_code == 303
    cookie = response.headers["Set-Cookie"]
    assert cookie.startswith("inkfilm_session=") and cookie != first
    # The next page shows the unlock's message once (taking it out of the session: a new cookie),
    # after that, reading the session changes nothing.
    assert "Unlocked" in client.get("/snippets").get_data(as_text=True)
    for _ in range(2):
        assert "Set-Cookie" not in client.get("/snippets").headers
    # Locking changes it again.
    response = client.post("/lock", data={"csrf_token": csrf_from(client)})
    assert response.status_code == 303 and "inkfilm_session=" in response.headers["Set-Cookie"]


def test_static_files_never_vary_on_the_cookie_with_or_without_one(client):
    with client.get("/static/css/inkfilm.css") as response:
        no_cookie_business(response)
        assert response.headers["Vary"] == "Accept-Encoding"


# --- compressed once, cached for long ---------------------------------------------------------


@pytest.mark.parametrize(
    ("accept", "encoding"),
    [
        ("gzip, deflate, br", "br"),
        ("br", "br"),
        ("gzip", "gzip"),
        ("gzip, deflate", "gzip"),
        ("", None),
        ("identity", None),
    ],
)
def test_text_files_come_precompressed_as_the_browser_accepts(client, accept, encoding):
    source = (assets.Path(client.application.static_folder) / "css" / "inkfilm.css").read_bytes()
    original = assets.minified(assets.Path("css/inkfilm.css"), source)
    with client.get("/static/css/inkfilm.css", headers={"Accept-Encoding": accept}) as response:
        assert response.status_code == 200
        assert response.headers.get("Content-Encoding") == encoding
        body = response.get_data()
        assert int(response.headers["Content-Length"]) == len(body)
        decoded = {"br": brotli.decompress, "gzip": gzip.decompress, None: lambda data: data}[encoding](body)
        assert decoded == original
        if encoding:
            assert len(body) < len(original) / 2


def test_our_css_and_js_are_sent_without_comments_and_spaces(client):
    static = assets.Path(client.application.static_folder)
    for name in ("css/inkfilm.css", "js/inkfilm.js"):
        with client.get(f"/static/{name}", headers={"Accept-Encoding": ""}) as response:
            body = response.get_data()
        source = (static / name).read_bytes()
        assert b"/*" not in body[:2] and len(body) < len(source) * 0.85, name


def test_vendored_files_are_sent_byte_for_byte_as_published(client):
    # Their checksums are tested against the published files (test_pages.py, test_outbox_pages.py).
    static = assets.Path(client.application.static_folder)
    for name in ("vendor/htmx-2.0.11.min.js", "vendor/idb-keyval-6.3.0.umd.js"):
        for accept, decode in (("", lambda data: data), ("br", brotli.decompress), ("gzip", gzip.decompress)):
            with client.get(f"/static/{name}", headers={"Accept-Encoding": accept}) as response:
                assert decode(response.get_data()) == (static / name).read_bytes(), (name, accept)


def test_images_are_sent_as_they_are(client):
    with client.get("/static/icons/inkfilm-192.png", headers={"Accept-Encoding": "gzip, br"}) as response:
        assert response.status_code == 200 and "Content-Encoding" not in response.headers
        assert response.get_data().startswith(b"\x89PNG")


def test_versioned_addresses_are_immutable_and_others_are_checked_again(client):
    addresses = versioned_addresses(client)
    assert len(addresses) >= 3
    for url in addresses:
        with client.get(url) as response:
            assert response.status_code == 200, url
            control = response.headers["Cache-Control"]
            assert "immutable" in control and "max-age=31536000" in control, url
        # Never asked again (immutable): no validators to ask with.
        assert "ETag" not in response.headers and "Last-Modified" not in response.headers, url
    with client.get("/static/css/inkfilm.css?v=an-older-build") as response:
        assert response.headers["Cache-Control"] == "no-cache"
    with client.get("/static/css/inkfilm.css") as response:
        assert response.headers["Cache-Control"] == "no-cache"
        etag = response.headers.get("ETag")
        modified = response.headers.get("Last-Modified")
    assert etag or modified
    check = {"If-None-Match": etag} if etag else {"If-Modified-Since": modified}
    with client.get("/static/css/inkfilm.css", headers=check) as response:
        assert response.status_code == 304


def test_a_missing_static_file_is_a_plain_404(client):
    with client.get("/static/css/no-such-file.css") as response:
        assert response.status_code == 404
    with client.get("/static/.complete") as response:  # the cache folder's marker is no static file
        assert response.status_code == 404


# --- the cache folder ---------------------------------------------------------------------------


def test_a_fresh_cache_folder_is_filled_once_per_build(tmp_path, monkeypatch):
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path / "cache"))
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data")})
    [folder] = (tmp_path / "cache" / "static").iterdir()
    assert (folder / ".complete").is_file()
    assert (folder / "css" / "inkfilm.css.br").is_file() and (folder / "css" / "inkfilm.css.gz").is_file()
    assert not list(folder.rglob("*.png.gz"))
    with app.test_client().get("/static/css/inkfilm.css", headers={"Accept-Encoding": "br"}) as response:
        assert response.headers["Content-Encoding"] == "br"

    # A second app of the same build takes the folder as it is.
    def not_again(*_):
        raise AssertionError("compressed again")

    monkeypatch.setattr(assets, "_compress_into", not_again)
    create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data2")})
    assert list((tmp_path / "cache" / "static").iterdir()) == [folder]


def test_a_half_made_folder_is_made_again(tmp_path, monkeypatch):
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(tmp_path / "cache"))
    version = assets._build_version(str(assets.Path(assets.__file__).parents[1]))
    half = tmp_path / "cache" / "static" / version
    (half / "css").mkdir(parents=True)
    (half / "css" / "inkfilm.css").write_text("broken")  # no .complete: a server stopped halfway
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data")})
    with app.test_client().get("/static/css/inkfilm.css", headers={"Accept-Encoding": ""}) as response:
        source = (assets.Path(app.static_folder) / "css" / "inkfilm.css").read_bytes()
        assert response.get_data() == assets.minified(assets.Path("css/inkfilm.css"), source)


def test_without_a_cache_folder_static_files_are_still_served_compressed(tmp_path, monkeypatch):
    blocker = tmp_path / "a-file"
    blocker.write_text("in the way")
    monkeypatch.setenv("INKFILM_CACHE_DIR", str(blocker / "below"))  # cannot be made
    app = create_app({"TESTING": True, "DATA_DIR": str(tmp_path / "data")})
    with app.test_client().get("/static/css/inkfilm.css", headers={"Accept-Encoding": "gzip"}) as response:
        assert response.status_code == 200 and response.headers["Content-Encoding"] == "gzip"


# --- pages --------------------------------------------------------------------------------------


def test_a_page_comes_in_brotli_with_an_etag_of_its_own(client):
    accept = {"Accept-Encoding": "gzip, deflate, br, zstd"}
    with client.get("/", headers={"Accept-Encoding": ""}) as plain:
        page = plain.get_data()
        plain_etag = plain.headers["ETag"]
    with client.get("/", headers=accept) as response:
        assert response.headers["Content-Encoding"] == "br"
        assert brotli.decompress(response.get_data()) == page
        assert "Accept-Encoding" in response.headers["Vary"] and "HX-Request" in response.headers["Vary"]
        etag = response.headers["ETag"]
    assert etag != plain_etag  # a cache never takes one encoding for the other
    with client.get("/", headers={**accept, "If-None-Match": etag}) as again:
        assert again.status_code == 304 and not again.get_data()
    with client.get("/", headers={"Accept-Encoding": "gzip"}) as response:  # no brotli: as before
        assert response.headers["Content-Encoding"] == "gzip"


def test_fragments_stay_with_the_quicker_compressor(client):
    # htmx answers come at each keystroke: compressed per request by Flask-Compress (zstd first).
    headers = {"HX-Request": "true", "Accept-Encoding": "gzip, deflate, br, zstd"}
    with client.post("/", data=CONVERT_FORM, headers=headers) as response:
        assert response.status_code == 200
        assert response.headers.get("Content-Encoding") in {None, "zstd"}


def test_a_page_asked_for_again_comes_at_brotli_s_best_and_is_kept(client):
    accept = {"Accept-Encoding": "br"}
    with client.get("/offline", headers={"Accept-Encoding": ""}) as plain:
        page = plain.get_data()
    bodies = []
    for _ in range(3):
        with client.get("/offline", headers=accept) as response:
            bodies.append(response.get_data())
    assert all(brotli.decompress(body) == page for body in bodies)
    assert len(bodies[1]) < len(bodies[0]) and bodies[2] == bodies[1]


def test_the_kept_pages_stay_few():
    kept = assets._KeptPages(2)
    pages = [f"<p>page {n}</p>".encode() * 50 for n in range(4)]
    for page in pages:
        for _ in range(2):  # seen, then kept
            assert brotli.decompress(kept(page)) == page
    assert list(kept.kept.values()) == [kept(pages[2]), kept(pages[3])]  # the newest two
    assert len(kept.seen) <= 2
