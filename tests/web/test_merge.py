"""The three-way merge of two edits of one snippet (``webapp.snippets.merge``): every
combination per field — nobody, only mine, only theirs, both the same, both differently."""

from __future__ import annotations

import pytest

from webapp.snippets import merge
from webapp.snippets.store import VERSION_FIELDS

# A value for each field of a snippet, and two other values for it.
BASE = {
    "title": "Station 3 white",
    "job_number": "24-0117",
    "press": "Press 2",
    "station": "3",
    "notes": "Ran fine.\nCheck the doctor blade.",
    "tags": ["white", "repeat job"],
    "saved_by": "Ada",
    "inputs": {"anilox_volume": "4.5 BCM/in2", "anilox_to_plate": 0.5},
    "results": {"dry": {"value": 1.2, "unit": "um"}},
}
OTHER = {
    "title": "Station 3 opaque white",
    "job_number": "24-0118",
    "press": "Press 4",
    "station": "White",
    "notes": "Ran fine.",
    "tags": ["white"],
    "saved_by": "Bea",
    "inputs": {"anilox_volume": "5 BCM/in2", "anilox_to_plate": 0.5},
    "results": {"dry": {"value": 1.4, "unit": "um"}},
}
THIRD = {
    "title": "Station 3, new white",
    "job_number": "",
    "press": "Press 1",
    "station": "4",
    "notes": "",
    "tags": ["repeat job", "white"],  # the same tags in another order is another value
    "saved_by": "Cy",
    "inputs": {"anilox_volume": "4.5 BCM/in2", "anilox_to_plate": 0.45},
    "results": {"dry": {"value": 1.1, "unit": "um"}},
}


def test_every_field_of_a_kept_version_has_values_here():
    assert set(VERSION_FIELDS) == set(BASE) == set(OTHER) == set(THIRD)


@pytest.mark.parametrize("name", VERSION_FIELDS)
def test_nobody_changed_it(name):
    result = merge.three_way(BASE, BASE, BASE, [name])
    (field,) = result.fields
    assert field.outcome == merge.SAME
    assert result.result() == {name: BASE[name]}
    assert result.conflicts == [] and result.changed_by_me == [] and result.changed_by_them == []


@pytest.mark.parametrize("name", VERSION_FIELDS)
def test_only_mine_changed_it_takes_mine(name):
    mine = {**BASE, name: OTHER[name]}
    result = merge.three_way(BASE, BASE, mine, [name])
    assert result.fields[0].outcome == merge.MINE
    assert result.result() == {name: OTHER[name]}
    assert [f.name for f in result.changed_by_me] == [name] and result.changed_by_them == []


@pytest.mark.parametrize("name", VERSION_FIELDS)
def test_only_theirs_changed_it_keeps_theirs(name):
    theirs = {**BASE, name: OTHER[name]}
    result = merge.three_way(BASE, theirs, BASE, [name])
    assert result.fields[0].outcome == merge.THEIRS
    assert result.result() == {name: OTHER[name]}
    assert [f.name for f in result.changed_by_them] == [name] and result.changed_by_me == []


@pytest.mark.parametrize("name", VERSION_FIELDS)
def test_both_changed_it_the_same_way(name):
    both = {**BASE, name: OTHER[name]}
    result = merge.three_way(BASE, both, dict(both), [name])
    assert result.fields[0].outcome == merge.BOTH_SAME
    assert result.conflicts == []
    assert result.result() == {name: OTHER[name]}


@pytest.mark.parametrize("name", VERSION_FIELDS)
def test_both_changed_it_differently_needs_a_choice(name):
    theirs, mine = {**BASE, name: OTHER[name]}, {**BASE, name: THIRD[name]}
    result = merge.three_way(BASE, theirs, mine, [name])
    field = result.fields[0]
    assert field.outcome == merge.CONFLICT and field.merged is None
    assert (field.base, field.theirs, field.mine) == (BASE[name], OTHER[name], THIRD[name])
    assert result.conflicts == [name]
    with pytest.raises(KeyError, match=name):
        result.result()
    with pytest.raises(KeyError):
        result.result({name: "neither"})
    assert result.result({name: "mine"}) == {name: THIRD[name]}
    assert result.result({name: "theirs"}) == {name: OTHER[name]}


def test_a_whole_snippet_merges_field_by_field():
    theirs = {**BASE, "press": "Press 4", "notes": "Theirs", "tags": ["white"]}
    mine = {**BASE, "title": "Mine", "notes": "Mine", "tags": ["white"]}
    result = merge.three_way(BASE, theirs, mine, VERSION_FIELDS)
    outcomes = {f.name: f.outcome for f in result.fields}
    assert outcomes == {
        "title": merge.MINE,
        "job_number": merge.SAME,
        "press": merge.THEIRS,
        "station": merge.SAME,
        "notes": merge.CONFLICT,
        "tags": merge.BOTH_SAME,
        "saved_by": merge.SAME,
        "inputs": merge.SAME,
        "results": merge.SAME,
    }
    merged = result.result({"notes": "theirs"})
    assert merged == {**BASE, "title": "Mine", "press": "Press 4", "notes": "Theirs", "tags": ["white"]}


def test_a_field_my_edit_did_not_send_counts_as_unchanged_by_me():
    theirs = {**BASE, "press": "Press 4"}
    mine = {"title": "Mine"}  # a partial edit
    result = merge.three_way(BASE, theirs, mine, ["title", "press", "notes"])
    assert result.result() == {"title": "Mine", "press": "Press 4", "notes": BASE["notes"]}
    assert result.conflicts == []
