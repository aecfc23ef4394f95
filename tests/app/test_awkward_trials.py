"""Every leader screen renders, with no exception box, for trials with awkward data
(issue 13): mixed units (and a legacy value in a unit that cannot be converted), a
served batch not signed off, no batches at all, answers missing, one panelist, every
score identical, and a sample nobody was served. Each screen also shows what it is for
that trial (its title with the trial's name, and a line the awkward case calls for).

All trials are invented. One AppTest per screen runs over every trial (the trial picked
through the session, as the sidebar does), so the screens' imports load once.
"""

from __future__ import annotations

import datetime as dt
import io

import pandas as pd
import pytest

from tests.app.conftest import page_test, page_text, shown
from trials import service, ui
from trials.model import Attribute, AttributeKind, Sample

LEADER = [name for name, _, _ in ui.LEADER_PAGES]
CONSENT = dt.date(2026, 1, 5)


def _answers(store, trial_id: int, score) -> None:
    """Every cup of the plan scored on every attribute by ``score(panelist, sample, i)``
    (None leaves the answer out), imported as a file."""
    study = service.get_trial(store, trial_id)
    rows = []
    for i, e in enumerate(service.plan(store, trial_id)):
        for a in study.attributes:
            value = score(e.panelist_code, e.sample_name, a, i)
            if value is not None:
                rows.append({"session": e.session, "panelist": e.panelist_code,
                             "code": e.code, "attribute": a.name, "value": str(value)})
    if rows:
        buf = io.StringIO()
        pd.DataFrame(rows).to_csv(buf, index=False)
        service.import_answers(store, trial_id, buf.getvalue().encode("utf-8"),
                               entered_by="test", name="answers.csv")


def _rating(store, name: str, samples, codes, *, jar: bool = False, **plan) -> int:
    attributes = [Attribute("overall liking", AttributeKind.HEDONIC, 1, 9)]
    if jar:
        attributes.append(Attribute("sweetness", AttributeKind.JAR, 1, 5))
    sid = service.create_trial(
        store, name=name, method="rating", delta=1.0, by="test",
        samples=[Sample(s, is_control=(i == 0)) for i, s in enumerate(samples)],
        attributes=attributes).id
    service.draw_plan(store, sid, panelist_codes=codes, seed=3, by="test", **plan)
    return sid


def _batches(store, sid, samples, *, signed=True, units=("degC", "g")) -> None:
    for i, s in enumerate(samples):
        service.add_batch(store, sid, s, "B1", settings=[("oven", 180 + 10 * i, units[0])],
                          measures=[("weight", 900 + 40 * i, units[1])],
                          safety_signed_by="sous chef" if signed else "", by="test")


@pytest.fixture(scope="module")
def awkward(tmp_path_factory):
    """The awkward trials in one store: name -> (trial id, a line its screens show)."""
    from trials.store import batches as batch_rows

    url = f"sqlite:///{tmp_path_factory.mktemp('awkward') / 'awkward.db'}"
    store = service.open_store(url)
    codes = [f"A{i:02d}" for i in range(1, 9)]
    for c in codes:
        service.add_panelist(store, c, consent_on=CONSENT, by="test")
    three = ["Usual glaze", "Dark glaze", "Honey glaze"]
    out = {}

    liking = {"Usual glaze": 6, "Dark glaze": 5, "Honey glaze": 7}

    def usual(p, s, a, i):
        if a.kind == AttributeKind.JAR:
            return 1 + (i * 7 + len(p)) % 5
        return min(9, max(1, liking[s] + (i % 3) - 1))

    # mixed units: degC, °C and K; g and kg; plus a legacy value in a unit that cannot be
    # converted (written to the store directly, as data from before the check would be)
    sid = _rating(store, "Glaze: mixed units", three, codes, jar=True)
    service.add_batch(store, sid, three[0], "B1", settings=[("oven", 180, "degC")],
                      measures=[("weight", 900, "g")], safety_signed_by="sous chef")
    service.add_batch(store, sid, three[1], "B1", settings=[("oven", 463.15, "K")],
                      measures=[("weight", 0.95, "kg")], safety_signed_by="sous chef")
    service.add_batch(store, sid, three[2], "B1", settings=[("oven", 200, "°C")],
                      measures=[("weight", 1.0, "kg")], safety_signed_by="sous chef")
    store.write(lambda tx: batch_rows.store_values(
        tx, sid, [(three[2], "B2", "measure", "weight", "5", "degC", None, "")], "legacy"))
    _answers(store, sid, usual)
    out["mixed units"] = (sid, "values in 'degC' left out")

    sid = service.create_trial(store, name="Stock: unsigned batch", method="triangle",
                               pd=0.3, samples=[Sample("Usual stock", is_control=True),
                                                Sample("Cheap stock")], by="test").id
    _batches(store, sid, ["Usual stock", "Cheap stock"], signed=False)
    service.draw_plan(store, sid, panelist_codes=codes, seed=4, by="test")
    first = {}
    for e in service.plan(store, sid):
        first.setdefault(e.panelist_code, e.code)
    for c, code in first.items():
        service.record_answer(store, service.panelist_token(store, sid, c), code=code,
                              attribute="choice")
    out["unsigned batch"] = (sid, "not signed off for food safety")

    sid = _rating(store, "Glaze: no batches", three, codes)
    _answers(store, sid, usual)
    out["no batches"] = (sid, "No batch is recorded")

    sid = _rating(store, "Glaze: answers missing", three, codes, jar=True)
    _batches(store, sid, three)
    _answers(store, sid, lambda p, s, a, i: usual(p, s, a, i) if p in codes[:3] else None)
    out["answers missing"] = (sid, "3 of 8 panelists answered")

    sid = _rating(store, "Glaze: one panelist", three, codes[:1], jar=True)
    _batches(store, sid, three)
    _answers(store, sid, usual)
    out["one panelist"] = (sid, "one panelist only")

    sid = _rating(store, "Glaze: every score the same", three, codes, jar=True)
    _batches(store, sid, three)
    _answers(store, sid, lambda p, s, a, i: 3 if a.kind == AttributeKind.JAR else 5)
    out["identical scores"] = (sid, "Results")

    five = three + ["Maple glaze", "Plain glaze"]
    sid = _rating(store, "Glaze: a sample nobody tasted", five, codes[:2], per_panelist=2)
    _batches(store, sid, five)
    _answers(store, sid, lambda p, s, a, i: 5 + (i % 3))
    served = {e.sample_name for e in service.plan(store, sid)}
    assert set(five) - served, "the plan must leave a sample unserved"
    out["unserved sample"] = (sid, "Results")

    sid = service.create_trial(store, name="Glaze: nothing yet", method="rating",
                               by="test").id
    out["empty trial"] = (sid, "No results: no answers yet")
    store.close()
    return url, out


EXPECTED = {  # screen -> a line it shows for every trial (beside the trial's name)
    "home": "Trials", "trial": "Trial set-up", "samples": "Samples and batches",
    "panel": "Panel", "plan": "Serving plan", "printing": "Printing",
    "entry": "Paper entry", "results": "Results", "decision": "Decision and report",
    "history": "History",
}


@pytest.mark.slow
@pytest.mark.parametrize("screen", LEADER)
def test_every_leader_screen_renders_every_awkward_trial(awkward, monkeypatch, screen):
    url, trials = awkward
    monkeypatch.setenv("TRIALS_DB", url)
    monkeypatch.delenv("TRIALS_PASSCODE", raising=False)
    at = page_test(screen)
    cases = list(trials.items())
    if screen in ("panel", "history"):  # screens of the roster and of all trials: once
        cases = cases[:1]
    for case, (sid, line) in cases:
        at.session_state[ui.STUDY_KEY] = sid
        at.query_params["study"] = str(sid)
        at.run()
        assert not at.exception, (case, [e.message for e in at.exception])
        text = page_text(at)
        title = " ".join(shown(t.value) for t in at.title)
        assert title, (case, "no title")
        # (the experiments screen works on experiments, not on the trial in hand)
        if screen not in ("home", "panel", "history", "experiment"):
            assert service.get_trial(service.open_store(url), sid).name in title, (case, title)
        if screen == "results":
            assert line in text, (case, line)
        if screen == "home":  # what to do next for the trial in hand
            assert "Next for this trial:" in text, case
            if case == "empty trial":
                assert "Add the samples" in text
        if screen == "decision" and case in ("unsigned batch", "no batches"):
            assert line in text, (case, line)


def test_correcting_a_batch_value_refuses_a_unit_of_another_kind_and_saves_a_convertible_one(
        app_db):
    from tests.app.conftest import by_label

    store = service.open_store(app_db)
    sid = service.create_trial(store, name="Glaze: a correction", method="rating",
                               samples=["Usual glaze", "Dark glaze"]).id
    service.add_batch(store, sid, "Usual glaze", "B1", settings=[("oven", 180, "°C")])
    service.add_batch(store, sid, "Dark glaze", "B1", settings=[("oven", 190, "°C")])
    at = page_test("samples")
    at.query_params["study"] = str(sid)
    at.run()
    by_label(at.selectbox, "Value").select_index(1)  # Dark glaze / B1: oven
    at.run()
    by_label(at.text_input, "Unit").input("g")
    next(b for b in at.button if b.label == "Save the value").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert [shown(e.value) for e in at.error] == [
        "'oven' is recorded in '°C' (a temperature); 'g' (a mass) cannot be converted to it"]
    by_label(at.text_input, "Value").input("463.15")
    by_label(at.text_input, "Unit").input("K")
    next(b for b in at.button if b.label == "Save the value").click()
    at.run()
    assert not at.exception and not at.error
    dark = next(b for b in service.list_batches(store, sid) if b.sample_name == "Dark glaze")
    assert [(m.value, m.unit) for m in dark.settings] == [(463.15, "K")]
