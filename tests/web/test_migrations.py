"""Shipped migrations never change: a file migrated by an older inkfilm must
have run exactly the SQL this one would run. Add a new numbered file instead."""

from __future__ import annotations

import hashlib

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
    numbers = [int(name[:4]) for name in names]
    expected = [n for n in range(1, db.SCHEMA_VERSION + 1) if n not in db.RESERVED_MIGRATIONS or n in numbers]
    assert numbers == expected
    assert len(db.MIGRATIONS) == db.SCHEMA_VERSION == numbers[-1]
    # a reserved number left free runs as an empty step, nothing else does
    assert all((script == "") == (n not in numbers) for n, script in enumerate(db.MIGRATIONS, start=1))
