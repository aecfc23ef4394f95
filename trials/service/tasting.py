"""Use cases of the answers: checking and saving one (the leader's, and the tablet's
through :mod:`trials.service.tablet`), a trial's status moving on as answers come in,
the answers on file (with the key, for the leader), how many are still expected, and
the audit log."""

from __future__ import annotations

import datetime as dt
from typing import Any

import numpy as np
import pandas as pd

from trials.answers import (
    CHOICE,
    AnswerChecker,
    PlanKey,
    expected_answers,
)
from trials.answers import answer_progress as progress
from trials.methods import get_method
from trials.model import (
    Answer,
    AuditEntry,
    EntryMode,
    PlanBook,
    Status,
)
from trials.service import _input
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import trials as trial_rows

AUTOMATIC = "automatic"  # who moves a trial's status on by itself, in the audit log


def checker_of(book: PlanBook) -> AnswerChecker:
    """The answer checker of a loaded plan (:class:`trials.answers.AnswerChecker`)."""
    return AnswerChecker.for_trial(book.trial, book.entries, sessions=tuple(book.session_ids))


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
