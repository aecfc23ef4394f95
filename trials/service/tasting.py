"""Use cases of the tasting itself: the ballot behind a panelist's link, recording an
answer from the tablet or from the leader, the answers on file (with the key, for the
leader), how many are still expected, and the audit log."""

from __future__ import annotations

import datetime as dt
from collections import defaultdict
from typing import Any

import numpy as np
import pandas as pd

from trials.errors import TrialsError
from trials.methods import Family, get_method
from trials.model import (
    AuditEntry,
    BallotAnswer,
    BallotSet,
    EntryMode,
    PanelistBallot,
    PlanBook,
    Response,
    ServedCup,
)
from trials.service import _input
from trials.service.checking import BadAnswer, check_answer
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import plans as plan_rows


def ballot_for_token(store: Store, token: str) -> PanelistBallot:
    """The ballot behind a tasting link: codes, scales and this panelist's own answers.

    Holds nothing a panelist may not see: no trial name, no sample names or ids, no key.
    """
    with store.read() as tx:
        trial_id, code = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=code)
        mine = answer_rows.responses(tx, trial_id, panelist_code=code)
    spec = get_method(book.trial.method)
    sets: list[BallotSet] = []
    for (sess, _), cups in sorted(book.plan.items(), key=lambda kv: (
            book.session_order[kv[0][0]], kv[0][1])):
        by_set: dict[int, list[ServedCup]] = defaultdict(list)
        for cup in cups.values():
            by_set[cup.set_index].append(cup)
        for k in sorted(by_set):
            ordered = sorted(by_set[k], key=lambda c: c.position)
            sets.append(BallotSet(sess, k, tuple(c.code for c in ordered)))
    answers = tuple(BallotAnswer(r.session, r.code, r.attribute, r.value, r.comment)
                    for r in mine)
    attributes = book.trial.attributes
    if spec.family == Family.RATING:
        expected = sum(len(x.codes) for x in sets) * len(attributes)
    elif spec.family == Family.RANKING:
        expected = sum(len(x.codes) for x in sets)
    else:
        expected = len(sets)
    return PanelistBallot(
        title=f"Tasting - {spec.label}",
        method=spec.name, question=spec.question, instructions=spec.instructions,
        panelist_code=code, sets=tuple(sets),
        attributes=attributes if spec.family == Family.RATING else (),
        answers=answers, remaining=max(0, expected - len(answers)),
    )


def save_checked(tx, book: PlanBook, session: str, panelist: str, code: str,
                 attribute: str, value: Any, *, comment: str, entered_by: str,
                 entered_at: dt.datetime | None, mode: EntryMode) -> Response:
    """Check one answer against the plan and store it (recorded once; a changed answer
    replaces the old one, audited)."""
    try:
        ans = check_answer(book, str(session), str(panelist), str(code or ""),
                           str(attribute or ""), "" if value is None else str(value))
    except BadAnswer as bad:
        raise TrialsError(f"{bad.column}: {bad.text}") from None
    return answer_rows.save_answer(
        tx, book.trial.id, ans, session=str(session).strip(), panelist=str(panelist).strip(),
        comment=comment, entered_by=entered_by, entered_at=entered_at, mode=mode)


def record_answer(
    store: Store,
    token: str,
    *,
    code: str,
    attribute: str,
    value: Any = "",
    comment: str = "",
    session: str | None = None,
) -> Response:
    """Record a panelist's own answer from the tasting screen (mode ``tablet``).

    The same answer twice is recorded once; a different answer to the same question
    replaces it, with an audit entry. ``session`` may be left out when the panelist is
    served in one session only.
    """

    def work(tx) -> Response:
        trial_id, panelist = plan_rows.token_owner(tx, token)
        book = answer_rows.plan_book(tx, trial_id, panelist_code=panelist)
        sess = session
        if sess is None:
            mine = [k[0] for k in book.plan if k[1] == panelist]
            if len(mine) != 1:
                raise TrialsError(f"say which session; panelist {panelist!r} is served in "
                                  f"{', '.join(map(repr, mine)) or 'none'}")
            sess = mine[0]
        return save_checked(tx, book, sess, panelist, code, attribute, value,
                            comment=comment, entered_by=panelist, entered_at=None,
                            mode=EntryMode.TABLET)

    return store.write(work)


def record_response(
    store: Store,
    study_id: int,
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
) -> Response:
    """Record an answer entered by the leader (from a paper ballot, by default)."""
    mode = _input.entry_mode(mode)

    def work(tx) -> Response:
        book = answer_rows.plan_book(tx, study_id)
        return save_checked(tx, book, session, panelist_code, code, attribute, value,
                            comment=comment, entered_by=entered_by, entered_at=entered_at,
                            mode=mode)

    return store.write(work)


def responses(store: Store, study_id: int) -> list[Response]:
    """Every answer to a trial, by session and panelist."""
    with store.read() as tx:
        return answer_rows.responses(tx, study_id)


ANSWER_COLUMNS = ["session", "panelist", "code", "attribute", "value", "score", "sample",
                  "set_index", "position", "role", "pattern", "comment", "entered_by",
                  "entered_at", "mode"]


def answers_table(book: PlanBook, answers: list[Response]) -> pd.DataFrame:
    """Answers joined with the key, tidy (see :func:`responses_frame`)."""
    out = []
    for r in answers:
        cups = book.plan.get((r.session, r.panelist_code), {})
        picked = [cups[c] for c in r.code.split() if c in cups]
        k = picked[0].set_index if picked else min((c.set_index for c in cups.values()),
                                                    default=0)
        in_set = sorted((c for c in cups.values() if c.set_index == k), key=lambda c: c.position)
        try:
            score = float(r.value) if r.attribute != "choice" else np.nan
        except ValueError:
            score = np.nan
        out.append({
            "session": r.session, "panelist": r.panelist_code, "code": r.code,
            "attribute": r.attribute, "value": r.value, "score": score,
            "sample": " + ".join(c.sample for c in picked),
            "set_index": k, "position": picked[0].position if len(picked) == 1 else None,
            "role": "".join(c.role for c in picked),
            "pattern": "".join(c.role for c in in_set),
            "comment": r.comment, "entered_by": r.entered_by, "entered_at": r.entered_at,
            "mode": r.mode.value,
        })
    frame = pd.DataFrame(out, columns=ANSWER_COLUMNS)
    frame["position"] = frame["position"].astype("Int64")
    return frame


def responses_frame(store: Store, study_id: int) -> pd.DataFrame:
    """Answers joined with the key, tidy, for analysis (leader only).

    Columns: ``session panelist code attribute value score sample set_index position
    role pattern comment entered_by entered_at mode``. ``score`` is the value as a
    float (NaN for choices); ``sample`` the chosen or rated cup's sample (a tetrad's two
    codes give two names joined by ``" + "``); ``role`` the chosen cup's letter and
    ``pattern`` the set's letters in serving order (e.g. ``"ABB"``), from which a forced
    choice's correctness follows.
    """
    with store.read() as tx:
        book = answer_rows.plan_book(tx, study_id)
        answers = answer_rows.responses(tx, study_id)
    return answers_table(book, answers)


def answer_progress(store: Store, study_id: int) -> pd.DataFrame:
    """Answers on file against answers expected, per panelist and session.

    Columns ``session panelist expected answered``.
    """
    with store.read() as tx:
        book = answer_rows.plan_book(tx, study_id)
        got = answer_rows.responses(tx, study_id)
    spec = get_method(book.trial.method)
    expected: dict[tuple[str, str], int] = {}
    for key, cups in book.plan.items():
        if spec.is_forced_choice:
            expected[key] = len({c.set_index for c in cups.values()})
        elif spec.family == Family.RATING:
            expected[key] = len(cups) * len(book.trial.attributes)
        else:
            expected[key] = len(cups)
    answered: dict[tuple[str, str], int] = defaultdict(int)
    for r in got:
        answered[(r.session, r.panelist_code)] += 1
    rows = [{"session": k[0], "panelist": k[1], "expected": v, "answered": answered.get(k, 0)}
            for k, v in sorted(expected.items())]
    return pd.DataFrame(rows, columns=["session", "panelist", "expected", "answered"])


def audit_log(store: Store, study_id: int) -> list[AuditEntry]:
    """Every change to a trial, oldest first (roster changes are under no trial)."""
    with store.read() as tx:
        return answer_rows.audit_log(tx, study_id)
