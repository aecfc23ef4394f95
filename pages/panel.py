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

with st.expander("Add a panelist", icon=":material/person_add:", expanded=not roster):
    with st.form("add_panelist", clear_on_submit=True):
        code = st.text_input("Code", placeholder="P01")
        allergens = st.text_input("Declared allergens (comma-separated)",
                                  placeholder="gluten, sesame")
        restrictions = st.text_input("Other restrictions")
        consented = st.checkbox("Informed consent obtained")
        consent_on = st.date_input("Consent date", value=dt.date.today())
        if st.form_submit_button("Add to the roster"):
            try:
                service.add_panelist(store, code, allergens=allergens, restrictions=restrictions,
                                     consent_on=consent_on if consented else None, by=ui.who())
            except TrialsError as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                st.rerun()

with st.expander("Import a roster file", icon=":material/upload_file:"):
    st.caption("Columns: code; optional allergens (separated by ; or |), restrictions, "
               "consent_on (YYYY-MM-DD). New codes are added, known codes updated. All rows "
               "or none.")
    up = st.file_uploader("CSV or Excel", type=["csv", "txt", "xlsx"], key="roster_file")
    if up is not None and st.button("Import the roster"):
        try:
            n = service.import_panelists(store, ui.upload_path(up), by=ui.who())
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.success(f"{n} panelists imported.")

ui.food_caution()
