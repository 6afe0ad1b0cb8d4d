"""inkfilm's SQLite file: connections, the schema and its migrations, backups.

The database is one file in the data folder. Every request gets its own
connection on ``g`` (kept at teardown for the same thread's next request); WAL mode lets readers go on while
one writer writes, and the busy timeout makes a second writer wait its turn
instead of failing. The schema is versioned with ``PRAGMA user_version``:
the numbered files in ``migrations/`` (``0001_snippet.sql``, …) each take a
file one version further, and all due migrations run, in one transaction,
when the app starts.
"""

from __future__ import annotations

import contextlib
import errno
import os
import sqlite3
import threading
import time
from collections.abc import Callable
from pathlib import Path
from typing import TypeVar

from flask import current_app, g

FILENAME = "inkfilm.sqlite3"
BUSY_TIMEOUT_S = 10.0
# SQLite's largest INTEGER: an id beyond it (an address may hold any digits) names no row here,
# and sqlite3 would raise OverflowError if it were passed on.
MAX_ID = 2**63 - 1

MIGRATIONS_DIR = Path(__file__).with_name("migrations")


def _load_migrations() -> list[str]:
    """The numbered ``.sql`` files, in order: ``0001_….sql`` takes a file from version 0 to 1.

    Never edit a migration that has shipped: add a new file with the next number.
    """
    files = sorted(MIGRATIONS_DIR.glob("[0-9][0-9][0-9][0-9]_*.sql"))
    for expected, path in enumerate(files, start=1):
        if int(path.name[:4]) != expected:
            raise RuntimeError(f"migration {path.name} is out of sequence (expected number {expected:04d})")
    return [path.read_text(encoding="utf-8") for path in files]


MIGRATIONS: list[str] = _load_migrations()
SCHEMA_VERSION = len(MIGRATIONS)


def version_before(name: str) -> int:
    """The schema version a file has just before the migration ``NNNN_<name>.sql`` runs.

    For tests that write a file of "the version before" a feature, whatever its number.
    """
    files = sorted(MIGRATIONS_DIR.glob("[0-9][0-9][0-9][0-9]_*.sql"))
    for index, path in enumerate(files):
        if path.name[5:-4] == name:
            return index
    raise KeyError(name)


class NewerDatabaseError(RuntimeError):
    """The file was written by a newer inkfilm than this one."""


# One lock per database file for the writers of this process. Waiting on SQLite's busy handler
# means sleeping in steps of up to 100 ms and trying again, so queued writers leave the file idle
# between them; waiting here, the next writer starts the moment the last one commits. The busy
# timeout still covers writers in other processes (a backup, the command line).
_WRITE_LOCKS: dict[str, threading.Lock] = {}
_WRITE_LOCKS_GUARD = threading.Lock()


def _write_lock(path) -> threading.Lock:
    key = os.path.abspath(os.fspath(path))
    with _WRITE_LOCKS_GUARD:
        return _WRITE_LOCKS.setdefault(key, threading.Lock())


class _Job:
    """One write waiting to be done with others (see ``write_together``)."""

    __slots__ = ("work", "value", "error", "finished", "lead", "woken")

    def __init__(self, work):
        self.work = work
        self.value = None
        self.error: BaseException | None = None
        self.finished = False
        # Set when this job's thread is to make the next commit (it is first in the queue).
        self.lead = False
        # Held until the job's thread is woken: once, when its commit is over or when it is to lead.
        self.woken = threading.Lock()
        self.woken.acquire()

    def fail(self, error: BaseException) -> None:
        self.value, self.error = None, error


class _WriteGroup:
    """The writes of one file queued for the next shared commit, and whether one is being made.

    Each queued write waits on a lock of its own, so a commit wakes the writers it
    took and the one that leads the next commit, not every writer of the file.
    """

    def __init__(self, lock: threading.Lock):
        self.lock = lock
        self.guard = threading.Lock()
        self.pending: list[_Job] = []
        self.leading = False


_WRITE_GROUPS: dict[int, _WriteGroup] = {}


def _write_group(lock: threading.Lock) -> _WriteGroup:
    with _WRITE_LOCKS_GUARD:
        return _WRITE_GROUPS.setdefault(id(lock), _WriteGroup(lock))


class Connection(sqlite3.Connection):
    """A ``sqlite3`` connection that knows the write lock of its file and its queue of writes."""

    write_lock: threading.Lock
    write_group: _WriteGroup
    # Set on a request's connection: its key among a thread's kept connections.
    kept_as: tuple | None = None


def connect(path: str | os.PathLike) -> sqlite3.Connection:
    """A connection with the house settings; the caller closes it.

    Autocommit mode: writers open their own ``BEGIN IMMEDIATE`` transaction
    (see ``transaction``) so two writers queue at the start instead of
    deadlocking halfway; readers never open a write transaction, and in WAL
    mode they never wait for a writer.
    """
    conn = sqlite3.connect(
        path, timeout=BUSY_TIMEOUT_S, isolation_level=None, check_same_thread=False, factory=Connection
    )
    conn.write_lock = _write_lock(path)
    conn.write_group = _write_group(conn.write_lock)
    conn.row_factory = sqlite3.Row
    conn.execute("PRAGMA foreign_keys = ON")
    # FULL: a save the server has answered survives a power cut, not only a crash.
    conn.execute("PRAGMA synchronous = FULL")
    return conn


@contextlib.contextmanager
def transaction(conn: sqlite3.Connection):
    """A write transaction: committed when the block ends, rolled back on error.

    The error that stopped the block is the one raised: on a full disk SQLite
    may have rolled back already, and a failing ``ROLLBACK`` must not hide why.
    Writers of this process queue on the file's lock first (see ``_WRITE_LOCKS``).
    """
    lock = getattr(conn, "write_lock", None)
    if lock is not None and not lock.acquire(timeout=BUSY_TIMEOUT_S):
        raise sqlite3.OperationalError("database is locked")
    try:
        conn.execute("BEGIN IMMEDIATE")
        try:
            yield conn
            conn.execute("COMMIT")
        except BaseException:
            if conn.in_transaction:
                with contextlib.suppress(sqlite3.Error):
                    conn.execute("ROLLBACK")
            raise
    finally:
        if lock is not None:
            lock.release()


T = TypeVar("T")


def write_together(conn: sqlite3.Connection, work: Callable[[sqlite3.Connection], T]) -> T:
    """``work(c)`` done in a write transaction shared with the other writes queued meanwhile; its value.

    Group commit: with ``synchronous = FULL`` every commit waits for the disk (an
    fsync of the WAL), and one writer at a time may commit. So a writer queues its
    ``work`` while a commit is being made; when it ends, the first writer queued
    takes every write queued by then into one transaction on its own connection
    (``c``; a writer that finds no commit being made goes alone): each write in a
    savepoint of its own, then one ``COMMIT`` for all of them. Each caller gets
    its own value, or its own exception, only after that commit: an answered
    write is on disk exactly as if it had committed alone, and an error in one
    write (a ``Conflict``, a bad input) undoes that write only. If the commit
    fails, or SQLite rolls the whole transaction back (a full disk), every write
    in it gets that error.

    ``work`` runs on another request's connection, maybe on another thread: it
    may only use the ``c`` it is given, must not open a transaction itself, and
    should be short (plain SQL; work the inputs out before). A connection not made
    by ``connect`` (no queue) does its write alone in ``transaction``.
    """
    group = getattr(conn, "write_group", None)
    if group is None:
        with transaction(conn):
            return work(conn)
    job = _Job(work)
    deadline = time.monotonic() + BUSY_TIMEOUT_S
    with group.guard:
        queued = group.leading
        if queued:
            group.pending.append(job)
        else:
            group.leading = True
    if queued:
        if not job.woken.acquire(timeout=max(0.0, deadline - time.monotonic())):
            with group.guard:
                given_up = job in group.pending and not job.lead
                if given_up:
                    group.pending.remove(job)
            if given_up:
                raise sqlite3.OperationalError("database is locked")
            # Taken into a commit or made its leader meanwhile: that commit ends, whatever the clock says.
            job.woken.acquire()
        if job.finished:
            if job.error is not None:
                raise job.error
            return job.value
        # First in the queue when the last commit ended: this thread commits every write queued now.
        with group.guard:
            batch, group.pending = group.pending, []
    else:
        batch = [job]
    try:
        if group.lock.acquire(timeout=max(0.0, deadline - time.monotonic())):
            try:
                _commit_together(conn, batch)
            finally:
                group.lock.release()
        else:
            for other in batch:
                other.fail(sqlite3.OperationalError("database is locked"))
    finally:
        _hand_on(group, batch)
    if job.error is not None:
        raise job.error
    return job.value


def _hand_on(group: _WriteGroup, batch: list[_Job]) -> None:
    """After a commit: wake the writers of ``batch`` with their outcome, and the first queued one to lead the next."""
    with group.guard:
        for job in batch:
            job.finished = True
        after = group.pending[0] if group.pending else None
        if after is not None:
            after.lead = True
        else:
            group.leading = False
    for job in batch:
        job.woken.release()
    if after is not None:
        after.woken.release()


def _commit_together(conn: sqlite3.Connection, batch: list[_Job]) -> None:
    """Every job of ``batch`` in one transaction on ``conn``, each in a savepoint of its own; one commit.

    Sets each job's value or error; raises only what is not an ``Exception`` (the
    transaction rolled back first, every job failed).
    """
    kept: list[_Job] = []
    try:
        conn.execute("BEGIN IMMEDIATE")
        for number, job in enumerate(batch):
            if not conn.in_transaction:
                try:
                    conn.execute("BEGIN IMMEDIATE")
                except sqlite3.Error as exc:
                    for later in batch[number:]:
                        later.fail(exc)
                    break
            try:
                conn.execute("SAVEPOINT together")
                value = job.work(conn)
                conn.execute("RELEASE together")
            except Exception as exc:  # noqa: BLE001 - handed to the caller whose write it was
                job.fail(exc)
                if _undo_savepoint(conn):
                    continue
                # The whole transaction is gone (SQLite rolls back on a full disk): so are the writes before.
                for earlier in kept:
                    earlier.fail(exc)
                kept = []
                continue
            job.value = value
            kept.append(job)
        if conn.in_transaction:
            conn.execute("COMMIT")
    except Exception as exc:  # noqa: BLE001 - the BEGIN or the COMMIT: every write waiting on it failed
        _roll_back(conn)
        for job in batch:
            if job.error is None:
                job.fail(exc)
    except BaseException as exc:
        _roll_back(conn)
        for job in batch:
            job.fail(sqlite3.OperationalError(f"the write was not finished ({type(exc).__name__})"))
        raise


def _undo_savepoint(conn: sqlite3.Connection) -> bool:
    """Undo the last job's savepoint; False when the transaction is gone (or rolled back here)."""
    if not conn.in_transaction:
        return False
    try:
        conn.execute("ROLLBACK TO together")
        conn.execute("RELEASE together")
    except sqlite3.Error:
        _roll_back(conn)
        return False
    return True


def _roll_back(conn: sqlite3.Connection) -> None:
    if conn.in_transaction:
        with contextlib.suppress(sqlite3.Error):
            conn.execute("ROLLBACK")


@contextlib.contextmanager
def snapshot(conn: sqlite3.Connection):
    """A read transaction: every query in the block sees the same state of the file.

    It takes no write lock (``BEGIN DEFERRED`` and only reads), so writers go on meanwhile.
    """
    if conn.in_transaction:
        yield conn
        return
    conn.execute("BEGIN")
    try:
        yield conn
    finally:
        if conn.in_transaction:
            with contextlib.suppress(sqlite3.Error):
                conn.execute("COMMIT")


# --- a disk that cannot be written --------------------------------------------------------------

STORAGE_MESSAGE = "the server cannot write its data (disk full or read-only); nothing was saved"
_STORAGE_ERRNOS = {errno.ENOSPC, errno.EROFS, errno.EACCES, errno.EPERM, errno.EDQUOT}
_STORAGE_SQLITE = ("SQLITE_FULL", "SQLITE_READONLY", "SQLITE_IOERR", "SQLITE_CANTOPEN")
_STORAGE_WORDS = ("disk is full", "readonly database", "read-only", "disk i/o error", "unable to open database")


def is_storage_failure(exc: BaseException) -> bool:
    """Whether ``exc`` says the data folder cannot be written (full, read-only, not allowed).

    SQLite's result code where Python gives it (``sqlite_errorname``), else its
    message; for ``OSError`` the errno (ENOSPC, EROFS, EACCES, …).
    """
    if isinstance(exc, sqlite3.DatabaseError):
        name = getattr(exc, "sqlite_errorname", None) or ""
        message = str(exc).lower()
        return name.startswith(_STORAGE_SQLITE) or any(words in message for words in _STORAGE_WORDS)
    if isinstance(exc, OSError):
        return exc.errno in _STORAGE_ERRNOS
    return False


def writable_problem(data_dir: str | os.PathLike) -> str | None:
    """Why the server could not keep its data in ``data_dir`` (created if missing), or ``None``.

    Tried for real, not by permission bits (root passes every ``os.access``):
    a file made and removed in the folder, then a write transaction opened on
    the database file.
    """
    folder = Path(data_dir)
    try:
        folder.mkdir(parents=True, exist_ok=True)
        probe = folder / f".inkfilm-write-check-{os.getpid()}"
        probe.write_bytes(b"")
        probe.unlink()
    except OSError as exc:
        return f"cannot write the data folder {folder}: {exc.strerror or exc}"
    path = folder / FILENAME
    try:
        with contextlib.closing(connect(path)) as conn:
            conn.execute("BEGIN IMMEDIATE")
            # A real write, rolled back: a read-only file lets a transaction begin, not a write.
            conn.execute("CREATE TABLE inkfilm_write_check (x)")
            conn.execute("ROLLBACK")
    except sqlite3.Error as exc:
        return f"cannot use the database {path}: {exc}"
    return None


def migrate(path: str | os.PathLike) -> int:
    """Bring the file at ``path`` (created if missing) to ``SCHEMA_VERSION``; return the old version."""
    with contextlib.closing(connect(path)) as conn:
        conn.execute("PRAGMA journal_mode = WAL")
        with transaction(conn):
            found = conn.execute("PRAGMA user_version").fetchone()[0]
            if found > SCHEMA_VERSION:
                raise NewerDatabaseError(
                    f"{path} has schema version {found}, newer than this inkfilm knows ({SCHEMA_VERSION}); "
                    "run the newer inkfilm or restore a backup"
                )
            for number in range(found, SCHEMA_VERSION):
                for statement in _statements(MIGRATIONS[number]):
                    conn.execute(statement)
                # PRAGMA takes no parameters; the number is ours, not a user's.
                conn.execute(f"PRAGMA user_version = {number + 1}")
        return found


def _statements(script: str) -> list[str]:
    """``script`` cut into whole statements (executescript would commit halfway)."""
    statements, current = [], ""
    for piece in script.split(";"):
        current += piece + ";"
        # A ";" inside a string or a trigger body does not end the statement.
        if sqlite3.complete_statement(current):
            if current.strip(" \n\t;"):
                statements.append(current.strip())
            current = ""
    return statements


def backup(source: str | os.PathLike, target: str | os.PathLike) -> None:
    """A consistent copy of the database at ``source`` into ``target``, safe while the server runs.

    SQLite's online backup copies page by page and restarts if a writer
    changes the file meanwhile; the copy is written beside the target and
    renamed over it only when complete.
    """
    target = Path(target)
    partial = target.with_name(target.name + ".partial")
    partial.unlink(missing_ok=True)
    with contextlib.closing(connect(source)) as src, contextlib.closing(sqlite3.connect(partial)) as dst:
        src.backup(dst)
        dst.execute("PRAGMA journal_mode = DELETE")
    os.replace(partial, target)


def database_path(app=None) -> Path:
    app = app or current_app
    return Path(app.config["DATA_DIR"]) / FILENAME


# A request's connection is kept for the next request on the same thread (waitress's threads
# live as long as the server): opening one and reading the schema costs more CPU than most
# queries. At most this many are kept per thread (the tests open many data folders).
_KEPT_PER_THREAD = 2
_kept = threading.local()


class _Kept(dict):
    """A thread's idle connections, ``(path, connect) -> connection``; closed when the thread ends."""

    def __del__(self):
        for conn in self.values():
            with contextlib.suppress(sqlite3.Error):
                conn.close()


def _take_connection(path) -> sqlite3.Connection:
    """The connection to ``path`` this thread kept from its last request, else a new one.

    Keyed by ``connect`` too, so a connection is reused only while the same function would make it.
    (Never replace the database file under a running server: SQLite would apply the old file's WAL
    to the new one. Stop it, then restore.)
    """
    key = (os.path.abspath(path), connect)
    kept = getattr(_kept, "connections", None)
    conn = kept.pop(key, None) if kept else None
    if conn is not None:
        return conn
    conn = connect(path)
    if isinstance(conn, Connection):
        conn.kept_as = key
    return conn


def _give_back(conn: sqlite3.Connection) -> None:
    """Keep ``conn`` for this thread's next request, or close it (a transaction left open, not ours)."""
    kept_as = getattr(conn, "kept_as", None)
    if kept_as is None or conn.in_transaction:
        conn.close()
        return
    kept = getattr(_kept, "connections", None)
    if kept is None:
        kept = _kept.connections = _Kept()
    if kept_as in kept:
        conn.close()
        return
    kept[kept_as] = conn
    while len(kept) > _KEPT_PER_THREAD:
        kept.pop(next(iter(kept))).close()


def get_db() -> sqlite3.Connection:
    """This request's connection, opened on first use (or kept from this thread's last request)."""
    if "db" not in g:
        g.db = _take_connection(database_path())
    return g.db


def close_db(_exc=None) -> None:
    conn = g.pop("db", None)
    if conn is not None:
        _give_back(conn)


def init_app(app) -> None:
    """Migrate the file at start-up and close each request's connection after it."""
    migrate(database_path(app))
    app.teardown_appcontext(close_db)
