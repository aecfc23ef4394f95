"""Home: the trials on file with their status, and a way to start a new one."""

import streamlit as st

from trials import service, ui
from trials.errors import TrialsError
from trials.methods import METHODS
from trials.model import Sample, Status

ui.require_leader()
st.title("Trials")
ui.show_flash()

studies = service.list_trials(ui.store())

STATUS_HELP = {
    Status.PLANNING: "set-up in progress",
    Status.READY: "plan drawn, ready to serve",
    Status.TASTING: "answers coming in (set by the first answer)",
    Status.ANALYSED: "every expected answer in: results ready (set by the last answer)",
    Status.DECIDED: "decision on file",
}


def _next_step(trial_id: int) -> None:
    """What to do next with the trial in hand, and on which screen."""
    try:
        step = service.next_step(ui.store(), trial_id)
    except TrialsError as exc:
        ui.show_problem(exc)
        return
    st.info(f"**Next for this trial:** {ui.literal(step.text)}  \n"
            f"Screen: **{step.screen}** (in the menu).", icon=":material/arrow_forward:")

if not studies:
    st.info("No trials on file yet. Start one below, or run `trials demo` for the invented "
            "examples.")
else:
    counts = {s: sum(1 for x in studies if x.status == s) for s in Status}
    cols = st.columns(len(Status))
    for col, status in zip(cols, Status):
        col.metric(status.value.capitalize(), counts[status], help=STATUS_HELP[status])
    table = [
        {
            "id": s.id,
            "trial": s.name,
            "product": s.product,
            "method": s.method,
            "status": s.status.value,
            "created": s.created_on or "\u2014",
            "decision": s.decision,
        }
        for s in studies
    ]
    picked = st.dataframe(
        table,
        hide_index=True,
        width="stretch",
        on_select="rerun",
        selection_mode="single-row",
        key="trial_table",
        column_config={"id": st.column_config.NumberColumn("id", width="small")},
    )
    st.caption("Tick a row to work on that trial on the other screens.")
    rows = picked.selection.rows if picked else []
    if rows:
        chosen = studies[rows[0]]
        ui.select_study(chosen.id)
        st.success(f"Working on trial #{chosen.id} {ui.literal(chosen.name)}: the other screens "
                   "open it.")
    in_hand = st.session_state.get(ui.STUDY_KEY)
    if in_hand is None:
        try:
            in_hand = int(st.query_params.get("study", ""))
        except ValueError:
            in_hand = None
    if in_hand in {s.id for s in studies}:
        if not rows:
            name = next(s.name for s in studies if s.id == in_hand)
            st.markdown(f"Trial in hand: **#{in_hand} {ui.literal(name)}**")
        _next_step(in_hand)

labels = {m.name: m.label for m in METHODS}
with st.expander("Start a new trial", expanded=not studies, icon=":material/add:"):
    with st.form("new_trial", clear_on_submit=False):
        name = st.text_input("Name", placeholder="e.g. Sourdough, 20 % rye against 10 %",
                             key="new_trial_name")
        product = st.text_input("Product", placeholder="what the samples are variants of",
                                key="new_trial_product")
        method = st.selectbox("Method", list(labels), format_func=labels.get,
                              key="new_trial_method")
        objective = st.text_area("Objective", placeholder="the question this trial answers",
                                 key="new_trial_objective")
        first = st.text_input("First sample (the control)", value="Control",
                              key="new_trial_first")
        second = st.text_input("Second sample", value="Variant", key="new_trial_second")
        made = st.form_submit_button("Create the trial", type="primary")
    if made:
        try:
            study = service.create_trial(
                ui.store(), name=name, method=method, objective=objective, product=product,
                samples=[
                    Sample(name=first.strip(), is_control=True),
                    Sample(name=second.strip()),
                ] if first.strip() and second.strip() else [],
                by=ui.who(),
            )
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            ui.select_study(study.id)
            ui.clear_fields("new_trial_name", "new_trial_product", "new_trial_method",
                            "new_trial_objective", "new_trial_first", "new_trial_second")
            # rerun, so that the list, the counters and the trial picker hold the new trial
            ui.flash(f"Trial #{study.id} {ui.literal(study.name)} created. Go on with Trial "
                     "set-up.")
            st.rerun()
ui.food_caution()
