"""Passcodes and roles: hashing, the unlocked session, and slowing down guessing.

Passcodes come in at start-up (``SHOP_PASSCODE`` / ``SUPERVISOR_PASSCODE`` in
the config, from the command line or environment) and are replaced at once by
salted scrypt hashes; the plain text is kept nowhere and never logged. A
passcode entered on the settings page puts the role and a random session id in
Flask's signed session cookie (HttpOnly, SameSite=Strict) and a row for that id
in the ``unlock`` table: the cookie counts only while its row is there, so
"Lock this device" and "Lock every device" take effect on the server, and a
copy of a cookie made before locking opens nothing afterwards.

Wrong passcodes are counted per address and role and per role for the whole
server (see "slowing down guessing" below), answered at once with 429 and
Retry-After (no thread sleeps). Settings: ``PASSCODE_FREE_TRIES`` (3) and
``PASSCODE_MAX_LOCK_S`` (300) for an address; ``PASSCODE_ROLE_CEILING`` (30),
``PASSCODE_ROLE_WINDOW_S`` (3600), ``PASSCODE_ROLE_FIRST_WAIT_S`` (60) and
``PASSCODE_ROLE_MAX_WAIT_S`` (3600) for a role.
"""

from __future__ import annotations

import contextlib
import hashlib
import hmac
import os
import secrets
import threading
import time
from collections import OrderedDict, deque
from pathlib import Path

from flask import current_app, g, request, session

from webapp.common.db import connect, database_path, get_db, transaction

RANK = {"reader": 0, "shop": 1, "supervisor": 2}
# An unlocked device stays unlocked for about a shift.
UNLOCK_SECONDS = 12 * 3600
MAX_PASSCODE = 200
_SCRYPT = {"n": 2**14, "r": 8, "p": 1}
# The longest a request waits for another's check of the same role's passcode before a 429.
CHECK_QUEUE_S = 2.0


# --- hashing ---------------------------------------------------------------------


def hash_passcode(passcode: str) -> str:
    """``scrypt$<salt hex>$<hash hex>`` for ``passcode``, with a fresh random salt."""
    salt = os.urandom(16)
    digest = hashlib.scrypt(passcode.encode(), salt=salt, **_SCRYPT)
    return f"scrypt${salt.hex()}${digest.hex()}"


def check_passcode(passcode: str, stored: str) -> bool:
    """Whether ``passcode`` is the one ``stored`` was made from (compared in constant time)."""
    try:
        _method, salt, digest = stored.split("$")
        candidate = hashlib.scrypt(passcode.encode(), salt=bytes.fromhex(salt), **_SCRYPT)
    except (ValueError, UnicodeEncodeError):
        return False
    return hmac.compare_digest(candidate.hex(), digest)


# --- set-up ------------------------------------------------------------------------


def init_app(app) -> None:
    """Hash the passcodes, load (or make) the secret key, set the session cookie's flags."""
    if not app.config.get("SECRET_KEY"):
        app.config["SECRET_KEY"] = _secret_key(Path(app.config["DATA_DIR"]))
    secret = app.config["SECRET_KEY"]
    secret = secret.encode() if isinstance(secret, str) else secret
    for role in ("shop", "supervisor"):
        key = f"{role.upper()}_PASSCODE"
        plain = app.config.pop(key, None)
        if plain:
            app.config[f"{key}_HASH"] = hash_passcode(plain)
            # Names the passcode in session cookies without its salt, so that an
            # unlock survives a restart with the same passcode and not a new one.
            app.config[f"{key}_TAG"] = hmac.new(secret, b"unlock:" + plain.encode(), "sha256").hexdigest()[:32]
    app.config.update(
        SESSION_COOKIE_NAME="inkfilm_session",
        SESSION_COOKIE_HTTPONLY=True,
        SESSION_COOKIE_SAMESITE="Strict",
        PERMANENT_SESSION_LIFETIME=90 * 24 * 3600,
        # The cookie is sent again only when the session changes (a new CSRF token, an
        # unlock, a lock), not on every answer: an unlock carries its own end
        # ("until"), so renewing the cookie's date on each request bought nothing.
        SESSION_REFRESH_EACH_REQUEST=False,
    )
    app.extensions["inkfilm_throttle"] = Throttle(
        free_tries=app.config.get("PASSCODE_FREE_TRIES", 3),
        max_lock=app.config.get("PASSCODE_MAX_LOCK_S", 300),
    )
    app.extensions["inkfilm_ceiling"] = RoleCeiling(
        ceiling=app.config.get("PASSCODE_ROLE_CEILING", 30),
        window=app.config.get("PASSCODE_ROLE_WINDOW_S", 3600),
        first_wait=app.config.get("PASSCODE_ROLE_FIRST_WAIT_S", 60),
        max_wait=app.config.get("PASSCODE_ROLE_MAX_WAIT_S", 3600),
    )
    app.extensions["inkfilm_verified"] = VerifiedCache(secret)
    app.extensions["inkfilm_checking"] = {role: threading.Lock() for role in ("shop", "supervisor")}
    # The database is migrated by now (webapp.common.db.init_app runs first).
    purge_expired(database_path(app))
    app.context_processor(lambda: {"auth": LazyAuthState()})


def _secret_key(data_dir: Path) -> bytes:
    """The key that signs session cookies: made once, kept in the data folder (0600), so unlocks survive restarts."""
    path = data_dir / "secret_key"
    if not path.exists():
        # Written whole to a private file, then linked into place: two servers
        # starting at once agree on one key and never read half of one.
        partial = data_dir / f"secret_key.{os.getpid()}.partial"
        fd = os.open(partial, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
        with os.fdopen(fd, "wb") as out:
            out.write(secrets.token_bytes(32))
        try:
            os.link(partial, path)
        except FileExistsError:
            pass
        finally:
            partial.unlink()
    key = path.read_bytes()
    if len(key) < 32:
        raise RuntimeError(f"{path} is damaged (shorter than 32 bytes); delete it and start again")
    return key


# --- slowing down guessing ----------------------------------------------------------
#
# Wrong passcodes are counted twice over: per address and role guessed at
# (``Throttle``: a few free tries, then a doubling lock) and per role for the
# whole server (``RoleCeiling``: a ceiling an hour, then an exponential wait).
# A right passcode for one role never clears another role's count, and a fresh
# address buys no more guesses at a role than the ceiling allows. A wrong
# passcode matches no role, so it counts against every role that would have let
# the request through. A role that is locked is not tried at all; the request
# is answered at once with the wait (429 + Retry-After); no thread sleeps.
#
# Why not Flask-Limiter: it limits every request to a route by a key fixed
# before the view runs, at a fixed rate. Here only wrong passcodes count, against
# a set of roles known once the action is, the waits double, and a locked role
# must be skipped while another role may still be tried: its decorators and
# storage would still need all of this around them. These two small counters
# are tested on their own (tests/web/test_auth*.py). Both live in this process's
# memory (waitress runs one process), so a restart forgets them.


class Throttle:
    """Wrong passcodes per key (an address and the role guessed at); after ``free_tries`` a doubling lock.

    The lock runs from the last wrong try: 1 s, 2 s, 4 s … up to ``max_lock``
    seconds; a right passcode for the same key clears it.
    """

    def __init__(self, free_tries: int = 3, max_lock: float = 300, clock=time.monotonic):
        self.free_tries = free_tries
        self.max_lock = max_lock
        self.clock = clock
        self._lock = threading.Lock()
        self._failures: dict[str, tuple[int, float]] = {}  # key -> (wrong tries, time of the last)

    def _wait(self, key: str, now: float) -> float:
        count, last = self._failures.get(key, (0, 0.0))
        over = count - self.free_tries
        if over <= 0:
            return 0.0
        return max(0.0, last + min(self.max_lock, 2.0 ** (over - 1)) - now)

    def wait(self, key: str) -> float:
        """Seconds ``key`` must wait before trying again (0: may try now)."""
        with self._lock:
            return self._wait(key, self.clock())

    def failed(self, key: str) -> None:
        with self._lock:
            now = self.clock()
            if len(self._failures) > 10_000:
                self._failures = {k: v for k, v in self._failures.items() if v[1] > now - self.max_lock}
            count, _last = self._failures.get(key, (0, 0.0))
            self._failures[key] = (count + 1, now)

    def succeeded(self, key: str) -> None:
        with self._lock:
            self._failures.pop(key, None)


class RoleCeiling:
    """Wrong passcodes per role for the whole server, over a sliding ``window`` of seconds.

    Up to ``ceiling`` wrong tries in the window go through at once. From then
    on the next try must wait ``first_wait`` seconds after the last wrong one,
    doubling with every further wrong one still in the window, up to
    ``max_wait``. Only wrong passcodes stay counted. With the defaults (30 an
    hour, 60 s doubling to an hour) a guesser with any number of addresses gets
    about 25 tries at a role an hour on average and at most 35 in any one hour,
    whatever they know of the other role (simulated in tests/web/test_auth_hardening.py).
    """

    def __init__(self, ceiling=30, window=3600.0, first_wait=60.0, max_wait=3600.0, clock=time.monotonic):
        self.ceiling = ceiling
        self.window = window
        self.first_wait = first_wait
        self.max_wait = max_wait
        self.clock = clock
        self._lock = threading.Lock()
        self._failures: dict[str, deque[float]] = {}

    def _wait(self, role: str, now: float) -> float:
        times = self._failures.setdefault(role, deque())
        while times and times[0] <= now - self.window:
            times.popleft()
        if len(times) < self.ceiling:
            return 0.0
        wait = min(self.max_wait, self.first_wait * 2.0 ** (len(times) - self.ceiling))
        return max(0.0, times[-1] + wait - now)

    def wait(self, role: str) -> float:
        with self._lock:
            return self._wait(role, self.clock())

    def failed(self, role: str) -> None:
        with self._lock:
            now = self.clock()
            self._wait(role, now)
            self._failures[role].append(now)


class Locked(Exception):
    def __init__(self, seconds: float, reason: str = "too many wrong passcodes from this device"):
        super().__init__(f"{reason}; try again in {max(1, round(seconds))} s")
        self.seconds = seconds
        self.message = str(self)


# --- passcodes found right -------------------------------------------------------------


class VerifiedCache:
    """Passcodes already found right, by an HMAC of the passcode with the app's key → the role.

    A right passcode sent again (an API client's header on every write) costs no
    scrypt. Only right passcodes enter, so in practice it holds one entry per
    role; it is bounded anyway (the least recently used leaves first). The plain
    passcode is never kept: a keyed digest is no use without the app's key.
    """

    def __init__(self, key: bytes, max_entries: int = 16):
        self._key = key
        self.max_entries = max_entries
        self._lock = threading.Lock()
        self._entries: OrderedDict[str, str] = OrderedDict()

    def key_for(self, passcode: str) -> str:
        return hmac.new(self._key, b"verified:" + passcode.encode("utf-8", "surrogatepass"), "sha256").hexdigest()

    def get(self, passcode: str) -> str | None:
        token = self.key_for(passcode)
        with self._lock:
            role = self._entries.get(token)
            if role is not None:
                self._entries.move_to_end(token)
            return role

    def put(self, passcode: str, role: str) -> None:
        token = self.key_for(passcode)
        with self._lock:
            self._entries[token] = role
            self._entries.move_to_end(token)
            while len(self._entries) > self.max_entries:
                self._entries.popitem(last=False)

    def __len__(self) -> int:
        return len(self._entries)


# --- roles -----------------------------------------------------------------------------


def _hashes() -> dict[str, str]:
    return {
        role: current_app.config[f"{role.upper()}_PASSCODE_HASH"]
        for role in ("supervisor", "shop")
        if current_app.config.get(f"{role.upper()}_PASSCODE_HASH")
    }


def needed(action: str) -> str:
    """The role ``action`` ("write" or "supervise") needs with the passcodes set today."""
    hashes = _hashes()
    if action == "supervise" and "supervisor" in hashes:
        return "supervisor"
    if "shop" in hashes:
        return "shop"
    if action == "write" or "supervisor" not in hashes:
        return "reader"
    return "supervisor"


def _fingerprint(role: str) -> str | None:
    # Ties an unlock to today's passcode: a new passcode at restart locks every device again.
    return current_app.config.get(f"{role.upper()}_PASSCODE_TAG")


def opening_roles(action: str) -> list[str]:
    """The roles set today whose passcode lets ``action`` through: the one it needs first, then higher ones."""
    need = RANK[needed(action)]
    return [role for role in ("shop", "supervisor") if RANK[role] >= need and role in _hashes()]


def role_for_passcode(
    passcode: str, roles: list[str] | tuple[str, ...] = ("shop", "supervisor"), known: tuple[str, ...] = ()
) -> str | None:
    """The first of ``roles`` whose passcode ``passcode`` is, or None.

    Roles are tried in the order given, so the one an action needs costs the
    first (and, once verified, no) scrypt. A wrong passcode counts against every
    role it was tried against. A role locked for this address or for the server
    is not tried; if the passcode opened none of the others, ``Locked`` is raised.

    ``known`` roles are recognised only from the cache of passcodes already
    verified (no scrypt, nothing counted, and only while that role is not
    locked): the shop passcode sent to a supervisor's action is told apart from a
    supervisor guess, so a floor client's slip locks nobody out. Guessing the shop
    passcode that way still spends the supervisor's budget for every wrong try.
    """
    throttle: Throttle = current_app.extensions["inkfilm_throttle"]
    ceiling: RoleCeiling = current_app.extensions["inkfilm_ceiling"]
    verified: VerifiedCache = current_app.extensions["inkfilm_verified"]
    address = request.remote_addr or "?"
    passcode = passcode[:MAX_PASSCODE]
    hashes = _hashes()
    locks: list[tuple[float, str]] = []
    for role in known:
        key = f"{address} {role}"
        if role in hashes and not throttle.wait(key) and not ceiling.wait(role) and verified.get(passcode) == role:
            return role
    for role in roles:
        if role not in hashes:
            continue
        key = f"{address} {role}"
        if not throttle.wait(key) and not ceiling.wait(role) and verified.get(passcode) == role:
            return role  # verified before: no scrypt, and no queue behind others' checks
        # One check at a time per role: requests arriving together cannot all
        # slip under a limit, and a right passcode sent by many clients at once
        # costs one scrypt (the others find it verified). The wait is bounded.
        checking: threading.Lock = current_app.extensions["inkfilm_checking"][role]
        if not checking.acquire(timeout=CHECK_QUEUE_S):
            locks.append((1.0, "too many passcodes are being checked at once"))
            continue
        try:
            wait = throttle.wait(key)
            if wait > 0:
                locks.append((wait, "too many wrong passcodes from this device"))
                continue
            wait = ceiling.wait(role)
            if wait > 0:
                locks.append((wait, f"too many wrong tries at the {role} passcode lately"))
                continue
            if verified.get(passcode) == role or check_passcode(passcode, hashes[role]):
                verified.put(passcode, role)
                throttle.succeeded(key)
                return role
            throttle.failed(key)
            ceiling.failed(role)
        finally:
            checking.release()
    if locks:
        raise Locked(*min(locks))
    return None


# --- the unlocked session ----------------------------------------------------------------


def _digest(session_id: str) -> str:
    return hashlib.sha256(session_id.encode()).hexdigest()


def session_role() -> str:
    """The role this browser unlocked (reader if none, locked, expired or made with an older passcode)."""
    if "inkfilm_role" not in g:
        g.inkfilm_role = _session_role()
    return g.inkfilm_role


def _session_role() -> str:
    unlocked = session.get("unlocked")
    if not isinstance(unlocked, dict) or unlocked.get("role") not in RANK:
        return "reader"
    tag = _fingerprint(unlocked["role"])
    if tag is None or unlocked.get("until", 0) < time.time() or unlocked.get("key") != tag:
        return "reader"
    session_id = unlocked.get("sid")
    if not isinstance(session_id, str) or len(session_id) < 32:
        return "reader"
    # The server's word: a device locked (or every device locked) has no row.
    row = (
        get_db()
        .execute("SELECT role FROM unlock WHERE id = ? AND expires_at > ?", (_digest(session_id), time.time()))
        .fetchone()
    )
    if row is None or row["role"] != unlocked["role"]:
        return "reader"
    return unlocked["role"]


def _current_session_id() -> str | None:
    unlocked = session.get("unlocked")
    session_id = unlocked.get("sid") if isinstance(unlocked, dict) else None
    return session_id if isinstance(session_id, str) else None


def unlock(role: str) -> None:
    """Unlock this browser for ``role``: a new session id in the cookie and its row in the database."""
    now = time.time()
    session_id = secrets.token_urlsafe(32)
    old = _current_session_id()
    conn = get_db()
    with transaction(conn):
        conn.execute("DELETE FROM unlock WHERE expires_at <= ?", (now,))
        if old:
            conn.execute("DELETE FROM unlock WHERE id = ?", (_digest(old),))
        conn.execute(
            "INSERT INTO unlock (id, role, created_at, expires_at) VALUES (?, ?, ?, ?)",
            (_digest(session_id), role, now, now + UNLOCK_SECONDS),
        )
    session.permanent = True
    session["unlocked"] = {"role": role, "key": _fingerprint(role), "until": now + UNLOCK_SECONDS, "sid": session_id}
    g.inkfilm_role = role


def lock_this_device() -> None:
    """Lock this browser: its row goes, so a copy of its cookie opens nothing either."""
    session_id = _current_session_id()
    if session_id:
        conn = get_db()
        with transaction(conn):
            conn.execute("DELETE FROM unlock WHERE id = ?", (_digest(session_id),))
    session.pop("unlocked", None)
    g.inkfilm_role = "reader"


def lock_every_device() -> int:
    """Lock every unlocked browser (this one too); return how many were unlocked."""
    conn = get_db()
    with transaction(conn):
        count = conn.execute("SELECT count(*) FROM unlock WHERE expires_at > ?", (time.time(),)).fetchone()[0]
        conn.execute("DELETE FROM unlock")
    session.pop("unlocked", None)
    g.inkfilm_role = "reader"
    return count


def purge_expired(path) -> None:
    """Delete the rows of unlocks past their time (at start-up; ``unlock`` does it on the way too)."""
    with contextlib.closing(connect(path)) as conn, transaction(conn):
        conn.execute("DELETE FROM unlock WHERE expires_at <= ?", (time.time(),))


def allowed(action: str, role: str) -> bool:
    return RANK[role] >= RANK[needed(action)]


class LazyAuthState:
    """``auth_state()`` for templates, worked out on first use: a template that never asks
    (``sw.js``) leaves the session unread, so its answer needs no ``Vary: Cookie``."""

    def __getattr__(self, name):
        if name.startswith("_"):
            raise AttributeError(name)
        if "_state" not in self.__dict__:
            self.__dict__["_state"] = auth_state()
        try:
            return self.__dict__["_state"][name]
        except KeyError:
            raise AttributeError(name) from None


def auth_state() -> dict:
    """What templates need: who this is, and what the passcodes lock."""
    role = session_role() if current_app.config.get("SECRET_KEY") else "reader"
    return {
        "role": role,
        "shop_locked": "shop" in _hashes(),
        "supervisor_locked": "supervisor" in _hashes(),
        "can_write": allowed("write", role),
        "can_supervise": allowed("supervise", role),
    }
