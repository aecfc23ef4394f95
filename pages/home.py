"""Home: the trials on file with their status."""

import streamlit as st

from trials import service, ui

ui.require_leader()
st.title("Trials")
studies = service.list_studies(ui.store())
if not studies:
    st.info("No trials on file yet. Start one under Trial set-up, or run `trials demo`.")
else:
    st.dataframe(
        [s.to_dict() for s in studies],
        hide_index=True,
        width="stretch",
    )
ui.food_caution()
