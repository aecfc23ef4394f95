"""Rows to records: the mapping between the ORM rows of :mod:`trials.store.schema` and
the frozen records of :mod:`trials.model`, the audit entry every write leaves, and the
small lookups and counts the other store modules share.

Only :mod:`trials.store` modules import this; the use cases see records only.
"""

from __future__ import annotations

import datetime as dt
import json
from collections.abc import Iterable, Sequence
from typing import Any

import numpy as np
import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import NotFoundError
from trials.model import (
    Answer,
    Attribute,
    AttributeKind,
    Batch,
    EntryMode,
    Measurement,
    Panelist,
    Sample,
    Status,
    Trial,
)
from trials.store.schema import (
    AttributeRow,
    AuditRow,
    BatchRow,
    BatchValueRow,
    PanelistRow,
    PlanEntryRow,
    ResponseRow,
    SampleRow,
    SessionRow,
    StudyRow,
)


def now() -> dt.datetime:
    """The time stamp of a write: UTC, naive, whole seconds."""
    return dt.datetime.now(dt.UTC).replace(tzinfo=None, microsecond=0)


def text(value: Any) -> str | None:
    if value is None:
        return None
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return str(value)


def join(names: Iterable[str]) -> str:
    return ",".join(names)


def split(value: str | None) -> tuple[str, ...]:
    return tuple(p for p in (value or "").split(",") if p)


def audit(
    s: Session,
    trial_id: int | None,
    who: str,
    table: str,
    row_id: int | None,
    field_name: str,
    old: Any = None,
    new: Any = None,
) -> None:
    """Add one audit entry (who changed which field of which row, from what to what)."""
    s.add(AuditRow(
        study_id=trial_id, at=now(), who=who or "", table_name=table, row_id=row_id,
        field=field_name, old_value=text(old), new_value=text(new),
    ))


def trial_row(s: Session, trial_id: int | str) -> StudyRow:
    """The trial's row; :class:`NotFoundError` naming the id when there is none."""
    row = s.get(StudyRow, int(trial_id)) if str(trial_id).lstrip("-").isdigit() else None
    if row is None:
        raise NotFoundError(f"no trial with id {trial_id!r}")
    return row


def sample_by_name(trial: StudyRow, name: str) -> SampleRow:
    for x in trial.samples:
        if x.name == name:
            return x
    known = ", ".join(repr(x.name) for x in trial.samples) or "none"
    raise NotFoundError(f"trial {trial.id} has no sample {name!r}; its samples: {known}")


def plan_count(s: Session, trial_id: int) -> int:
    return int(s.scalar(
        sa.select(sa.func.count(PlanEntryRow.id)).join(SessionRow)
        .where(SessionRow.study_id == trial_id)
    ) or 0)


def response_count(s: Session, trial_id: int) -> int:
    return int(s.scalar(
        sa.select(sa.func.count(ResponseRow.id)).where(ResponseRow.study_id == trial_id)
    ) or 0)


# ---------------------------------------------------------------- rows -> records


def sample_record(row: SampleRow) -> Sample:
    return Sample(
        name=row.name, id=row.id, is_control=bool(row.is_control),
        allergens=split(row.allergens), description=row.description or "",
    )


def attribute_record(row: AttributeRow) -> Attribute:
    return Attribute(
        name=row.name, kind=AttributeKind(row.kind), low=row.low, high=row.high,
        anchors=tuple(json.loads(row.anchors or "[]")),
    )


def trial_record(row: StudyRow, samples: Sequence[Any] | None = None,
                 attributes: Sequence[Any] | None = None) -> Trial:
    """A trial's record from its row (or a plain row of its columns, with its samples'
    and attributes' rows given)."""
    samples = row.samples if samples is None else samples
    attributes = row.attributes if attributes is None else attributes
    return Trial(
        name=row.name, method=row.method, id=row.id, objective=row.objective or "",
        alpha=row.alpha, beta=row.beta, pd=row.pd, delta=row.delta,
        status=Status(row.status), decision=row.decision or "",
        rationale=row.rationale or "", product=row.product or "",
        aim=row.aim or "", target_sample=row.target_sample or "",
        created_on=row.created_on,
        samples=tuple(sample_record(s) for s in samples),
        attributes=tuple(attribute_record(a) for a in attributes),
    )


def _trial_statements() -> tuple[sa.Select, ...]:
    study, sample, attribute = StudyRow.__table__, SampleRow.__table__, AttributeRow.__table__
    tid: Any = sa.bindparam("tid")
    return (
        sa.select(study).where(study.c.id == tid),
        sa.select(sample).where(sample.c.study_id == tid)
        .order_by(sample.c.position, sample.c.id),
        sa.select(attribute).where(attribute.c.study_id == tid)
        .order_by(attribute.c.position, attribute.c.id),
        sa.select(SessionRow.id, SessionRow.name).where(SessionRow.study_id == tid)
        .order_by(SessionRow.id),
    )


# built once: building a statement costs more than running it on a small table
_TRIAL, _SAMPLES, _ATTRIBUTES, _SESSIONS = _trial_statements()


def trial_and_sessions(s: Session, trial_id: int | str) -> tuple[Trial, dict[str, int]]:
    """The trial's record and its sessions (name -> id, in order) in four queries of
    plain columns, no ORM objects: the tasting screen reads them for every answer.
    :class:`NotFoundError` naming the id when there is none."""
    if not str(trial_id).lstrip("-").isdigit():
        raise NotFoundError(f"no trial with id {trial_id!r}")
    key = {"tid": int(trial_id)}
    s.flush()  # plain-column queries do not flush rows this transaction added
    row: Any = s.execute(_TRIAL, key).first()
    if row is None:
        raise NotFoundError(f"no trial with id {trial_id!r}")
    samples = s.execute(_SAMPLES, key).all()
    attributes = s.execute(_ATTRIBUTES, key).all()
    sessions = {name: sid for sid, name in s.execute(_SESSIONS, key)}
    return trial_record(row, samples, attributes), sessions


def _measure_value(row: BatchValueRow) -> float | str:
    return float(row.value) if row.is_number else row.value


def batch_record(row: BatchRow, sample_name: str | None = None) -> Batch:
    def items(kind: str) -> tuple[Measurement, ...]:
        return tuple(Measurement(v.name, _measure_value(v), v.unit or "")
                     for v in row.values if v.kind == kind)

    return Batch(
        sample_name=sample_name if sample_name is not None else row.sample.name,
        label=row.label, id=row.id, prepared_on=row.prepared_on,
        prepared_by=row.prepared_by or "", settings=items("setting"),
        measures=items("measure"), safety_signed_by=row.safety_signed_by or "",
        safety_signed_on=row.safety_signed_on, notes=row.notes or "",
    )


def panelist_record(row: PanelistRow) -> Panelist:
    return Panelist(
        code=row.code, id=row.id, allergens=split(row.allergens),
        restrictions=row.restrictions or "", consent_on=row.consent_on,
    )


def response_record(row: ResponseRow, session: str, panelist: str) -> Answer:
    return Answer(
        session=session, panelist_code=panelist, code=row.code, attribute=row.attribute,
        value=row.value, comment=row.comment or "", entered_by=row.entered_by or "",
        entered_at=row.entered_at, mode=EntryMode(row.mode),
    )


def value_text(value: float | str) -> tuple[str, bool]:
    """A batch value as stored: its text and whether it is a number."""
    if isinstance(value, bool):
        return str(value), False
    if isinstance(value, (int, float, np.integer, np.floating)):
        return repr(float(value)), True
    stripped = str(value).strip()
    try:
        float(stripped)
    except ValueError:
        return stripped, False
    return stripped, True


def batch_values(row: BatchRow, settings: Iterable[Measurement],
                 measures: Iterable[Measurement]) -> None:
    """Append a batch's settings and measured variables, in order, to its row."""
    for kind, items in (("setting", settings), ("measure", measures)):
        for i, m in enumerate(items):
            value, is_number = value_text(m.value)
            row.values.append(BatchValueRow(kind=kind, position=i, name=m.name, value=value,
                                            is_number=is_number, unit=m.unit or ""))
