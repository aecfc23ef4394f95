"""Use cases of the tasting itself: the ballot behind a panelist's link, recording an
answer from the tablet or from the leader, the answers on file (with the key, for the
leader), how many are still expected, and the audit log."""

from __future__ import annotations

import datetime as dt
from typing import Any

import numpy as np
import pandas as pd

from trials.answers import CHOICE, AnswerChecker, PlanKey, expected_answers
from trials.answers import answer_progress as progress
from trials.errors import TrialsError
from trials.methods import Family, get_method
from trials.model import (
    Answer,
    AuditEntry,
    BallotAnswer,
    BallotSet,
    EntryMode,
    PanelistBallot,
    PlanBook,
)
from trials.service import _input
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import plans as plan_rows


def checker_of(book: PlanBook) -> AnswerChecker:
    """The answer checker of a loaded plan (:class:`trials.answers.AnswerChecker`)."""
    return AnswerChecker.for_trial(book.trial, book.entries, sessions=tuple(book.session_ids))


def ballot_for_token(store: Store, token: str) -> PanelistBallot:
    """The ballot behind a tasting link: codes, scales and this panelist's own answers.

    Holds nothing a panelist may not see: no trial name, no sample names or ids, no key.
    """
    with store.read() as tx:
        trial_id, code = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=code)
        mine = answer_rows.list_answers(tx, trial_id, panelist_code=code)
    spec = get_method(book.trial.method)
    key = PlanKey.of(book.entries)
    sets = [BallotSet(sess, k, tuple(c.code for c in cups))
            for sess in book.session_ids
            for k, cups in key.sets(sess, code).items()]
    answers = tuple(BallotAnswer(r.session, r.code, r.attribute, r.value, r.comment)
                    for r in mine)
    attributes = book.trial.attributes
    expected = expected_answers(spec, [len(x.codes) for x in sets], attributes=len(attributes))
    return PanelistBallot(
        title=f"Tasting - {spec.label}",
        method=spec.name, question=spec.question, instructions=spec.instructions,
        panelist_code=code, sets=tuple(sets),
        attributes=attributes if spec.family == Family.RATING else (),
        answers=answers, remaining=max(0, expected - len(answers)),
    )


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
        trial_id, panelist = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=panelist)
        return save(tx, book, mine(book, panelist), panelist)

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
        return save(tx, book, sess, panelist, ans)

    return store.write(work)


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
        return save_checked(tx, book, session, panelist_code, code, attribute, value,
                            comment=comment, entered_by=entered_by, entered_at=entered_at,
                            mode=mode)

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
