"""Two people edited the same snippet: what each changed, merged field by field.

Both edits started from one version (the *base*); one was saved first
(*theirs*, now the newest version), the other arrives late (*mine*). For each
field, compared with the base:

- only theirs changed it: their value stays (nothing of theirs is undone);
- only mine changed it: my value is taken;
- both changed it to the same value: that value;
- both changed it to different values: a *conflict*, which a person settles.

Pure functions over plain dicts (no Flask, no database), so every combination
is tested on its own (``tests/web/test_merge.py``).
"""

from __future__ import annotations

from dataclasses import dataclass, field

# How each field came out of a merge.
SAME = "same"  # nobody changed it
THEIRS = "theirs"  # only the other person changed it: theirs kept
MINE = "mine"  # only I changed it: mine taken
BOTH_SAME = "both same"  # both changed it the same way
CONFLICT = "conflict"  # both changed it differently: a person chooses


@dataclass(frozen=True)
class FieldMerge:
    """One field: its value in the base, theirs and mine, and how it came out."""

    name: str
    base: object
    theirs: object
    mine: object
    outcome: str

    @property
    def merged(self):
        """The value the merge takes (``None`` for a conflict: a person must choose)."""
        if self.outcome in (SAME, THEIRS):
            return self.theirs
        if self.outcome in (MINE, BOTH_SAME):
            return self.mine
        return None


@dataclass(frozen=True)
class Merge:
    fields: list[FieldMerge] = field(default_factory=list)

    @property
    def conflicts(self) -> list[str]:
        return [f.name for f in self.fields if f.outcome == CONFLICT]

    @property
    def changed_by_them(self) -> list[FieldMerge]:
        return [f for f in self.fields if f.outcome in (THEIRS, BOTH_SAME, CONFLICT)]

    @property
    def changed_by_me(self) -> list[FieldMerge]:
        return [f for f in self.fields if f.outcome in (MINE, BOTH_SAME, CONFLICT)]

    def result(self, choices: dict | None = None) -> dict:
        """The merged values; each conflict settled by ``choices[name]`` (``"mine"`` or ``"theirs"``).

        Raises ``KeyError`` naming the first conflict without a choice.
        """
        choices = choices or {}
        merged = {}
        for f in self.fields:
            if f.outcome != CONFLICT:
                merged[f.name] = f.merged
            elif choices.get(f.name) == MINE:
                merged[f.name] = f.mine
            elif choices.get(f.name) == THEIRS:
                merged[f.name] = f.theirs
            else:
                raise KeyError(f.name)
        return merged


def _missing(data: dict, name: str) -> bool:
    return name not in data


def merge_field(name: str, base, theirs, mine) -> FieldMerge:
    """How one field comes out of a three-way merge.

    >>> merge_field("press", "P1", "P2", "P1").outcome, merge_field("press", "P1", "P1", "P3").outcome
    ('theirs', 'mine')
    >>> merge_field("press", "P1", "P2", "P2").outcome, merge_field("press", "P1", "P2", "P3").outcome
    ('both same', 'conflict')
    """
    they_changed = theirs != base
    i_changed = mine != base
    if not they_changed and not i_changed:
        outcome = SAME
    elif they_changed and not i_changed:
        outcome = THEIRS
    elif i_changed and not they_changed:
        outcome = MINE
    elif mine == theirs:
        outcome = BOTH_SAME
    else:
        outcome = CONFLICT
    return FieldMerge(name, base, theirs, mine, outcome)


def three_way(base: dict, theirs: dict, mine: dict, names) -> Merge:
    """Merge ``mine`` into ``theirs`` field by field over ``names``, both made from ``base``.

    A field ``mine`` does not hold (an edit that did not send it) counts as
    unchanged by me. Values compare as they are (lists in order, dicts by
    content): callers pass values already tidied by the same rules
    (``rules.check_meta``), so ``" P1 "`` and ``"P1"`` are one value.
    """
    fields = []
    for name in names:
        base_value = base.get(name)
        their_value = theirs.get(name)
        my_value = base_value if _missing(mine, name) else mine[name]
        fields.append(merge_field(name, base_value, their_value, my_value))
    return Merge(fields)
