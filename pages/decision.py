"""Decision and report: record the decision with its rationale, download the report."""

import streamlit as st

from trials import service, ui
from trials.errors import TrialsError

ui.require_leader()
trial_id = ui.pick_trial()
store = ui.store()
study = service.get_trial(store, trial_id)

st.title(f"Decision and report: {ui.literal(study.name)}")
result, suggested = ui.analysis(trial_id)
ui.served_safety(trial_id)

with st.container(border=True):
    st.markdown("**What the results say**")
    st.markdown(ui.literal(suggested.text, lines=True) if result.has_answers
                else f"No results yet: {ui.literal(result.message)}.")

if study.decision:
    st.success(f"On file: **{ui.literal(study.decision)}**"
               + (f"  \n{ui.literal(study.rationale, lines=True)}" if study.rationale else ""))

with st.form("decide"):
    decision = st.text_input("Decision", value=study.decision,
                             placeholder="e.g. Switch to the short proof from next week.")
    rationale = st.text_area(
        "Rationale", value=study.rationale or (suggested.text if result.has_answers else ""),
        height=180, help="Why: the evidence, the risks accepted and anything outside the test.")
    done = st.form_submit_button("Record the decision", type="primary")
if done:
    try:
        service.record_decision(store, trial_id, decision, rationale, by=ui.who())
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        ui.changed()
        st.toast("Decision recorded.", icon=":material/check:")
        st.rerun()

st.subheader("Report")
made = st.session_state.setdefault("reports", {})
stamp = service.change_stamp(store, trial_id)
key = (trial_id, stamp)
if key in made:
    html, pdf = made[key]
    left, right = st.columns(2)
    left.download_button("Download the report (HTML)", html,
                         file_name=f"trial-{trial_id}-report.html", mime="text/html",
                         on_click="ignore", type="primary", icon=":material/download:")
    right.download_button("Printable summary (PDF)", pdf,
                          file_name=f"trial-{trial_id}-summary.pdf", mime="application/pdf",
                          on_click="ignore", icon=":material/print:")
elif st.button("Prepare the report", icon=":material/description:"):
    try:
        with st.spinner("Writing the report..."):
            made[key] = (service.report_html(store, trial_id),
                         service.report_pdf(store, trial_id))
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        st.rerun()

with st.expander("Export the answers", icon=":material/table_view:"):
    st.caption("Every answer with the sample behind each code (leader only); the file "
               "imports back.")
    if st.button("Prepare the answers with the key (CSV)", icon=":material/key:"):
        try:
            answers_csv = service.export_bytes(store, trial_id)
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.key_download(st, "Answers with the key (CSV)", answers_csv,
                            file_name=f"trial-{trial_id}-answers.csv", mime="text/csv",
                            key="dl_answers")
    st.download_button("Batch settings and measurements (CSV)",
                       lambda: service.export_measures_bytes(store, trial_id),
                       file_name=f"trial-{trial_id}-batches.csv", mime="text/csv",
                       on_click="ignore")

with st.expander("Audit log", icon=":material/history:"):
    st.dataframe(service.audit_table(store, trial_id), hide_index=True, width="stretch")
