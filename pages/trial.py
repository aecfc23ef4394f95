"""Trial set-up: objective, method, risks and the planning answer."""

import streamlit as st

from trials import service, ui
from trials.errors import TrialsError
from trials.methods import METHODS, Family, Scoring, get_method
from trials.model import Status

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()

st.title(f"Trial set-up: {ui.literal(study.name)}")
ui.show_flash()
st.caption(f"Trial #{study.id} · {spec.label} · status **{study.status}** · "
           f"{overview.plan_size} cups planned · {overview.responses} answers")

labels = {m.name: m.label for m in METHODS}
names = list(labels)
with st.form("setup"):
    name = st.text_input("Name", value=study.name)
    product = st.text_input("Product", value=study.product)
    objective = st.text_area("Objective", value=study.objective,
                             help="The question the trial answers, in the kitchen's words.")
    method = st.selectbox(
        "Method", names, index=names.index(study.method), format_func=labels.get,
        disabled=overview.plan_size > 0,
        help="Fixed once a serving plan is drawn." if overview.plan_size else spec.reference,
    )
    aims = ["difference", "similarity"]
    aim = study.aim
    if get_method(method).is_forced_choice:  # paired preference too: equal preference
        aim = st.radio(
            "What the test must show", aims, horizontal=True,
            index=aims.index(study.aim) if study.aim in aims else 0,
            format_func={"difference": "a difference (are the samples told apart?)",
                         "similarity": "similarity (are they close enough to swap?)"}.get,
            help="A similarity aim is tested at beta and pd; keep beta small for it.",
        )
    target = study.target_sample
    if get_method(method).scoring is Scoring.TARGET_BY_ROLE and study.samples:
        sample_names = [s.name for s in study.samples]
        target = st.selectbox(
            "Target sample (expected to have more of the attribute)", sample_names,
            index=sample_names.index(target) if target in sample_names else None,
            placeholder="Choose the target before drawing the plan",
            disabled=overview.plan_size > 0,
            help="A correct answer picks this sample; fixed once a serving plan is drawn.",
        )
    c1, c2, c3 = st.columns(3)
    alpha = c1.number_input("alpha (risk of a false difference)", 0.001, 0.5,
                            float(study.alpha), 0.01, format="%.3f")
    beta = c2.number_input("beta (risk of missing the difference)", 0.001, 0.5,
                           float(study.beta), 0.01, format="%.3f")
    if get_method(method).is_forced_choice:
        pd_value = c3.number_input(
            "pd: proportion of discriminators that matters", 0.01, 0.99,
            float(study.pd or 0.30), 0.05, format="%.2f",
        )
        delta = study.delta
    else:
        delta = c3.number_input(
            "Smallest difference of means that matters (scale points)", 0.05, 10.0,
            float(study.delta or 1.0), 0.25, format="%.2f",
        )
        pd_value = study.pd
    saved = st.form_submit_button("Save the set-up", type="primary")

if saved:
    changes = dict(name=name, product=product, objective=objective, alpha=alpha, beta=beta,
                   pd=pd_value, delta=delta)
    if aim:
        changes["aim"] = aim
    if not overview.plan_size:
        changes["method"] = method
        if target:
            changes["target_sample"] = target
    try:
        study = service.update_trial(store, trial_id, by=ui.who(), **changes)
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        ui.changed()
        ui.flash("Set-up saved.")
        st.rerun()  # the title, the caption and the sidebar's picker read the saved set-up



def _rating_panel_size() -> None:
    """'You need n panelists' for a rating trial: the noncentral F of the block ANOVA
    for the smallest difference of means, with the panel's error from an earlier trial
    or as given."""
    if not study.delta:
        st.info("Give the smallest difference of means that matters to get the panel size.")
        return
    errors = ui.panel_errors(trial_id)
    sources = ["earlier", "given"] if errors else ["given"]
    c1, c2 = st.columns(2)
    source = c1.radio("The panel's error", sources, horizontal=True, key="power_source",
                      format_func={"earlier": "from an earlier rating trial",
                                   "given": "a standard deviation I give"}.get)
    design = c2.radio("Design", ["blocked", "monadic"], horizontal=True, key="power_design",
                      format_func={"blocked": "every panelist rates every sample",
                                   "monadic": "each panelist rates one sample"}.get)
    if source == "earlier":
        err = st.selectbox("Earlier trial and attribute", errors, key="power_error",
                           format_func=lambda e: f"{e.trial} · {e.attribute} · sd {e.sd:.2f} "
                                                 f"({e.df:g} df)")
        sd, said = err.sd, f"{err.source}: {ui.literal(err.trial)}, {ui.literal(err.attribute)}"
    else:
        sd = st.number_input("Error standard deviation of one rating (scale points)", 0.05,
                             10.0, 1.5, 0.05, format="%.2f", key="power_sd")
        said = "given"
    try:
        answer = service.rating_panel_size_needed(store, trial_id, sd=sd, design=design)
    except TrialsError as exc:
        ui.show_problem(exc)
        return
    if answer is None:
        return
    who = "panelists" if design == "blocked" else "panelists per sample"
    st.metric("You need", f"{answer.n} {who}", help=answer.method)
    st.write(
        f"With **{answer.n}** {who} the F test of the {answer.samples} samples, at alpha = "
        f"{answer.alpha:g}, detects a difference of **{answer.delta:g}** scale points between "
        f"two samples with power {answer.power:.2f} (beta = {answer.beta:g}), for an error "
        f"sd of {answer.sd:.2f} ({said})."
    )
    st.caption(f"{answer.method}. {answer.note}.")
    with st.expander("Power against the number of panelists", icon=":material/show_chart:"):
        ui.rating_power_chart(answer.delta, sd=answer.sd, samples=answer.samples,
                              alpha=answer.alpha, beta=answer.beta, n_needed=answer.n)


st.subheader("How many panelists")
if spec.is_forced_choice:
    answer = service.panel_size_needed(store, trial_id)
    if answer is None:
        st.info("Give pd (the proportion of discriminators that matters) to get the panel size.")
    else:
        st.metric("You need", f"{answer.n} panelists",
                  help=f"Exact binomial; definition: {answer.definition}")
        st.write(service.panel_size_words(store, trial_id))
        if answer.note:
            st.caption(answer.note)
        with st.expander("Power against the number of panelists", icon=":material/show_chart:"):
            ui.power_chart(study.method, pd=study.pd, alpha=study.alpha, n_needed=answer.n,
                           beta=study.beta)
    with st.expander("Critical values for n = 5 to 200", icon=":material/table:"):
        table = service.critical_values(study.method)
        st.caption("Fewest correct answers that conclude a difference (exact binomial; "
                   "'None': no count reaches that alpha).")
        st.dataframe(table.to_frame(), width="stretch", height=320)
        st.download_button("Print the table (PDF)", service.critical_values_pdf(study.method),
                           file_name=f"critical-values-{study.method}.pdf",
                           mime="application/pdf", icon=":material/print:")
elif spec.family == Family.RATING:
    _rating_panel_size()
elif spec.family == Family.SIGNAL:
    st.write(
        "The panel size of a signal-detection test is not planned here: each panelist "
        "answers for one sample or pair, so the panelists served each kind of set set the "
        "precision of d' (its standard error is shown with the results). Serve the two "
        "kinds to equal numbers of panelists (the serving plan does)."
    )
elif spec.family == Family.CATA:
    st.write(
        "The panel size of a check-all-that-apply trial is not planned here; consumer "
        "panels of 60 to 100 are common practice (no published rule is applied)."
    )
else:
    st.write(
        "For rankings the panel size follows from the smallest difference that matters and "
        "the panel's spread; with no earlier trial on file, 24 to 40 panelists is common "
        "practice."
    )

st.subheader("Status")
statuses = [s.value for s in Status]
cols = st.columns([2, 1])
new_status = cols[0].segmented_control("Where the trial stands", statuses,
                                       default=str(study.status), key="status_pick")
if cols[1].button("Set status", disabled=new_status in (None, str(study.status))):
    try:
        service.set_status(store, trial_id, new_status, by=ui.who())
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        ui.changed()
        st.rerun()
ui.food_caution()
