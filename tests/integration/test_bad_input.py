"""Bad input gets a clear message and changes nothing, the same on SQLite and
PostgreSQL; every export imports back and holds no live formula (issue 15, items 1-3).
The limits are the store's column lengths (trials/store/schema.py)."""

from __future__ import annotations

import datetime as dt

import pytest
from store_builders import rating_trial, roster, triangle_trial

from trials import service
from trials.errors import ImportRowsError, TrialsError
from trials.model import Sample
from trials.tabular import read_table

HEADER = "session,panelist,code,attribute,value,comment\n"


def _cups(store, sid, panelist="T01"):
    return [e.code for e in service.plan(store, sid) if e.panelist_code == panelist]


@pytest.mark.parametrize("text, says", [
    (HEADER + "1,T01,{c},overall liking,5,,extra\n", "Expected 6 columns, got 7"),
    (HEADER + "1,T01,{c}\n", "Expected 6 columns, got 3"),
    (HEADER + '1,T01,{c},overall liking,5,"never closed\n', "every quote must close"),
    ("session,panelist,code,code,attribute,value\n1,T01,{c},{c},overall liking,5\n",
     "'code' more than once"),
    (HEADER + "1,T01,{c},overall liking,5,\x00\n", "NUL byte"),
])
def test_a_malformed_response_file_is_refused_with_a_reason(store, tmp_path, text, says):
    codes = roster(store, 2)
    sid = rating_trial(store, codes)
    path = tmp_path / "answers.csv"
    path.write_bytes(text.format(c=_cups(store, sid)[0]).encode())
    with pytest.raises(TrialsError, match=says):
        service.import_answers(store, sid, str(path))
    assert service.list_answers(store, sid) == []


@pytest.mark.parametrize("score", ["inf", "-inf", "1e400", "nan"])
def test_a_score_that_is_not_finite_is_a_bad_row_on_every_way_in(store, tmp_path, score):
    codes = roster(store, 2)
    sid = rating_trial(store, codes)
    code = _cups(store, sid)[0]
    path = tmp_path / "answers.csv"
    path.write_text(HEADER + f"1,T01,{code},overall liking,{score},\n")
    with pytest.raises(ImportRowsError, match="expected a whole number from 1 to 9"):
        service.import_answers(store, sid, str(path))
    with pytest.raises(TrialsError, match="expected a whole number"):
        service.enter_answer(store, sid, panelist_code="T01", code=code,
                                attribute="overall liking", value=score)
    token = service.panelist_token(store, sid, "T01")
    with pytest.raises(TrialsError, match="expected a whole number"):
        service.record_answer(store, token, code=code, attribute="overall liking", value=score)
    assert service.list_answers(store, sid) == []


def test_an_entry_time_whose_offset_overflows_is_a_bad_row(store, tmp_path):
    codes = roster(store, 2)
    sid = rating_trial(store, codes)
    path = tmp_path / "answers.csv"
    path.write_text("session,panelist,code,attribute,value,entered_at\n"
                    f"1,T01,{_cups(store, sid)[0]},overall liking,5,0001-01-01T00:00:00+05:00\n")
    with pytest.raises(ImportRowsError, match="column 'entered_at'"):
        service.import_answers(store, sid, str(path))


@pytest.mark.parametrize("make, says", [
    (lambda st: service.create_trial(st, name="x" * 201, method="triangle"),
     "the trial's name may hold at most 200 characters"),
    (lambda st: service.create_trial(st, name="Crumb", method="triangle",
                                     samples=[Sample("a" * 201)]),
     "a sample's name may hold at most 200"),
    (lambda st: service.create_trial(st, name="Crumb\x00", method="triangle"),
     "NUL character"),
    (lambda st: service.add_panelist(st, "P" * 41), "a panelist code may hold at most 40"),
    (lambda st: service.add_panelist(st, "P1", allergens=[f"allergen {i:03d}" for i in range(40)]),
     "a panelist's allergen list may hold at most 400"),
])
def test_a_text_too_long_or_holding_nul_is_refused_alike_on_both_stores(store, make, says):
    with pytest.raises(TrialsError, match=says):
        make(store)
    assert service.list_trials(store) == [] and service.list_panelists(store) == []


def test_a_roster_file_with_an_overlong_code_imports_nothing(store, tmp_path):
    path = tmp_path / "roster.csv"
    path.write_text("code,consent_on\nP01,2026-01-05\n" + "Q" * 41 + ",2026-01-05\n")
    with pytest.raises(TrialsError, match="at most 40 characters"):
        service.import_panelists(store, str(path))
    assert service.list_panelists(store) == []


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_every_export_imports_back_and_holds_no_live_formula(store, tmp_path, fmt):
    odd = ["=P1", "+P2", "-P3", "@P4"]  # codes a spreadsheet would read as formulas
    for code in odd:
        service.add_panelist(store, code, consent_on=dt.date(2026, 1, 5))
    sid = triangle_trial(store, odd)
    first = {}
    for e in service.plan(store, sid):
        first.setdefault(e.panelist_code, e.code)
    for p, code in first.items():
        service.enter_answer(store, sid, panelist_code=p, code=code, attribute="choice",
                                comment="fine\r=1+1" if p == "=P1" else "")
    path = tmp_path / f"answers.{fmt}"
    assert service.export_answers(store, sid, path, fmt=fmt) == 4
    if fmt == "csv":
        # the carriage return stays inside its quoted cell: one header and four records
        assert len(read_table(path)) == 4
        raw = path.read_text(encoding="utf-8")
        assert "\r\n=" not in raw.replace('"fine\r=1+1"', "")
    cells = read_table(path)
    assert sorted(cells["panelist"]) == sorted(odd)
    # the same trial takes its own export back: every answer is already on file
    assert service.import_answers(store, sid, str(path)) == 0
    assert len(service.list_answers(store, sid)) == 4


def test_a_guarded_cell_in_a_file_is_read_as_the_text_it_guards():
    frame = read_table(b"panelist,comment\n'=P1,'@home\nP2,'plain\n", name="x.csv")
    assert frame.to_dict("records") == [{"panelist": "=P1", "comment": "@home"},
                                         {"panelist": "P2", "comment": "'plain"}]
