"""The panelist's tasting screen, opened by ``/taste?t=<token>``.

Sized for a tablet: one step at a time, large labelled touch targets. It shows blinding
codes only, in this panelist's serving order. What a step asks and how it is answered
come from the method's registry entry (``tablet_instructions``, ``question``, ``choose``,
``allows_no_preference``, ``reference_first``) and from the steps of
``trials.answers.tasting_steps``, so a new method needs only its registry entry.

The first screen lists the session's allergens and says that tasting is voluntary. A
score or a rank is saved at the tap; a forced choice is saved when the panelist confirms
the code shown. Back and Next move between steps, and a review lists every answer, until
Finish. A reload starts at the first unanswered step: every saved answer is in the store,
keyed by what was asked, so nothing is lost or recorded twice.
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
STATE = "taste"  # this screen's keys in st.session_state start with it


def _state() -> dict:
    return st.session_state.setdefault(STATE, {})


def _guard(action, *args, **kwargs) -> bool:
    """Run one write; a refusal is shown to the panelist plainly (it names codes only)."""
    try:
        action(ui.store(), token, *args, **kwargs)
    except Exception as exc:
        _state()["problem"] = str(exc)
        return False
    _state().pop("problem", None)
    return True


def _go(index: int | None) -> None:
    _state()["at"] = index
    _state().pop("pick", None)
    for key in [k for k in st.session_state if str(k).startswith("words_")]:
        del st.session_state[key]  # a step shown again offers the words on file


def _save(code: str, attribute: str, value: str = "", *, session: str) -> None:
    _guard(service.record_answer, code=code, attribute=attribute, value=value, session=session)


def _comment_key(session: str, code: str) -> str:
    return f"comment_{session}_{code}"


def _save_comments(session: str, codes, then: int | None) -> None:
    """Save the comment boxes of these cups (an empty box clears a comment), then go on."""
    for code in codes:
        text = st.session_state.get(_comment_key(session, code))
        if text is not None and not _guard(service.record_comment, code=code,
                                           comment=text.strip(), session=session):
            return
    _go(then)


def _confirm(picked: str, session: str, comment_code: str, then: int) -> None:
    """A forced choice, confirmed: saved (with the set's comment), then the next step."""
    if picked == NO_PREFERENCE:
        ok = _guard(service.record_answer, code="", attribute=answers.CHOICE,
                    value=NO_PREFERENCE, session=session)
    else:
        ok = _guard(service.record_answer, code=picked, attribute=answers.CHOICE,
                    session=session)
    if ok:
        _save_comments(session, [comment_code], then)


def _toggle(code: str, picked: list[str], choose: int, options) -> None:
    """Tap a code: chosen (one method: instead of the other), or unchosen when it was;
    a group of ``choose`` codes is kept in serving order, the earliest tap giving way."""
    now = [c for c in picked if c != code]
    if len(now) == len(picked):
        now = (now + [code])[-choose:]
    _state()["pick"] = " ".join(sorted(now, key=list(options).index))


def _rank(session: str, code: str, rank: str, holder: str | None, old: str | None) -> None:
    """Give ``code`` this rank; the cup that held it takes ``code``'s old rank (a swap)."""
    if holder and old:
        _save(holder, answers.RANK, old, session=session)
    _save(code, answers.RANK, rank, session=session)


def _finish(session: str) -> None:
    if _guard(service.finish_ballot, session=session):
        _go(None)
        _state()["started"] = False


def _note(text: str) -> None:
    st.markdown(f'<p class="kt-note">{text}</p>', unsafe_allow_html=True)


def _codes_line(codes) -> str:
    return " → ".join(f"**{c}**" for c in codes)


def _comment_box(session: str, code: str, saved: str, label: str) -> None:
    key = _comment_key(session, code)
    if key not in st.session_state:
        st.session_state[key] = saved
    st.text_area(label, key=key, max_chars=500, height=90,
                 placeholder="Anything you noticed (optional)")


def _nav(index: int, *, can_go_on: bool, on_next=None, next_args=()) -> None:
    """Back (not on the first step) and Next (once the step is answered)."""
    back, ahead = st.columns(2)
    if index > 0:
        back.button("Back", key="nav_back", icon=":material/arrow_back:", width="stretch",
                    on_click=_go, args=(index - 1,))
    if on_next is not None:
        ahead.button("Next", key="nav_next", type="primary", icon=":material/arrow_forward:",
                     width="stretch", disabled=not can_go_on, on_click=on_next, args=next_args)


def intro(ballot, spec, session: str) -> None:
    """The first screen: who, what is in the samples, that taking part is voluntary."""
    st.markdown(f'<p class="kt-step">Panelist {html.escape(ballot.panelist_code)}</p>',
                unsafe_allow_html=True)
    st.markdown("### Before you start")
    found = ballot.allergens.get(session, ())
    if found:
        st.warning("The samples in this tasting contain: **"
                   + ui.literal(", ".join(found)) + "**. If you are allergic or intolerant "
                   "to any of these, do not taste: tell the panel leader now.",
                   icon=":material/warning:")
    else:
        st.info("No allergens are declared for the samples in this tasting. Tell the panel "
                "leader about any allergy, intolerance or diet before you taste.",
                icon=":material/info:")
    st.markdown("Taking part is voluntary: **you may stop at any time**, without giving a "
                "reason. If you feel unwell, stop and tell the panel leader at once.")
    st.markdown(spec.tablet_instructions)
    st.button("Start tasting", key="nav_start", type="primary", width="stretch",
              icon=":material/play_arrow:",
              on_click=lambda: _state().update(started=True))


def choose_step(ballot, spec, step, index: int, total: int) -> None:
    state = _state()
    codes = step.codes
    reference, options = answers.choice_options(spec, codes)
    on_file = answers.step_answers(step, ballot.answers, [])
    saved = on_file[0][1] if on_file else ""
    pick = state.get("pick", saved)
    st.markdown(spec.tablet_instructions)
    st.markdown(f"### {ballot.question}")
    if spec.asks_attribute and ballot.attributes:
        st.markdown(f"Attribute: **{ui.literal(ballot.attributes[0].name)}**")
    if reference:
        st.markdown(f"Reference first: **{reference}**. Then taste the coded cups: "
                    + _codes_line(options) + ".")
    else:
        st.markdown("Taste in this order, left to right: " + _codes_line(codes) + ".")
    if spec.choose > 1:
        st.markdown(f"{spec.group_label}: tap {spec.choose} cups.")
    picked = pick.split() if pick and pick != NO_PREFERENCE else []
    cols = st.columns(len(options))
    for col, c in zip(cols, options):
        on = c in picked
        col.button(c, key=f"pick_{step.session}_{step.set_index}_{c}", width="stretch",
                   type="primary" if on else "secondary",
                   icon=":material/check_circle:" if on else None,
                   on_click=_toggle, args=(c, picked, spec.choose, options))
    if spec.allows_no_preference:
        st.button("No preference", key=f"nopref_{step.session}_{step.set_index}",
                  width="stretch",
                  type="primary" if pick == NO_PREFERENCE else "secondary",
                  icon=":material/check_circle:" if pick == NO_PREFERENCE else None,
                  on_click=lambda: state.update(pick=NO_PREFERENCE))
    pick = pick if pick == NO_PREFERENCE or len(picked) == spec.choose else ""
    first = codes[0]
    comment = next((a.comment for a in ballot.answers if a.session == step.session
                    and a.attribute == answers.CHOICE
                    and (set(a.code.split()) & set(codes) or not a.code)), "")
    _comment_box(step.session, first, comment, "Comment on these cups (optional)")
    if pick:
        shown = "no preference" if pick == NO_PREFERENCE else " and ".join(pick.split())
        st.markdown(f'<p class="kt-choice" role="status">Your choice: {shown}</p>',
                    unsafe_allow_html=True)
        st.button(f"Confirm: {shown}", key=f"confirm_{step.session}_{step.set_index}",
                  type="primary", width="stretch", icon=":material/done:",
                  on_click=_confirm, args=(pick, step.session, first, index + 1))
    else:
        _note("Tap your choice; you will be asked to confirm it.")
    _nav(index, can_go_on=False)


def _save_words(code: str, words: list[str], key: str, *, session: str) -> None:
    picked = set(st.session_state.get(key) or [])
    for w in words:  # every word answered: 1 ticked, 0 not
        _save(code, w, "1" if w in picked else "0", session=session)


def _check_words(step, attributes, given) -> None:
    """Check-all-that-apply words (attributes of kind "check") of one cup: tap those that
    apply, then save; each word is saved as 1 (ticked) or 0 (not)."""
    words = [a.name for a in attributes if a.kind == AttributeKind.CHECK]
    if not words:
        return
    code, session = step.code, step.session
    key = f"words_{session}_{code}"
    if key not in st.session_state:
        st.session_state[key] = [w for w in words if given.get((code, w)) == "1"]
    st.pills("Tap every word that applies to this cup", words, selection_mode="multi",
             key=key, format_func=ui.literal)
    st.button("Save the words", type="primary", width="stretch", key=f"save_{key}",
              on_click=_save_words, args=(code, words, key), kwargs={"session": session})


def rate_step(ballot, spec, step, index: int, total: int) -> None:
    code, session = step.code, step.session
    given = {(a.code, a.attribute): a.value for a in ballot.answers if a.session == session}
    st.markdown(f'<p class="kt-code">{code}</p>', unsafe_allow_html=True)
    st.markdown(f"Cup {step.position + 1} of {len(step.codes)}. Taste the cup marked "
                f"**{code}**, then tap one box on each scale.")
    if step.position == 0:
        st.markdown(spec.tablet_instructions)
    _check_words(step, ballot.attributes, given)
    for i, attr in enumerate(ballot.attributes):
        if attr.kind == AttributeKind.CHECK:
            continue
        have = given.get((code, attr.name))
        st.markdown(f"#### {ui.literal(attr.name)}"
                    + (f" · you gave **{ui.literal(have)}**" if have else ""))
        with st.container(key=f"scale_{code}_{i}"):
            points = answers.scale_points(attr)
            for col, (p, words) in zip(st.columns(len(points), gap=2), points):
                label = f"**{p}**" + (f" {ui.literal(words)}" if words else "")
                # the chosen point is filled, and named beside the scale's name
                col.button(label, key=f"score_{session}_{code}_{i}_{p}", width="stretch",
                           type="primary" if have == str(p) else "secondary",
                           on_click=_save, args=(code, attr.name, str(p)),
                           kwargs={"session": session})
    saved = next((a.comment for a in ballot.answers if a.session == session and a.code == code
                  and ballot.attributes and a.attribute == ballot.attributes[0].name), "")
    if step.done:
        _comment_box(session, code, saved, f"Comment on cup {code} (optional)")
    _nav(index, can_go_on=step.done, on_next=_save_comments,
         next_args=(session, [code] if step.done else [], index + 1))


def rank_step(ballot, spec, step, index: int, total: int) -> None:
    session, codes = step.session, step.codes
    ranks = {a.code: a.value for a in ballot.answers
             if a.session == session and a.attribute == answers.RANK}
    holder = {ranks.get(c): c for c in codes if c in ranks}
    st.markdown(spec.tablet_instructions)
    st.markdown(f"### {ballot.question}")
    st.markdown(answers.rank_wording(ballot.attributes[0] if ballot.attributes else None,
                                     len(codes)))
    for c in codes:
        have = ranks.get(c)
        st.markdown(f'<p class="kt-code">{c}</p>', unsafe_allow_html=True)
        with st.container(key=f"ranks_{c}"):
            for col, r in zip(st.columns(len(codes)), range(1, len(codes) + 1)):
                other = holder.get(str(r))
                taken = other not in (None, c)
                col.button(f"Rank {r}", key=f"rank_{session}_{c}_{r}", width="stretch",
                           type="primary" if have == str(r) else "secondary",
                           icon=":material/check_circle:" if have == str(r) else None,
                           disabled=taken and not have,  # a ranked cup may swap ranks
                           on_click=_rank, args=(session, c, str(r), other if taken else None,
                                                 have))
    if step.done:
        comments = {a.code: a.comment for a in ballot.answers
                    if a.session == session and a.attribute == answers.RANK}
        for c in codes:
            _comment_box(session, c, comments.get(c, ""), f"Comment on cup {c} (optional)")
    _nav(index, can_go_on=step.done, on_next=_save_comments,
         next_args=(session, list(codes) if step.done else [], index + 1))


def respond_step(ballot, spec, step, index: int, total: int) -> None:
    """A signal-detection set (A-not-A, same-different): one large button per response of
    the registry (``spec.responses``), shown and confirmed before it is saved."""
    state = _state()
    codes = step.codes
    on_file = answers.step_answers(step, ballot.answers, [])
    pick = state.get("pick", on_file[0][1] if on_file else "")
    st.markdown(spec.tablet_instructions)
    st.markdown(f"### {ballot.question}")
    if len(codes) == 1:
        st.markdown(f"Taste the cup marked **{codes[0]}**.")
    else:
        st.markdown("Taste in this order, left to right: " + _codes_line(codes) + ".")
    cols = st.columns(len(spec.responses))
    for i, (col, word) in enumerate(zip(cols, spec.responses)):
        on = pick == word
        col.button(ui.literal(word), key=f"respond_{step.session}_{step.set_index}_{i}",
                   width="stretch", type="primary" if on else "secondary",
                   icon=":material/check_circle:" if on else None,
                   on_click=lambda w=word: state.update(pick=w))
    comment = next((a.comment for a in ballot.answers if a.session == step.session
                    and a.attribute == answers.RESPONSE and a.code in codes), "")
    _comment_box(step.session, codes[0], comment, "Comment on these cups (optional)")
    if pick:
        st.markdown(f'<p class="kt-choice" role="status">Your answer: '
                    f'{html.escape(pick)}</p>', unsafe_allow_html=True)
        st.button(f"Confirm: {ui.literal(pick)}",
                  key=f"confirm_{step.session}_{step.set_index}", type="primary",
                  width="stretch", icon=":material/done:", on_click=_respond,
                  args=(codes[0], pick, step.session, index + 1))
    else:
        _note("Tap your answer; you will be asked to confirm it.")
    _nav(index, can_go_on=False)


def _respond(code: str, word: str, session: str, then: int) -> None:
    if _guard(service.record_answer, code=code, attribute=answers.RESPONSE, value=word,
              session=session):
        _save_comments(session, [code], then)


STEP_SCREENS = {"choose": choose_step, "rate": rate_step, "rank": rank_step,
                "respond": respond_step}


def review(ballot, spec, steps, session: str) -> None:
    """Every answer of the session, each with a way back to change it, and Finish."""
    st.markdown("### Check your answers")
    st.markdown("You can still change any answer. When you press **Finish**, your answers "
                "are final.")
    names = [a.name for a in ballot.attributes]
    for i, step in enumerate(steps):
        got = answers.step_answers(step, ballot.answers, names)
        if step.kind == "rate":
            what = f"Cup **{step.code}**: " + ", ".join(
                f"{ui.literal(k)} {ui.literal(v)}" for k, v in got)
        elif step.kind == "rank":
            what = "Ranks: " + ", ".join(f"**{c}** rank {v}" for c, v in got)
        elif step.kind == "respond":
            what = (f"Cups {_codes_line(step.codes)}: you answered "
                    + (f"**{ui.literal(got[0][1])}**" if got else "nothing yet"))
        else:
            v = got[0][1] if got else ""
            what = (f"Cups {_codes_line(step.codes)}: you chose "
                    + ("no preference" if v == NO_PREFERENCE else f"**{v}**"))
        notes = answers.step_comments(step, ballot.answers)
        if notes:
            what += "  \nYour comment: " + " / ".join(ui.literal(n) for n in notes)
        left, right = st.columns([3, 1], vertical_alignment="center")
        left.markdown(what)
        right.button("Change", key=f"change_{i}", width="stretch", on_click=_go, args=(i,))
    st.button("Finish", key="nav_finish", type="primary", width="stretch",
              icon=":material/check_circle:", on_click=_finish, args=(session,))


@st.fragment
def ballot_screen() -> None:
    """The current step. A tap reruns this fragment only (not the whole app), with the
    ballot read afresh from the store, so a saved answer shows at once."""
    ballot = service.ballot_for_token(ui.store(), token)
    spec = get_method(ballot.method)
    state = _state()
    all_steps = answers.tasting_steps(spec, ballot.sets, ballot.answers,
                                      [a.name for a in ballot.attributes])
    sessions = [s for s in dict.fromkeys(x.session for x in all_steps)
                if s not in ballot.finished]

    st.markdown("## Tasting")
    if state.get("problem"):
        st.error(ui.literal(state["problem"], lines=True))
    if not all_steps:
        st.info("Your ballot has no cups yet. Please ask the panel leader.")
        return
    if not sessions:
        st.success("## Thank you, you are done.\n\nAll your answers are saved. "
                   "Please hand the tablet back to the panel leader.",
                   icon=":material/check_circle:")
        return
    session = sessions[0]
    steps = [x for x in all_steps if x.session == session]
    answered = any(a.session == session for a in ballot.answers)
    if not answered and not state.get("started"):
        if ballot.finished:
            st.success("Thank you: your last tasting is finished and saved.",
                       icon=":material/check_circle:")
        intro(ballot, spec, session)
        return

    at = state.get("at")
    if at is None:  # a reload, or a fresh start: the first unanswered step, else the review
        at = next((i for i, x in enumerate(steps) if not x.done), len(steps))
        state["at"] = at
    at = min(at, len(steps))
    if at == len(steps) and not all(x.done for x in steps):
        at = state["at"] = next(i for i, x in enumerate(steps) if not x.done)
    st.progress(at / len(steps), text=(f"Step {at + 1} of {len(steps)}" if at < len(steps)
                                       else "All steps answered"))
    if at == len(steps):
        review(ballot, spec, steps, session)
        return
    step = steps[at]
    st.markdown(f'<p class="kt-step">Panelist {html.escape(ballot.panelist_code)}</p>',
                unsafe_allow_html=True)
    STEP_SCREENS[step.kind](ballot, spec, step, at, len(steps))


ballot_screen()
