"""The descriptive profile on the results screen and the rating panel size on the set-up
screen, under AppTest on the invented demo."""

from __future__ import annotations

import pytest

from tests.app.conftest import by_label, page_test, page_text
from trials import service
from trials.demo import LOAF


def _loaf(url):
    store = service.open_store(url)
    return store, next(t.id for t in service.list_trials(store) if t.name == LOAF)


def _small_profile(url):
    """An invented three-sample, four-attribute profile by eight panelists in two
    sessions; panelist K08 reverses the order of the samples on bitterness."""
    import datetime as dt

    import numpy as np
    import pandas as pd

    from trials.model import Attribute, AttributeKind

    store = service.open_store(url)
    panel = [f"K{i:02d}" for i in range(1, 9)]
    for code in panel:
        service.add_panelist(store, code, consent_on=dt.date(2026, 2, 2))
    names = ("roast", "bitterness", "acidity", "body")
    study = service.create_trial(
        store, name="Cold brew: three steep times", method="rating",
        samples=["Steep 12 h", "Steep 16 h", "Steep 20 h"],
        attributes=[Attribute(n, kind=AttributeKind.INTENSITY, low=0, high=10) for n in names])
    true = {"Steep 12 h": (3, 3, 6, 3), "Steep 16 h": (5, 5, 5, 5), "Steep 20 h": (7, 7, 3, 7)}
    rng = np.random.default_rng(12)
    for session in ("1", "2"):
        service.draw_plan(store, study.id, panelist_codes=panel, session=session, seed=4)
    rows = []
    for e in service.plan(store, study.id):
        for j, name in enumerate(names):
            mu = true[e.sample_name][j]
            if e.panelist_code == "K08" and name == "bitterness":
                mu = 10 - mu
            value = int(np.clip(np.rint(mu + rng.normal(0, 0.5)), 0, 10))
            rows.append({"session": e.session, "panelist": e.panelist_code, "code": e.code,
                         "attribute": name, "value": str(value), "comment": "",
                         "entered_by": "panel leader", "entered_at": "2026-02-03T10:00:00",
                         "mode": "paper"})
    service.import_answers(store, study.id, pd.DataFrame(rows).to_csv(index=False).encode(),
                           entered_by="test", name="cold-brew.csv")  # one transaction
    return store, study.id


@pytest.mark.slow  # a whole results screen with its charts, twice
def test_the_results_screen_shows_the_profile_and_the_departing_panelist(app_db):
    store, tid = _small_profile(app_db)
    at = page_test("results")
    at.query_params["study"] = str(tid)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    text = page_text(at)
    assert "Descriptive profile" in text
    prof = service.trial_profile(store, tid)
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["Samples differ (MANOVA)"] == ("yes" if prof.manova.significant else "no")
    assert metrics["Pillai's trace"] == f"{prof.manova.pillai:.3f}"
    assert [t.label for t in at.tabs][-3:] == ["Map (PCA biplot)", "Spider chart", "Tables"]
    # the panel performance view, on bitterness: the interaction and who reverses it
    at.selectbox(key="perf_attribute").select("bitterness")
    by_label(at.toggle, "Show panel performance").set_value(True)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    table = next(df.value for df in at.dataframe if {"slope", "share"} <= set(df.value.columns))
    flagged = table[table["flags"] != ""]
    assert list(flagged["panelist"]) == ["K08"]
    assert flagged["flags"].iloc[0].startswith("direction: reverses")
    assert "Sample x panelist interaction" in page_text(at)


def test_the_set_up_screen_answers_you_need_n_panelists_for_ratings(demo_db):
    store, tid = _loaf(demo_db)
    at = page_test("trial")
    at.query_params["study"] = str(tid)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    first = service.panel_errors(store, exclude=tid)[0]
    want = service.rating_panel_size_needed(store, tid, sd=first.sd)
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["You need"] == f"{want.n} panelists"
    # a given sd, and each panelist tasting one sample
    by_label(at.radio, "The panel's error").set_value("given")
    at.run()
    by_label(at.number_input, "Error standard deviation of one rating (scale points)") \
        .set_value(2.0)
    by_label(at.radio, "Design").set_value("monadic")
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    want = service.rating_panel_size_needed(store, tid, sd=2.0, design="monadic")
    assert {m.label: m.value for m in at.metric}["You need"] == \
        f"{want.n} panelists per sample"
