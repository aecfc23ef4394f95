"""The service layer on a real database (SQLite and PostgreSQL via ``db_url``)."""

from __future__ import annotations

import datetime as dt
import json

import pytest
from store_builders import ranking_trial, rating_trial, roster, triangle_trial

from trials import service
from trials.demo import seed_demo
from trials.errors import AccessDenied, NotFoundError, TrialsError
from trials.methods import get_method
from trials.model import EntryMode, Sample, Status


def test_a_trial_created_with_samples_and_attributes_reads_back_the_same(store):
    sid = rating_trial(store, roster(store, 6))
    study = service.get_trial(store, sid)
    assert study.method == "rating"
    assert [s.name for s in study.samples] == ["Glaze A", "Glaze B", "Glaze C"]
    assert [s.is_control for s in study.samples] == [True, False, False]
    assert [(a.name, a.low, a.high) for a in study.attributes] == [
        ("overall liking", 1, 9), ("sweetness", 0, 10)]
    assert study.status == Status.READY  # drawing the plan moves planning -> ready
    summary = service.list_trials(store)
    assert [(s.id, s.name, s.method, s.status) for s in summary] == [
        (sid, study.name, "rating", Status.READY)]
    assert set(summary[0].to_dict()) >= {"id", "name", "method", "status"}


def test_updating_a_trial_changes_only_the_named_fields_and_audits_each(store):
    sid = service.create_trial(store, name="Soup", method="triangle",
                               samples=["Old", "New"], by="ana").id
    service.update_trial(store, sid, by="ben", objective="Cheaper stock?", alpha=0.10)
    study = service.get_trial(store, sid)
    assert (study.objective, study.alpha, study.name) == ("Cheaper stock?", 0.10, "Soup")
    changes = [(a.who, a.field, a.old, a.new) for a in service.audit_log(store, sid)
               if a.table == "study" and a.field in ("objective", "alpha")]
    assert changes == [("ben", "objective", "", "Cheaper stock?"), ("ben", "alpha", "0.05", "0.1")]


@pytest.mark.parametrize("changes, fragment", [
    ({"alpha": 1.5}, "1.5"),
    ({"colour": "red"}, "'colour'"),
    ({"method": "tasting"}, "'tasting'"),
    ({"name": " "}, "must not be empty"),
])
def test_a_bad_update_names_the_bad_value_and_changes_nothing(store, changes, fragment):
    sid = service.create_trial(store, name="Soup", method="triangle", samples=["Old", "New"]).id
    before = service.get_trial(store, sid)
    with pytest.raises(TrialsError, match=fragment.replace("(", r"\(")):
        service.update_trial(store, sid, by="x", **changes)
    assert service.get_trial(store, sid) == before


def test_the_method_cannot_change_once_a_plan_is_drawn(store):
    sid = triangle_trial(store, roster(store, 6))
    with pytest.raises(TrialsError, match="serving plan is drawn"):
        service.update_trial(store, sid, by="x", method="duo-trio")
    assert service.get_trial(store, sid).method == "triangle"


def test_a_decision_is_recorded_with_its_rationale_and_who_made_it(store):
    sid = triangle_trial(store, roster(store, 6))
    study = service.record_decision(store, sid, "Switch to the short proof",
                                    "No difference found", by="head chef")
    assert (study.decision, study.rationale, study.status) == (
        "Switch to the short proof", "No difference found", Status.DECIDED)
    assert any(a.who == "head chef" and a.field == "decision"
               for a in service.audit_log(store, sid))


def test_an_unknown_trial_id_is_a_not_found_error_quoting_the_id(store):
    with pytest.raises(NotFoundError, match="999"):
        service.trial_overview(store, 999)


def test_a_second_control_or_a_repeated_sample_name_is_refused(store):
    sid = service.create_trial(store, name="Buns", method="rating", samples=[
        Sample("A", is_control=True)]).id
    with pytest.raises(TrialsError, match="already has a control"):
        service.add_sample(store, sid, "B", is_control=True)
    with pytest.raises(TrialsError, match="'A'"):
        service.add_sample(store, sid, "A")
    assert [s.name for s in service.get_trial(store, sid).samples] == ["A"]


def test_batches_keep_settings_measures_and_the_safety_sign_off(store):
    sid = service.create_trial(store, name="Chicken", method="rating",
                               samples=["Fried", "Baked"]).id
    service.add_batch(store, sid, "Fried", "F1", prepared_on="2026-02-01", prepared_by="line",
                      settings=[("fryer temperature", 175, "°C"), ("fry time", 12, "min")],
                      measures={"yield": (74.5, "%"), "core temperature": (78.0, "°C")})
    batch = service.sign_off_batch(store, sid, "Fried", "F1", by="sous chef", on="2026-02-01")
    assert batch.signed_off and batch.safety_signed_on == dt.date(2026, 2, 1)
    [b] = service.list_batches(store, sid)
    assert [(m.name, m.value, m.unit) for m in b.settings] == [
        ("fryer temperature", 175.0, "°C"), ("fry time", 12.0, "min")]
    assert [(m.name, m.value, m.unit) for m in b.measures] == [
        ("yield", 74.5, "%"), ("core temperature", 78.0, "°C")]
    frame = service.measures_frame(store, sid)
    assert frame[frame["name"] == "yield"]["value"].tolist() == [74.5]
    with pytest.raises(TrialsError, match="'F1'"):
        service.add_batch(store, sid, "Fried", "F1")
    with pytest.raises(NotFoundError, match="'Grilled'"):
        service.add_batch(store, sid, "Grilled", "G1")


def test_a_plan_serves_every_panelist_and_hands_out_one_token_each(store):
    codes = roster(store, 6)
    sid = rating_trial(store, codes)
    entries = service.plan(store, sid)
    assert len(entries) == 6 * 3
    for c in codes:
        mine = [e for e in entries if e.panelist_code == c]
        assert sorted(e.sample_name for e in mine) == ["Glaze A", "Glaze B", "Glaze C"]
        assert [e.position for e in mine] == [1, 2, 3]
    overview = service.trial_overview(store, sid)
    assert (overview.panelists, overview.plan_size, overview.responses) == (6, 18, 0)
    assert set(overview.links) == set(codes)
    tokens = [link.split("=", 1)[1] for link in overview.links.values()]
    assert all(link.startswith("/taste?t=") for link in overview.links.values())
    assert len(set(tokens)) == 6 and all(len(t) >= 32 for t in tokens)
    assert service.panelist_token(store, sid, "T01") == overview.links["T01"].split("=", 1)[1]
    d = overview.to_dict()
    assert {"id", "name", "method", "status", "samples", "batches", "panelists", "plan_size",
            "responses", "links"} <= set(d)
    assert {"name", "is_control", "allergens"} <= set(d["samples"][0])


def test_a_panelist_without_consent_is_not_planned(store):
    service.add_panelist(store, "N1")
    sid = service.create_trial(store, name="Buns", method="triangle", samples=["A", "B"]).id
    with pytest.raises(TrialsError, match="no consent recorded for: 'N1'"):
        service.draw_plan(store, sid, panelist_codes=["N1"])
    assert service.plan(store, sid) == []


def test_a_plan_that_would_serve_a_declared_allergen_is_refused(store):
    codes = roster(store, 4, allergens={"T02": ("Sesame",)})
    sid = service.create_trial(store, name="Buns", method="triangle", samples=[
        Sample("Plain", is_control=True), Sample("Seeded", allergens=("sesame", "gluten"))]).id
    conflicts = service.allergen_conflicts(store, sid)
    assert [(c.panelist_code, c.sample_name, c.allergens) for c in conflicts] == [
        ("T02", "Seeded", ("sesame",))]
    with pytest.raises(TrialsError, match="panelist 'T02' declared sesame"):
        service.draw_plan(store, sid, panelist_codes=codes)
    assert service.plan(store, sid) == []
    service.draw_plan(store, sid, panelist_codes=["T01", "T03", "T04"])
    assert service.allergen_conflicts(store, sid) == []


def test_the_ballot_shows_codes_and_scales_but_never_the_samples(store):
    codes = roster(store, 3)
    sid = rating_trial(store, codes)
    token = service.panelist_token(store, sid, "T02")
    ballot = service.ballot_for_token(store, token)
    spec = get_method("rating")
    assert (ballot.panelist_code, ballot.question, ballot.instructions) == (
        "T02", spec.question, spec.instructions)
    mine = [e.code for e in service.plan(store, sid) if e.panelist_code == "T02"]
    assert [list(s.codes) for s in ballot.sets] == [mine]
    assert [a.name for a in ballot.attributes] == ["overall liking", "sweetness"]
    text = json.dumps(ballot.to_dict())
    for secret in ("Glaze", "Test rating", "T01", "T03"):
        assert secret not in text
    assert ballot.remaining == 6


def test_an_unknown_token_opens_nothing(store):
    with pytest.raises(AccessDenied):
        service.ballot_for_token(store, "not-a-token")
    with pytest.raises(AccessDenied):
        service.record_answer(store, "", code="123", attribute="choice")


def test_the_same_answer_twice_is_recorded_once_and_a_change_is_audited(store):
    codes = roster(store, 3)
    sid = rating_trial(store, codes)
    token = service.panelist_token(store, sid, "T01")
    code = service.ballot_for_token(store, token).sets[0].codes[0]
    first = service.record_answer(store, token, code=code, attribute="overall liking", value=7)
    again = service.record_answer(store, token, code=code, attribute="overall liking", value="7")
    assert first.value == again.value == "7" and first.mode == EntryMode.TABLET
    assert len(service.list_answers(store, sid)) == 1
    service.record_answer(store, token, code=code, attribute="overall liking", value=8)
    [r] = service.list_answers(store, sid)
    assert (r.panelist_code, r.code, r.value, r.entered_by) == ("T01", code, "8", "T01")
    changes = [(a.field, a.old, a.new) for a in service.audit_log(store, sid)
               if a.table == "response" and a.field == "value"]
    assert changes == [("value", "7", "8")]
    ballot = service.ballot_for_token(store, token)
    assert [(a.code, a.attribute, a.value) for a in ballot.answers] == [
        (code, "overall liking", "8")]
    assert ballot.remaining == 5


@pytest.mark.parametrize("kwargs, fragment", [
    ({"attribute": "overall liking", "value": 12}, "expected a whole number from 1 to 9, got '12'"),
    ({"attribute": "overall liking", "value": "6.5"}, "got '6.5'"),
    ({"attribute": "sweetness", "value": "lots"}, "from 0 to 10, got 'lots'"),
    ({"attribute": "colour", "value": 3}, "got 'colour'"),
    ({"attribute": "overall liking", "value": 5, "code": "999x"}, "'999x' is not a code"),
])
def test_a_bad_answer_names_the_bad_value_and_records_nothing(store, kwargs, fragment):
    sid = rating_trial(store, roster(store, 3))
    token = service.panelist_token(store, sid, "T01")
    kwargs.setdefault("code", service.ballot_for_token(store, token).sets[0].codes[0])
    with pytest.raises(TrialsError, match=fragment.replace("(", r"\(").replace(".", r"\.")):
        service.record_answer(store, token, **kwargs)
    assert service.list_answers(store, sid) == []


def test_a_triangle_choice_is_one_answer_per_set_and_can_be_corrected(store):
    sid = triangle_trial(store, roster(store, 6))
    token = service.panelist_token(store, sid, "T03")
    cups = service.ballot_for_token(store, token).sets[0].codes
    assert len(cups) == 3
    service.record_answer(store, token, code=cups[0], attribute="choice")
    service.record_answer(store, token, code=cups[1], attribute="choice")
    [r] = service.list_answers(store, sid)
    assert (r.code, r.attribute, r.value) == (cups[1], "choice", "")
    with pytest.raises(TrialsError, match="expected empty for a choice, got 'no preference'"):
        service.record_answer(store, token, code="", attribute="choice", value="no preference")
    frame = service.answers_frame(store, sid)
    entry = next(e for e in service.plan(store, sid) if e.code == cups[1])
    assert frame["sample"].tolist() == [entry.sample_name]
    assert frame["role"].tolist() == [entry.role]


def test_ranks_must_lie_between_1_and_the_number_of_cups(store):
    sid = ranking_trial(store, roster(store, 4))
    cups = [e.code for e in service.plan(store, sid) if e.panelist_code == "T01"]
    service.enter_answer(store, sid, panelist_code="T01", code=cups[0], attribute="rank",
                            value="4", entered_by="leader")
    with pytest.raises(TrialsError, match="expected a whole number from 1 to 4, got '5'"):
        service.enter_answer(store, sid, panelist_code="T01", code=cups[1],
                                attribute="rank", value="5", entered_by="leader")
    [r] = service.list_answers(store, sid)
    assert (r.value, r.mode, r.entered_by) == ("4", EntryMode.PAPER, "leader")


def test_a_session_with_answers_cannot_be_redrawn_but_a_new_session_gets_new_codes(store):
    codes = roster(store, 4)
    sid = rating_trial(store, codes)
    first = {e.code for e in service.plan(store, sid, "1")}
    e = service.plan(store, sid)[0]
    service.enter_answer(store, sid, panelist_code=e.panelist_code, code=e.code,
                            attribute="sweetness", value=3)
    with pytest.raises(TrialsError, match="cannot be redrawn"):
        service.draw_plan(store, sid, panelist_codes=codes, seed=1)
    service.draw_plan(store, sid, panelist_codes=codes, session="2", seed=7)
    second = {e.code for e in service.plan(store, sid, "2")}
    assert second and not first & second


def test_an_archive_imports_back_as_an_identical_trial(store):
    codes = roster(store, 6)
    sid = triangle_trial(store, codes)
    service.add_batch(store, sid, "Usual", "B1", settings=[("proof", 90, "min")],
                      measures=[("volume", 5.1, "mL/g")])
    service.sign_off_batch(store, sid, "Usual", "B1", by="sous chef", on="2026-02-02")
    for e in service.plan(store, sid):
        if e.position == 1:
            service.enter_answer(store, sid, panelist_code=e.panelist_code, code=e.code,
                                    attribute="choice", comment="firm", entered_by="leader")
    data = service.export_archive(store, sid)
    copy = service.import_archive(store, data)
    assert copy != sid

    def strip(study):
        d = study.to_dict()
        d.pop("id")
        for s in d["samples"]:
            s.pop("id")
        return d

    assert strip(service.get_trial(store, copy)) == strip(service.get_trial(store, sid))
    assert service.plan(store, copy) == service.plan(store, sid)
    assert service.list_answers(store, copy) == service.list_answers(store, sid)
    assert [b.to_dict() | {"id": None} for b in service.list_batches(store, copy)] == [
        b.to_dict() | {"id": None} for b in service.list_batches(store, sid)]
    assert set(service.panelist_links(store, copy).values()).isdisjoint(
        service.panelist_links(store, sid).values())
    with pytest.raises(TrialsError, match="not a trial archive"):
        service.import_archive(store, b"garbage")


def test_a_trial_keeps_its_aim_and_refuses_an_unknown_one(db_url):
    from trials import service as svc
    from trials.errors import TrialsError

    store = svc.open_store(db_url)
    study = svc.create_trial(store, name="Crumb test", method="triangle", aim="similarity",
                             samples=["Old crumb", "New crumb"], pd=0.3, beta=0.05)
    assert svc.get_trial(store, study.id).aim == "similarity"
    svc.update_trial(store, study.id, by="leader", aim="difference")
    assert svc.get_trial(store, study.id).aim == "difference"
    with pytest.raises(TrialsError, match="'same'"):
        svc.update_trial(store, study.id, by="leader", aim="same")
    assert svc.get_trial(store, study.id).aim == "difference"


def test_history_finds_trials_by_sample_setting_and_method(sqlite_url):
    from trials import service as svc

    store = svc.open_store(sqlite_url)
    seed_demo(store)
    names = lambda rows: sorted(r["name"] for r in rows)  # noqa: E731
    assert names(svc.history(store, text="fryer temperature")) == [
        "Fried chicken: four coatings", "Fried chicken: house dredge vs panko crumb"]
    assert names(svc.history(store, text="short proof")) == [
        "Brioche bun: usual proof vs short proof"]
    assert names(svc.history(store, method="paired-preference")) == [
        "Chilled tomato soup: roasted vs fresh tomatoes"]
    assert svc.history(store, text="no such word anywhere") == []


def test_the_control_trend_averages_the_controls_scores_per_attribute(sqlite_url):
    from trials import service as svc

    store = svc.open_store(sqlite_url)
    seed_demo(store)
    frame = svc.answers_frame(store, 2)
    points = svc.control_trend(store, "Plain flour dredge", attribute="crispness")
    assert [p.study for p in points] == ["Fried chicken: house dredge vs panko crumb",
                                         "Fried chicken: four coatings"]
    points = points[1:]
    mine = frame[(frame["sample"] == "Plain flour dredge") & (frame["attribute"] == "crispness")]
    assert points[0].n == len(mine)
    assert points[0].mean == pytest.approx(mine["score"].astype(float).mean())


def test_the_summary_pdf_and_the_batch_export_hold_the_trials_numbers(sqlite_url):
    import io

    from pypdf import PdfReader

    from trials import service as svc

    store = svc.open_store(sqlite_url)
    seed_demo(store)
    text = "".join(p.extract_text() for p in PdfReader(io.BytesIO(svc.report_pdf(store, 1))).pages)
    assert "16 of 27" in text  # the demo triangle: 16 correct of 27 (see trials/demo.py)
    rows = svc.export_measures_bytes(store, 2).decode("utf-8").splitlines()
    assert rows[0].split(",")[:3] == ["sample", "batch", "kind"]
    assert any("oil uptake" in r and "13.9" in r for r in rows)
