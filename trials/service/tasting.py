"""Use cases of the tasting itself: the ballot behind a panelist's link, recording an
answer (and a cup's comment) from the tablet or from the leader, the panelist's Finish,
the answers on file (with the key, for the leader), how many are still expected, and the
audit log.

On the tablet an answer is saved the moment it is confirmed, keyed by what was asked
(session, panelist and question), so a repeated request after a lost connection or a
reload changes nothing, and a changed answer is an update with an audit entry, never a
second answer. Until the panelist presses Finish for a session they may change any of
its answers; after that the tablet refuses, and only the leader can correct one."""

from __future__ import annotations

import datetime as dt
from dataclasses import replace
from typing import Any

import numpy as np
import pandas as pd

from trials.answers import (
    CHOICE,
    AnswerChecker,
    PlanKey,
    comment_question,
    expected_answers,
    tasting_steps,
)
from trials.answers import answer_progress as progress
from trials.errors import AccessDenied, TrialsError
from trials.methods import Family, get_method
from trials.model import (
    Answer,
    Attribute,
    AuditEntry,
    BallotAnswer,
    BallotSet,
    EntryMode,
    PanelistBallot,
    PlanBook,
    Status,
)
from trials.printing.ballots import scale_anchors, session_allergens
from trials.service import _input
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows

AUTOMATIC = "automatic"  # who moves a trial's status on by itself, in the audit log


def checker_of(book: PlanBook) -> AnswerChecker:
    """The answer checker of a loaded plan (:class:`trials.answers.AnswerChecker`)."""
    return AnswerChecker.for_trial(book.trial, book.entries, sessions=tuple(book.session_ids))


def ballot_for_token(store: Store, token: str) -> PanelistBallot:
    """The ballot behind a tasting link: codes, scales and this panelist's own answers.

    Holds nothing a panelist may not see: no trial name, no sample names or ids, no key.
    The scales carry the words the paper ballot prints (``scale_anchors``), and each
    session's allergens are pooled over its samples, as on the paper ballot.
    """
    with store.read() as tx:
        trial_id, code = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=code)
        mine = answer_rows.list_answers(tx, trial_id, panelist_code=code)
        finished = answer_rows.finished_sessions(tx, trial_id, code)
    spec = get_method(book.trial.method)
    key = PlanKey.of(book.entries)
    sets = [BallotSet(sess, k, tuple(c.code for c in cups))
            for sess in book.session_ids
            for k, cups in key.sets(sess, code).items()]
    answers = tuple(BallotAnswer(r.session, r.code, r.attribute, r.value, r.comment)
                    for r in mine)
    attributes = book.trial.attributes
    expected = expected_answers(spec, [len(x.codes) for x in sets], attributes=len(attributes))
    allergens = {sess: session_allergens(book.trial, [e for e in book.entries
                                                      if e.session == sess])
                 for sess in dict.fromkeys(e.session for e in book.entries)}
    return PanelistBallot(
        title=f"Tasting - {spec.label}",
        method=spec.name, question=spec.question, instructions=spec.instructions,
        panelist_code=code, sets=tuple(sets),
        attributes=(tuple(_worded(a) for a in attributes)
                    if spec.scores_each_cup or spec.family is Family.RANKING
                    or spec.asks_attribute else ()),
        answers=answers, remaining=max(0, expected - len(answers)),
        allergens=allergens,
        finished=tuple(s for s in book.session_ids if s in finished),
    )


def _expected(book: PlanBook) -> int:
    """How many answers the plan of ``book`` expects (:func:`trials.answers.expected_answers`
    per panelist and session)."""
    sizes: dict[tuple[str, str], dict[int, int]] = {}
    for e in book.entries:
        sets = sizes.setdefault((e.session, e.panelist_code), {})
        sets[e.set_index] = sets.get(e.set_index, 0) + 1
    spec = get_method(book.trial.method)
    return sum(expected_answers(spec, v.values(), attributes=len(book.trial.attributes))
               for v in sizes.values())


def advance_status(tx, trial_id: int, *, by: str, book: PlanBook) -> None:
    """Move the trial's status on after answers were recorded (audited, forward only):
    to ``tasting`` with the first answer, to ``analysed`` once every expected answer is
    in. A status the leader set further on (decided) stays.

    ``book`` is the plan the answers were checked against: the whole trial's, or one
    panelist's (the tablet's), whose count is checked first so that the whole plan is
    read only when that panelist's ballot is complete. The store keeps one answer per
    question of the plan, so a count equal to the plan's expected answers means all in.
    """
    order = list(Status)
    status = book.trial.status
    if order.index(status) >= order.index(Status.ANALYSED):
        return
    who = f"{by} ({AUTOMATIC})"
    if order.index(status) < order.index(Status.TASTING):
        if not answer_rows.count_answers(tx, trial_id):
            return
        trial_rows.advance_status(tx, trial_id, Status.TASTING, who)
    whole = book
    if len(book.panelist_ids) == 1:
        [pid] = book.panelist_ids.values()
        if answer_rows.count_answers(tx, trial_id, panelist_id=pid) < _expected(book):
            return
        whole = answer_rows.plan_book(tx, trial_id)
    if answer_rows.count_answers(tx, trial_id) >= _expected(whole):
        trial_rows.advance_status(tx, trial_id, Status.ANALYSED, who)


def _worded(attr: Attribute) -> Attribute:
    """The attribute with the anchors the paper ballot prints for it."""
    try:
        return replace(attr, anchors=scale_anchors(attr))
    except TrialsError:  # a scale the paper cannot print keeps its own words
        return attr


def _owner(tx, token: str, session: str | None):
    """(book, panelist, session) behind a token, for a tablet write: the session named,
    or the panelist's one session; refused once the panelist has finished it."""
    trial_id, panelist = plan_rows.token_owner(tx, token)
    book = answer_rows.plan_book(tx, trial_id, panelist_code=panelist)
    sess = session
    if sess is None:
        mine = list(dict.fromkeys(e.session for e in book.entries))
        if len(mine) != 1:
            raise TrialsError(f"say which session; panelist {panelist!r} is served in "
                              f"{', '.join(map(repr, mine)) or 'none'}")
        sess = mine[0]
    if sess in answer_rows.finished_sessions(tx, trial_id, panelist):
        raise AccessDenied("you have finished this tasting, so its answers can no longer "
                           "be changed here; please ask the panel leader")
    return book, panelist, sess


def save_checked(tx, book: PlanBook, session: str, panelist: str, code: str,
                 attribute: str, value: Any, *, comment: str, entered_by: str,
                 entered_at: dt.datetime | None, mode: EntryMode,
                 checker: AnswerChecker | None = None) -> Answer:
    """Check one answer against the plan (an :class:`~trials.errors.AnswerError`, a
    TrialsError, names what was expected) and store it: recorded once; a changed
    answer replaces the old one, audited."""
    ans = (checker or checker_of(book)).check(session, panelist, code, attribute, value)
    return answer_rows.save_answer(tx, book, ans, comment=comment, entered_by=entered_by,
                                   entered_at=entered_at, mode=mode)


def record_answer(
    store: Store,
    token: str,
    *,
    code: str,
    attribute: str,
    value: Any = "",
    comment: str = "",
    session: str | None = None,
) -> Answer:
    """Record a panelist's own answer from the tasting screen (mode ``tablet``).

    The same answer twice is recorded once; a different answer to the same question
    replaces it, with an audit entry. ``session`` may be left out when the panelist is
    served in one session only.
    """

    def work(tx) -> Answer:
        book, panelist, sess = _owner(tx, token, session)
        answer = save_checked(tx, book, sess, panelist, code, attribute, value,
                              comment=comment, entered_by=panelist, entered_at=None,
                              mode=EntryMode.TABLET)
        advance_status(tx, book.trial.id, by=panelist, book=book)
        return answer

    return store.write(work)


def record_comment(store: Store, token: str, *, code: str, comment: str,
                   session: str | None = None) -> None:
    """Set (or clear, with ``""``) the panelist's comment on cup ``code``, audited.

    The comment is kept on the cup's answer (:func:`trials.answers.comment_question`:
    a forced-choice set's choice, a cup's rank, or its score on the first attribute),
    so the cup must be answered first; refused after Finish, like an answer.
    """

    def work(tx) -> None:
        book, panelist, sess = _owner(tx, token, session)
        cup = PlanKey.of(book.entries).find(sess, panelist, str(code))
        if cup is None:
            raise TrialsError(f"{code!r} is not one of your cups in session {sess!r}")
        spec = get_method(book.trial.method)
        names = [a.name for a in book.trial.attributes]
        steps = [x for x in _steps(book, panelist) if x.session == sess
                 and cup.code in x.codes and x.code in ("", cup.code)]
        question = comment_question(spec, steps[0], cup.code, names)
        if not answer_rows.set_comment(tx, book, sess, panelist, question, comment,
                                       by=panelist):
            raise TrialsError(f"answer cup {cup.code} before commenting on it")

    store.write(work)


def finish_ballot(store: Store, token: str, *, session: str | None = None) -> bool:
    """The panelist's Finish for a session: from then on the tablet no longer changes
    its answers. Refused while a step is unanswered (naming how many); a repeated
    Finish changes nothing and returns False."""

    def work(tx) -> bool:
        trial_id, panelist = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=panelist)
        sess = session if session is not None else next(iter(book.session_ids), "")
        if sess in answer_rows.finished_sessions(tx, trial_id, panelist):
            return False
        steps = [x for x in _steps(book, panelist, tx) if x.session == sess]
        if not steps:
            raise TrialsError(f"you have no cups in session {sess!r}")
        open_steps = sum(not x.done for x in steps)
        if open_steps:
            raise TrialsError(f"{open_steps} of {len(steps)} steps are not answered yet")
        return answer_rows.mark_finished(tx, book, sess, panelist, by=panelist)

    return store.write(work)


def _steps(book: PlanBook, panelist: str, tx=None):
    """The tasting steps of one panelist's plan (book of that panelist)."""
    spec = get_method(book.trial.method)
    key = PlanKey.of(book.entries)
    sets = [BallotSet(sess, k, tuple(c.code for c in cups))
            for sess in book.session_ids for k, cups in key.sets(sess, panelist).items()]
    got = (answer_rows.list_answers(tx, book.trial.id, panelist_code=panelist)
           if tx is not None else [])
    return tasting_steps(spec, sets, got, [a.name for a in book.trial.attributes])


def enter_answer(
    store: Store,
    trial_id: int,
    *,
    panelist_code: str,
    code: str,
    attribute: str,
    value: Any = "",
    session: str = "1",
    comment: str = "",
    entered_by: str = "leader",
    mode: EntryMode | str = EntryMode.PAPER,
    entered_at: dt.datetime | None = None,
) -> Answer:
    """Record an answer entered by the leader (from a paper ballot, by default)."""
    mode = _input.entry_mode(mode)

    def work(tx) -> Answer:
        book = answer_rows.plan_book(tx, trial_id)
        answer = save_checked(tx, book, session, panelist_code, code, attribute, value,
                              comment=comment, entered_by=entered_by, entered_at=entered_at,
                              mode=mode)
        advance_status(tx, trial_id, by=entered_by, book=book)
        return answer

    return store.write(work)


def list_answers(store: Store, trial_id: int) -> list[Answer]:
    """Every answer to a trial, by session and panelist."""
    with store.read() as tx:
        return answer_rows.list_answers(tx, trial_id)


ANSWER_COLUMNS = ["session", "panelist", "code", "attribute", "value", "score", "sample",
                  "set_index", "position", "role", "pattern", "comment", "entered_by",
                  "entered_at", "mode"]


def answers_table(book: PlanBook, answers: list[Answer]) -> pd.DataFrame:
    """Answers joined with the key, tidy (see :func:`answers_frame`)."""
    key = PlanKey.of(book.entries)
    out = []
    for r in answers:
        cups = key.served(r.session, r.panelist_code)
        picked = [cups[c] for c in r.code.split() if c in cups]
        k = picked[0].set_index if picked else min((c.set_index for c in cups.values()),
                                                    default=0)
        in_set = sorted((c for c in cups.values() if c.set_index == k), key=lambda c: c.position)
        try:
            score = float(r.value) if r.attribute != CHOICE else np.nan
        except ValueError:
            score = np.nan
        out.append({
            "session": r.session, "panelist": r.panelist_code, "code": r.code,
            "attribute": r.attribute, "value": r.value, "score": score,
            "sample": " + ".join(c.sample_name for c in picked),
            "set_index": k, "position": picked[0].position if len(picked) == 1 else None,
            "role": "".join(c.role for c in picked),
            "pattern": "".join(c.role for c in in_set),
            "comment": r.comment, "entered_by": r.entered_by, "entered_at": r.entered_at,
            "mode": r.mode.value,
        })
    frame = pd.DataFrame(out, columns=ANSWER_COLUMNS)
    frame["position"] = frame["position"].astype("Int64")
    return frame


def answers_frame(store: Store, trial_id: int) -> pd.DataFrame:
    """Answers joined with the key, tidy, for analysis (leader only).

    Columns: ``session panelist code attribute value score sample set_index position
    role pattern comment entered_by entered_at mode``. ``score`` is the value as a
    float (NaN for choices); ``sample`` the chosen or rated cup's sample (a tetrad's two
    codes give two names joined by ``" + "``); ``role`` the chosen cup's letter and
    ``pattern`` the set's letters in serving order (e.g. ``"ABB"``), from which a forced
    choice's correctness follows.
    """
    with store.read() as tx:
        book = answer_rows.plan_book(tx, trial_id)
        answers = answer_rows.list_answers(tx, trial_id)
    return answers_table(book, answers)


def answer_progress(store: Store, trial_id: int) -> pd.DataFrame:
    """Answers on file against answers expected, per panelist and session
    (:func:`trials.answers.answer_progress`). Columns ``session panelist expected
    answered``."""
    with store.read() as tx:
        book = answer_rows.plan_book(tx, trial_id)
        got = answer_rows.list_answers(tx, trial_id)
    return progress(get_method(book.trial.method), book.entries, got,
                    attributes=len(book.trial.attributes))


def audit_log(store: Store, trial_id: int) -> list[AuditEntry]:
    """Every change to a trial, oldest first (roster changes are under no trial)."""
    with store.read() as tx:
        return answer_rows.audit_log(tx, trial_id)


AUDIT_WHAT = {"study": "trial", "sample": "sample", "attribute": "attribute",
              "batch": "batch", "batch_value": "batch value", "panelist": "panelist",
              "plan_entry": "serving plan", "response": "answer",
              "tasting_session": "session"}


def audit_table(store: Store, trial_id: int, *, last: int = 500) -> pd.DataFrame:
    """The trial's audit log as the leader reads it, newest last: columns ``When Who
    What Record Field Old New`` ("What" in the words of DEVELOPERS.md, "trial" for the
    table ``study``; "Record" the number of the changed record); empty values as an em
    dash, never "None"."""
    log = audit_log(store, trial_id)[-last:]
    dash = "\u2014"
    return pd.DataFrame([{
        "When": e.at.strftime("%Y-%m-%d %H:%M:%S") if e.at else dash, "Who": e.who or dash,
        "What": AUDIT_WHAT.get(e.table, e.table.replace("_", " ")),
        "Record": dash if e.row_id is None else str(e.row_id), "Field": e.field or dash,
        "Old": dash if e.old in (None, "") else e.old,
        "New": dash if e.new in (None, "") else e.new,
    } for e in log], columns=["When", "Who", "What", "Record", "Field", "Old", "New"])
