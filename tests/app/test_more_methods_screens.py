"""The two-out-of-five, specified tetrad, A-not-A and same-different on the tasting and
results screens (issue 17, item 3): the tablet labels a group with the registry's wording
and saves two codes, or offers the method's two responses; the results screen of a method
without a Thurstonian model shows no d' and says why, and a signal-detection trial shows
its response table. Invented data."""

from __future__ import annotations

import datetime as dt

import pytest

from tests.app.conftest import page_test, page_text
from trials import service
from trials.methods import (
    A_NOT_A,
    CATA,
    SAME_DIFFERENT,
    SPECIFIED_TETRAD,
    TWO_OUT_OF_FIVE,
    get_method,
)
from trials.model import Sample

PANEL = [f"F{i:02d}" for i in range(1, 11)]
pytestmark = pytest.mark.filterwarnings("ignore::trials.errors.UnbalancedPlanWarning")


@pytest.fixture
def store(app_db):
    s = service.open_store(app_db)
    for code in PANEL:
        service.add_panelist(s, code, consent_on=dt.date(2026, 2, 2))
    return s


def _start(at) -> None:
    """Past the first screen (allergens, the stop-at-any-time note) to the first step."""
    next(b for b in at.button if b.label == "Start tasting").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]


@pytest.mark.parametrize("method", [TWO_OUT_OF_FIVE, SPECIFIED_TETRAD])
def test_the_tablet_asks_for_two_codes_with_the_registry_label(store, method):
    study = service.create_trial(store, name="Glaze: two honeys", method=method,
                                 samples=["Clover honey glaze", "Buckwheat honey glaze"],
                                 target_sample="Buckwheat honey glaze")
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    mine = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)
            if e.panelist_code == "F02"]
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, study.id, "F02")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    _start(at)
    # the registry's label over the codes, one button per code in serving order
    assert f"{get_method(method).group_label}: tap 2 cups." in page_text(at)
    assert [b.label for b in at.button if b.label in mine] == mine
    assert "Clover" not in page_text(at) and "Buckwheat" not in page_text(at)
    for code in (mine[1], mine[3]):
        next(b for b in at.button if b.label == code).click()
        at.run()
    assert not service.list_answers(store, study.id)  # nothing saved before the confirm
    next(b for b in at.button if b.label == f"Confirm: {mine[1]} and {mine[3]}").click()
    at.run()
    assert [(r.code, r.attribute) for r in service.list_answers(store, study.id)] == [
        (f"{mine[1]} {mine[3]}", "choice")]


def test_the_results_of_a_two_out_of_five_show_pd_and_no_dprime(store):
    study = service.create_trial(store, name="Glaze: two honeys", method=TWO_OUT_OF_FIVE,
                                 samples=["Clover honey glaze", "Buckwheat honey glaze"])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    for i, p in enumerate(PANEL):
        cups = sorted((e for e in service.plan(store, study.id) if e.panelist_code == p),
                      key=lambda e: e.position)
        names = [e.sample_name for e in cups]
        few = min(set(names), key=names.count)
        pick = [e.code for e in cups if (e.sample_name == few) == (i < 5)][:2]
        service.enter_answer(store, study.id, panelist_code=p, code=" ".join(pick),
                             attribute="choice", value="")
    at = page_test("results")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["Correct"] == "5 of 10" and metrics["d'"] == "none"
    diff = service.analyse_trial(store, study.id).choice.difference
    assert metrics["pd (discriminators)"] == f"{diff.pd:.2f}"


@pytest.mark.parametrize("method", [A_NOT_A, SAME_DIFFERENT])
def test_the_tablet_offers_the_two_responses_and_saves_one(store, method):
    study = service.create_trial(store, name="Glaze: two honeys", method=method,
                                 samples=["Clover honey glaze", "Buckwheat honey glaze"])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    mine = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)
            if e.panelist_code == "F03"]
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, study.id, "F03")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    spec = get_method(method)
    _start(at)
    assert [b.label for b in at.button if b.label in spec.responses] == list(spec.responses)
    text = page_text(at)
    assert all(c in text for c in mine)
    assert "Clover" not in text and "Buckwheat" not in text
    next(b for b in at.button if b.label == spec.responses[1]).click()
    at.run()
    assert not service.list_answers(store, study.id)  # shown, not saved, until confirmed
    next(b for b in at.button if b.label == f"Confirm: {spec.responses[1]}").click()
    at.run()
    assert [(r.code, r.attribute, r.value) for r in service.list_answers(store, study.id)] == [
        (mine[0], "response", spec.responses[1])]
    next(b for b in at.button if b.label == "Finish").click()
    at.run()
    assert any("Thank you, you are done." in s.value for s in at.success)


def test_the_results_of_an_a_not_a_show_the_response_table(store):
    study = service.create_trial(store, name="Glaze: two honeys", method=A_NOT_A,
                                 samples=[Sample("Clover honey glaze", is_control=True),
                                          Sample("Buckwheat honey glaze")])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    for e in service.plan(store, study.id):  # everyone right: "not A" only to the new glaze
        word = "not A" if e.sample_name.startswith("Buckwheat") else "A"
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                             attribute="response", value=word)
    at = page_test("results")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    sg = service.analyse_trial(store, study.id).signal
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["d'"] == f"{sg.result.dprime.dprime:.2f}"
    table = next(df.value for df in at.dataframe if "sets served" in df.value.columns)
    assert list(table["sets"]) == [sg.n_signal, sg.n_noise] == [5, 5]


def test_the_results_of_a_rating_show_the_r_index_against_the_control(store):
    from trials.model import Attribute

    study = service.create_trial(
        store, name="Glaze: two honeys", method="rating",
        samples=[Sample("Clover honey glaze", is_control=True), Sample("Buckwheat honey glaze")],
        attributes=[Attribute("overall liking", low=1, high=9)])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    for i, e in enumerate(service.plan(store, study.id)):
        value = 7 + i % 2 if e.sample_name.startswith("Buckwheat") else 5 + i % 2
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                             attribute="overall liking", value=value)
    at = page_test("results")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    table = next(df.value for df in at.dataframe if "r_index" in df.value.columns)
    want = service.r_index_of(store, study.id, "overall liking").rows[0]
    assert list(table["sample"]) == ["Buckwheat honey glaze"]
    assert table["r_index"].iloc[0] == pytest.approx(want.r_index) and want.r_index == 1.0


def _cata_trial(store):
    from trials.model import Attribute, AttributeKind

    study = service.create_trial(
        store, name="Glaze: two honeys", method="cata",
        samples=[Sample("Clover honey glaze", is_control=True), Sample("Buckwheat honey glaze")],
        attributes=[Attribute("sticky", AttributeKind.CHECK, 0, 1),
                    Attribute("bitter", AttributeKind.CHECK, 0, 1),
                    Attribute("floral", AttributeKind.CHECK, 0, 1),
                    Attribute("overall liking", low=1, high=9)])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=5)
    return study


def test_the_tablet_ticks_cata_words_and_saves_each_as_one_or_zero(store):
    study = _cata_trial(store)
    first = min((e for e in service.plan(store, study.id) if e.panelist_code == "F04"),
                key=lambda e: e.position)
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, study.id, "F04")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    _start(at)
    words = at.button_group[0]
    assert words.label == "Tap every word that applies to this cup"
    at.button_group[0].set_value(["bitter"])
    at.run()
    next(b for b in at.button if b.label == "Save the words").click()
    at.run()
    got = {r.attribute: r.value for r in service.list_answers(store, study.id)}
    assert got == {"sticky": "0", "bitter": "1", "floral": "0"}
    assert all(r.code == first.code for r in service.list_answers(store, study.id))


def test_the_results_of_a_cata_trial_show_the_words_and_the_map(store):
    study = _cata_trial(store)
    for e in service.plan(store, study.id):
        dark = e.sample_name.startswith("Buckwheat")
        for w, v in (("sticky", 1), ("bitter", int(dark)), ("floral", int(not dark))):
            service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                                 attribute=w, value=v)
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                             attribute="overall liking", value=5 if dark else 7)
    at = page_test("results")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    table = next(df.value for df in at.dataframe if "Cochran Q" in df.value.columns)
    assert list(table["word"]) == ["sticky", "bitter", "floral"]
    assert list(table["Buckwheat honey glaze"]) == [10, 10, 0]
    # every panelist ticked bitter for one glaze only: Q = 10 on 1 df (Cochran 1950, by hand:
    # (k - 1)[k sum C^2 - T^2] / [k T - sum R^2] = 1 * (2 * 100 - 100) / (2 * 10 - 10))
    assert table.loc[table["word"] == "bitter", "Cochran Q"].iloc[0] == pytest.approx(10.0)
    assert at.get("plotly_chart")  # the correspondence map


def test_a_cata_word_is_added_on_the_samples_screen_with_its_zero_one_scale(store):
    from tests.app.conftest import by_label

    study = service.create_trial(store, name="Glaze: two honeys", method="cata",
                                 samples=["Clover honey glaze", "Buckwheat honey glaze"])
    at = page_test("samples")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    by_label(at.text_input, "Attribute").input("sticky")
    by_label(at.selectbox, "Kind").select("check")
    next(b for b in at.button if b.label == "Add the attribute").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    (word,) = service.get_trial(store, study.id).attributes
    assert (word.name, str(word.kind), word.low, word.high) == ("sticky", "check", 0, 1)


@pytest.mark.parametrize("method", [A_NOT_A, CATA])
def test_the_set_up_screen_speaks_of_the_methods_own_panel_size(store, method):
    if method == A_NOT_A:
        study = service.create_trial(store, name="Glaze: two honeys", method=A_NOT_A,
                                     samples=[Sample("Clover honey glaze", is_control=True),
                                              Sample("Buckwheat honey glaze")])
    else:
        study = _cata_trial(store)
    at = page_test("trial")
    at.query_params["study"] = str(study.id)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    text = page_text(at)
    assert "For rankings" not in text and "You need" not in [m.label for m in at.metric]
    assert ("d'" in text) if method == A_NOT_A else ("check-all-that-apply" in text)
