"""Forms keep what was typed when it is refused and empty only on success; a screen shows
the result of its own action at once (no reload): a new trial in the list and the
counters, a roster or batch import in the tables, a renamed trial in the title."""

from __future__ import annotations

import pytest

from tests.app.conftest import by_label, page_test, page_text, shown
from trials import service


def _run(name: str, *, study: int | None = None):
    at = page_test(name)
    if study is not None:
        at.query_params["study"] = str(study)
    return at.run()


def _metric(at, label: str) -> str:
    return next(m.value for m in at.metric if m.label == label)


# ------------------------------------------------------------------ forms on an error


def test_add_to_the_roster_keeps_the_typed_values_when_the_code_is_refused(small_trials):
    store = small_trials["store"]
    at = _run("panel")
    by_label(at.text_input, "Code").input("T01")  # already on the roster
    by_label(at.text_input, "Declared allergens (comma-separated)").input("sesame, mustard")
    by_label(at.text_input, "Other restrictions").input("no pork")
    by_label(at.checkbox, "Informed consent obtained").check()
    by_label(at.button, "Add to the roster").click()
    at.run()
    assert any("already on the roster" in e.value for e in at.error)
    assert by_label(at.text_input, "Code").value == "T01"
    assert by_label(at.text_input, "Declared allergens (comma-separated)").value == \
        "sesame, mustard"
    assert by_label(at.text_input, "Other restrictions").value == "no pork"
    assert by_label(at.checkbox, "Informed consent obtained").value is True

    by_label(at.text_input, "Code").input("T07")  # corrected: now it is added
    by_label(at.button, "Add to the roster").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    added = {p.code: p for p in service.list_panelists(store)}["T07"]
    assert set(added.allergens) == {"sesame", "mustard"}
    assert (added.restrictions, added.consented) == ("no pork", True)
    assert _metric(at, "Panelists") == "7"  # the counter is current without a reload
    assert by_label(at.text_input, "Code").value == ""  # emptied after the success
    assert "Panelist T07 added to the roster." in page_text(at)


def test_add_the_attribute_keeps_the_typed_values_when_it_is_refused(app_db):
    from trials.model import Sample

    store = service.open_store(app_db)
    trial = service.create_trial(store, name="Granola: two oats", method="rating",
                                 samples=[Sample("Rolled oats", is_control=True),
                                          Sample("Jumbo oats")])
    at = _run("samples", study=trial.id)
    by_label(at.text_input, "Attribute").input("crunchiness")
    by_label(at.selectbox, "Kind").select("intensity")
    by_label(at.number_input, "Lowest point").set_value(7)
    by_label(at.number_input, "Highest point").set_value(3)  # below the lowest: refused
    anchors = "Anchors (the two ends, or every point, separated by ;)"
    by_label(at.text_input, anchors).input("soft; very crunchy")
    by_label(at.button, "Add the attribute").click()
    at.run()
    assert at.error, "a scale whose top is below its bottom is refused"
    assert service.get_trial(store, trial.id).attributes == ()
    assert by_label(at.text_input, "Attribute").value == "crunchiness"
    assert by_label(at.selectbox, "Kind").value == "intensity"
    assert (by_label(at.number_input, "Lowest point").value,
            by_label(at.number_input, "Highest point").value) == (7, 3)
    assert by_label(at.text_input, anchors).value == "soft; very crunchy"

    by_label(at.number_input, "Lowest point").set_value(1)
    by_label(at.number_input, "Highest point").set_value(7)
    by_label(at.button, "Add the attribute").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    got = service.get_trial(store, trial.id).attributes
    assert [(a.name, str(a.kind), a.low, a.high) for a in got] == [
        ("crunchiness", "intensity", 1, 7)]
    assert "crunchiness" in page_text(at)  # the table of attributes shows it at once
    assert by_label(at.text_input, "Attribute").value == ""


# ------------------------------------------------------------------ the roster's own edits


def test_a_panelists_allergens_and_consent_are_changed_on_the_panel_screen(small_trials):
    store = small_trials["store"]
    at = _run("panel")
    by_label(at.selectbox, "Panelist").select("T03")
    at.run()
    form_allergens = at.text_input(key="edit_allergens_T03")
    assert form_allergens.value == ""
    form_allergens.input("peanut, egg")
    at.checkbox(key="edit_consented_T03").uncheck()
    by_label(at.button, "Save the changes").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    who = {p.code: p for p in service.list_panelists(store)}["T03"]
    assert set(who.allergens) == {"peanut", "egg"} and not who.consented
    assert _metric(at, "Consent recorded") == "5"  # current at once
    changes = {(e.field, e.old, e.new) for e in service.roster_audit(store, "T03")}
    assert ("consent_on", "2026-01-05", None) in changes
    assert any(f == "allergens" and o in (None, "") and "peanut" in n for f, o, n in changes)
    assert "Panelist T03 updated." in page_text(at)


# ------------------------------------------------------------------ screens current


def test_a_new_trial_is_in_the_list_and_the_counters_at_once(small_trials):
    at = _run("home")
    assert _metric(at, "Ready") == "2"
    by_label(at.text_input, "Name").input("Muffin: two sugars")
    by_label(at.button, "Create the trial").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    assert _metric(at, "Planning") == "1"
    assert "Muffin: two sugars" in at.dataframe[0].value["trial"].tolist()
    assert "created. Go on with Trial set-up." in page_text(at)
    assert by_label(at.text_input, "Name").value == ""


def test_a_roster_import_shows_in_the_counts_and_table_at_once(small_trials):
    at = _run("panel")
    assert _metric(at, "Panelists") == "6"
    at.file_uploader[0].set_value(
        ("roster.csv", b"code,allergens,consent_on\nN01,celery,2026-02-01\nN02,,\n", "text/csv"))
    at.run()
    by_label(at.button, "Import the roster").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    assert _metric(at, "Panelists") == "8"
    assert _metric(at, "Declared allergens") == "1"
    assert {"N01", "N02"} <= set(at.dataframe[0].value["code"])
    assert "2 panelists imported" in page_text(at)


def test_a_batch_import_shows_in_the_batch_table_at_once(small_trials):
    trial_id = small_trials["rating"]
    at = _run("samples", study=trial_id)
    assert "No batches recorded yet." in page_text(at)
    at.file_uploader[0].set_value((
        "batches.csv",
        b"sample,batch,kind,name,value,unit\n"
        b"Spelt flatbread,B1,setting,griddle time,3,min\n"
        b"Einkorn flatbread,B1,measure,weight,61.5,g\n", "text/csv"))
    at.run()
    by_label(at.button, "Import the batch values").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    table = next(d.value for d in at.dataframe if "batch" in d.value.columns)
    assert sorted(table["sample"]) == ["Einkorn flatbread", "Spelt flatbread"]
    assert "2 values imported" in page_text(at)


def test_an_answer_file_already_on_record_says_so_and_the_progress_is_current(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    rows = ["session,panelist,code,attribute,value"]
    for e in service.plan(store, trial_id):
        rows.append(f"1,{e.panelist_code},{e.code},overall liking,6")
    data = ("\n".join(rows) + "\n").encode()
    at = _run("entry", study=trial_id)
    assert "0 of 3 ballots complete." in page_text(at)
    at.file_uploader[0].set_value(("answers.csv", data, "text/csv"))
    at.run()
    by_label(at.button, "Import the answers").click()
    at.run()
    assert "6 answers imported." in page_text(at)
    assert "3 of 3 ballots complete." in page_text(at)
    by_label(at.button, "Import the answers").click()
    at.run()
    assert ("All 6 answers in this file are already on record; nothing new imported."
            in page_text(at))


@pytest.mark.slow  # the set-up screen's power chart imports take seconds here
def test_a_saved_set_up_shows_in_the_title_at_once(small_trials):
    trial_id = small_trials["triangle"]
    at = _run("trial", study=trial_id)
    by_label(at.text_input, "Name").input("Pancake: buttermilk against kefir")
    by_label(at.button, "Save the set-up").click()
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    assert "Pancake: buttermilk against kefir" in shown(at.title[0].value)
    assert "Set-up saved." in page_text(at)


def test_add_a_sample_keeps_its_values_when_refused(app_db):
    from trials.model import Sample

    store = service.open_store(app_db)
    trial = service.create_trial(store, name="Jam: two pectins", method="rating",
                                 samples=[Sample("Apple pectin", is_control=True)])
    at = _run("samples", study=trial.id)
    by_label(at.text_input, "Sample name").input("Apple pectin")  # the name is taken
    by_label(at.text_input, "Description").input("set at 104 C")
    by_label(at.button, "Add the sample").click()
    at.run()
    assert at.error
    assert by_label(at.text_input, "Sample name").value == "Apple pectin"
    assert by_label(at.text_input, "Description").value == "set at 104 C"
    assert [x.name for x in service.get_trial(store, trial.id).samples] == ["Apple pectin"]
    by_label(at.text_input, "Sample name").input("Citrus pectin")  # only the name corrected
    by_label(at.button, "Add the sample").click()
    at.run()
    assert not at.error, [e.value for e in at.error]
    added = service.get_trial(store, trial.id).samples[-1]
    assert (added.name, added.description) == ("Citrus pectin", "set at 104 C")
    assert by_label(at.text_input, "Sample name").value == ""


def test_record_a_batch_keeps_its_values_when_refused_and_empties_on_success(small_trials):
    store, trial_id = small_trials["store"], small_trials["rating"]
    at = _run("samples", study=trial_id)
    by_label(at.text_input, "Batch label").input("B7")
    by_label(at.text_input, "Prepared by").input("Pastry section")
    by_label(at.text_input, "Notes").input("second proof in the cold room")
    by_label(at.button, "Record the batch").click()
    at.run()
    # nothing refused yet: the batch is recorded and the form starts empty again
    assert not at.error, [e.value for e in at.error]
    assert [b.label for b in service.list_batches(store, trial_id)] == ["B7"]
    assert by_label(at.text_input, "Batch label").value == ""
    assert "recorded." in page_text(at)
    # the same label again is refused: what was typed stays
    by_label(at.text_input, "Batch label").input("B7")
    by_label(at.text_input, "Notes").input("kept after the refusal")
    by_label(at.button, "Record the batch").click()
    at.run()
    assert at.error
    assert by_label(at.text_input, "Batch label").value == "B7"
    assert by_label(at.text_input, "Notes").value == "kept after the refusal"
    assert len(service.list_batches(store, trial_id)) == 1
