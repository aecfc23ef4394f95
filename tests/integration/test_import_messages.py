"""What an import says: a file wholly on record is not "0 imported"; many bad rows come
back as the first 20, one to a line, and how many more; decimal commas of a
';'-separated file are read as numbers."""

from __future__ import annotations

import pytest
from store_builders import rating_trial, roster

from trials import service
from trials.errors import ImportRowsError

HEADER = "session,panelist,code,attribute,value\n"


def _cups(store, sid, panelist):
    return [e.code for e in service.plan(store, sid) if e.panelist_code == panelist]


def _lines(store, sid, codes, value=lambda k: str(k + 5), sep=","):
    out = []
    for p in codes:
        for k, c in enumerate(_cups(store, sid, p)):
            out.append(sep.join(["1", p, c, "overall liking", value(k)]) + "\n")
            out.append(sep.join(["1", p, c, "sweetness", str(k + 2)]) + "\n")
    return out


def test_a_file_already_on_record_says_so_instead_of_zero_imported(store, tmp_path):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    data = (HEADER + "".join(_lines(store, sid, codes))).encode()
    first = service.import_answer_file(store, sid, data, name="a.csv")
    assert (first.rows, first.added, first.already) == (24, 24, 0)
    assert first.message() == "24 answers imported."
    again = service.import_answer_file(store, sid, data, name="a.csv")
    assert (again.rows, again.added, again.already) == (24, 0, 24)
    assert again.message() == ("All 24 answers in this file are already on record; nothing new "
                               "imported.")
    assert again.to_dict() == {"rows": 24, "added": 0, "already": 24}
    assert service.import_answers(store, sid, data, name="a.csv") == 0
    assert len(service.list_answers(store, sid)) == 24


def test_a_file_partly_on_record_counts_both(store, tmp_path):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    lines = _lines(store, sid, codes)
    service.import_answer_file(store, sid, (HEADER + "".join(lines[:10])).encode())
    done = service.import_answer_file(store, sid, (HEADER + "".join(lines)).encode())
    assert (done.added, done.already) == (14, 10)
    assert done.message() == "14 answers imported; 10 were already on record and are kept once."


def test_many_bad_rows_come_back_as_twenty_lines_and_how_many_more(store):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    bad = _lines(store, sid, codes, value=lambda k: "99")  # 12 rows off the 1..9 scale
    bad += [f"1,NOBODY{i},123,sweetness,3\n" for i in range(23)]  # 23 unknown panelists
    with pytest.raises(ImportRowsError) as err:
        service.import_answer_file(store, sid, (HEADER + "".join(bad)).encode())
    exc = err.value
    assert len(exc.problems) == 35 and exc.head == "35 bad row(s); nothing imported"
    lines = str(exc).splitlines()
    assert lines[0] == "35 bad row(s); nothing imported:"
    assert lines[1:21] == exc.problems[:20]
    assert lines[21:] == ["and 15 more"]
    assert service.list_answers(store, sid) == []


def test_decimal_commas_in_a_semicolon_file_are_read_as_scores(store):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    body = _lines(store, sid, codes, value=lambda k: f"{k + 5},0", sep=";")
    data = ("session;panelist;code;attribute;value\n" + "".join(body)).encode()
    done = service.import_answer_file(store, sid, data, name="semicolon.csv")
    assert done.added == 24
    liking = sorted({a.value for a in service.list_answers(store, sid)
                     if a.attribute == "overall liking"})
    assert liking == ["5", "6", "7"]  # "7,0" read as the whole number 7


def test_a_decimal_comma_score_off_the_grid_of_whole_points_is_still_refused(store):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    body = _lines(store, sid, codes[:1], value=lambda k: "6,5", sep=";")
    with pytest.raises(ImportRowsError, match="got '6.5'"):
        service.import_answer_file(store, sid,
                                   ("session;panelist;code;attribute;value\n"
                                    + "".join(body)).encode(), name="half.csv")
