"""``inkfilm serve`` with a data folder it cannot use: one plain line and exit status 2, no traceback.

Tests run as root, for whom permission bits stop nothing, so an unwritable
folder is made the way it is for anyone: a path through a regular file, a
path that is a file, a database that is a folder or not a database. A full
disk on a running server is tested in tests/web/test_store_hardening.py.
"""

from __future__ import annotations

import subprocess
import sys

import pytest

from tests.conftest import ROOT, free_port
from webapp.common import db


def serve(data_dir, *extra: str) -> subprocess.CompletedProcess:
    command = [sys.executable, "-m", "webapp.cli", "serve", "--no-https", "--host", "127.0.0.1"]
    command += ["--port", str(free_port()), "--data-dir", str(data_dir), *extra]
    return subprocess.run(command, cwd=ROOT, capture_output=True, text=True, timeout=60)


def a_file(tmp_path):
    path = tmp_path / "a-file"
    path.write_text("not a folder")
    return path


def database_is_a_folder(tmp_path):
    (tmp_path / "data" / db.FILENAME).mkdir(parents=True)
    return tmp_path / "data"


def database_is_not_a_database(tmp_path):
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / db.FILENAME).write_bytes(b"these are not the pages of a database file" * 100)
    return tmp_path / "data"


@pytest.mark.parametrize(
    ("make", "words"),
    [
        (lambda tmp: a_file(tmp) / "data", "cannot write the data folder"),
        (a_file, "cannot write the data folder"),
        (database_is_a_folder, "cannot use the database"),
        (database_is_not_a_database, "cannot use the database"),
    ],
    ids=["under-a-file", "is-a-file", "database-is-a-folder", "not-a-database"],
)
@pytest.mark.parametrize("demo", [False, True], ids=["shop", "demo"])
def test_serve_with_an_unusable_data_folder_says_so_in_one_line(tmp_path, make, words, demo):
    data_dir = make(tmp_path)
    finished = serve(data_dir, *(["--demo"] if demo else []))
    assert finished.returncode == 2, finished.stdout + finished.stderr
    assert "Traceback" not in finished.stderr
    lines = finished.stderr.strip().splitlines()
    assert len(lines) == 1, finished.stderr
    assert lines[0].startswith("inkfilm: ") and words in lines[0]
    assert str(data_dir.name) in lines[0]


def test_writable_problem_is_none_for_a_good_folder(tmp_path):
    assert db.writable_problem(tmp_path / "new" / "data") is None
    assert not [path for path in (tmp_path / "new" / "data").iterdir() if path.name.startswith(".inkfilm")]


def test_a_read_only_database_file_is_named(tmp_path, monkeypatch):
    # Root writes through chmod 444; a read-only open stands in for a read-only file system.
    import sqlite3

    db.migrate(tmp_path / db.FILENAME)

    def read_only(path):
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True, isolation_level=None)
        return conn

    monkeypatch.setattr(db, "connect", read_only)
    problem = db.writable_problem(tmp_path)
    assert problem is not None and "cannot use the database" in problem and "readonly" in problem
