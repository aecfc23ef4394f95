"""Serving plans and tasting links in the store: the sessions of a trial, each
panelist's cups (position, blinding code, sample, set, role, batch) and the access
token behind each panelist's tasting link.

The decoding key (code -> sample) is read here only for leader views and the serving
sheet; the tasting screen reads what :mod:`trials.store.answers` gives it.
"""

from __future__ import annotations

import secrets
from collections.abc import Iterable, Sequence

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import AccessDenied, NotFoundError, TrialsError
from trials.model import Panelist, PlanEntry, Status
from trials.store import rows
from trials.store.schema import (
    AccessTokenRow,
    BatchRow,
    PanelistRow,
    PlanEntryRow,
    ResponseRow,
    SampleRow,
    SessionRow,
)

TASTE_PATH = "/taste?t="


def roster_of(s: Session, codes: Iterable[str]) -> dict[str, Panelist]:
    """The roster entries of these panelist codes (codes not on it are left out)."""
    q = sa.select(PanelistRow).where(PanelistRow.code.in_(list(codes)))
    return {r.code: rows.panelist_record(r) for r in s.scalars(q).all()}


def open_session(s: Session, trial_id: int, session: str, by: str) -> tuple[int, set[str]]:
    """Make the session ready for a new plan: created when new, its old cups deleted
    (audited) when it has no answers. Returns its place among the trial's sessions and
    the codes its other sessions use."""
    trial = rows.trial_row(s, trial_id)
    srow = next((x for x in trial.sessions if x.name == session), None)
    if srow is None:
        srow = SessionRow(name=session)
        trial.sessions.append(srow)
        s.flush()
        rows.audit(s, trial.id, by, "tasting_session", srow.id, "created", None, session)
    else:
        answered = s.scalar(sa.select(sa.func.count(ResponseRow.id))
                            .where(ResponseRow.session_id == srow.id))
        if answered:
            raise TrialsError(f"session {session!r} of trial {trial.id} has {answered} "
                              "answers; its plan cannot be redrawn")
        old = s.scalar(sa.select(sa.func.count(PlanEntryRow.id))
                       .where(PlanEntryRow.session_id == srow.id))
        if old:
            s.execute(sa.delete(PlanEntryRow).where(PlanEntryRow.session_id == srow.id))
            rows.audit(s, trial.id, by, "plan_entry", None, f"session {session}",
                       f"{old} cups", "redrawn")
    used = s.scalars(
        sa.select(PlanEntryRow.code).join(SessionRow)
        .where(SessionRow.study_id == trial.id, SessionRow.id != srow.id)
    ).all()
    return [x.name for x in trial.sessions].index(session), set(used)


def store_plan(s: Session, trial_id: int, session: str, entries: Sequence[PlanEntry],
               codes: Sequence[str], *, seed: int | None, by: str) -> list[PlanEntry]:
    """Insert a drawn session's cups (each with the sample's latest signed-off batch,
    else its latest batch) in one executemany, give each panelist a tasting token, and
    move a trial in planning to ready. Returns the entries with their batch labels."""
    trial = rows.trial_row(s, trial_id)
    srow = next(x for x in trial.sessions if x.name == session)
    ids = dict(s.execute(sa.select(PanelistRow.code, PanelistRow.id)
                         .where(PanelistRow.code.in_(list(codes)))).all())
    by_name = {x.name: x for x in trial.samples}
    batch_of: dict[str, BatchRow | None] = {}
    for x in trial.samples:
        pool = [b for b in x.batches if b.safety_signed_by] or list(x.batches)
        batch_of[x.name] = pool[-1] if pool else None
    out, values = [], []
    for e in entries:
        batch = batch_of[e.sample_name]
        values.append({
            "session_id": srow.id, "panelist_id": ids[e.panelist_code],
            "position": e.position, "code": e.code, "sample_id": by_name[e.sample_name].id,
            "set_index": e.set_index, "role": e.role, "batch_id": batch.id if batch else None,
        })
        out.append(PlanEntry(e.session, e.panelist_code, e.position, e.code, e.sample_name,
                             e.set_index, e.role, batch.label if batch else ""))
    s.execute(sa.insert(PlanEntryRow), values)  # one executemany, not one ORM add a cup
    have = set(s.scalars(sa.select(AccessTokenRow.panelist_id)
                         .where(AccessTokenRow.study_id == trial.id)).all())
    for c in codes:
        if ids[c] not in have:
            s.add(AccessTokenRow(study_id=trial.id, panelist_id=ids[c],
                                 token=secrets.token_urlsafe(24)))
    rows.audit(s, trial.id, by, "plan_entry", None, f"session {session}", None,
               f"{len(out)} cups for {len(codes)} panelists (seed {seed})")
    if trial.status == Status.PLANNING.value:
        rows.audit(s, trial.id, by, "study", trial.id, "status", trial.status,
                   Status.READY.value)
        trial.status = Status.READY.value
    return out


def plan_entries(s: Session, trial_id: int, session: str | None = None) -> list[PlanEntry]:
    """The serving plan with the key, by session, panelist and position."""
    trial = rows.trial_row(s, trial_id)
    q = (
        sa.select(SessionRow.name, PanelistRow.code, PlanEntryRow.position,
                  PlanEntryRow.code, SampleRow.name, PlanEntryRow.set_index,
                  PlanEntryRow.role, BatchRow.label)
        .select_from(PlanEntryRow)
        .join(SessionRow, PlanEntryRow.session_id == SessionRow.id)
        .join(PanelistRow, PlanEntryRow.panelist_id == PanelistRow.id)
        .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
        .outerjoin(BatchRow, PlanEntryRow.batch_id == BatchRow.id)
        .where(SessionRow.study_id == trial.id)
        .order_by(SessionRow.id, PanelistRow.code, PlanEntryRow.position)
    )
    if session is not None:
        q = q.where(SessionRow.name == str(session))
    return [PlanEntry(a, b, c, d, e, f, g, h or "") for a, b, c, d, e, f, g, h in s.execute(q)]


def links(s: Session, trial_id: int) -> dict[str, str]:
    """Panelist code -> path of their tasting screen."""
    trial = rows.trial_row(s, trial_id)
    found = s.execute(
        sa.select(PanelistRow.code, AccessTokenRow.token)
        .join(AccessTokenRow, AccessTokenRow.panelist_id == PanelistRow.id)
        .where(AccessTokenRow.study_id == trial.id).order_by(PanelistRow.code)
    ).all()
    return {code: TASTE_PATH + token for code, token in found}


def token_of(s: Session, trial_id: int, panelist_code: str) -> str:
    """A panelist's token for a trial, made on first use."""
    trial = rows.trial_row(s, trial_id)
    pid = s.scalar(sa.select(PanelistRow.id).where(PanelistRow.code == panelist_code))
    if pid is None:
        raise NotFoundError(f"no panelist with code {panelist_code!r}")
    token = s.scalar(sa.select(AccessTokenRow.token).where(
        AccessTokenRow.study_id == trial.id, AccessTokenRow.panelist_id == pid))
    if token is None:
        token = secrets.token_urlsafe(24)
        s.add(AccessTokenRow(study_id=trial.id, panelist_id=pid, token=token))
    return token


_TOKEN_OWNER = (sa.select(AccessTokenRow.study_id, PanelistRow.code)
                .join(PanelistRow, AccessTokenRow.panelist_id == PanelistRow.id)
                .where(AccessTokenRow.token == sa.bindparam("token")))


def token_owner(s: Session, token: str) -> tuple[int, str]:
    """(trial id, panelist code) behind a tasting token; :class:`AccessDenied` if none."""
    row = s.execute(_TOKEN_OWNER, {"token": str(token or "")}).first()
    if row is None:
        raise AccessDenied("this tasting link is not valid; ask the panel leader for yours")
    return row[0], str(row[1])


def new_tokens(s: Session, trial_id: int, codes: Iterable[str]) -> None:
    """Fresh tokens for these panelists of a trial (an imported copy of a trial)."""
    ids = dict(s.execute(sa.select(PanelistRow.code, PanelistRow.id)
                         .where(PanelistRow.code.in_(list(codes)))).all())
    for code in sorted(ids):
        s.add(AccessTokenRow(study_id=trial_id, panelist_id=ids[code],
                             token=secrets.token_urlsafe(24)))
