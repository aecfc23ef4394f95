"""Printing: ballots, the serving sheet (with the key, kitchen only) and cup labels."""

import streamlit as st

from trials import service, ui
from trials.errors import TrialsError

ui.require_leader()
trial_id = ui.pick_trial()
store = ui.store()
study = service.get_trial(store, trial_id)
overview = service.trial_overview(store, trial_id)

st.title(f"Printing: {ui.literal(study.name)}")
ui.food_caution(trial_id)
if not overview.plan_size:
    st.info("Draw the serving plan first (Serving plan).")
    st.stop()

problem = service.link_address_problem(ui.app_address())
if problem:
    st.warning(ui.literal(
        f"Before printing ballots: {problem}. Set TRIALS_BASE_URL to the address tablets use "
        "on the kitchen network and start the app where they reach it, for example "
        "TRIALS_BASE_URL=http://192.168.1.20:8501 trials app --host 0.0.0.0 (with a leader "
        "passcode set), or open this page at that address; on the command line, "
        "trials print ballots ... --base-url URL."), icon=":material/wifi_off:")

DOCS = {
    "ballots": ("Ballots", "one ballot per panelist and session, blinding codes only"),
    "sheet": ("Serving sheet", "the decoding key, for the kitchen only: never hand it out"),
    "labels": ("Cup labels", "in serving order, grouped per panelist"),
}
KEY_KINDS = {"sheet"}  # hold the decoding key: offered for one run only (ui.key_download)
stamp = service.change_stamp(store, trial_id)
made = st.session_state.setdefault("printed", {})
for old in [k for k in made if k[0] == trial_id and k[2] != stamp]:
    del made[old]  # a PDF of an earlier state of the trial: never offered again


def _build(kind: str) -> bytes:
    bar = st.progress(0.0, text=f"Preparing the {DOCS[kind][0].lower()}...")

    def tick(done: int, total: int) -> None:
        bar.progress(min(1.0, done / max(total, 1)), text=f"{DOCS[kind][0]}: {done} of {total}")

    data = service.print_bytes(store, trial_id, kind, progress=tick, base_url=ui.app_address())
    bar.empty()
    return data


for kind, (title, help_text) in DOCS.items():
    with st.container(border=True):
        c1, c2 = st.columns([3, 2], vertical_alignment="center")
        c1.markdown(f"**{title}**  \n{help_text}")
        if kind in KEY_KINDS:
            if c2.button(f"Prepare the {title.lower()}", key=f"prep_{kind}", width="stretch"):
                try:
                    data = _build(kind)
                except TrialsError as exc:
                    ui.show_problem(exc)
                else:
                    ui.key_download(c2, f"Download the {title.lower()} (PDF)", data,
                                    file_name=f"trial-{trial_id}-{kind}.pdf",
                                    mime="application/pdf", key=f"dl_{kind}")
            continue
        key = (trial_id, kind, stamp)
        if key not in made:
            if c2.button(f"Prepare the {title.lower()}", key=f"prep_{kind}", width="stretch"):
                try:
                    made[key] = _build(kind)
                except TrialsError as exc:
                    ui.show_problem(exc)
        if key in made:
            c2.download_button(
                f"Download the {title.lower()} (PDF)", made[key],
                file_name=f"trial-{trial_id}-{kind}.pdf", mime="application/pdf",
                on_click="ignore", type="primary", width="stretch", key=f"dl_{kind}",
                icon=":material/download:",
            )
