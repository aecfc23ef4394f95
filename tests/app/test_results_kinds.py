"""The results screen on the kinds of trial the demo lacks: a ranking, a rating with a
just-about-right scale, and the duo-trio and tetrad ballots. Invented data, entered
through the service as paper ballots."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from tests.app.conftest import page_test, page_text
from trials import service
from trials.model import Attribute, AttributeKind, Sample

PANEL = [f"R{i:02d}" for i in range(1, 13)]


@pytest.fixture
def store(app_db):
    s = service.open_store(app_db)
    for code in PANEL:
        service.add_panelist(s, code, consent_on=dt.date(2026, 2, 2))
    return s


def _results(trial_id: int):
    at = page_test("results")
    at.query_params["study"] = str(trial_id)
    return at.run()


def test_a_ranking_trial_shows_the_rank_test_and_its_rank_sums(store):
    study = service.create_trial(store, name="Muffins: three fat levels", method="ranking",
                                 samples=["Muffin low fat", "Muffin mid fat", "Muffin full fat"])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=2)
    rank_of = {"Muffin full fat": 1, "Muffin mid fat": 2, "Muffin low fat": 3}
    for e in service.plan(store, study.id):
        service.enter_answer(store, study.id, panelist_code=e.panelist_code, code=e.code,
                                attribute="rank", value=rank_of[e.sample_name])
    at = _results(study.id)
    assert not at.exception, [e.message for e in at.exception]
    fr = service.analyse_trial(store, study.id).ranking.result
    metrics = {m.label: m.value for m in at.metric}
    assert metrics[f"{fr.test} statistic"] == f"{fr.statistic:.2f}"
    table = next(df.value for df in at.dataframe if "rank sum" in df.value.columns)
    # every panelist ranked the same way: rank sums 12, 24, 36 (common practice arithmetic)
    assert dict(zip(table["sample"], table["rank sum"])) == {
        "Muffin full fat": 12, "Muffin mid fat": 24, "Muffin low fat": 36}


def test_a_rating_with_a_just_about_right_scale_shows_its_penalty_table(store):
    study = service.create_trial(
        store, name="Iced tea: three sweetness levels", method="rating",
        samples=[Sample("Tea 4 % sugar", is_control=True), Sample("Tea 6 % sugar"),
                 Sample("Tea 8 % sugar")],
        attributes=[Attribute("overall liking", low=1, high=9),
                    Attribute("sweetness", kind=AttributeKind.JAR, low=1, high=5)])
    service.draw_plan(store, study.id, panelist_codes=PANEL, seed=6)
    rng = np.random.default_rng(3)
    jar_mid = {"Tea 4 % sugar": 2, "Tea 6 % sugar": 3, "Tea 8 % sugar": 4}
    for e in service.plan(store, study.id):
        jar = int(np.clip(jar_mid[e.sample_name] + rng.integers(-1, 2), 1, 5))
        liking = int(np.clip(7 - 2 * abs(jar - 3) + rng.integers(-1, 2), 1, 9))
        for attribute, value in (("overall liking", liking), ("sweetness", jar)):
            service.enter_answer(store, study.id, panelist_code=e.panelist_code,
                                    code=e.code, attribute=attribute, value=value)
    at = _results(study.id)
    assert not at.exception, [e.message for e in at.exception]
    jar = next(a for a in service.analyse_trial(store, study.id).attributes
               if a.attribute == "sweetness")
    assert jar.penalty is not None, jar.note
    assert "Just about right: penalty analysis" in page_text(at)
    shown = next(df.value for df in at.dataframe if "penalty" in df.value.columns)
    assert len(shown) == len(jar.penalty.rows)
    assert "sweetness" in [t.label for t in at.tabs]


def test_a_duo_trio_ballot_never_offers_the_reference_as_an_answer(store):
    study = service.create_trial(store, name="Stock: two bones", method="duo-trio",
                                 samples=[Sample("Veal bone stock", is_control=True),
                                          Sample("Chicken bone stock")])
    service.draw_plan(store, study.id, panelist_codes=PANEL[:4], seed=1)
    cups = sorted((e for e in service.plan(store, study.id) if e.panelist_code == "R01"),
                  key=lambda e: e.position)
    reference = next(e.code for e in cups if e.role == "R")
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, study.id, "R01")
    at.run()
    at.button(key="nav_start").click()
    at.run()
    picks = [b.label for b in at.button if b.key.startswith("pick_")]
    assert sorted(picks) == sorted(e.code for e in cups if e.role != "R")
    assert reference in page_text(at)  # shown as the reference, not as a choice


def test_a_tetrad_ballot_saves_the_two_codes_of_the_chosen_group(store):
    study = service.create_trial(store, name="Salsa: two chillies", method="tetrad",
                                 samples=["Jalapeno salsa", "Serrano salsa"])
    service.draw_plan(store, study.id, panelist_codes=PANEL[:6], seed=5)
    codes = [e.code for e in sorted(service.plan(store, study.id), key=lambda e: e.position)
             if e.panelist_code == "R02"]
    at = page_test("taste")
    at.query_params["t"] = service.panelist_token(store, study.id, "R02")
    at.run()
    at.button(key="nav_start").click()
    at.run()
    assert "confirm_1_0" not in [b.key for b in at.button]  # nothing to confirm yet
    for code in (codes[0], codes[2]):
        at.button(key=f"pick_1_0_{code}").click()
        at.run()
    assert service.list_answers(store, study.id) == []  # not saved before the confirm
    at.button(key="confirm_1_0").click()
    at.run()
    assert [(r.code, r.attribute) for r in service.list_answers(store, study.id)] == [
        (f"{codes[0]} {codes[2]}", "choice")]
    at.button(key="nav_finish").click()
    at.run()
    assert any("Thank you, you are done." in s.value for s in at.success)
