"""The serving plan: draw it with a seed, see its balance, allergen conflicts and links."""

import pandas as pd
import streamlit as st

from trials import service, ui
from trials.errors import TrialsError

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()

st.title(f"Serving plan: {ui.literal(study.name)}")
ui.food_caution(trial_id)

choice = service.panel_choice(store, trial_id)

with st.form("draw"):
    st.markdown(f"**Draw the plan** ({spec.label}, {len(study.samples)} samples)")
    chosen = st.multiselect(
        "Panelists (consent recorded)", list(choice.consented), default=list(choice.suggested),
        help="Panelists without a consent date cannot be served; panelists with an allergen "
             "conflict are left out unless you add them (the draw then refuses).",
    )
    c1, c2, c3 = st.columns(3)
    sessions = list(overview.sessions) or ["1"]
    session = c1.text_input("Session", value=sessions[-1])
    seed = c2.number_input("Seed (the same seed draws the same plan)", 0, 2**31 - 1, 1, 1)
    per = None
    if not spec.is_forced_choice and len(study.samples) > 3:
        per = c3.number_input("Samples per panelist (fewer than all: incomplete blocks)", 2,
                              len(study.samples), len(study.samples), 1)
    drawn = st.form_submit_button("Draw the plan", type="primary")

if drawn:
    kwargs = {}
    if per is not None and int(per) < len(study.samples):
        kwargs["per_panelist"] = int(per)
    try:
        with st.spinner("Drawing the plan..."):
            entries = service.draw_plan(store, trial_id, panelist_codes=chosen, session=session,
                                        seed=int(seed), by=ui.who(), **kwargs)
    except TrialsError as exc:
        ui.show_problem(exc)
    else:
        ui.changed()
        st.success(f"Plan drawn: {len(entries)} cups for {len(chosen)} panelists "
                   f"(session {ui.literal(session)}, seed {int(seed)}).")
        overview = service.trial_overview(store, trial_id)

if not overview.plan_size:
    st.info("No plan drawn yet.")
    st.stop()

balance = service.plan_balance(store, trial_id)
st.subheader("Balance")
for line in balance["statements"]:
    st.info(line, icon=":material/balance:")
c1, c2 = st.columns(2)
with c1:
    st.markdown("Cups of each sample at each position")
    st.dataframe(balance["positions"], width="stretch")
with c2:
    if not balance["patterns"].empty:
        letters = "; ".join(f"{k}: {ui.literal(v)}" for k, v in sorted(balance["letters"].items()))
        has_reference = balance["patterns"]["pattern"].str.contains("R").any()
        st.markdown(f"Sets of each pattern ({letters}"
                    + ("; R: the reference cup, served first" if has_reference else "") + ")")
        st.dataframe(balance["patterns"], hide_index=True, width="stretch")

st.subheader("Tasting links")
address = ui.app_address()
unreachable = service.link_address_problem(address)
if unreachable and address:
    st.warning(ui.literal(f"These links would not open on a tablet: {unreachable}. Set "
                          "TRIALS_BASE_URL to the address tablets use (see Printing)."),
               icon=":material/wifi_off:")
st.caption("Hand each panelist their own link; it opens that panelist's ballot only. "
           + (f"Links start with {ui.literal(address)} (set TRIALS_BASE_URL to the address "
               "tablets reach)."
              if address else "Put the app's address in front of each path."))
links = pd.DataFrame({"panelist": list(overview.links),
                      "link": [address + path for path in overview.links.values()]})
st.dataframe(links, hide_index=True, width="stretch",
             column_config={"link": st.column_config.LinkColumn("link")})

with st.expander("The plan with the decoding key (kitchen only)", icon=":material/key:"):
    st.dataframe(service.plan_table(store, trial_id), hide_index=True, width="stretch")
