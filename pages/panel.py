"""The panel: the roster of panelist codes, declared allergens, consent, CSV import."""

import datetime as dt

import pandas as pd
import streamlit as st

from trials import service, ui
from trials.errors import TrialsError

ui.require_leader()
store = ui.store()
st.title("Panel")
st.caption("Panelists are known by a code; no personal data is needed. The roster is "
           "shared by every trial.")

roster = service.list_panelists(store)
if roster:
    frame = pd.DataFrame([{
        "code": p.code,
        "allergens": ", ".join(p.allergens),
        "restrictions": p.restrictions,
        "consent on": p.consent_on,
    } for p in roster])
    c1, c2, c3 = st.columns(3)
    c1.metric("Panelists", len(roster))
    c2.metric("Consent recorded", sum(p.consented for p in roster))
    c3.metric("Declared allergens", sum(bool(p.allergens) for p in roster))
    only = st.toggle("Only panelists without consent", value=False)
    shown = frame[frame["consent on"].isna()] if only else frame
    st.dataframe(shown, hide_index=True, width="stretch")
else:
    st.info("The roster is empty. Add panelists below or import a file.")

ADD_FIELDS = ("new_code", "new_allergens", "new_restrictions", "new_consented", "new_consent_on")

with st.expander("Add a panelist", icon=":material/person_add:", expanded=not roster):
    ui.show_flash("add")
    # the form keeps what was typed when the code is refused; it empties only on success
    with st.form("add_panelist", clear_on_submit=False):
        code = st.text_input("Code", placeholder="P01", key="new_code")
        allergens = st.text_input("Declared allergens (comma-separated)",
                                  placeholder="gluten, sesame", key="new_allergens")
        restrictions = st.text_input("Other restrictions", key="new_restrictions")
        consented = st.checkbox("Informed consent obtained", key="new_consented")
        consent_on = st.date_input("Consent date", value=dt.date.today(), key="new_consent_on")
        if st.form_submit_button("Add to the roster"):
            try:
                added = service.add_panelist(store, code, allergens=allergens,
                                             restrictions=restrictions,
                                             consent_on=consent_on if consented else None,
                                             by=ui.who())
            except TrialsError as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                ui.clear_fields(*ADD_FIELDS)
                ui.flash(f"Panelist {ui.literal(added.code)} added to the roster.", "add")
                st.rerun()

if roster:
    with st.expander("Change a panelist's allergens or consent", icon=":material/edit:"):
        by_code = {p.code: p for p in roster}
        ui.show_flash("edit")
        pick = st.selectbox("Panelist", list(by_code), index=None, key="edit_pick",
                            placeholder="Choose a panelist code")
        if pick is not None:
            who = by_code[pick]
            with st.form("edit_panelist", clear_on_submit=False):
                e_allergens = st.text_input("Declared allergens (comma-separated)",
                                            value=", ".join(who.allergens),
                                            key=f"edit_allergens_{pick}")
                e_restrictions = st.text_input("Other restrictions", value=who.restrictions,
                                               key=f"edit_restrictions_{pick}")
                e_consented = st.checkbox("Informed consent obtained", value=who.consented,
                                          key=f"edit_consented_{pick}")
                e_consent_on = st.date_input("Consent date",
                                             value=who.consent_on or dt.date.today(),
                                             key=f"edit_consent_on_{pick}")
                st.caption("Each change is kept in the audit log with its old value; the "
                           "allergen checks read the new declaration from now on.")
                if st.form_submit_button("Save the changes"):
                    try:
                        service.update_panelist(store, pick, allergens=e_allergens,
                                                restrictions=e_restrictions,
                                                consent_on=e_consent_on if e_consented else None,
                                                by=ui.who())
                    except TrialsError as exc:
                        ui.show_problem(exc)
                    else:
                        ui.changed()
                        ui.flash(f"Panelist {ui.literal(pick)} updated.", "edit")
                        st.rerun()

with st.expander("Import a roster file", icon=":material/upload_file:"):
    st.caption("Columns: code; optional allergens (separated by ; or |), restrictions, "
               "consent_on (YYYY-MM-DD). New codes are added, known codes updated. All rows "
               "or none.")
    up = st.file_uploader("CSV or Excel", type=["csv", "txt", "xlsx"],
                          key=f"roster_file_{st.session_state.get('roster_gen', 0)}")
    ui.show_flash("import")
    if up is not None and st.button("Import the roster"):
        try:
            n = service.import_panelists(store, ui.upload_path(up), by=ui.who())
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.session_state["roster_gen"] = st.session_state.get("roster_gen", 0) + 1
            ui.flash(f"{n} panelists imported; the roster above is up to date.", "import")
            st.rerun()

ui.food_caution()
