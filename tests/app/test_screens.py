"""Every screen under AppTest: it renders on the demo data, its main flow changes the
store as expected, and it keeps its own gate when run alone (as a deep link would)."""

from __future__ import annotations

import pytest

from tests.app.conftest import by_label, entry_test, page_test, page_text
from trials import service, ui

LEADER = [name for name, _, _ in ui.LEADER_PAGES]


def _run(name: str, *, study: int | None = None, **params):
    at = page_test(name)
    if study is not None:
        at.query_params["study"] = str(study)
    for k, v in params.items():
        at.query_params[k] = v
    return at.run()


def _ids(db: str) -> dict[str, int]:
    store = service.open_store(db)
    return {s.method: s.id for s in service.list_trials(store)}


# ------------------------------------------------------------------ rendering


@pytest.mark.parametrize("name", LEADER)
def test_every_leader_screen_renders_on_the_demo_data(demo_db, name):
    at = _run(name, study=_ids(demo_db)["rating"])
    assert not at.exception, [e.message for e in at.exception]
    assert at.title, "a screen has a title"
    assert "Single-user mode" in page_text(at)


@pytest.mark.parametrize("method", ["triangle", "rating", "paired-preference"])
def test_the_results_screen_renders_each_demo_trial_with_its_decision(demo_db, method):
    trial_id = _ids(demo_db)[method]
    at = _run("results", study=trial_id)
    assert not at.exception, [e.message for e in at.exception]
    expected = service.trial_decision(service.open_store(demo_db), trial_id)
    assert expected.headline in page_text(at)


def test_the_results_screen_shows_the_exact_test_of_the_demo_triangle(demo_db):
    store = service.open_store(demo_db)
    trial_id = _ids(demo_db)["triangle"]
    diff = service.analyse_trial(store, trial_id).choice.difference
    at = _run("results", study=trial_id)
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["Correct"] == f"{diff.correct} of {diff.n}"
    # ISO 4120:2021 table of critical values (from memory: n = 27, alpha 0.05 -> 14);
    # the screen shows the exact binomial count the stats layer computes.
    assert diff.n != 27 or diff.critical == 14
    assert metrics["Critical value"] == str(diff.critical)
    assert metrics["p-value"] == ("< 0.001" if diff.p_value < 0.001 else f"{diff.p_value:.3f}")
    assert f"{diff.dprime:.2f}" == metrics["d'"]


def test_the_entry_script_offers_the_leader_screens(demo_db):
    at = entry_test().run()
    assert not at.exception, [e.message for e in at.exception]
    assert at.title[0].value == "Trials"


# ------------------------------------------------------------------ flows


def test_a_new_trial_is_created_from_the_home_screen(app_db):
    at = _run("home")
    by_label(at.text_input, "Name").input("Croissant: two butters")
    by_label(at.selectbox, "Method").select("duo-trio")
    by_label(at.text_input, "First sample (the control)").input("Cultured butter")
    by_label(at.text_input, "Second sample").input("Sweet cream butter")
    by_label(at.button, "Create the trial").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    studies = service.list_trials(service.open_store(app_db))
    assert [(s.name, s.method) for s in studies] == [("Croissant: two butters", "duo-trio")]
    study = service.get_trial(service.open_store(app_db), studies[0].id)
    assert [(x.name, x.is_control) for x in study.samples] == [
        ("Cultured butter", True), ("Sweet cream butter", False)]


def test_the_set_up_screen_answers_how_many_panelists(small_trials):
    at = _run("trial", study=small_trials["triangle"])
    assert not at.exception, [e.message for e in at.exception]
    answer = service.panel_size_needed(small_trials["store"], small_trials["triangle"])
    assert by_label(at.metric, "You need").value == f"{answer.n} panelists"


def test_the_set_up_screen_shows_the_critical_value_table_of_the_method(small_trials):
    at = _run("trial", study=small_trials["triangle"])
    shown = at.dataframe[-1].value
    table = service.critical_values("triangle")
    assert list(shown.index) == list(table.ns)
    # ISO 4120 / the FAO handbook's triangle table: 24 assessors need 13 at alpha 0.05
    assert shown.loc[24, "0.05"] == 13


def test_the_set_up_screen_stores_the_2afc_target_the_leader_chooses(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Brine: two salts", method="2afc",
                                 samples=["Lower-sodium brine", "Usual brine"])
    at = _run("trial", study=study.id)
    label = "Target sample (expected to have more of the attribute)"
    pick = by_label(at.selectbox, label)
    assert pick.options == ["Lower-sodium brine", "Usual brine"] and pick.value is None
    pick.select("Lower-sodium brine")
    by_label(at.button, "Save the set-up").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert service.get_trial(store, study.id).target_sample == "Lower-sodium brine"


def test_the_set_up_screen_has_no_target_for_a_triangle(small_trials):
    at = _run("trial", study=small_trials["triangle"])
    assert not [w for w in at.selectbox if w.label.startswith("Target sample")]


def test_drawing_a_plan_on_the_plan_screen_stores_it(small_trials):
    store = small_trials["store"]
    study = service.create_trial(store, name="Rice: rinsed or not", method="2afc",
                                 samples=["Unrinsed rice", "Rinsed rice"],
                                 target_sample="Rinsed rice")
    at = _run("plan", study=study.id)
    assert "No plan drawn yet." in page_text(at)
    by_label(at.number_input, "Seed (the same seed draws the same plan)").set_value(11)
    by_label(at.button, "Draw the plan").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    entries = service.plan(store, study.id)
    assert len(entries) == 6 * 2  # six consented panelists, two cups each
    assert {e.panelist_code for e in entries} == {f"T{i:02d}" for i in range(1, 7)}
    assert "Tasting links" in page_text(at)


def _cell(at, trial_id: int, panelist: str, key: str, column: str):
    """The paper-entry box of one panelist's set or cup (widget keys name them)."""
    return at.text_input(key=f"paper_{trial_id}_1_0_{panelist}_{key}_{column}")


def test_a_paper_ballot_entered_in_the_grid_is_stored_as_paper_answers(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    at = _run("entry", study=trial_id)
    cups = sorted((e for e in service.plan(store, trial_id) if e.panelist_code == "T01"),
                  key=lambda e: e.position)
    _cell(at, trial_id, "T01", cups[0].code, "overall liking").input("7")
    _cell(at, trial_id, "T01", cups[1].code, "overall liking").input(" 4 ")
    by_label(at.button, "Check and save").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert not at.error, [e.value for e in at.error]
    got = sorted((r.panelist_code, r.code, r.value, r.mode.value)
                 for r in service.list_answers(store, trial_id))
    assert got == sorted([("T01", cups[0].code, "7", "paper"), ("T01", cups[1].code, "4", "paper")])
    assert "Saved 2 changed row(s)" in page_text(at)


def test_the_paper_grid_refuses_a_score_off_the_scale_saves_nothing_and_keeps_it(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    at = _run("entry", study=trial_id)
    cup = min((e for e in service.plan(store, trial_id) if e.panelist_code == "T02"),
              key=lambda e: e.position)
    _cell(at, trial_id, "T02", cup.code, "overall liking").input("12")
    by_label(at.button, "Check and save").click()
    at.run()
    assert (f"panelist 'T02', code '{cup.code}', column 'overall liking': expected a whole "
            "number from 1 to 9, got '12'") in page_text(at)
    assert "1 bad cell(s); nothing saved" in page_text(at)
    assert service.list_answers(store, trial_id) == []
    assert _cell(at, trial_id, "T02", cup.code, "overall liking").value == "12"


def test_the_paper_grid_refuses_a_code_not_served_to_that_panelist(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    served = {e.code for e in service.plan(store, trial_id)}
    foreign = next(f"{n:03d}" for n in range(100, 1000) if f"{n:03d}" not in served)
    at = _run("entry", study=trial_id)
    _cell(at, trial_id, "T01", "1", "chosen").input(foreign)
    by_label(at.button, "Check and save").click()
    at.run()
    assert "is not a code served to panelist 'T01'" in page_text(at)
    assert service.list_answers(store, trial_id) == []


def test_recording_a_decision_stores_it_with_its_rationale(demo_db):
    store = service.open_store(demo_db)
    trial_id = _ids(demo_db)["paired-preference"]
    at = _run("decision", study=trial_id)
    by_label(at.text_input, "Decision").input("Serve the roasted-tomato soup.")
    by_label(at.text_area, "Rationale").input("More guests chose it; cost is the same.")
    by_label(at.button, "Record the decision").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    study = service.get_trial(store, trial_id)
    assert (study.decision, study.rationale, study.status.value) == (
        "Serve the roasted-tomato soup.", "More guests chose it; cost is the same.", "decided")


def test_the_printing_screen_prepares_a_download_of_the_labels(demo_db):
    at = _run("printing", study=_ids(demo_db)["triangle"])
    by_label(at.button, "Prepare the cup labels").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert [b.label for b in at.download_button] == ["Download the cup labels (PDF)"]


# ------------------------------------------------------------------ access


@pytest.mark.parametrize("name", LEADER)
def test_a_leader_screen_run_alone_with_a_passcode_shows_the_gate_and_nothing_else(
        demo_db, monkeypatch, name):
    monkeypatch.setenv("TRIALS_PASSCODE", "rye-and-caraway")
    at = _run(name, study=_ids(demo_db)["rating"])
    assert not at.exception, [e.message for e in at.exception]
    assert [t.value for t in at.title] == ["Kitchen Trials"]
    assert [w.label for w in at.text_input] == ["Leader passcode"]
    assert not at.dataframe and not at.metric and not at.markdown
    assert len(at.button) == 1  # the gate's own button


def test_the_right_passcode_opens_a_leader_screen_and_a_wrong_one_does_not(
        demo_db, monkeypatch):
    monkeypatch.setenv("TRIALS_PASSCODE", "rye-and-caraway")
    at = _run("home")
    by_label(at.text_input, "Leader passcode").input("rye")
    at.button[0].click()
    at.run()
    assert [e.value for e in at.error] == ["That passcode does not open the leader screens."]
    by_label(at.text_input, "Leader passcode").input("rye-and-caraway")
    at.button[0].click()
    at.run()
    assert [t.value for t in at.title] == ["Trials"]
    assert at.dataframe


def test_after_repeated_wrong_passcodes_even_the_right_one_must_wait(demo_db, monkeypatch):
    from trials.gate import FREE_TRIES

    monkeypatch.setenv("TRIALS_PASSCODE", "rye-and-caraway")
    at = _run("home")
    for _ in range(FREE_TRIES):
        by_label(at.text_input, "Leader passcode").input("guess")
        at.button[0].click()
        at.run()
    by_label(at.text_input, "Leader passcode").input("rye-and-caraway")
    at.button[0].click()
    at.run()
    errors = [e.value for e in at.error]
    # the third wrong try starts a 2-second wait (trials.gate); the right passcode waits too
    assert len(errors) == 1 and errors[0].startswith("Too many wrong passcodes. Try again in ")
    assert [t.value for t in at.title] == ["Kitchen Trials"] and not at.dataframe


def test_a_panelist_link_does_not_open_a_leader_screen(demo_db):
    store = service.open_store(demo_db)
    token = next(iter(service.trial_overview(store, 1).links.values())).split("t=")[1]
    at = _run("results", study=1, t=token)
    assert [e.value for e in at.error] == ["This link opens a tasting ballot only."]
    assert not at.metric and not at.dataframe


def test_the_results_screen_shows_panel_performance_when_asked(demo_db):
    trial_id = _ids(demo_db)["rating"]
    at = _run("results", study=trial_id)
    assert "Show panel performance" in [t.label for t in at.toggle]
    n_tables = len(at.dataframe)
    at.toggle(key="perf_show").set_value(True)
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    attribute = at.selectbox(key="perf_attribute").value
    perf = service.panel_performance_of(service.open_store(demo_db), trial_id, attribute)
    # the panel performance table and the sample x panelist interaction table
    assert len(at.dataframe) == n_tables + 2
    codes = [p.panelist for p in perf.panelists]
    shown = [df.value for df in at.dataframe
             if list(df.value.index) == codes or list(df.value.get("panelist", [])) == codes]
    # one table per view, every panelist in each: performance, then the interaction
    assert len(shown) == 2
    assert {"agreement", "flags"} <= set(shown[0].columns)
    assert {"r", "slope", "share"} <= set(shown[1].columns)


def test_the_set_up_screen_saves_the_risks_and_the_aim(small_trials):
    store, trial_id = small_trials["store"], small_trials["triangle"]
    at = _run("trial", study=trial_id)
    by_label(at.radio, "What the test must show").set_value("similarity")
    by_label(at.number_input, "beta (risk of missing the difference)").set_value(0.05)
    by_label(at.number_input, "pd: proportion of discriminators that matters").set_value(0.25)
    by_label(at.button, "Save the set-up").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    study = service.get_trial(store, trial_id)
    assert (study.aim, study.beta, study.pd) == ("similarity", 0.05, 0.25)
    answer = service.panel_size_needed(store, trial_id)
    assert by_label(at.metric, "You need").value == f"{answer.n} panelists"


def test_the_decision_screen_prepares_the_report_for_download(demo_db):
    at = _run("decision", study=_ids(demo_db)["triangle"])
    by_label(at.button, "Prepare the report").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    labels = [b.label for b in at.download_button]
    assert "Download the report (HTML)" in labels
    assert "Printable summary (PDF)" in labels
    assert "Batch settings and measurements (CSV)" in labels


def test_a_batch_is_recorded_with_its_settings_and_then_signed_off(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    at = _run("samples", study=trial_id)
    by_label(at.selectbox, "Sample").select("Einkorn flatbread")
    by_label(at.text_input, "Batch label").input("E1")
    at.session_state["batch_values"] = {
        "edited_rows": {"0": {"name": "oven temperature", "value": "260", "unit": "°C"},
                        "1": {"name": "moisture", "value": "31.5", "unit": "%"}},
        "added_rows": [], "deleted_rows": [],
    }
    by_label(at.button, "Record the batch").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    (batch,) = service.list_batches(store, trial_id)
    assert (batch.sample_name, batch.label, batch.signed_off) == ("Einkorn flatbread", "E1", False)
    assert [(m.name, m.value, m.unit) for m in batch.settings] == [
        ("oven temperature", 260.0, "°C")]
    assert [(m.name, m.value, m.unit) for m in batch.measures] == [("moisture", 31.5, "%")]
    assert any("not signed off" in w.value for w in at.warning)
    by_label(at.text_input, "Signed off by").input("Head chef on duty")
    by_label(at.button, "Sign off").click()
    at.run()
    (batch,) = service.list_batches(store, trial_id)
    assert batch.safety_signed_by == "Head chef on duty"
    assert not any("not signed off" in w.value for w in at.warning)


def test_a_roster_file_imported_on_the_panel_screen_adds_its_panelists(app_db):
    at = _run("panel")
    csv = b"code,allergens,consent_on\nK01,sesame;egg,2026-03-01\nK02,,\n"
    at.file_uploader[0].set_value(("roster.csv", csv, "text/csv"))
    at.run()
    by_label(at.button, "Import the roster").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert [s.value for s in at.success] == [
        "2 panelists imported; the roster above is up to date."]
    roster = {p.code: p for p in service.list_panelists(service.open_store(app_db))}
    assert set(roster["K01"].allergens) == {"sesame", "egg"}
    assert roster["K01"].consented and not roster["K02"].consented


def test_a_bad_roster_file_names_the_row_and_imports_nothing(app_db):
    at = _run("panel")
    csv = b"code,consent_on\nK01,2026-03-01\nK02,first of March\n"
    at.file_uploader[0].set_value(("roster.csv", csv, "text/csv"))
    at.run()
    by_label(at.button, "Import the roster").click()
    at.run()
    assert any("row 3" in e.value for e in at.error)
    assert service.list_panelists(service.open_store(app_db)) == []


def test_the_plan_screen_warns_of_an_allergen_conflict_and_leaves_that_panelist_out(
        small_trials):
    import datetime as dt

    from trials.model import Sample

    store = small_trials["store"]
    service.add_panelist(store, "T07", allergens="sesame", consent_on=dt.date(2026, 1, 5))
    study = service.create_trial(store, name="Hummus: two tahinis", method="triangle",
                                 samples=[Sample("Light tahini hummus", allergens=("sesame",)),
                                          Sample("Dark tahini hummus", allergens=("sesame",))])
    at = _run("plan", study=study.id)
    warned = [w.value for w in at.warning if "Allergen conflicts" in w.value]
    assert len(warned) == 1 and "T07" in warned[0]
    assert "T07" not in by_label(at.multiselect, "Panelists (consent recorded)").value
    by_label(at.button, "Draw the plan").click()
    at.run()
    assert not at.exception, [e.message for e in at.exception]
    assert "T07" not in {e.panelist_code for e in service.plan(store, study.id)}
    assert service.plan(store, study.id)
