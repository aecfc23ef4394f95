"""The history screen: search the trials on file and follow the control across trials."""

from tests.app.conftest import page_test


def test_history_lists_the_demo_trials_and_searches_by_process_setting(demo_db):
    at = page_test("history").run()
    assert not at.exception
    assert "3 trial(s) match." in [c.value for c in at.caption]
    at.text_input[0].input("fryer").run()
    assert not at.exception
    assert "1 trial(s) match." in [c.value for c in at.caption]
    table = at.dataframe[0].value
    assert list(table["trial"]) == ["Fried chicken: four coatings"]


def test_history_shows_the_control_trend_for_a_rated_control(demo_db):
    at = page_test("history").run()
    at.selectbox[1].select("Plain flour dredge").run()
    assert not at.exception
    trend = at.dataframe[-1].value
    assert set(trend["attribute"]) == {"overall liking", "crispness", "saltiness"}
    assert (trend["control"] == "Plain flour dredge").all()
