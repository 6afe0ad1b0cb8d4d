"""The ``inkfilm`` command's snippet side: ``serve --demo``, passcode options, ``backup`` while serving."""

from __future__ import annotations

import contextlib
import json
import sqlite3
import subprocess
import sys
import threading
import urllib.request
from pathlib import Path

from tests.conftest import ROOT, start_server, stop
from webapp import cli
from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import demo


def get_json(url: str):
    with urllib.request.urlopen(url, timeout=10) as response:
        return json.load(response)


def post_json(url: str, body: dict):
    request = urllib.request.Request(url, json.dumps(body).encode(), {"Content-Type": "application/json"})
    with urllib.request.urlopen(request, timeout=10) as response:
        return json.load(response)


def test_the_demo_shop_fills_a_separate_folder_once(tmp_path):
    assert demo.fill(tmp_path) == len(demo.shop()["snippets"])
    assert demo.fill(tmp_path) == 0
    with contextlib.closing(db.connect(tmp_path / db.FILENAME)) as conn:
        rows = conn.execute("SELECT kind, inputs, results FROM snippet").fetchall()
    assert {row["kind"] for row in rows} == {"film", "estimate", "convert"}
    for row in rows:
        assert json.loads(row["results"]) == CALCULATIONS[row["kind"]](json.loads(row["inputs"]))


def test_demo_uses_its_own_folder_unless_told_otherwise():
    parser = cli.build_parser()
    assert parser.parse_args(["serve", "--demo"]).data_dir == cli.DEFAULT_DATA
    assert cli.DEMO_DATA != cli.DEFAULT_DATA


def test_serve_demo_shows_a_lived_in_shop(tmp_path):
    process, base = start_server(tmp_path / "demo", "--demo")
    try:
        listing = get_json(base + "/api/v1/snippets")
        assert listing["total"] == len(demo.shop()["snippets"])
        assert "24-0117" in {snippet["job_number"] for snippet in listing["snippets"]}
        with urllib.request.urlopen(base + "/snippets", timeout=10) as response:
            assert "This is the demo shop" in response.read().decode()
    finally:
        stop(process)


def test_backup_while_the_server_saves(tmp_path):
    data = tmp_path / "data"
    process, base = start_server(data)
    film = {"anilox_volume": "4 BCM/in2", "anilox_to_plate": 0.5, "plate_to_substrate": 0.5}
    saved_before = [
        post_json(base + "/api/v1/snippets", {"kind": "film", "inputs": film, "title": f"s{n}"}) for n in range(20)
    ]
    stop_saving = threading.Event()

    def keep_saving():
        number = 0
        while not stop_saving.is_set():
            post_json(base + "/api/v1/snippets", {"kind": "film", "inputs": film, "title": f"during {number}"})
            number += 1

    writer = threading.Thread(target=keep_saving)
    writer.start()
    target = tmp_path / "backups" / "inkfilm-copy.sqlite3"
    target.parent.mkdir()
    try:
        result = subprocess.run(
            [sys.executable, "-m", "webapp.cli", "backup", str(target), "--data-dir", str(data)],
            cwd=ROOT,
            capture_output=True,
            text=True,
            timeout=60,
        )
    finally:
        stop_saving.set()
        writer.join(timeout=20)
        stop(process)
    assert result.returncode == 0, result.stderr
    assert "copied" in result.stdout
    with contextlib.closing(sqlite3.connect(target)) as copy:
        assert copy.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        titles = {row[0] for row in copy.execute("SELECT title FROM snippet")}
        assert copy.execute("PRAGMA user_version").fetchone()[0] == db.SCHEMA_VERSION
    assert {snippet["title"] for snippet in saved_before} <= titles


def test_backup_of_a_missing_database_says_so(tmp_path, capsys):
    assert cli.main(["backup", str(tmp_path / "copy.sqlite3"), "--data-dir", str(tmp_path / "nothing")]) == 1
    assert "there is no database" in capsys.readouterr().err


def test_serve_refuses_a_database_from_a_newer_inkfilm(tmp_path):
    data = tmp_path / "data"
    data.mkdir()
    with contextlib.closing(sqlite3.connect(data / db.FILENAME)) as conn:
        conn.execute(f"PRAGMA user_version = {db.SCHEMA_VERSION + 5}")
    result = subprocess.run(
        [sys.executable, "-m", "webapp.cli", "serve", "--port", "0", "--data-dir", str(data)],
        cwd=ROOT,
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert result.returncode == 2
    assert "newer than this inkfilm knows" in result.stderr
    assert Path(data / db.FILENAME).exists()
