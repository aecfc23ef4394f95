"""The panel roster in the store: panelist codes, declared allergens and restrictions,
the date of informed consent."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import TrialsError
from trials.model import AuditEntry, Panelist
from trials.store import rows
from trials.store.schema import AuditRow, PanelistRow, PlanEntryRow, SessionRow


def add_panelist(s: Session, code: str, *, allergens: Sequence[str], restrictions: str,
                 consent_on: dt.date | None, by: str) -> Panelist:
    if s.scalar(sa.select(PanelistRow.id).where(PanelistRow.code == code)) is not None:
        raise TrialsError(f"a panelist with code {code!r} is already on the roster")
    row = PanelistRow(code=code, allergens=rows.join(allergens),
                      restrictions=restrictions or "", consent_on=consent_on)
    s.add(row)
    s.flush()
    rows.audit(s, None, by, "panelist", row.id, "created", None, code)
    return rows.panelist_record(row)


def list_panelists(s: Session, trial_id: int | None = None) -> list[Panelist]:
    """The roster by code, or (with ``trial_id``) the panelists in that trial's plan."""
    q = sa.select(PanelistRow).order_by(PanelistRow.code)
    if trial_id is not None:
        trial = rows.trial_row(s, trial_id)
        q = q.where(PanelistRow.id.in_(
            sa.select(PlanEntryRow.panelist_id).join(SessionRow)
            .where(SessionRow.study_id == trial.id)
        ))
    return [rows.panelist_record(r) for r in s.scalars(q).all()]


def store_roster(s: Session, parsed: Sequence[tuple[str, tuple[str, ...], str, dt.date | None]],
                 columns: Sequence[str], by: str) -> int:
    """Write checked roster rows ``(code, allergens, restrictions, consent_on)``: new
    codes are added, known codes get the values of the ``columns`` the file had
    (audited)."""
    known = {r.code: r for r in s.scalars(sa.select(PanelistRow)).all()}
    for code, allergens, restrictions, consent in parsed:
        row = known.get(code)
        if row is None:
            row = PanelistRow(code=code, allergens=rows.join(allergens),
                              restrictions=restrictions, consent_on=consent)
            s.add(row)
            s.flush()
            rows.audit(s, None, by, "panelist", row.id, "created", None, code)
            continue
        for key, value in (("allergens", rows.join(allergens)),
                           ("restrictions", restrictions), ("consent_on", consent)):
            if key in columns and getattr(row, key) != value:
                rows.audit(s, None, by, "panelist", row.id, key, getattr(row, key), value)
                setattr(row, key, value)
    return len(parsed)


def update_panelist(s: Session, code: str, *, allergens: Sequence[str], restrictions: str,
                    consent_on: dt.date | None, by: str) -> Panelist:
    """Change a panelist's declared allergens, restrictions and consent date; each field
    that changes is audited with its old and new value."""
    row = s.scalars(sa.select(PanelistRow).where(PanelistRow.code == code)).first()
    if row is None:
        raise TrialsError(f"no panelist with code {code!r} on the roster")
    if set(rows.split(row.allergens)) == set(allergens):
        allergens = rows.split(row.allergens)  # the same allergens in another order: no change
    for key, value in (("allergens", rows.join(allergens)), ("restrictions", restrictions or ""),
                       ("consent_on", consent_on)):
        if getattr(row, key) != value:
            rows.audit(s, None, by, "panelist", row.id, key, getattr(row, key), value)
            setattr(row, key, value)
    s.flush()
    return rows.panelist_record(row)


def roster_audit(s: Session, code: str | None = None) -> list[AuditEntry]:
    """The roster's audit entries (under no trial), oldest first; with ``code``, that
    panelist's only."""
    q = sa.select(AuditRow).where(AuditRow.study_id.is_(None), AuditRow.table_name == "panelist")
    if code is not None:
        q = q.where(AuditRow.row_id == sa.select(PanelistRow.id)
                    .where(PanelistRow.code == code).scalar_subquery())
    return [AuditEntry(r.at, r.who, r.table_name, r.row_id, r.field, r.old_value, r.new_value)
            for r in s.scalars(q.order_by(AuditRow.id)).all()]
