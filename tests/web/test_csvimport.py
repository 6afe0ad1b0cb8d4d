"""The one check-every-row CSV import (``webapp.common.csvimport``) behind the roll register's and the inks'
files: row numbers as a spreadsheet counts, the column named, nothing added on any problem."""

from __future__ import annotations

import sqlite3

import pytest

from calc import InputError
from webapp.common import csvimport
from webapp.common.csvimport import ALREADY_HERE, ImportRefused, import_rows, read_rows
from webapp.inks import exchange as inks
from webapp.rolls import exchange as rolls


def refused(call) -> list[dict]:
    with pytest.raises(ImportRefused) as caught:
        call()
    return caught.value.errors


def test_rows_are_numbered_as_a_spreadsheet_counts_them_blank_ones_skipped():
    rows = read_rows("\ufeffName, Type \r\nA,b\r\n,\r\n\r\nC,d\r\n", "inks", ("name", "type"), ("name",), 10)
    assert rows == [(2, {"name": "A", "type": "b"}), (5, {"name": "C", "type": "d"})]


def test_the_header_and_the_rows_are_checked_with_the_same_words_for_both_features():
    columns, required = ("roll_id", "screen"), ("roll_id", "screen")
    assert refused(lambda: read_rows("", "rolls", columns, required, 10)) == [
        {"row": 1, "field": "header", "message": "the file is empty"}
    ]
    assert refused(lambda: read_rows("roll_id,colour\n", "rolls", columns, required, 10)) == [
        {"row": 1, "field": "colour", "message": "is not a column of the rolls file"},
        {"row": 1, "field": "screen", "message": "this column is missing"},
    ]
    assert refused(lambda: read_rows("roll_id,screen\nA,1,2\nB,2\n", "rolls", columns, required, 10)) == [
        {"row": 2, "field": "row", "message": "has 3 cells, the header 2"}
    ]
    assert refused(lambda: read_rows("roll_id,screen\nA,1\nB,2\nC,3\n", "rolls", columns, required, 2)) == [
        {"row": 4, "field": "row", "message": "at most 2 rows per file"}
    ]
    # Both features' files go through it: the same fault, the same words, each naming its own file.
    conn = sqlite3.connect(":memory:")
    for exchange, table in ((rolls, "rolls"), (inks, "inks")):
        assert exchange.ImportRefused is ImportRefused
        errors = refused(lambda exchange=exchange, table=table: exchange.import_csv(conn, table, "nonsense\n"))
        assert errors[0] == {"row": 1, "field": "nonsense", "message": f"is not a column of the {table} file"}


def test_any_wrong_row_adds_nothing_and_each_problem_names_its_row_and_column():
    conn = sqlite3.connect(":memory:")
    added = []
    rows = [(number, {"name": f"ink {number}"}) for number in range(2, 200)]

    def check(number, row):
        if number % 2:
            raise InputError("density", "is required")
        return row

    errors = refused(lambda: import_rows(conn, rows, check, added.extend))
    assert added == []
    assert len(errors) == csvimport.MAX_REPORTED
    assert errors[0] == {"row": 3, "field": "density", "message": "is required"}


def test_rows_already_here_are_counted_and_the_rest_added_in_one_transaction():
    conn = sqlite3.connect(":memory:", isolation_level=None)
    conn.execute("CREATE TABLE t (name TEXT)")
    rows = [(2, {"name": "a"}), (3, {"name": "b"}), (4, {"name": "c"})]

    def add(items):
        assert conn.in_transaction
        conn.executemany("INSERT INTO t VALUES (?)", [(item["name"],) for item in items])

    answer = import_rows(conn, rows, lambda n, row: ALREADY_HERE if row["name"] == "b" else row, add)
    assert answer == {"added": 2, "already_here": 1}
    assert [name for (name,) in conn.execute("SELECT name FROM t ORDER BY name")] == ["a", "c"]


def test_a_name_twice_in_one_file_is_refused_and_one_already_here_counted():
    from webapp.common.csvimport import one_per_file

    check = one_per_file("name", str.casefold, {"cyan"}, dict)
    assert check(2, {"name": "Black"}) == {"name": "Black"}
    assert check(3, {"name": "CYAN"}) is ALREADY_HERE
    with pytest.raises(InputError) as caught:
        check(4, {"name": "black"})
    assert (caught.value.field, caught.value.message) == ("name", "'black' is also on row 2")


def test_a_log_row_identical_to_one_here_or_on_an_earlier_row_is_counted_once():
    from webapp.common.csvimport import unless_here

    logged = {("roll 1", 4.5)}
    assert unless_here(logged, ("roll 1", 4.5), "first") is ALREADY_HERE
    assert unless_here(logged, ("roll 1", 4.4), "second") == "second"
    assert unless_here(logged, ("roll 1", 4.4), "again") is ALREADY_HERE
