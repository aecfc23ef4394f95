"""Use cases of the tablet: the ballot behind a panelist's link and the panelist's own
writes (an answer, a cup's comment, the Finish of a session).

On the tablet an answer is saved the moment it is confirmed, keyed by what was asked
(session, panelist and question), so a repeated request after a lost connection or a
reload changes nothing, and a changed answer is an update with an audit entry, never a
second answer. Until the panelist presses Finish for a session they may change any of
its answers; after that the tablet refuses, and only the leader can correct one. The
ballot shows blinding codes only: never a sample's name, nor another panelist's answers.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from trials.answers import PlanKey, comment_question, expected_answers, tasting_steps
from trials.errors import AccessDenied, TrialsError
from trials.methods import Family, get_method
from trials.model import (
    Answer,
    Attribute,
    BallotAnswer,
    BallotSet,
    EntryMode,
    PanelistBallot,
    PlanBook,
)
from trials.printing.ballots import scale_anchors, session_allergens
from trials.service.tasting import advance_status, checker_of
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import plans as plan_rows


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
    _refuse_after_finish(tx, trial_id, panelist, sess)
    return book, panelist, sess


def _refuse_after_finish(tx, trial_id: int, panelist: str, session: str) -> None:
    if session in answer_rows.finished_sessions(tx, trial_id, panelist):
        raise AccessDenied("you have finished this tasting, so its answers can no longer "
                           "be changed here; please ask the panel leader")


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

    def mine(book: PlanBook, panelist: str) -> str:
        if session is not None:
            return session
        sessions = list(dict.fromkeys(e.session for e in book.entries))
        if len(sessions) != 1:
            raise TrialsError(f"say which session; panelist {panelist!r} is served in "
                              f"{', '.join(map(repr, sessions)) or 'none'}")
        return sessions[0]

    def save(tx, book: PlanBook, sess: str, panelist: str, ans=None) -> Answer:
        if ans is None:
            ans = checker_of(book).check(sess, panelist, code, attribute, value)
        return answer_rows.save_answer(tx, book, ans, comment=comment, entered_by=panelist,
                                       entered_at=None, mode=EntryMode.TABLET)

    def again(tx) -> Answer:  # everything inside the write: the plan changed meanwhile
        book, panelist, sess = _owner(tx, token, session)  # refused after Finish
        answer = save(tx, book, sess, panelist)
        advance_status(tx, book.trial.id, by=panelist, book=book)
        return answer

    # The ballot is read and the answer checked before the write transaction, so that
    # the write (which SQLite grants one writer at a time) holds a check that the token
    # still opens these cups, then the answer and its audit entry. The ballot read is
    # kept per token (store.memo) for the panelist's next answer: the write's check
    # catches a changed plan or token, and an answer the kept ballot refuses is checked
    # again against a fresh read.
    kept = store.memo.setdefault("tablet_books", {})
    if len(kept) > 4096:
        kept.clear()
    hit = kept.get(token)
    if hit is None:
        with store.read() as tx:
            trial_id, panelist = plan_rows.token_owner(tx, token)
            hit = kept[token] = (answer_rows.plan_book(tx, trial_id, panelist_code=panelist),
                                 panelist)
        fresh = True
    else:
        fresh = False
    book, panelist = hit
    try:
        sess = mine(book, panelist)
        ans = checker_of(book).check(sess, panelist, code, attribute, value)
    except TrialsError:
        kept.pop(token, None)
        if fresh:
            raise
        return record_answer(store, token, code=code, attribute=attribute, value=value,
                             comment=comment, session=session)
    cups = [(e.code, e.sample_name) for e in book.entries if e.session == sess]

    def work(tx) -> Answer:
        if answer_rows.served_cups(tx, book, sess, panelist, token=token) != cups:
            kept.pop(token, None)
            return again(tx)
        _refuse_after_finish(tx, book.trial.id, panelist, sess)
        answer = save(tx, book, sess, panelist, ans)
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
