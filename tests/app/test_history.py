"""The history screen: search the trials on file and follow the control across trials."""

from tests.app.conftest import page_test


def test_history_lists_the_demo_trials_and_searches_by_process_setting(demo_db):
    # five demo trials (trials/demo.py): the fifth, a ranking with open ballots
    at = page_test("history").run()
    assert not at.exception
    assert "5 trial(s) match." in [c.value for c in at.caption]
    at.text_input[0].input("fryer temperature").run()
    assert not at.exception
    assert "2 trial(s) match." in [c.value for c in at.caption]
    table = at.dataframe[0].value
    assert sorted(table["trial"]) == ["Fried chicken: four coatings",
                                      "Fried chicken: house dredge vs panko crumb"]


def test_history_shows_the_control_trend_for_a_rated_control(demo_db):
    at = page_test("history").run()
    # the control of the most rated trials comes first
    assert at.selectbox[1].options == ["Plain flour dredge"]
    assert not at.exception
    trend = at.dataframe[-1].value
    assert set(trend["attribute"]) == {"overall liking", "crispness", "saltiness"}
    assert (trend["control"] == "Plain flour dredge").all()
    # two trials rated the same control: the earlier one comes first
    assert list(dict.fromkeys(trend["study"])) == [
        "Fried chicken: house dredge vs panko crumb", "Fried chicken: four coatings"]
