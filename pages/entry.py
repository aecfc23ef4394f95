"""Paper entry: type the answers of paper ballots into a grid, then check and save them
as one batch.

The grid sits in a form: typing, Tab and Enter stay in the browser (no rerun per cell,
so no keystroke is lost or lands in another row). "Check and save" sends the grid at
once; every answer is checked against the serving plan (codes served to that panelist,
in that set) and the scales, rows are matched by panelist and set or code, and either
every answer is saved or none, with each bad cell named by panelist and column.
"""

import streamlit as st

from trials import service, ui
from trials.answers import most_cups, sheet_changes
from trials.errors import ImportRowsError, TrialsError
from trials.methods import Family

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()

st.title(f"Paper entry: {ui.literal(study.name)}")
ui.show_flash()
if not overview.plan_size:
    st.info("Draw the serving plan first (Serving plan).")
    st.stop()

sessions = list(overview.sessions)
if len(sessions) > 1:
    c1, c2 = st.columns([1, 3])
    session = c1.selectbox("Session", sessions, index=len(sessions) - 1)
else:
    c2, session = st.container(), sessions[0]
base = service.paper_sheet(store, trial_id, session, as_text=True)
panelists = sorted(base["panelist"].unique())
who_filter = c2.multiselect("Panelists (empty: all)", panelists, key=f"entry_who_{session}",
                            help="Type a panelist code to enter one ballot at a time. "
                                 "Save first: changing this drops what is not saved.")
if who_filter:
    base = base[base["panelist"].isin(who_filter)].reset_index(drop=True)
names = [a.name for a in study.attributes]

config = {
    "panelist": st.column_config.TextColumn("panelist", disabled=True),
    "position": st.column_config.NumberColumn("position", disabled=True, width="small"),
}
if spec.is_forced_choice:
    st.caption(f"{spec.question} Type the circled code"
               + (f" (the {'two' if spec.choose == 2 else spec.choose} codes of the group, "
                  "separated by a space)." if spec.choose > 1 else "."))
    config["set"] = st.column_config.NumberColumn("set", disabled=True, width="small")
    config["cups"] = st.column_config.TextColumn("cups served", disabled=True)
    config["chosen"] = st.column_config.TextColumn(
        "chosen code", help="The code the panelist circled: one of the cups served.")
    if spec.allows_no_preference:
        config["no_preference"] = st.column_config.CheckboxColumn("no preference")
elif spec.family == Family.RATING:
    config["code"] = st.column_config.TextColumn("code", disabled=True)
    for a in study.attributes:
        config[a.name] = st.column_config.TextColumn(
            a.name, help=f"{ui.literal(a.kind)}, whole points {a.low} to {a.high}")
else:
    k = most_cups(base)  # the cups a panelist got: fewer than the samples in incomplete blocks
    config["code"] = st.column_config.TextColumn("code", disabled=True)
    config["rank"] = st.column_config.TextColumn("rank", help=f"1 = most, up to {k}")

st.caption("Type into the grid (Enter or Tab moves on); nothing is sent until "
           "**Check and save**. A blank cell leaves what is on file.")
gen = st.session_state.get("paper_gen", 0)
with st.form(f"paper_form_{trial_id}_{session}", clear_on_submit=False, enter_to_submit=False,
             border=False):
    edited = st.data_editor(
        base, column_config=config, hide_index=True, width="stretch",
        key=f"paper_{trial_id}_{session}_{'-'.join(who_filter)}_{gen}",
        num_rows="fixed",
        height=min(36 * (len(base) + 1) + 3, 560),
    )
    submitted = st.form_submit_button("Check and save", type="primary", icon=":material/save:")

if submitted:
    changed = sheet_changes(spec, base, edited, names)
    if not changed:
        st.info("Nothing changed in the grid; nothing to save.")
    else:
        try:
            n = service.save_paper_sheet(store, trial_id, session, edited, entered_by=ui.who())
        except ImportRowsError as exc:
            ui.show_problem(exc)
            st.caption("The grid keeps what you typed: correct the cells named above and press "
                       "Check and save again.")
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.session_state["paper_gen"] = gen + 1
            ui.flash(f"Saved {len(changed)} changed row(s) of session {ui.literal(session)}; "
                     f"every answer checks out ({n} answers in the grid on file).")
            st.rerun()

progress = service.answer_progress(store, trial_id)
if not progress.empty:
    done = progress[progress["answered"] >= progress["expected"]]
    st.caption(f"{len(done)} of {len(progress)} ballots complete.")

with st.expander("Import answers from a file", icon=":material/upload_file:"):
    st.caption("Tidy CSV or Excel: session, panelist, code, attribute, value (see the "
               "README). Every row is checked; on any bad row nothing is imported.")
    up = st.file_uploader("Answer file", type=["csv", "txt", "xlsx"], key="resp_file")
    if up is not None and st.button("Import the answers"):
        try:
            n = service.import_answers(store, trial_id, up.getvalue(), entered_by=ui.who(),
                                         name=up.name)
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.success(f"{n} answers imported.")
