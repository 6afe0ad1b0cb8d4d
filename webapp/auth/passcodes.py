"""Passcodes and roles: hashing, the unlocked session, and slowing down guessing.

Passcodes come in at start-up (``SHOP_PASSCODE`` / ``SUPERVISOR_PASSCODE`` in
the config, from the command line or environment) and are replaced at once by
salted scrypt hashes; the plain text is kept nowhere and never logged. A
passcode entered on the settings page puts the role in Flask's signed session
cookie (HttpOnly, SameSite=Strict). Wrong passcodes from one address lock that
address out for a growing while, answered at once with 429 (no thread sleeps).
"""

from __future__ import annotations

import hashlib
import hmac
import os
import secrets
import threading
import time
from pathlib import Path

from flask import current_app, request, session

RANK = {"reader": 0, "shop": 1, "supervisor": 2}
# An unlocked device stays unlocked for about a shift.
UNLOCK_SECONDS = 12 * 3600
MAX_PASSCODE = 200
_SCRYPT = {"n": 2**14, "r": 8, "p": 1}


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
    )
    app.extensions["inkfilm_throttle"] = Throttle(
        free_tries=app.config.get("PASSCODE_FREE_TRIES", 3),
        max_lock=app.config.get("PASSCODE_MAX_LOCK_S", 300),
    )
    app.extensions["inkfilm_verified"] = {}
    app.context_processor(lambda: {"auth": auth_state()})


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


class Throttle:
    """Per-address count of wrong passcodes; after ``free_tries`` each one locks the address out longer.

    The lock doubles from 1 s up to ``max_lock`` seconds; a right passcode clears it.
    """

    def __init__(self, free_tries: int = 3, max_lock: float = 300, clock=time.monotonic):
        self.free_tries = free_tries
        self.max_lock = max_lock
        self.clock = clock
        self._lock = threading.Lock()
        self._failures: dict[str, tuple[int, float]] = {}

    def wait(self, address: str) -> float:
        """Seconds ``address`` must wait before trying again (0: may try now)."""
        with self._lock:
            _count, until = self._failures.get(address, (0, 0.0))
        return max(0.0, until - self.clock())

    def failed(self, address: str) -> None:
        with self._lock:
            if len(self._failures) > 10_000:
                now = self.clock()
                self._failures = {a: v for a, v in self._failures.items() if v[1] > now - self.max_lock}
            count, _until = self._failures.get(address, (0, 0.0))
            count += 1
            over = count - self.free_tries
            lock = 0.0 if over <= 0 else min(self.max_lock, 2.0 ** (over - 1))
            self._failures[address] = (count, self.clock() + lock)

    def succeeded(self, address: str) -> None:
        with self._lock:
            self._failures.pop(address, None)


class Locked(Exception):
    def __init__(self, seconds: float):
        super().__init__(f"too many wrong passcodes from this device; try again in {max(1, round(seconds))} s")
        self.seconds = seconds
        self.message = str(self)


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


def role_for_passcode(passcode: str) -> str | None:
    """The role a passcode opens, or None; counts wrong tries against the address (raises ``Locked``)."""
    throttle: Throttle = current_app.extensions["inkfilm_throttle"]
    address = request.remote_addr or "?"
    wait = throttle.wait(address)
    if wait > 0:
        raise Locked(wait)
    passcode = passcode[:MAX_PASSCODE]
    verified: dict = current_app.extensions["inkfilm_verified"]
    # A keyed digest of a passcode already found right spares the API client an scrypt per request.
    token = hmac.new(current_app.secret_key, passcode.encode(), "sha256").hexdigest()
    for role, stored in _hashes().items():
        if verified.get(token) == stored or check_passcode(passcode, stored):
            if len(verified) < 64:
                verified[token] = stored
            throttle.succeeded(address)
            return role
    throttle.failed(address)
    return None


def session_role() -> str:
    """The role this browser unlocked (reader if none, expired or made with an older passcode)."""
    unlocked = session.get("unlocked")
    if not isinstance(unlocked, dict) or unlocked.get("role") not in RANK:
        return "reader"
    tag = _fingerprint(unlocked["role"])
    if tag is None or unlocked.get("until", 0) < time.time() or unlocked.get("key") != tag:
        return "reader"
    return unlocked["role"]


def unlock(role: str) -> None:
    session.permanent = True
    session["unlocked"] = {"role": role, "key": _fingerprint(role), "until": time.time() + UNLOCK_SECONDS}


def allowed(action: str, role: str) -> bool:
    return RANK[role] >= RANK[needed(action)]


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
