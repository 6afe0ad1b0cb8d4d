"""Fixtures of the store tests: a migrated store file of the test's own and a connection to it."""

from __future__ import annotations

import contextlib

import pytest

from webapp.common import db


@pytest.fixture
def path(tmp_path):
    """Where the test's store file goes (not made yet: ``conn`` migrates it)."""
    return tmp_path / db.FILENAME


@pytest.fixture
def conn(path):
    """A connection to a store file migrated to today's schema, closed after the test."""
    db.migrate(path)
    with contextlib.closing(db.connect(path)) as connection:
        yield connection
