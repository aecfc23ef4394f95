"""A whole triangle test run through the screens alone, from an empty store: create the
trial, add the panel, draw the plan, type in the paper ballots, read the result."""

from __future__ import annotations

import scipy.stats

from tests.app.conftest import by_label, page_test, page_text
from trials import service

PANEL = [f"K{i:02d}" for i in range(1, 13)]


def _page(name: str, study: int | None = None):
    at = page_test(name)
    if study is not None:
        at.query_params["study"] = str(study)
    return at.run()


def _new_trial(name: str, method: str, first: str, second: str) -> None:
    at = _page("home")
    by_label(at.text_input, "Name").input(name)
    by_label(at.selectbox, "Method").select(method)
    by_label(at.text_input, "First sample (the control)").input(first)
    by_label(at.text_input, "Second sample").input(second)
    by_label(at.button, "Create the trial").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]


def _add_panel(codes) -> None:
    at = _page("panel")
    for code in codes:
        by_label(at.text_input, "Code").input(code)
        by_label(at.checkbox, "Informed consent obtained").check()
        by_label(at.button, "Add to the roster").click()
        at.run()
        assert not at.exception, [e.message for e in at.exception]


def test_a_whole_triangle_test_from_an_empty_store_through_the_screens(app_db):
    store = service.open_store(app_db)

    _new_trial("Shortbread: salted vs cultured butter", "triangle",
               "Salted butter shortbread", "Cultured butter shortbread")
    (study,) = service.list_trials(store)

    _add_panel(PANEL)
    assert sorted(p.code for p in service.list_panelists(store)) == PANEL

    at = _page("plan", study.id)
    by_label(at.button, "Draw the plan").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    plan = service.plan(store, study.id)
    assert len(plan) == 3 * len(PANEL)

    # the first eight panelists find the odd cup, the other four pick a matching one
    chosen = {}
    for k, code in enumerate(PANEL):
        cups = [e for e in plan if e.panelist_code == code]
        odd = [e for e in cups if sum(x.sample_name == e.sample_name for x in cups) == 1][0]
        other = next(e for e in cups if e is not odd)
        chosen[code] = (odd if k < 8 else other).code
    at = _page("entry", study.id)
    for p in PANEL:  # the entry boxes are keyed by panelist and set
        at.text_input(key=f"paper_{study.id}_1_0_{p}_1_chosen").input(chosen[p])
    by_label(at.button, "Check and save").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert len(service.list_answers(store, study.id)) == len(PANEL)

    at = _page("results", study.id)
    assert not at.exception, [e.message for e in at.exception]
    text = page_text(at)
    assert "8 of 12" in text
    # the decision's p-value is the exact binomial tail (ISO 4120), checked with scipy
    p = scipy.stats.binomtest(8, 12, 1 / 3, alternative="greater").pvalue
    assert f"p = {p:.3f}" in text


def test_a_whole_rated_trial_from_an_empty_store_through_the_screens(app_db):
    import numpy as np

    from trials.stats.ratings import rating_anova

    store = service.open_store(app_db)
    _new_trial("Flapjack: three oat cuts", "rating", "Rolled oats", "Jumbo oats")
    (study,) = service.list_trials(store)

    at = _page("samples", study.id)
    by_label(at.text_input, "Sample name").input("Steel-cut oats")
    by_label(at.button, "Add the sample").click()
    at.run()
    by_label(at.text_input, "Attribute").input("overall liking")
    by_label(at.button, "Add the attribute").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    got = service.get_trial(store, study.id)
    assert [s.name for s in got.samples] == ["Rolled oats", "Jumbo oats", "Steel-cut oats"]
    assert [(a.name, a.low, a.high) for a in got.attributes] == [("overall liking", 1, 9)]

    _add_panel(PANEL[:6])

    at = _page("plan", study.id)
    by_label(at.button, "Draw the plan").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    plan = service.plan(store, study.id)
    assert len(plan) == 3 * 6

    # invented scores: steel-cut liked most, rolled least, a panelist offset and a wobble
    effect = {"Rolled oats": 4, "Jumbo oats": 6, "Steel-cut oats": 8}
    sample_of = {(e.panelist_code, e.code): e.sample_name for e in plan}
    at = _page("entry", study.id)
    grid = service.paper_sheet(store, study.id, "1")  # the boxes are keyed by panelist and code
    for i, (p, code) in enumerate(zip(grid["panelist"], grid["code"])):
        wobble = (-1, 0, 1, 0)[i % 4]
        score = effect[sample_of[(p, code)]] + (int(p[1:]) % 2) + wobble
        at.text_input(key=f"paper_{study.id}_1_0_{p}_{code}_overall liking").input(str(score))
    by_label(at.button, "Check and save").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert len(service.list_answers(store, study.id)) == 18

    at = _page("results", study.id)
    assert not at.exception, [e.message for e in at.exception]
    text = page_text(at)
    frame = service.answers_frame(store, study.id)
    result = rating_anova(frame, score="score", sample="sample", panelist="panelist")
    assert result.groups == {"Steel-cut oats": "a", "Jumbo oats": "b", "Rolled oats": "c"}
    assert "the samples differ" in text
    means = frame.groupby("sample")["score"].mean()
    shown = next(d.value for d in at.dataframe if "mean" in d.value.columns)
    for name, mean in result.means.items():
        assert np.isclose(mean, means[name])
        assert np.isclose(shown.set_index("sample").loc[name, "mean"], mean)  # on the screen
