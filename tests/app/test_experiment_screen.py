"""The recipe experiments screen under AppTest: the food-code caution, a design
previewed and created through the service, a refused unsafe design, and the results
of an experiment with its optimum."""

from __future__ import annotations

import datetime as dt

import pytest

from tests.app.conftest import by_label, page_test, page_text
from trials import service, ui

FACTORS = [
    {"name": "proof time", "unit": "min", "low": 40, "high": 60, "safe_low": 30,
     "safe_high": 80},
    {"name": "salt", "unit": "%", "low": 1.5, "high": 2.1, "safe_low": 1.0, "safe_high": 2.6},
]


def test_the_design_screen_warns_previews_and_creates(app_db):
    at = page_test("experiment").run()
    assert not at.exception
    text = page_text(at)
    assert "local food code" in text and "declared safe ranges are refused" in text
    assert "runs" in text  # the preview of the default design
    by_label(at.text_input, "Experiment name").input("<b>Roll</b> trial").run()
    by_label(at.button, "Create the experiment and its rating trial").click().run()
    assert not at.exception
    (exp,) = service.list_experiments(service.open_store(app_db))
    assert exp.name == "<b>Roll</b> trial"
    assert "Runs, in the order to make them" in page_text(at)


def test_an_unsafe_design_is_refused_on_the_screen(app_db):
    at = page_test("experiment").run()
    by_label(at.selectbox, "Design").set_value("ccd-rotatable").run()
    # the default factors' safe ranges hold the rotatable axial points; tighten one
    at.session_state["factors"] = {"edited_rows": {"0": {"safe_low": 40.0}},
                                   "added_rows": [], "deleted_rows": []}
    at.run()
    assert not at.exception
    assert any("outside the declared safe range" in e.value for e in at.error)
    assert not [b for b in at.button if b.label.startswith("Create") and not b.disabled]


@pytest.mark.slow
def test_results_show_each_response_and_the_contours(app_db):
    store = service.open_store(app_db)
    exp = service.create_experiment(store, name="Roll", kind="ccd-face", factors=FACTORS,
                                    center_points=3, seed=2)
    for i in range(4):
        service.add_panelist(store, f"T{i}", consent_on=dt.date(2026, 1, 5))
    for r in exp.runs:
        x1, x2 = r.coded
        service.record_run_measures(store, exp.id, r.run,
                                    {"yield": (92 - x1 + 0.5 * x2 - x1 * x1 + 0.1 * (r.run % 2),
                                               "%")})
    at = page_test("experiment").run()
    at.segmented_control[0].set_value("Results").run()
    assert not at.exception
    text = page_text(at)
    assert "Goals for the joint optimum" in text
    assert "quadratic model" in text and "Stationary point" in text
    assert len(at.get("plotly_chart")) == 1


def test_factor_and_measure_names_with_markup_are_shown_as_typed(app_db):
    from tests.app.test_literal_text import _chart_strings, _check
    from tests.nasty_names import nasty

    store = service.open_store(app_db)
    factors = [dict(FACTORS[0], name=nasty("proof")), dict(FACTORS[1], name=nasty("salt"))]
    exp = service.create_experiment(store, name=nasty("Roll"), kind="ccd-face",
                                    factors=factors, center_points=3, seed=2)
    for r in exp.runs:
        x1, x2 = r.coded
        service.record_run_measures(store, exp.id, r.run,
                                    [(nasty("yield"), 92 - x1 - x2 * x2 + 0.1 * (r.run % 2),
                                      "%")])
    at = page_test("experiment").run()
    texts = _check(at)  # no live markup anywhere on the screen
    assert any(nasty("proof") in t for t in texts)
    at.segmented_control[0].set_value("Results").run()
    texts = _check(at)
    assert any(nasty("salt") in t for t in texts)
    charts = _chart_strings(at)
    assert ui.chart_text(nasty("proof")) in charts  # the contour's axis, escaped for plotly
