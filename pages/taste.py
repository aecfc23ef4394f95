"""The panelist's tasting screen, opened by ``/taste?t=<token>``.

Sized for a tablet: one step at a time, large buttons. It shows blinding codes only, in
this panelist's serving order; every answer is saved at once, and the current step is
worked out from the answers on file, so a reload picks up where the panelist was.
"""

import html

import streamlit as st

from trials import answers, service, ui
from trials.answers import NO_PREFERENCE
from trials.methods import get_method
from trials.model import AttributeKind

ui.require_panelist()
ui.tablet_look()
token = ui.panelist_token()


def _save(code: str, attribute: str, value: str = "", *, session: str) -> None:
    try:
        service.record_answer(ui.store(), token, code=code, attribute=attribute, value=value,
                              session=session)
    except Exception as exc:  # shown to the panelist plainly; nothing else is revealed
        st.session_state["taste_problem"] = str(exc)
    else:
        st.session_state.pop("taste_problem", None)


def _respond(current, spec, question: str) -> None:
    """A signal-detection set (A-not-A, same-different): the codes in serving order and
    one large button per response of the registry (``spec.responses``)."""
    st.markdown(spec.tablet_instructions)
    st.markdown(f"### {question}")
    if len(current.codes) == 1:
        st.markdown(f"Taste the cup marked **{current.codes[0]}**.")
    else:
        st.markdown("Taste in this order, left to right: "
                    + " → ".join(f"**{c}**" for c in current.codes))
    cols = st.columns(len(spec.responses))
    for col, word in zip(cols, spec.responses):
        col.button(word, key=f"respond_{current.session}_{current.set_index}_{word}",
                   type="primary", width="stretch", on_click=_save,
                   args=(current.codes[0], answers.RESPONSE, word),
                   kwargs={"session": current.session})


def _save_words(code: str, words: list[str], key: str, *, session: str) -> None:
    picked = set(st.session_state.get(key) or [])
    for w in words:  # every word answered: 1 ticked, 0 not
        _save(code, w, "1" if w in picked else "0", session=session)


def _check_words(current, code: str, attributes, given) -> None:
    """CATA words (attributes of kind "check") of one cup: tap those that apply, then save;
    each word is saved as 1 (ticked) or 0 (not)."""
    words = [a.name for a in attributes if a.kind == AttributeKind.CHECK]
    if not words:
        return
    done = [w for w in words if given.get((current.session, code, w)) == "1"]
    key = f"words_{current.session}_{code}"
    st.pills("Tap every word that applies", words, selection_mode="multi", key=key,
             default=done, format_func=ui.literal)
    st.button("Save the words", type="primary", width="stretch", key=f"save_{key}",
              on_click=_save_words, args=(code, words, key),
              kwargs={"session": current.session})


@st.fragment
def ballot_screen() -> None:
    """The current step. A tap reruns this fragment only (not the whole app), with the
    ballot read afresh from the store, so the next step shows as soon as it is saved."""
    ballot = service.ballot_for_token(ui.store(), token)
    spec = get_method(ballot.method)
    given = {(a.session, a.code, a.attribute): a.value for a in ballot.answers}
    steps = answers.tasting_steps(spec, ballot.sets, ballot.answers,
                                  [a.name for a in ballot.attributes])
    open_steps = [i for i, step in enumerate(steps) if not step.done]

    st.markdown("## Tasting")
    if st.session_state.get("taste_problem"):
        st.error(ui.literal(st.session_state["taste_problem"], lines=True))

    if not steps:
        st.info("Your ballot has no cups yet. Please ask the panel leader.")
        return

    if not open_steps:
        st.success("## Thank you, you are done.\n\nAll your answers are saved. "
                   "Please hand the tablet back to the panel leader.",
                   icon=":material/check_circle:")
        return

    st.caption("If you have an allergy, feel unwell or want to stop, tell the panel leader at "
               "once. You may stop at any time.")
    index = open_steps[0]
    current = steps[index]
    kind, pos, code = current.kind, current.position, current.code
    st.progress(index / len(steps), text=f"Step {index + 1} of {len(steps)}")
    st.markdown(f'<p class="kt-step">Panelist {html.escape(ballot.panelist_code)}</p>',
                unsafe_allow_html=True)

    if kind == "choose":
        st.markdown(spec.tablet_instructions)
        st.markdown(f"### {ballot.question}")
        codes = current.codes
        reference, options = answers.choice_options(spec, codes)
        if reference:
            st.markdown(f"Reference first: **{reference}**. Then taste the coded cups: "
                        + " → ".join(f"**{c}**" for c in options) + ".")
        else:
            st.markdown("Taste in this order, left to right: "
                        + " → ".join(f"**{c}**" for c in codes))
        if spec.choose > 1:
            group = st.pills(spec.group_label, options,
                             selection_mode="multi",
                             key=f"group_{current.session}_{current.set_index}")
            picked = sorted(group or [], key=options.index)
            st.button("Save my choice", type="primary", width="stretch",
                      disabled=len(picked) != spec.choose,
                      on_click=_save, args=(" ".join(picked), answers.CHOICE),
                      kwargs={"session": current.session})
        else:
            cols = st.columns(len(options))
            for col, c in zip(cols, options):
                col.button(c, key=f"pick_{current.session}_{current.set_index}_{c}",
                           type="primary", width="stretch", on_click=_save,
                           args=(c, answers.CHOICE), kwargs={"session": current.session})
            if spec.allows_no_preference:
                st.button("No preference", width="stretch",
                          key=f"nopref_{current.session}_{current.set_index}", on_click=_save,
                          args=("", answers.CHOICE, NO_PREFERENCE),
                          kwargs={"session": current.session})

    elif kind == "respond":
        _respond(current, spec, ballot.question)

    elif kind == "rate":
        st.markdown(f'<p class="kt-code">{html.escape(code)}</p>', unsafe_allow_html=True)
        st.markdown(f"Cup {pos + 1} of {len(current.codes)}. Taste the cup marked **{code}**, "
                    "then tap one box on each scale.")
        if pos == 0:
            st.caption(spec.tablet_instructions)
        _check_words(current, code, ballot.attributes, given)
        for i, attr in enumerate(ballot.attributes):
            if attr.kind == AttributeKind.CHECK:
                continue
            have = given.get((current.session, code, attr.name))
            st.markdown(f"#### {ui.literal(attr.name)}"
                        + (f" · you gave **{ui.literal(have)}**" if have else ""))
            points = list(range(attr.low, attr.high + 1))
            anchors = attr.anchors
            if len(anchors) == 2:
                left, right = st.columns(2)
                left.caption(f"{attr.low} = {ui.literal(anchors[0])}")
                right.caption(f"{attr.high} = {ui.literal(anchors[1])}")
            cols = st.columns(len(points))
            for col, p in zip(cols, points):
                label = str(p)
                col.button(label, key=f"score_{current.session}_{code}_{i}_{p}",
                           type="primary" if have == label else "secondary", width="stretch",
                           help=(ui.literal(anchors[p - attr.low]) if len(anchors) == len(points)
                                 else None),
                           on_click=_save, args=(code, attr.name, label),
                           kwargs={"session": current.session})

    else:  # rank
        st.markdown(spec.tablet_instructions)
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
