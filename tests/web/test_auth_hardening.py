"""Hardening of who may write: guessing the supervisor passcode, the cost of a right
passcode, revoking unlocked sessions, and redirects that stay on this server."""

from __future__ import annotations

import ast
import contextlib
import json
import re
import sqlite3
import threading
import urllib.parse
from pathlib import Path

import pytest

from tests.bodies import FILM
from tests.conftest import ROOT
from webapp import create_app
from webapp.auth import passcodes as auth
from webapp.common import db

URL = "/api/v1/snippets"
SHOP = "Shop-4711-passcode"
SUPERVISOR = "Boss-9090-passcode"
SHOP_HEADER = {"X-Inkfilm-Passcode": SHOP}
BOSS_HEADER = {"X-Inkfilm-Passcode": SUPERVISOR}


def make_app(tmp_path, **config):
    return create_app(
        {
            "TESTING": True,
            "DATA_DIR": str(tmp_path / "data"),
            "SHOP_PASSCODE": SHOP,
            "SUPERVISOR_PASSCODE": SUPERVISOR,
            **config,
        }
    )


@pytest.fixture
def locked_app(tmp_path):
    return make_app(tmp_path)


@pytest.fixture
def locked(locked_app):
    return locked_app.test_client()


def body(title="Station 3"):
    return {"kind": "film", "inputs": FILM, "title": title}


def token(client) -> str:
    page = client.get("/snippets/import").get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def unlock(client, passcode, **kwargs):
    response = client.post(
        "/unlock", data={"csrf_token": token(client), "passcode": passcode, "next": "/snippets"}, **kwargs
    )
    assert response.status_code == 303, response.get_data(as_text=True)
    return response


def from_address(address: str) -> dict:
    return {"environ_base": {"REMOTE_ADDR": address}}


def saved(client) -> int:
    return client.post(URL, json=body(), headers=SHOP_HEADER).get_json()["id"]


# --- 1. guessing the supervisor passcode --------------------------------------------------------


def test_a_right_shop_passcode_does_not_clear_wrong_supervisor_guesses(locked):
    """Before: any right passcode cleared the address, so a shop user could guess supervisor forever."""
    url = f"{URL}/{saved(locked)}"
    for _ in range(4):
        assert locked.delete(url, headers={"X-Inkfilm-Passcode": "guess"}).status_code == 403
    # The shop passcode still saves from this address: shop was never guessed at here.
    assert locked.post(URL, json=body(), headers=SHOP_HEADER).status_code == 201
    # ... and it cleared nothing: the supervisor role is still locked for this address.
    refused = locked.delete(url, headers=BOSS_HEADER)
    assert refused.status_code == 429
    assert int(refused.headers["Retry-After"]) >= 1


def test_the_wait_for_an_address_still_doubles(locked_app, locked):
    now = [1000.0]
    locked_app.extensions["inkfilm_throttle"].clock = lambda: now[0]
    url = f"{URL}/{saved(locked)}"
    statuses = [locked.delete(url, headers={"X-Inkfilm-Passcode": f"guess{n}"}).status_code for n in range(4)]
    assert statuses == [403, 403, 403, 403]
    assert locked.delete(url, headers=BOSS_HEADER).headers["Retry-After"] == "1"
    now[0] += 1
    assert locked.delete(url, headers={"X-Inkfilm-Passcode": "guess"}).status_code == 403
    assert locked.delete(url, headers=BOSS_HEADER).headers["Retry-After"] == "2"
    now[0] += 2
    assert locked.delete(url, headers=BOSS_HEADER).status_code == 200


def test_rotating_addresses_meets_a_ceiling_per_role(tmp_path):
    """Before: the lockout was per address only, so each new address had its free tries."""
    app = make_app(tmp_path, PASSCODE_ROLE_CEILING=5)
    client = app.test_client()
    url = f"{URL}/{saved(client)}"
    for n in range(5):
        response = client.delete(url, headers={"X-Inkfilm-Passcode": f"guess{n}"}, **from_address(f"10.1.0.{n}"))
        assert response.status_code == 403
    refused = client.delete(url, headers=BOSS_HEADER, **from_address("10.1.0.99"))
    assert refused.status_code == 429
    assert int(refused.headers["Retry-After"]) >= 60
    assert "supervisor passcode" in refused.get_json()["error"]["message"]
    # The shop role was not guessed at: the floor goes on saving from anywhere.
    assert client.post(URL, json=body(), headers=SHOP_HEADER, **from_address("10.1.0.98")).status_code == 201


def test_a_wrong_passcode_on_the_settings_page_counts_against_both_roles(tmp_path):
    app = make_app(tmp_path, PASSCODE_ROLE_CEILING=3)
    client = app.test_client()
    csrf = token(client)
    for n in range(3):
        response = client.post(
            "/unlock", data={"csrf_token": csrf, "passcode": f"guess{n}"}, **from_address(f"10.2.0.{n}")
        )
        assert response.status_code == 403
    assert client.post(URL, json=body(), headers=SHOP_HEADER, **from_address("10.2.0.50")).status_code == 429
    created = client.post(URL, json=body(), headers=BOSS_HEADER, **from_address("10.2.0.51"))
    assert created.status_code == 429


def test_a_wrong_passcode_on_a_write_counts_against_every_role_that_opens_it(tmp_path):
    # A write opens with either passcode: a wrong one may have been a supervisor guess.
    app = make_app(tmp_path, PASSCODE_ROLE_CEILING=3)
    client = app.test_client()
    url = f"{URL}/{saved(client)}"
    for n in range(3):
        response = client.post(URL, json=body(), headers={"X-Inkfilm-Passcode": f"g{n}"}, **from_address(f"10.3.0.{n}"))
        assert response.status_code == 403
    assert client.delete(url, headers=BOSS_HEADER, **from_address("10.3.0.60")).status_code == 429


def test_the_ceiling_waits_grow_exponentially_then_the_hour_forgets():
    now = [0.0]
    ceiling = auth.RoleCeiling(ceiling=30, window=3600, first_wait=60, max_wait=3600, clock=lambda: now[0])
    for _ in range(30):
        assert ceiling.wait("supervisor") == 0
        ceiling.failed("supervisor")
        now[0] += 1
    assert ceiling.wait("shop") == 0
    waits = []
    for _ in range(4):
        wait = ceiling.wait("supervisor")
        waits.append(round(wait))
        now[0] += wait
        assert ceiling.wait("supervisor") == 0
        ceiling.failed("supervisor")
    assert waits == [59, 120, 240, 480]
    now[0] += 3600 + 1000
    assert ceiling.wait("supervisor") == 0


def test_guessing_with_endless_addresses_is_held_to_about_the_ceiling_an_hour():
    """Simulate a guesser with a fresh address for every try, for 24 hours, against the defaults."""
    now = [0.0]
    ceiling = auth.RoleCeiling(clock=lambda: now[0])
    times = []
    while now[0] < 24 * 3600:
        wait = ceiling.wait("supervisor")
        if wait > 0:
            now[0] += wait
            continue
        ceiling.failed("supervisor")
        times.append(now[0])
        now[0] += 0.1
    per_hour = len(times) / 24
    worst_hour = max(sum(1 for t in times if start <= t < start + 3600) for start in times)
    # 30 at once, then waits of 60, 120, 240 … s: about 25 an hour on average, never 36 in one hour.
    assert 20 <= per_hour <= 30, per_hour
    assert worst_hour <= 35, worst_hour


def test_settings_for_the_ceiling_come_from_the_config(tmp_path):
    app = make_app(tmp_path, PASSCODE_ROLE_CEILING=7, PASSCODE_ROLE_WINDOW_S=600, PASSCODE_ROLE_MAX_WAIT_S=900)
    ceiling = app.extensions["inkfilm_ceiling"]
    assert (ceiling.ceiling, ceiling.window, ceiling.max_wait) == (7, 600, 900)


# --- 2. the cost of a right passcode ----------------------------------------------------------------


@pytest.fixture
def scrypts(monkeypatch):
    calls = []
    real = auth.check_passcode

    def counted(passcode, stored):
        calls.append(stored)
        return real(passcode, stored)

    monkeypatch.setattr(auth, "check_passcode", counted)
    return calls


def test_a_right_shop_passcode_costs_one_scrypt_then_none(locked, scrypts):
    """Before: the supervisor hash was tried first, so every shop write paid a wasted scrypt."""
    assert locked.post(URL, json=body(), headers=SHOP_HEADER).status_code == 201
    assert len(scrypts) == 1
    for _ in range(3):
        assert locked.post(URL, json=body(), headers=SHOP_HEADER).status_code == 201
    assert len(scrypts) == 1


def test_many_clients_sending_the_right_passcode_at_once_cost_one_scrypt_and_no_lock(locked_app, scrypts):
    """Found by the load test: counting each try as wrong up front locked out 32 right passcodes at once."""
    barrier = threading.Barrier(12)
    statuses = []

    def save():
        client = locked_app.test_client()
        barrier.wait()
        statuses.append(client.post(URL, json=body(), headers=SHOP_HEADER).status_code)

    threads = [threading.Thread(target=save) for _ in range(12)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=60)
    assert statuses == [201] * 12
    assert len(scrypts) == 1


def test_the_shop_passcode_on_a_supervisor_action_locks_nobody_out(locked):
    url = f"{URL}/{saved(locked)}"
    for _ in range(6):
        refused = locked.delete(url, headers=SHOP_HEADER)
        assert refused.status_code == 403
        assert "needs the supervisor passcode" in refused.get_json()["error"]["message"]
    assert locked.delete(url, headers=BOSS_HEADER).status_code == 200


def test_a_supervisor_action_tries_the_supervisor_hash_only(locked, scrypts):
    url = f"{URL}/{saved(locked)}"
    scrypts.clear()
    assert locked.delete(url, headers=BOSS_HEADER).status_code == 200
    assert len(scrypts) == 1
    assert locked.post(f"{url}/restore", json={}, headers=BOSS_HEADER).status_code == 200
    assert len(scrypts) == 1


def test_the_cache_of_verified_passcodes_is_bounded_and_keyed():
    cache = auth.VerifiedCache(b"k" * 32, max_entries=4)
    for n in range(10):
        cache.put(f"passcode {n}", "shop")
    assert len(cache) == 4
    assert cache.get("passcode 9") == "shop"
    assert cache.get("passcode 0") is None
    # Keyed: the same passcode under another key is another entry.
    assert auth.VerifiedCache(b"j" * 32).key_for("x") != cache.key_for("x")
    assert "passcode 9" not in repr(cache._entries)


# --- 3. revoking unlocked sessions ---------------------------------------------------------------------


def test_a_cookie_copied_before_locking_is_refused_afterwards(locked):
    """Before: "Lock this device" only dropped the cookie; a copy still worked for 12 hours."""
    unlock(locked, SUPERVISOR)
    copy = locked.get_cookie("inkfilm_session").value
    csrf = token(locked)
    url = f"{URL}/{saved(locked)}"
    locked.post("/lock", data={"csrf_token": csrf})
    locked.set_cookie("inkfilm_session", copy)
    refused = locked.delete(url, headers={"X-CSRF-Token": csrf})
    assert refused.status_code == 401
    assert "This device is locked" in locked.get("/settings").get_data(as_text=True)


def test_lock_every_device_needs_the_supervisor_and_locks_them_all(locked_app):
    boss = locked_app.test_client()
    floor = locked_app.test_client()
    unlock(boss, SUPERVISOR)
    unlock(floor, SHOP)
    assert "Lock every device" in boss.get("/settings").get_data(as_text=True)
    assert "Lock every device" not in floor.get("/settings").get_data(as_text=True)
    # The floor cannot lock everyone, and a form without the token changes nothing.
    assert floor.post("/lock-all", data={"csrf_token": token(floor)}).status_code == 403
    assert boss.post("/lock-all", data={}).status_code == 400
    assert floor.post(URL, json=body(), headers={"X-CSRF-Token": token(floor)}).status_code == 201
    response = boss.post("/lock-all", data={"csrf_token": token(boss)})
    assert response.status_code == 303 and response.headers["Location"] == "/settings"
    assert floor.post(URL, json=body(), headers={"X-CSRF-Token": token(floor)}).status_code == 401
    assert "This device is locked" in boss.get("/settings").get_data(as_text=True)
    with contextlib.closing(sqlite3.connect(db.database_path(locked_app))) as conn:
        assert conn.execute("SELECT count(*) FROM unlock").fetchone()[0] == 0


def test_an_unlock_is_a_row_and_expired_rows_are_purged(locked_app, locked):
    unlock(locked, SHOP)
    path = db.database_path(locked_app)
    with contextlib.closing(sqlite3.connect(path)) as conn:
        rows = conn.execute("SELECT id, role, expires_at FROM unlock").fetchall()
        conn.execute("INSERT INTO unlock (id, role, created_at, expires_at) VALUES ('old', 'shop', 1, 2)")
        conn.commit()
    assert len(rows) == 1 and rows[0][1] == "shop"
    # The id in the cookie is not the one stored: a copy of the file opens no device.
    assert rows[0][0] not in json.dumps(
        dict(
            locked_app.session_interface.get_signing_serializer(locked_app).loads(
                locked.get_cookie("inkfilm_session").value
            )
        )
    )
    unlock(locked_app.test_client(), SHOP)
    with contextlib.closing(sqlite3.connect(path)) as conn:
        ids = {row[0] for row in conn.execute("SELECT id FROM unlock")}
    assert "old" not in ids and len(ids) == 2


def test_an_unlock_past_its_time_is_refused(locked_app, locked):
    unlock(locked, SHOP)
    with contextlib.closing(sqlite3.connect(db.database_path(locked_app))) as conn:
        conn.execute("UPDATE unlock SET expires_at = 1")
        conn.commit()
    assert locked.post(URL, json=body(), headers={"X-CSRF-Token": token(locked)}).status_code == 401


def test_migrating_a_file_at_version_2_adds_the_unlock_table(tmp_path):
    path = tmp_path / "old.sqlite3"
    with contextlib.closing(sqlite3.connect(path)) as old:
        for number in (0, 1):
            for statement in db._statements(db.MIGRATIONS[number]):
                old.execute(statement)
        old.execute("PRAGMA user_version = 2")
        old.execute(
            "INSERT INTO snippet (uid, kind, title, inputs, results, created_at, updated_at)"
            " VALUES (?, 'film', 'Kept', ?, '{}', '2024-01-02T03:04:05Z', '2024-01-02T03:04:05Z')",
            ("b" * 32, json.dumps(FILM)),
        )
        old.commit()
    assert db.migrate(path) == 2
    with contextlib.closing(db.connect(path)) as conn:
        assert conn.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION >= 3
        columns = {row["name"] for row in conn.execute("PRAGMA table_info(unlock)")}
        assert conn.execute("SELECT title FROM snippet").fetchone()[0] == "Kept"
    assert {"id", "role", "created_at", "expires_at"} <= columns


# --- 4. redirects stay on this server ---------------------------------------------------------------------

HOSTILE = [
    "/\t/evil.example",
    "/\\evil",
    "//evil",
    "/\r\n/evil.example",
    "/\n/evil.example",
    "/\r/evil.example",
    "\t//evil.example",
    "https://evil.example/",
]


def stays_here(location: str) -> bool:
    """Whether a browser following ``location`` from this server stays on it.

    As browsers parse URLs: tabs and line breaks are dropped, backslashes read as slashes.
    """
    cleaned = re.sub(r"[\t\r\n]", "", location).replace("\\", "/")
    resolved = urllib.parse.urljoin("http://inkfilm.local/settings", cleaned)
    return urllib.parse.urlsplit(resolved).netloc == "inkfilm.local"


@pytest.mark.parametrize("target", HOSTILE)
def test_units_never_redirects_elsewhere(client, target):
    response = client.post("/units", data={"system": "metric", "next": target})
    assert response.status_code == 303
    assert response.headers["Location"] == "/"


@pytest.mark.parametrize("target", HOSTILE)
def test_unlock_never_redirects_elsewhere(locked, target):
    response = locked.post("/unlock", data={"csrf_token": token(locked), "passcode": SHOP, "next": target})
    assert response.status_code == 303
    assert response.headers["Location"] == "/settings"


@pytest.mark.parametrize("target", HOSTILE)
def test_the_settings_page_carries_no_foreign_next(locked, target):
    page = locked.get("/settings?next=" + urllib.parse.quote(target, safe="")).get_data(as_text=True)
    assert re.search(r'name="next" value="([^"]*)"', page).group(1) == "/settings"


def test_an_encoded_tab_is_decoded_once_and_refused(locked):
    # ``%09`` in the query or form body arrives as a tab: refused.
    page = locked.get("/settings?next=/%09/evil").get_data(as_text=True)
    assert 'name="next" value="/settings"' in page
    raw = f"csrf_token={token(locked)}&passcode={SHOP}&next=/%09/evil"
    response = locked.post("/unlock", data=raw, content_type="application/x-www-form-urlencoded")
    assert response.headers["Location"] == "/settings"
    # A literal "%09" (sent as %2509) is a harmless path on this server.
    response = locked.post("/units", data={"next": "/%09/evil"})
    assert stays_here(response.headers["Location"])


def test_good_targets_still_work(locked):
    assert locked.post("/units", data={"system": "imperial", "next": "/film?x=1"}).headers["Location"] == "/film?x=1"
    response = locked.post("/unlock", data={"csrf_token": token(locked), "passcode": SHOP, "next": "/snippets?q=a"})
    assert response.headers["Location"] == "/snippets?q=a"


def test_the_checker_itself_spots_a_foreign_location():
    assert not stays_here("/\t/evil.example")
    assert not stays_here("/\\evil")
    assert stays_here("/%09/evil") and stays_here("/settings")


# Redirects whose target is not url_for/safe_next/a literal path, with why they are safe.
REVIEWED = {
    # https://<a name from the front's own list>:<its port><this path>: the host is never the client's.
    ("webapp/https/__init__.py", "JoinedStr"),
}


def _safe_target(node, assigned: dict[str, ast.AST]) -> bool:
    if isinstance(node, ast.Constant):
        return isinstance(node.value, str) and node.value.startswith("/") and not node.value.startswith("//")
    if isinstance(node, ast.Call):
        name = node.func.attr if isinstance(node.func, ast.Attribute) else getattr(node.func, "id", "")
        return name in {"url_for", "safe_next", "_next"}
    if isinstance(node, ast.Name) and node.id in assigned:
        return _safe_target(assigned[node.id], {})
    if isinstance(node, ast.BinOp) and isinstance(node.op, ast.Add):
        # a safe address with a fragment added: url_for(...) + "#wear"
        tail = node.right
        return _safe_target(node.left, assigned) and isinstance(tail, ast.Constant) and str(tail.value)[:1] == "#"
    return False


def test_every_redirect_in_the_web_app_goes_through_safe_next_or_url_for():
    seen = 0
    for path in sorted((ROOT / "webapp").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for function in ast.walk(tree):
            if not isinstance(function, ast.FunctionDef | ast.AsyncFunctionDef):
                continue
            assigned = {
                target.id: node.value
                for node in ast.walk(function)
                if isinstance(node, ast.Assign)
                for target in node.targets
                if isinstance(target, ast.Name)
            }
            for call in ast.walk(function):
                if not (isinstance(call, ast.Call) and getattr(call.func, "id", "") == "redirect"):
                    continue
                seen += 1
                where = str(Path(path).relative_to(ROOT))
                target = call.args[0]
                assert _safe_target(target, assigned) or (where, type(target).__name__) in REVIEWED, (
                    f"{where}:{call.lineno}: redirect to {ast.unparse(target)} bypasses safe_next"
                )
    assert seen >= 10
