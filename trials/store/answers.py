"""Answers in the store: what is needed to check an answer against the serving plan,
saving one answer (recorded once, a changed one replaced and audited), a cup's comment,
a panelist's Finish of a session, inserting a checked import in bulk, reading the
answers back, and the audit log."""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping, Sequence
from typing import Any

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.answers import CheckedAnswer
from trials.model import Answer, AuditEntry, EntryMode, PlanBook, PlanEntry
from trials.store import limits, rows
from trials.store.schema import (
    AccessTokenRow,
    AuditRow,
    FinishRow,
    PanelistRow,
    PlanEntryRow,
    ResponseRow,
    SampleRow,
    SessionRow,
)

_PLAN = (
    sa.select(SessionRow.name, PanelistRow.code, PanelistRow.id, PlanEntryRow.position,
              PlanEntryRow.code, SampleRow.name, PlanEntryRow.set_index, PlanEntryRow.role)
    .select_from(PlanEntryRow)
    .join(SessionRow, PlanEntryRow.session_id == SessionRow.id)
    .join(PanelistRow, PlanEntryRow.panelist_id == PanelistRow.id)
    .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
    .where(SessionRow.study_id == sa.bindparam("tid"))
    .order_by(SessionRow.id, PanelistRow.code, PlanEntryRow.position)
)
_PLAN_OF = _PLAN.where(PanelistRow.code == sa.bindparam("code"))  # one panelist's cups


def plan_book(s: Session, trial_id: int, *, panelist_code: str | None = None,
              with_existing: bool = False) -> PlanBook:
    """The plan of a trial (or of one panelist) for checking answers (plain columns, no
    ORM objects: the tasting screen reads it for every answer)."""
    trial, sessions = rows.trial_and_sessions(s, trial_id)
    key: dict[str, Any] = {"tid": trial.id}
    q = _PLAN
    if panelist_code is not None:  # one panelist's answers need only their own cups
        q, key = _PLAN_OF, {"tid": trial.id, "code": panelist_code}
    entries, panelists = [], {}
    for sess, pcode, pid, pos, code, sample, k, role in s.execute(q, key).all():
        entries.append(PlanEntry(sess, pcode, pos, code, sample, k, role))
        panelists[pcode] = pid
    book = PlanBook(trial, tuple(entries), sessions, panelists)
    if with_existing:
        for sess, pcode, question, code, value in s.execute(
            sa.select(SessionRow.name, PanelistRow.code, ResponseRow.question,
                      ResponseRow.code, ResponseRow.value)
            .join(SessionRow, ResponseRow.session_id == SessionRow.id)
            .join(PanelistRow, ResponseRow.panelist_id == PanelistRow.id)
            .where(ResponseRow.study_id == trial.id)
        ):
            book.existing[(sess, pcode, question)] = (code, value)
    return book


_SERVED = (sa.select(PlanEntryRow.code, SampleRow.name)
           .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
           .join(AccessTokenRow, sa.and_(AccessTokenRow.study_id == SampleRow.study_id,
                                         AccessTokenRow.panelist_id == PlanEntryRow.panelist_id))
           .where(PlanEntryRow.session_id == sa.bindparam("sid"),
                  PlanEntryRow.panelist_id == sa.bindparam("pid"),
                  AccessTokenRow.token == sa.bindparam("token"))
           .order_by(PlanEntryRow.position))
_ANSWER_ON_FILE = sa.select(ResponseRow).where(
    ResponseRow.session_id == sa.bindparam("sid"), ResponseRow.panelist_id == sa.bindparam("pid"),
    ResponseRow.question == sa.bindparam("question"))


def served_cups(s: Session, book: PlanBook, session: str, panelist_code: str, *,
                token: str) -> list[tuple[str, str]]:
    """The (code, sample name) of a panelist's cups in one session, in serving order, as
    the store holds them now, where ``token`` is still this panelist's tasting link for
    the trial (else none): one query, to confirm a plan read earlier is unchanged."""
    sid, pid = book.session_ids.get(session), book.panelist_ids.get(panelist_code)
    if sid is None or pid is None:
        return []
    key = {"sid": sid, "pid": pid, "token": str(token)}
    return [(c, n) for c, n in s.execute(_SERVED, key)]


def save_answer(s: Session, book: PlanBook, ans: CheckedAnswer, *, comment: str,
                entered_by: str, entered_at: dt.datetime | None, mode: EntryMode) -> Answer:
    """Insert, or update (audited) a different answer; the same answer is kept once."""
    trial_id = book.trial.id
    sid, pid = book.session_ids[ans.session], book.panelist_ids[ans.panelist]
    row = s.scalar(_ANSWER_ON_FILE, {"sid": sid, "pid": pid, "question": ans.question})
    if row is None:
        row = ResponseRow(
            study_id=trial_id, session_id=sid, panelist_id=pid, question=ans.question,
            code=ans.code, attribute=ans.attribute, value=ans.value, comment=comment or "",
            entered_by=entered_by, entered_at=entered_at or rows.now(), mode=mode.value,
        )
        s.add(row)
        s.flush()
        rows.audit(s, trial_id, entered_by, "response", row.id, "created", None,
                   f"{ans.question} = {ans.code} {ans.value}".strip())
        return rows.response_record(row, ans.session, ans.panelist)
    for key, new in (("code", ans.code), ("value", ans.value), ("comment", comment or "")):
        old = getattr(row, key)
        if key == "comment" and not new:
            continue  # an answer repeated without its comment keeps the comment
        if old != new:
            rows.audit(s, trial_id, entered_by, "response", row.id, key, old, new)
            setattr(row, key, new)
    return rows.response_record(row, ans.session, ans.panelist)


def set_comment(s: Session, book: PlanBook, session: str, panelist: str, question: str,
                comment: str, *, by: str) -> bool:
    """Set (or clear, with ``""``) the comment of the answer to ``question``, audited;
    False when that question has no answer on file yet."""
    row = s.scalar(sa.select(ResponseRow).where(
        ResponseRow.session_id == book.session_ids[session],
        ResponseRow.panelist_id == book.panelist_ids[panelist],
        ResponseRow.question == question))
    if row is None:
        return False
    new = comment or ""
    if row.comment != new:
        limits.check_values("response", [{"comment": new}])
        rows.audit(s, book.trial.id, by, "response", row.id, "comment", row.comment, new)
        row.comment = new
    return True


def finished_sessions(s: Session, trial_id: int, panelist_code: str) -> set[str]:
    """The sessions of a trial this panelist has finished on the tablet."""
    q = (sa.select(SessionRow.name).select_from(FinishRow)
         .join(SessionRow, FinishRow.session_id == SessionRow.id)
         .join(PanelistRow, FinishRow.panelist_id == PanelistRow.id)
         .where(FinishRow.study_id == trial_id, PanelistRow.code == panelist_code))
    return set(s.scalars(q).all())


def mark_finished(s: Session, book: PlanBook, session: str, panelist: str, *, by: str) -> bool:
    """Record that ``panelist`` finished ``session`` (audited once); False when it was
    already recorded, so a repeated Finish changes nothing."""
    sid, pid = book.session_ids[session], book.panelist_ids[panelist]
    found = s.scalar(sa.select(FinishRow.id).where(FinishRow.session_id == sid,
                                                   FinishRow.panelist_id == pid))
    if found is not None:
        return False
    row = FinishRow(study_id=book.trial.id, session_id=sid, panelist_id=pid,
                    finished_at=rows.now())
    s.add(row)
    s.flush()
    rows.audit(s, book.trial.id, by, "ballot_finish", row.id, "finished", None,
               f"session {session}, panelist {panelist}")
    return True


def insert_answers(s: Session, book: PlanBook,
                   answers: Sequence[tuple[CheckedAnswer, Mapping[str, Any]]], *, by: str,
                   note: str | None) -> int:
    """Insert checked new answers, each with its ``comment entered_by entered_at mode``,
    in chunks of 5,000, and audit the import once (not when ``note`` is None)."""
    values = [{
        "study_id": book.trial.id, "session_id": book.session_ids[a.session],
        "panelist_id": book.panelist_ids[a.panelist], "question": a.question, "code": a.code,
        "attribute": a.attribute, "value": a.value, "comment": extra.get("comment", ""),
        "entered_by": extra.get("entered_by", by), "entered_at": extra.get("entered_at"),
        "mode": str(extra.get("mode", EntryMode.IMPORT.value)),
    } for a, extra in answers]
    limits.check_values("response", values)
    for start in range(0, len(values), 5000):
        s.execute(sa.insert(ResponseRow), values[start:start + 5000])
    if note is not None:
        rows.audit(s, book.trial.id, by, "response", None, "import", None, note)
    return len(values)


def list_answers(s: Session, trial_id: int, *, panelist_code: str | None = None) -> list[Answer]:
    """Every answer to a trial (or one panelist's), by session, panelist and entry."""
    trial = rows.trial_row(s, trial_id)
    q = (
        sa.select(ResponseRow, SessionRow.name, PanelistRow.code)
        .join(SessionRow, ResponseRow.session_id == SessionRow.id)
        .join(PanelistRow, ResponseRow.panelist_id == PanelistRow.id)
        .where(ResponseRow.study_id == trial.id)
        .order_by(SessionRow.id, PanelistRow.code, ResponseRow.id)
    )
    if panelist_code is not None:
        q = q.where(PanelistRow.code == panelist_code)
    return [rows.response_record(r, sess, p) for r, sess, p in s.execute(q)]


def count_answers(s: Session, trial_id: int, *, panelist_id: int | None = None) -> int:
    """How many answers are on file for the trial (or one panelist of it)."""
    query = sa.select(sa.func.count(ResponseRow.id)).where(ResponseRow.study_id == trial_id)
    if panelist_id is not None:
        query = query.where(ResponseRow.panelist_id == panelist_id)
    return int(s.scalar(query) or 0)


def audit_log(s: Session, trial_id: int) -> list[AuditEntry]:
    """Every change to a trial, oldest first."""
    trial = rows.trial_row(s, trial_id)
    found = s.scalars(sa.select(AuditRow).where(AuditRow.study_id == trial.id)
                      .order_by(AuditRow.id)).all()
    return [AuditEntry(r.at, r.who, r.table_name, r.row_id, r.field, r.old_value,
                       r.new_value) for r in found]


def scores_of_sample(s: Session, sample_name: str) -> dict[str, list]:
    """Every rated score given to a cup of a sample of this name, in any trial: one
    query for the history's control trend. Columns (lists of equal length, a row per
    score): ``trial_id code attribute value``."""
    q = (
        sa.select(ResponseRow.study_id, ResponseRow.code, ResponseRow.attribute,
                  ResponseRow.value)
        .select_from(ResponseRow)
        .join(PlanEntryRow, sa.and_(PlanEntryRow.session_id == ResponseRow.session_id,
                                    PlanEntryRow.panelist_id == ResponseRow.panelist_id,
                                    PlanEntryRow.code == ResponseRow.code))
        .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
        .where(SampleRow.name == sample_name, ResponseRow.attribute != "choice")
        .order_by(ResponseRow.study_id, ResponseRow.id)
    )
    got = s.execute(q).all()
    return {"trial_id": [r[0] for r in got], "code": [r[1] for r in got],
            "attribute": [r[2] for r in got], "value": [r[3] for r in got]}
