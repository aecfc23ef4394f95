"""Paper entry: type the answers of paper ballots into a grid of plain text boxes, then
check and save them as one batch.

The grid is a form of ordinary text boxes, one per answer cell, each keyed by panelist
code and set or cup code (never by its place). Typing and Tab stay in the browser: no
rerun per cell, so no keystroke is lost or lands in another row. "Check and save" sends
the page at once; every answer is checked against the serving plan (a code served to
that panelist, in that set) and the scales, and either every answer is saved or none,
each bad cell named by panelist and column. A page holds at most 60 rows of whole
ballots.
"""

import streamlit as st

from trials import service, ui
from trials.answers import most_cups, sheet_changes, sheet_key, sheet_pages
from trials.errors import ImportRowsError, TrialsError
from trials.methods import Family

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()


st.title(f"Paper entry: {ui.literal(study.name)}")
if not overview.plan_size:
    st.info("Draw the serving plan first (Serving plan).")
    st.stop()

sessions = list(overview.sessions)
c1, c2 = st.columns([1, 3])
session = (c1.selectbox("Session", sessions, index=len(sessions) - 1) if len(sessions) > 1
           else sessions[0])
whole = service.paper_sheet(store, trial_id, session, as_text=True)
boxes_per_row = len(study.attributes) if spec.family == Family.RATING else 1
# at most about 120 boxes a page (whole ballots): a page of many more reruns slowly
pages = sheet_pages(whole, most_rows=min(60, max(4, 120 // max(1, boxes_per_row))))
if len(pages) > 1:
    page_no = c2.selectbox(
        "Ballots", range(len(pages)), key=f"entry_page_{trial_id}_{session}",
        format_func=lambda i: f"page {i + 1} of {len(pages)}: panelists {pages[i][0]} to "
                              f"{pages[i][-1]}",
        help="Save a page before you turn to the next: what is not saved is dropped.")
    base = whole[whole["panelist"].isin(pages[page_no])].reset_index(drop=True)
else:
    base = whole
names = [a.name for a in study.attributes]

if spec.is_forced_choice:
    st.caption(f"{spec.question} Type the circled code"
               + (f" (the {'two' if spec.choose == 2 else spec.choose} codes of the group, "
                  "separated by a space)." if spec.choose > 1 else "."))
    fixed = [("panelist", "panelist"), ("set", "set"), ("cups", "cups served")]
    entry = [("chosen", "chosen code")]
    if spec.allows_no_preference:
        entry.append(("no_preference", "no preference"))
elif spec.family == Family.SIGNAL:
    st.caption(f"{spec.question} Pick the box the panelist ticked.")
    fixed = [("panelist", "panelist"), ("set", "set"), ("cups", "cups served")]
    entry = [("response", "response")]
elif spec.scores_each_cup:  # ratings; CATA words are 0/1 attributes
    fixed = [("panelist", "panelist"), ("position", "position"), ("code", "code")]
    entry = [(a.name, f"{a.name} ({a.low} to {a.high})") for a in study.attributes]
else:
    fixed = [("panelist", "panelist"), ("position", "position"), ("code", "code")]
    entry = [("rank", f"rank (1 = most, up to {most_cups(base)})")]

st.caption("Type into the boxes; Tab moves to the next one. Nothing is sent until "
           "**Check and save**; a blank box leaves what is on file.")
gen = st.session_state.get("paper_gen", 0)
widths = [1.2, 0.8, 2.2] + [1.6] * len(entry)
edited = base.copy()
with st.form(f"paper_form_{trial_id}_{session}", clear_on_submit=False, enter_to_submit=False):
    head = st.columns(widths, vertical_alignment="bottom")
    for col, (_, label) in zip(head, fixed + entry):
        col.markdown(f"**{ui.literal(label)}**")
    for i, rec in enumerate(base.to_dict("records")):
        key = sheet_key(spec, rec)
        cols = st.columns(widths, vertical_alignment="center")
        for col, (name, _) in zip(cols, fixed):
            col.markdown(ui.literal(rec[name]))
        for col, (name, label) in zip(cols[len(fixed):], entry):
            widget_key = f"paper_{trial_id}_{session}_{gen}_{key[0]}_{key[1]}_{name}"
            where = f"{label}, panelist {key[0]}, {'set' if spec.is_forced_choice else 'code'} "
            where += key[1]
            if name == "no_preference":
                edited.at[i, name] = col.checkbox(ui.literal(where), value=bool(rec[name]),
                                                  key=widget_key, label_visibility="collapsed")
            elif name == "response":
                options = ["", *spec.responses]
                now = rec[name] if rec[name] in options else ""
                edited.at[i, name] = col.selectbox(ui.literal(where), options,
                                                   index=options.index(now), key=widget_key,
                                                   label_visibility="collapsed")
            else:
                edited.at[i, name] = col.text_input(ui.literal(where), value=rec[name] or "",
                                                    key=widget_key,
                                                    label_visibility="collapsed")
    submitted = st.form_submit_button("Check and save", type="primary", icon=":material/save:")

ui.show_flash("grid")
if submitted:
    changed = sheet_changes(spec, base, edited, names)
    if not changed:
        st.info("Nothing changed on this page; nothing to save.")
    else:
        try:
            n = service.save_paper_sheet(store, trial_id, session, edited, entered_by=ui.who())
        except ImportRowsError as exc:
            ui.show_problem(exc)
            st.caption("The boxes keep what you typed: correct the cells named above and press "
                       "Check and save again.")
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.session_state["paper_gen"] = gen + 1
            ui.flash(f"Saved {len(changed)} changed row(s) of session {ui.literal(session)}; "
                     f"every answer checks out ({n} answers of this page on file).", "grid")
            st.rerun()

progress = service.answer_progress(store, trial_id)
if not progress.empty:
    done = progress[progress["answered"] >= progress["expected"]]
    st.caption(f"{len(done)} of {len(progress)} ballots complete.")

with st.expander("Import answers from a file", icon=":material/upload_file:"):
    st.caption("Tidy CSV or Excel: session, panelist, code, attribute, value (see the "
               "README). Every row is checked; on any bad row nothing is imported.")
    up = st.file_uploader("Answer file", type=["csv", "txt", "xlsx"], key="resp_file")
    ui.show_flash("import")
    if up is not None and st.button("Import the answers"):
        try:
            done = service.import_answer_file(store, trial_id, up.getvalue(),
                                              entered_by=ui.who(), name=up.name)
        except TrialsError as exc:
            ui.show_problem(exc)
        else:
            ui.changed()
            st.session_state["paper_gen"] = gen + 1  # the grid shows the imported answers
            ui.flash(ui.literal(done.message()), "import")
            st.rerun()
