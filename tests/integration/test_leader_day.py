"""A panel leader's day on a real store (issue 13): units refused or converted at
entry, a batch value corrected and audited, a trial's status moving on by itself, and
the recorded decision in the printable summary."""

from __future__ import annotations

import io

import pytest
from store_builders import rating_trial, roster, triangle_trial

from trials import service
from trials.errors import ImportRowsError, TrialsError
from trials.model import Status


def _trial(store) -> int:
    return service.create_trial(store, name="Crust test", method="rating",
                                samples=["Usual", "Dark"], by="test").id


def test_a_unit_that_cannot_be_converted_is_refused_at_entry_naming_both(store):
    sid = _trial(store)
    service.add_batch(store, sid, "Usual", "U1", settings=[("oven", 180, "°C")])
    with pytest.raises(TrialsError) as caught:
        service.add_batch(store, sid, "Dark", "D1", settings=[("oven", 200, "g")])
    assert str(caught.value) == ("'oven' is recorded in '°C' (a temperature); 'g' (a mass) "
                                 "cannot be converted to it")
    with pytest.raises(TrialsError, match="'splodge' is not a unit this tool knows"):
        service.add_batch(store, sid, "Dark", "D1", measures=[("weight", 5, "splodge")])
    assert [b.label for b in service.list_batches(store, sid)] == ["U1"]  # nothing recorded


def test_an_import_refuses_unconvertible_and_unknown_units_row_by_row(store, tmp_path):
    sid = _trial(store)
    service.add_batch(store, sid, "Usual", "U1", measures=[("weight", 950, "g")])
    path = tmp_path / "batches.csv"
    path.write_text("sample,batch,kind,name,value,unit\n"
                    "Dark,D1,measure,weight,1.1,kg\n"
                    "Dark,D1,measure,core,92,degC\n"
                    "Dark,D2,measure,core,90,min\n"
                    "Dark,D2,measure,weight,1000,lumps\n", encoding="utf-8")
    with pytest.raises(ImportRowsError) as caught:
        service.import_batches(store, sid, path)
    msg = str(caught.value)
    assert "row 4, column 'unit': 'core' is recorded in 'degC' (a temperature); 'min'" in msg
    assert "row 5, column 'unit': unit 'lumps' is not a unit this tool knows" in msg
    assert "row 2" not in msg and "row 3" not in msg


def test_values_in_degc_and_celsius_sign_reach_results_and_report_as_one_variable(store):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    service.add_batch(store, sid, "Glaze A", "A1", settings=[("oven", 180, "degC")])
    service.add_batch(store, sid, "Glaze B", "B1", settings=[("oven", 463.15, "K")])
    service.add_batch(store, sid, "Glaze C", "C1", settings=[("oven", 200, "°C")])
    result = service.analyse_trial(store, sid)
    means = result.measures.sample_means("oven")
    # 463.15 K = 190 degC (SI brochure 2.3.1: T/°C = T/K - 273.15)
    assert means == pytest.approx({"Glaze A": 180.0, "Glaze B": 190.0, "Glaze C": 200.0})
    assert {s.unit for s in result.measures.summaries} == {"degC"}
    assert "oven" in service.report_html(store, sid)


def test_a_recorded_batch_value_is_corrected_with_its_unit_and_audited(store):
    sid = _trial(store)
    service.add_batch(store, sid, "Usual", "U1", settings=[("oven", 180, "°C")])
    service.add_batch(store, sid, "Dark", "D1", settings=[("oven", 20, "°C")])
    batch = service.set_batch_value(store, sid, "Dark", "D1", kind="setting", name="oven",
                                    value="473.15", unit="K", by="ana")
    assert [(m.name, m.value, m.unit) for m in batch.settings] == [("oven", 473.15, "K")]
    log = [(a.who, a.field, a.old, a.new) for a in service.audit_log(store, sid)
           if a.table == "batch_value"]
    assert log == [("ana", "oven value", "20.0", "473.15"), ("ana", "oven unit", "°C", "K")]
    with pytest.raises(TrialsError, match="cannot be converted"):
        service.set_batch_value(store, sid, "Dark", "D1", kind="setting", name="oven",
                                value="5", unit="kg", by="ana")
    with pytest.raises(TrialsError, match="no setting named 'fan'"):
        service.set_batch_value(store, sid, "Dark", "D1", kind="setting", name="fan",
                                value="5", unit="", by="ana")


def test_a_batch_recorded_with_a_sign_off_is_signed_at_once(store):
    sid = _trial(store)
    batch = service.add_batch(store, sid, "Usual", "U1", safety_signed_by="sous chef",
                              safety_signed_on="2026-03-02")
    assert batch.signed_off and str(batch.safety_signed_on) == "2026-03-02"


def _answer_all(store, sid, codes, *, upto=None):
    """Each panelist (the first ``upto``) picks the first cup of their triangle set."""
    plan = service.plan(store, sid)
    for c in codes[:upto]:
        first = next(e for e in plan if e.panelist_code == c)
        service.record_answer(store, service.panelist_token(store, sid, c), code=first.code,
                              attribute="choice")


def test_the_status_moves_on_with_the_answers_and_never_back_over_the_leader(store):
    codes = roster(store, 3)
    sid = triangle_trial(store, codes)
    assert service.get_trial(store, sid).status == Status.READY
    _answer_all(store, sid, codes, upto=1)
    assert service.get_trial(store, sid).status == Status.TASTING
    _answer_all(store, sid, codes, upto=2)
    assert service.get_trial(store, sid).status == Status.TASTING  # one answer still out
    _answer_all(store, sid, codes)
    assert service.get_trial(store, sid).status == Status.ANALYSED
    moves = [(a.who, a.old, a.new) for a in service.audit_log(store, sid)
             if a.field == "status"]
    assert moves[-2:] == [("T01 (automatic)", "ready", "tasting"),
                          ("T03 (automatic)", "tasting", "analysed")]
    service.record_decision(store, sid, "Keep the usual proof", "No difference.", by="ana")
    token = service.panelist_token(store, sid, codes[0])
    other = [e for e in service.plan(store, sid) if e.panelist_code == codes[0]][1]
    service.record_answer(store, token, code=other.code, attribute="choice")  # a change
    assert service.get_trial(store, sid).status == Status.DECIDED


def test_the_printable_summary_holds_the_recorded_decision_and_rationale(store):
    from pypdf import PdfReader

    codes = roster(store, 3)
    sid = triangle_trial(store, codes)
    _answer_all(store, sid, codes)
    service.record_decision(store, sid, "Switch to the short proof",
                            "Nobody could tell; it saves an hour.", by="ana")
    pdf = PdfReader(io.BytesIO(service.report_pdf(store, sid)))
    text = " ".join(" ".join(page.extract_text().split()) for page in pdf.pages)
    assert "Decision recorded by the panel leader" in text
    assert "Switch to the short proof" in text
    assert "Nobody could tell; it saves an hour." in text
    html = service.report_html(store, sid)
    assert "Verdict code" not in html and "In short: " in html


def test_the_demo_has_a_trial_with_open_ballots_for_a_newcomer(sqlite_url):
    from trials.demo import CURD, seed_demo

    store = service.open_store(sqlite_url)
    seed_demo(store)
    [curd] = [t for t in service.list_trials(store) if t.name == CURD]
    view = service.trial_overview(store, curd.id)
    progress = service.answer_progress(store, curd.id)
    assert len(view.links) == view.panelists == 12  # every panelist has a tasting link
    assert 0 < progress["answered"].sum() < progress["expected"].sum()
    ballots = [service.ballot_for_token(store, view.links[c].split("t=")[1])
               for c in view.links]
    assert any(not b.complete for b in ballots) and any(b.complete for b in ballots)
    assert service.next_step(store, curd.id).step == "answers"
    store.close()


def test_the_next_step_follows_the_trial_from_set_up_to_report(store):
    sid = service.create_trial(store, name="Stock test", method="triangle", by="t").id
    assert service.next_step(store, sid).step == "samples"
    service.add_sample(store, sid, "Usual", is_control=True)
    service.add_sample(store, sid, "Cheaper", by="t")
    assert service.next_step(store, sid).step == "plan"
    codes = roster(store, 3)
    service.draw_plan(store, sid, panelist_codes=codes, seed=2, by="t")
    assert service.next_step(store, sid).step == "ballots"
    _answer_all(store, sid, codes, upto=1)
    assert service.next_step(store, sid).step == "answers"
    _answer_all(store, sid, codes)
    assert service.next_step(store, sid).step == "results"
    service.record_decision(store, sid, "Keep the usual stock", "", by="t")
    assert service.next_step(store, sid).step == "report"
    rated = service.create_trial(store, name="Glaze", method="rating", samples=["A", "B"]).id
    assert service.next_step(store, rated).step == "attributes"


@pytest.mark.parametrize(("url", "local"), [
    ("http://127.0.0.1:8501", True), ("http://localhost:8501", True), ("http://[::1]:8501", True),
    ("http://0.0.0.0:8501", True), ("", True), ("http://192.168.1.20:8501", False),
    ("https://kitchen.example.org", False),
])
def test_tasting_links_on_an_address_of_this_computer_only_are_named(url, local):
    problem = service.link_address_problem(url)
    assert (problem is not None) == local
    if url and local:
        assert url in problem and "no tablet reaches" in problem
