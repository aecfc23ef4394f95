"""The history screen: search the trials on file and follow the control across trials."""

from tests.app.conftest import page_test


def test_history_lists_the_demo_trials_and_searches_by_process_setting(demo_db):
    # seven demo trials (trials/demo.py), the recipe experiment's among them
    at = page_test("history").run()
    assert not at.exception
    assert "7 trial(s) match." in [c.value for c in at.caption]
    at.text_input[0].input("fryer temperature").run()
    assert not at.exception
    assert "2 trial(s) match." in [c.value for c in at.caption]
    table = at.dataframe[0].value
    assert sorted(table["trial"]) == ["Fried chicken: four coatings",
                                      "Fried chicken: house dredge vs panko crumb"]


def test_history_shows_the_control_trend_for_a_rated_control(demo_db):
    at = page_test("history").run()
    # the control of the most rated trials comes first
    # (the fried-chicken control, rated in two trials; the loaf profile's control, in one)
    assert at.selectbox[1].options == ["Plain flour dredge", "White tin loaf"]
    assert not at.exception
    trend = at.dataframe[-1].value
    assert set(trend["attribute"]) == {"overall liking", "crispness", "saltiness"}
    assert (trend["control"] == "Plain flour dredge").all()
    # two trials rated the same control: the earlier one comes first
    assert list(dict.fromkeys(trend["study"])) == [
        "Fried chicken: house dredge vs panko crumb", "Fried chicken: four coatings"]
