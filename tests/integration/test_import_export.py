"""Importing and exporting responses: all rows or none, every bad row named."""

from __future__ import annotations

import pandas as pd
import pytest
from store_builders import rating_trial, roster, triangle_trial

from trials import service
from trials.errors import ImportRowsError, TrialsError

HEADER = "session,panelist,code,attribute,value,comment\n"


def _cups(store, sid, panelist="T01"):
    return [e.code for e in service.plan(store, sid) if e.panelist_code == panelist]


def _write(tmp_path, text: str, name="answers.csv", encoding="utf-8") -> str:
    path = tmp_path / name
    path.write_bytes(text.encode(encoding))
    return str(path)


def _full_file(store, sid, codes):
    lines = [HEADER]
    for p in codes:
        for k, c in enumerate(_cups(store, sid, p)):
            lines.append(f"1,{p},{c},overall liking,{k + 5},\n")
            lines.append(f"1,{p},{c},sweetness,{k + 2},\n")
    return "".join(lines)


def test_a_good_file_imports_every_row_once(store, tmp_path):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    path = _write(tmp_path, _full_file(store, sid, codes))
    assert service.import_answers(store, sid, path) == 4 * 3 * 2
    assert service.import_answers(store, sid, path) == 0  # already on file: recorded once
    assert len(service.list_answers(store, sid)) == 24
    assert {r.mode.value for r in service.list_answers(store, sid)} == {"import"}


@pytest.mark.parametrize("fmt", ["csv", "xlsx"])
def test_an_exported_file_imports_back_into_an_identical_store(store, tmp_path, fmt):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    service.import_answers(store, sid, _write(tmp_path, _full_file(store, sid, codes)))
    out = tmp_path / f"export.{fmt}"
    assert service.export_answers(store, sid, out, fmt=fmt) == 24
    exported = service.list_answers(store, sid)
    assert service.import_answers(store, sid, out) == 0
    assert service.list_answers(store, sid) == exported
    frame = pd.read_csv(out, dtype=str) if fmt == "csv" else pd.read_excel(out, dtype=str)
    key = {(e.panelist_code, e.code): e.sample_name for e in service.plan(store, sid)}
    assert all(key[(r.panelist, r.code)] == r.sample for r in frame.itertuples())
    # into a fresh store holding the same plan (an archive copy without answers) it adds all
    copy = service.import_archive(store, service.export_archive(store, sid))
    assert len(service.list_answers(store, copy)) == 24


def test_a_file_with_a_byte_order_mark_and_semicolons_imports(store, tmp_path):
    codes = roster(store, 2)
    sid = rating_trial(store, codes)
    text = _full_file(store, sid, codes).replace(",", ";")
    path = _write(tmp_path, "\ufeff" + text)
    assert service.import_answers(store, sid, path) == 12


def test_a_windows_1252_file_keeps_its_accents(store, tmp_path):
    codes = roster(store, 1)
    sid = rating_trial(store, codes)
    c = _cups(store, sid)[0]
    path = _write(tmp_path, HEADER + f"1,T01,{c},sweetness,4,crème brûlée note\n",
                  encoding="cp1252")
    assert service.import_answers(store, sid, path) == 1
    assert service.list_answers(store, sid)[0].comment == "crème brûlée note"


def test_a_utf16_file_is_refused_with_advice(store, tmp_path):
    codes = roster(store, 1)
    sid = rating_trial(store, codes)
    path = _write(tmp_path, _full_file(store, sid, codes), encoding="utf-16")
    with pytest.raises(TrialsError, match="UTF-16; save it as CSV UTF-8"):
        service.import_answers(store, sid, path)
    assert service.list_answers(store, sid) == []


def test_a_missing_column_is_named_and_nothing_is_imported(store, tmp_path):
    codes = roster(store, 1)
    sid = rating_trial(store, codes)
    c = _cups(store, sid)[0]
    path = _write(tmp_path, f"session,panelist,code,score\n1,T01,{c},4\n")
    with pytest.raises(ImportRowsError) as err:
        service.import_answers(store, sid, path)
    assert err.value.problems == [
        "row 1 (the header): missing column 'attribute'; the file has columns "
        "'session', 'panelist', 'code', 'score'",
        "row 1 (the header): missing column 'value'; the file has columns "
        "'session', 'panelist', 'code', 'score'",
    ]
    assert service.list_answers(store, sid) == []


def test_every_bad_row_is_named_and_no_row_is_imported(store, tmp_path):
    codes = roster(store, 3)
    sid = rating_trial(store, codes)
    c1, c2, c3 = _cups(store, sid, "T01")
    other = next(e.code for e in service.plan(store, sid) if e.code not in (c1, c2, c3)) \
        if len({e.code for e in service.plan(store, sid)}) > 3 else "998"
    service.enter_answer(store, sid, panelist_code="T02", code=_cups(store, sid, "T02")[0],
                            attribute="sweetness", value=5, entered_by="leader")
    rows = [
        f"1,T01,{c1},overall liking,7,fine",           # row 2: good
        f"1,T01,{c2},overall liking,12,",               # row 3: off the scale
        f"1,T99,{c1},overall liking,5,",                # row 4: unknown panelist
        f"1,T01,{other},sweetness,5,",                  # row 5: code not in T01's plan
        f"1,T01,{c3},crunch,5,",                        # row 6: unknown attribute
        f"1,T01,{c1},overall liking,6,",                # row 7: same question as row 2
        f"1,T02,{_cups(store, sid, 'T02')[0]},sweetness,6,",  # row 8: conflicts with the store
        f"1,T01,{c3},sweetness,abc,",                   # row 9: not a number
        f"2,T01,{c3},sweetness,3,",                     # row 10: unknown session
        f"1,T01,{c2},sweetness,3,",                     # row 11: good
    ]
    path = _write(tmp_path, HEADER + "\n".join(rows) + "\n")
    with pytest.raises(ImportRowsError) as err:
        service.import_answers(store, sid, path)
    problems = err.value.problems
    assert problems[0] == "row 3, column 'value': expected a whole number from 1 to 9, got '12'"
    assert problems[1] == ("row 4, column 'panelist': panelist 'T99' has no serving plan "
                           "in this trial")
    assert problems[2].startswith(f"row 5, column 'code': '{other}' is not a code served to "
                                  "panelist 'T01' in session '1'")
    assert problems[3].startswith("row 6, column 'attribute': expected one of the trial's "
                                  "attributes 'overall liking', 'sweetness', got 'crunch'")
    assert problems[4].startswith("row 7: answers the same question as row 2")
    assert problems[5].startswith("row 8: conflicts with the answer on file for panelist 'T02'")
    assert problems[6] == "row 9, column 'value': expected a whole number from 0 to 10, got 'abc'"
    assert problems[7] == "row 10, column 'session': expected one of the sessions '1', got '2'"
    assert len(problems) == 8
    assert "8 bad row(s); nothing imported" in str(err.value)
    assert len(service.list_answers(store, sid)) == 1  # only the answer entered before


def test_a_triangle_file_takes_one_choice_per_panelist(store, tmp_path):
    codes = roster(store, 3)
    sid = triangle_trial(store, codes)
    a, b, _ = _cups(store, sid, "T01")
    t2 = _cups(store, sid, "T02")
    path = _write(tmp_path, HEADER + f"1,T01,{a},choice,,\n1,T01,{b},choice,,\n"
                  f"1,T02,{t2[0]} {t2[1]},choice,,\n1,T03,,choice,no preference,\n")
    with pytest.raises(ImportRowsError) as err:
        service.import_answers(store, sid, path)
    assert [p.split(":")[0] for p in err.value.problems] == [
        "row 3", "row 4, column 'code'", "row 5, column 'value'"]
    assert "expected one code, got" in err.value.problems[1]
    assert service.list_answers(store, sid) == []


def test_formula_like_comments_are_neutralised_on_export(store, tmp_path):
    codes = roster(store, 1)
    sid = rating_trial(store, codes)
    c = _cups(store, sid)[0]
    service.enter_answer(store, sid, panelist_code="T01", code=c, attribute="sweetness",
                            value=4, comment="=HYPERLINK(\"x\")", entered_by="leader")
    out = tmp_path / "x.csv"
    service.export_answers(store, sid, out)
    assert pd.read_csv(out, dtype=str)["comment"].tolist() == ["'=HYPERLINK(\"x\")"]


def test_an_unknown_export_format_is_refused(store, tmp_path):
    sid = rating_trial(store, roster(store, 1))
    with pytest.raises(TrialsError, match="'pdf'"):
        service.export_answers(store, sid, tmp_path / "x.pdf", fmt="pdf")


def test_a_roster_and_batch_measures_import_from_csv(store, tmp_path):
    path = _write(tmp_path, "code,allergens,consent_on\nR1,Sesame;milk,2026-01-02\nR2,,\n",
                  "roster.csv")
    assert service.import_panelists(store, path) == 2
    got = {p.code: p for p in service.list_panelists(store)}
    assert got["R1"].allergens == ("sesame", "milk") and got["R2"].consent_on is None
    bad = _write(tmp_path, "code,consent_on\nR3,02/01/2026\nR3,\n", "bad.csv")
    with pytest.raises(ImportRowsError) as err:
        service.import_panelists(store, bad)
    assert err.value.problems[0].startswith("row 2, column 'consent_on'")
    assert "'02/01/2026'" in err.value.problems[0]
    assert err.value.problems[1] == "row 3, column 'code': 'R3' repeats row 2"
    assert "R3" not in {p.code for p in service.list_panelists(store)}

    sid = service.create_trial(store, name="Chicken", method="rating", samples=["A", "B"]).id
    csv = ("sample,batch,kind,name,value,unit\nA,F1,setting,fryer temperature,175,°C\n"
           "A,F1,measure,yield,74.2,%\nB,F1,measure,yield,71.0,%\n")
    assert service.import_batches(store, sid, _write(tmp_path, csv, "b.csv")) == 3
    frame = service.measures_frame(store, sid)
    assert frame[frame["name"] == "yield"]["value"].tolist() == [74.2, 71.0]
    bad = "sample,batch,kind,name,value,unit\nC,F1,measure,yield,70,%\nA,F2,size,yield,70,%\n"
    with pytest.raises(ImportRowsError) as err:
        service.import_batches(store, sid, _write(tmp_path, bad, "bb.csv"))
    assert err.value.problems == [
        "row 2, column 'sample': unknown sample 'C'",
        "row 3, column 'kind': expected 'setting' or 'measure', got 'size'",
    ]
    assert len(service.list_batches(store, sid)) == 2
