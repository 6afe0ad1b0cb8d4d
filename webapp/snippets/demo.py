"""The demo shop: an invented converter's saved snippets, for ``inkfilm serve --demo``.

The snippets (``demo_shop.json``) give inputs only; their results are worked
out with today's core when the demo folder is first filled, so they always
re-run the same. Nothing is added to a folder that already has snippets.
"""

from __future__ import annotations

import contextlib
import json
from datetime import UTC, datetime, timedelta
from pathlib import Path

from webapp.calculators import CALCULATIONS
from webapp.common import db
from webapp.snippets import rules, store

DATA = Path(__file__).with_name("demo_shop.json")


def shop() -> dict:
    return json.loads(DATA.read_text(encoding="utf-8"))


def fill(data_dir: Path, now: datetime | None = None) -> int:
    """Add the demo shop's snippets to the database in ``data_dir`` if it has none; how many were added."""
    path = Path(data_dir) / db.FILENAME
    db.migrate(path)
    now = now or datetime.now(UTC)
    with contextlib.closing(db.connect(path)) as conn:
        if conn.execute("SELECT count(*) FROM snippet").fetchone()[0]:
            return 0
        items = shop()["snippets"]
        for item in sorted(items, key=lambda entry: -entry["days_ago"]):
            meta = {name: item.get(name, "") for name in rules.META_FIELDS}
            when = (now - timedelta(days=item["days_ago"])).replace(hour=14, minute=5 + item["days_ago"], second=0)
            store.create(conn, item["kind"], item["inputs"], meta, CALCULATIONS, now=when)
        return len(items)
