"""Working a saved snippet out again with today's core, and saying what came out differently."""

from __future__ import annotations

import math
from dataclasses import dataclass

from calc import InputError
from webapp.snippets.rules import check_kind, compute

# Relative tolerance when a re-run is compared with what was saved.
RERUN_TOLERANCE = 1e-9


@dataclass(frozen=True)
class Change:
    """One result that came out differently today."""

    where: str
    saved: object
    today: object


@dataclass(frozen=True)
class Rerun:
    results: dict | None
    changes: list[Change]
    error: InputError | None = None

    @property
    def same(self) -> bool:
        return self.error is None and not self.changes


def rerun(snippet: dict, calculations: dict) -> Rerun:
    """Work the snippet's inputs out again with today's core and say what came out differently."""
    try:
        check_kind(snippet["kind"], calculations)
        today = compute(snippet["kind"], snippet["inputs"], calculations)
    except InputError as exc:
        return Rerun(None, [], exc)
    try:
        changes = compare(snippet["results"], today)
    except RecursionError:  # saved results nested far deeper than any calculation gives
        changes = [Change("", snippet["results"], today)]
    return Rerun(today, changes)


def _is_quantity(value) -> bool:
    return isinstance(value, dict) and set(value) == {"value", "unit"}


def compare(saved, today, where: str = "") -> list[Change]:
    """Where ``today`` differs from ``saved``: numbers beyond ``RERUN_TOLERANCE`` (relative), anything else exactly.

    A field that only today's answer has is not a difference: a newer core
    answers more (say, per-1,000 figures) without changing what was saved.
    A saved field today's answer lacks is one.

    >>> compare({"dry": {"value": 1.0, "unit": "um"}}, {"dry": {"value": 1.0 + 1e-12, "unit": "um"}})
    []
    >>> compare({"dry": {"value": 1.0, "unit": "um"}}, {"dry": {"value": 1.1, "unit": "um"}})
    [Change(where='dry', saved={'value': 1.0, 'unit': 'um'}, today={'value': 1.1, 'unit': 'um'})]
    >>> compare({"dry": 1.0}, {"dry": 1.0, "mileage": 5.0}), compare({"dry": 1.0, "wet": 2.0}, {"dry": 1.0})
    ([], [Change(where='wet', saved=2.0, today=None)])
    """
    if _is_quantity(saved) and _is_quantity(today):
        if saved["unit"] != today["unit"] or not _same_number(saved["value"], today["value"]):
            return [Change(where, saved, today)]
        return []
    if isinstance(saved, dict) and isinstance(today, dict):
        changes = []
        for key in saved:
            inner = f"{where}.{key}" if where else str(key)
            if key not in today:
                changes.append(Change(inner, saved[key], None))
            else:
                changes += compare(saved[key], today[key], inner)
        return changes
    if isinstance(saved, list) and isinstance(today, list):
        changes = []
        for index in range(max(len(saved), len(today))):
            inner = f"{where}[{index}]"
            if index >= len(today):
                changes.append(Change(inner, saved[index], None))
            elif index >= len(saved):
                changes.append(Change(inner, None, today[index]))
            else:
                changes += compare(saved[index], today[index], inner)
        return changes
    if _is_number(saved) and _is_number(today):
        return [] if _same_number(saved, today) else [Change(where, saved, today)]
    return [] if saved == today else [Change(where, saved, today)]


def _is_number(value) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def _same_number(a, b) -> bool:
    if not (_is_number(a) and _is_number(b)):
        return a == b
    return math.isclose(a, b, rel_tol=RERUN_TOLERANCE, abs_tol=1e-300)
