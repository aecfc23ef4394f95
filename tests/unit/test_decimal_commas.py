"""Decimal commas in tables (trials.tabular.read_table): read as numbers in a file
separated by ';' (the CSV that spreadsheets write where the comma is the decimal mark,
common practice, no source), never in a comma-separated file."""

from __future__ import annotations

import pandas as pd

from trials.tabular import read_table


def _read(text: str, **kw) -> pd.DataFrame:
    return read_table(text.encode("utf-8"), name="table.csv", **kw)


def test_decimal_commas_in_a_semicolon_file_become_numbers():
    frame = _read("panelist;value;unit\nP01;7,0;g\nP02;6;g\nP03;-0,25;g\nP04;;g\n")
    assert frame["value"].tolist() == ["7.0", "6", "-0.25", ""]
    assert frame["unit"].tolist() == ["g"] * 4  # text columns are left alone
    assert float(frame["value"][0]) == 7.0


def test_a_number_column_of_a_semicolon_file_comes_back_as_floats():
    frame = _read("panelist;score\nP01;7,5\nP02;6\n", numbers=["score"])
    assert frame["score"].dtype == float
    assert frame["score"].tolist() == [7.5, 6.0]


def test_a_quoted_decimal_comma_in_a_comma_file_stays_text():
    frame = _read('panelist,value,comment\nP01,"7,0","soft, sweet"\nP02,"6,5",\n',
                  numbers=["value"])
    assert frame["value"].tolist() == ["7,0", "6,5"]
    assert frame["comment"].tolist() == ["soft, sweet", ""]


def test_a_semicolon_column_that_is_not_all_numbers_is_left_as_typed():
    frame = _read("panelist;value\nP01;7,0\nP02;lots\nP03;1.234,5\n")
    assert frame["value"].tolist() == ["7,0", "lots", "1.234,5"]


def test_codes_and_dotted_decimals_are_unchanged():
    frame = _read("code;value\n123;7.5\n456;8\n")
    assert frame["code"].tolist() == ["123", "456"]
    assert frame["value"].tolist() == ["7.5", "8"]
