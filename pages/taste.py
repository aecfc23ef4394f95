"""The panelist's tasting screen, opened by ``/taste?t=<token>``.

Sized for a tablet: one step at a time, large buttons. It shows blinding codes only, in
this panelist's serving order; every answer is saved at once, and the current step is
worked out from the answers on file, so a reload picks up where the panelist was.
"""

import html

import streamlit as st

from trials import service, ui

ui.require_panelist()
ui.tablet_look()
token = ui.panelist_token()

NO_PREFERENCE = "no preference"


def _save(code: str, attribute: str, value: str = "", *, session: str) -> None:
    try:
        service.record_answer(ui.store(), token, code=code, attribute=attribute, value=value,
                              session=session)
    except Exception as exc:  # shown to the panelist plainly; nothing else is revealed
        st.session_state["taste_problem"] = str(exc)
    else:
        st.session_state.pop("taste_problem", None)


def _steps(ballot, given, chosen):
    """Every step of the ballot in serving order, with whether it is answered."""
    steps = []
    method = ballot.method
    if method in ("rating",):
        for s in ballot.sets:
            for pos, code in enumerate(s.codes):
                done = all((s.session, code, a.name) in given for a in ballot.attributes)
                steps.append(("rate", s, pos, code, done))
    elif method == "ranking":
        for s in ballot.sets:
            done = all((s.session, code, "rank") in given for code in s.codes)
            steps.append(("rank", s, None, None, done))
    else:
        for s in ballot.sets:
            steps.append(("choose", s, None, None, (s.session, s.set_index) in chosen))
    return steps


@st.fragment
def ballot_screen() -> None:
    """The current step. A tap reruns this fragment only (not the whole app), with the
    ballot read afresh from the store, so the next step shows as soon as it is saved."""
    ballot = service.ballot_for_token(ui.store(), token)
    method = ballot.method
    given = {(a.session, a.code, a.attribute): a.value for a in ballot.answers}
    chosen = {}  # (session, set_index) -> chosen codes, forced choice
    for a in ballot.answers:
        if a.attribute == "choice":
            for s in ballot.sets:
                if s.session == a.session and (set(a.code.split()) & set(s.codes)
                                               or (not a.code and a.value == NO_PREFERENCE)):
                    chosen[(s.session, s.set_index)] = a.code or NO_PREFERENCE

    steps = _steps(ballot, given, chosen)
    open_steps = [i for i, step in enumerate(steps) if not step[4]]

    st.markdown("## Tasting")
    if st.session_state.get("taste_problem"):
        st.error(st.session_state["taste_problem"])

    if not steps:
        st.info("Your ballot has no cups yet. Please ask the panel leader.")
        return

    if not open_steps:
        st.success("## Thank you, you are done.\n\nAll your answers are saved. "
                   "Please hand the tablet back to the panel leader.", icon=":material/check_circle:")
        return

    st.caption("If you have an allergy, feel unwell or want to stop, tell the panel leader at "
               "once. You may stop at any time.")
    index = open_steps[0]
    kind, current, pos, code, _ = steps[index]
    st.progress(index / len(steps), text=f"Step {index + 1} of {len(steps)}")
    st.markdown(f'<p class="kt-step">Panelist {html.escape(ballot.panelist_code)}</p>',
                unsafe_allow_html=True)

    if kind == "choose":
        st.markdown(ballot.instructions)
        st.markdown(f"### {ballot.question}")
        codes = current.codes
        if method == "duo-trio":
            st.markdown(f"Reference first: **{codes[0]}**. Then taste the two coded cups.")
            options = codes[1:]
        else:
            st.markdown("Taste in this order, left to right: "
                        + " → ".join(f"**{c}**" for c in codes))
            options = codes
        if method == "tetrad":
            group = st.pills("The two cups that belong together", options, selection_mode="multi",
                             key=f"tetrad_{current.session}_{current.set_index}")
            picked = sorted(group or [], key=options.index)
            st.button("Save my choice", type="primary", width="stretch", disabled=len(picked) != 2,
                      on_click=_save, args=(" ".join(picked), "choice"),
                      kwargs={"session": current.session})
        else:
            cols = st.columns(len(options))
            for col, c in zip(cols, options):
                col.button(c, key=f"pick_{current.session}_{current.set_index}_{c}",
                           type="primary", width="stretch", on_click=_save, args=(c, "choice"),
                           kwargs={"session": current.session})
            if method == "paired-preference":
                st.button("No preference", width="stretch",
                          key=f"nopref_{current.session}_{current.set_index}", on_click=_save,
                          args=("", "choice", NO_PREFERENCE), kwargs={"session": current.session})

    elif kind == "rate":
        st.markdown(f'<p class="kt-code">{html.escape(code)}</p>', unsafe_allow_html=True)
        st.markdown(f"Cup {pos + 1} of {len(current.codes)}. Taste the cup marked **{code}**, "
                    "then tap one box on each scale.")
        if pos == 0:
            st.caption(ballot.instructions)
        for i, attr in enumerate(ballot.attributes):
            have = given.get((current.session, code, attr.name))
            st.markdown(f"#### {attr.name}" + (f" · you gave **{have}**" if have else ""))
            points = list(range(attr.low, attr.high + 1))
            anchors = attr.anchors
            if len(anchors) == 2:
                left, right = st.columns(2)
                left.caption(f"{attr.low} = {anchors[0]}")
                right.caption(f"{attr.high} = {anchors[1]}")
            cols = st.columns(len(points))
            for col, p in zip(cols, points):
                label = str(p)
                col.button(label, key=f"score_{current.session}_{code}_{i}_{p}",
                           type="primary" if have == label else "secondary", width="stretch",
                           help=anchors[p - attr.low] if len(anchors) == len(points) else None,
                           on_click=_save, args=(code, attr.name, label),
                           kwargs={"session": current.session})

    else:  # rank
        st.markdown(ballot.instructions)
        st.markdown(f"### {ballot.question}")
        codes = current.codes
        k = len(codes)
        used = {given.get((current.session, c, "rank")): c for c in codes}
        for c in codes:
            have = given.get((current.session, c, "rank"))
            st.markdown(f'<p class="kt-code">{html.escape(c)}</p>', unsafe_allow_html=True)
            cols = st.columns(k)
            for col, r in zip(cols, range(1, k + 1)):
                taken = used.get(str(r)) not in (None, c)
                col.button(str(r), key=f"rank_{current.session}_{c}_{r}", width="stretch",
                           type="primary" if have == str(r) else "secondary", disabled=taken,
                           on_click=_save, args=(c, "rank", str(r)),
                           kwargs={"session": current.session})
        st.caption("Rank 1 = most. Each rank once.")


ballot_screen()
