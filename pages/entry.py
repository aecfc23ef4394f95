"""Paper entry: type the answers of paper ballots into a grid that checks as you type.

Tab and Enter move between cells. Every answer is checked against the serving plan
(codes must be ones served to that panelist) and the scales before anything is saved.
"""

import streamlit as st

from trials import service, ui
from trials.answers import most_cups
from trials.errors import ImportRowsError, TrialsError
from trials.methods import Family

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()


def _response_columns(config: dict) -> None:
    """Signal detection (A-not-A, same-different): one row per set, the response picked
    from the registry's two (``spec.responses``)."""
    st.caption(f"{spec.question} Pick the box the panelist ticked.")
    config["set"] = st.column_config.NumberColumn("set", disabled=True, width="small")
    config["cups"] = st.column_config.TextColumn("cups served", disabled=True)
    config["response"] = st.column_config.SelectboxColumn(
        "response", options=list(spec.responses), help="The box the panelist ticked.")


st.title(f"Paper entry: {ui.literal(study.name)}")
if not overview.plan_size:
    st.info("Draw the serving plan first (Serving plan).")
    st.stop()

sessions = list(overview.sessions)
if len(sessions) > 1:
    c1, c2 = st.columns([1, 3])
    session = c1.selectbox("Session", sessions, index=len(sessions) - 1)
else:
    c2, session = st.container(), sessions[0]
base = service.paper_sheet(store, trial_id, session)
panelists = sorted(base["panelist"].unique())
who_filter = c2.multiselect("Panelists (empty: all)", panelists, key=f"entry_who_{session}",
                            help="Type a panelist code to enter one ballot at a time.")
if who_filter:
    base = base[base["panelist"].isin(who_filter)].reset_index(drop=True)

config = {
    "panelist": st.column_config.TextColumn("panelist", disabled=True),
    "position": st.column_config.NumberColumn("position", disabled=True, width="small"),
}
if spec.is_forced_choice:
    st.caption(f"{spec.question} Type the circled code"
               + (f" (the {'two' if spec.choose == 2 else spec.choose} codes of the group, "
                  "separated by a space)." if spec.choose > 1 else "."))
    extra = max(1, spec.choose - 1)  # one code, or a group of codes, each three digits
    config["set"] = st.column_config.NumberColumn("set", disabled=True, width="small")
    config["cups"] = st.column_config.TextColumn("cups served", disabled=True)
    config["chosen"] = st.column_config.TextColumn(
        "chosen code", validate=rf"^\s*\d{{3}}(\s+\d{{3}}){{0,{extra}}}\s*$",
        max_chars=4 * (extra + 1) - 1,
        help="The code the panelist circled.")
    if spec.allows_no_preference:
        config["no_preference"] = st.column_config.CheckboxColumn("no preference")
elif spec.family == Family.SIGNAL:
    _response_columns(config)
elif spec.scores_each_cup:  # ratings; CATA words are 0/1 attributes
    config["code"] = st.column_config.TextColumn("code", validate=r"^\d{3}$", max_chars=3)
    for a in study.attributes:
        config[a.name] = st.column_config.NumberColumn(
            a.name, min_value=a.low, max_value=a.high, step=1,
            help=f"{ui.literal(a.kind)}, whole points {a.low} to {a.high}")
else:
    k = most_cups(base)  # the cups a panelist got: fewer than the samples in incomplete blocks
    config["code"] = st.column_config.TextColumn("code", validate=r"^\d{3}$", max_chars=3)
    config["rank"] = st.column_config.NumberColumn("rank", min_value=1, max_value=k, step=1,
                                                   help="1 = most")

edited = st.data_editor(
    base, column_config=config, hide_index=True, width="stretch",
    key=f"paper_{trial_id}_{session}_{'-'.join(who_filter)}_{st.session_state.get('paper_gen', 0)}",
    num_rows="fixed",
    height=min(36 * (len(base) + 1) + 3, 560),
)

problems = service.check_paper_sheet(store, trial_id, session, edited)
changed_rows = int((edited.astype("string").fillna("") != base.astype("string").fillna(""))
                   .any(axis=1).sum())
if problems:
    st.error(f"{len(problems)} problem(s); nothing is saved until they are fixed:\n\n"
             + "\n".join(f"- {ui.literal(p)}" for p in problems[:30]))
elif changed_rows:
    st.success(f"{changed_rows} row(s) changed; every answer checks out.")
save = st.button("Save the answers", type="primary", disabled=bool(problems) or not changed_rows,
                 icon=":material/save:")
if save:
    try:
        n = service.save_paper_sheet(store, trial_id, session, edited, entered_by=ui.who())
    except ImportRowsError as exc:
        ui.show_problem(exc)
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        ui.changed()
        st.session_state["paper_gen"] = st.session_state.get("paper_gen", 0) + 1
        st.toast(f"{n} answers on file.", icon=":material/check:")
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
