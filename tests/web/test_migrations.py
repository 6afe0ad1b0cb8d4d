"""Shipped migrations never change: a file migrated by an older inkfilm must
have run exactly the SQL this one would run. Add a new numbered file instead."""

from __future__ import annotations

import hashlib

import pytest

from webapp.common import db

# sha256 of each shipped migration file, byte for byte.
SHIPPED = {
    "0001_snippet.sql": "67d4d5d9bfe3d7e220cf9bcc354590d229549b2bf6d0eb05feb6d9e2be983115",
    "0002_snippet_tag.sql": "4395c4a1f058a6739a6291b89fdcdb5eccd82bcaea99696da3d4de9571c89394",
}


def test_shipped_migrations_are_unchanged():
    for name, digest in SHIPPED.items():
        assert hashlib.sha256((db.MIGRATIONS_DIR / name).read_bytes()).hexdigest() == digest, name


def test_migrations_are_numbered_from_one_without_gaps():
    names = sorted(path.name for path in db.MIGRATIONS_DIR.glob("*.sql"))
    assert [int(name[:4]) for name in names] == list(range(1, len(names) + 1))
    assert len(db.MIGRATIONS) == db.SCHEMA_VERSION == len(names)


def test_a_file_out_of_sequence_is_refused(tmp_path, monkeypatch):
    for name in db.MIGRATIONS_DIR.glob("*.sql"):
        (tmp_path / name.name).write_bytes(name.read_bytes())
    monkeypatch.setattr(db, "MIGRATIONS_DIR", tmp_path)
    assert len(db._load_migrations()) == db.SCHEMA_VERSION
    stray = tmp_path / f"{db.SCHEMA_VERSION + 2:04d}_stray.sql"
    stray.write_text("SELECT 1;", encoding="utf-8")
    with pytest.raises(RuntimeError, match="out of sequence"):
        db._load_migrations()


def test_the_version_before_a_migration_is_found_by_its_name():
    names = sorted(path.name for path in db.MIGRATIONS_DIR.glob("*.sql"))
    for index, name in enumerate(names):
        assert db.version_before(name[5:-4]) == index
    with pytest.raises(KeyError):
        db.version_before("no_such_migration")
