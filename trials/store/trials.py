"""The trial aggregate in the store: a trial with its samples and attributes, its
status and decision, and the counts a leader sees at a glance.

Each function takes an open SQLAlchemy session from :meth:`Store.read` or
:meth:`Store.write` and returns records of :mod:`trials.model`; input is validated by
the use cases (:mod:`trials.service`) before it reaches here, except the checks that
need the stored rows (a name taken, a plan drawn).
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from typing import Any

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import TrialsError
from trials.model import Attribute, AttributeKind, Sample, Status, Trial, TrialSummary
from trials.store import rows
from trials.store.schema import (
    AttributeRow,
    AuditRow,
    BatchRow,
    PlanEntryRow,
    SampleRow,
    SessionRow,
    StudyRow,
)


def list_trials(s: Session) -> list[TrialSummary]:
    """One line per trial, newest first (plain columns, not whole rows: the home screen
    lists every trial)."""
    q = sa.select(StudyRow.id, StudyRow.name, StudyRow.method, StudyRow.status,
                  StudyRow.product, StudyRow.created_on,
                  StudyRow.decision).order_by(StudyRow.id.desc())
    return [
        TrialSummary(id=r.id, name=r.name, method=r.method, status=Status(r.status),
                     product=r.product or "", created_on=r.created_on,
                     decision=r.decision or "")
        for r in s.execute(q)
    ]


def get_trial(s: Session, trial_id: int) -> Trial:
    return rows.trial_record(rows.trial_row(s, trial_id))


def insert_trial(s: Session, fields: dict[str, Any], samples: Sequence[Sample],
                 attributes: Sequence[Attribute], by: str) -> int:
    """Insert a trial (``fields``: the columns of ``study``) with its samples and
    attributes; returns its id."""
    row = StudyRow(status=Status.PLANNING.value, decision="", rationale="", **fields)
    s.add(row)
    s.flush()
    rows.audit(s, row.id, by, "study", row.id, "created", None, row.name)
    for sample in samples:
        add_sample(s, row, sample, by)
    for attr in attributes:
        add_attribute(s, row, attr, by)
    _check_target(row, row.target_sample or "")
    return row.id


def _check_target(row: StudyRow, target: str) -> None:
    """A target sample, when given, is one of the trial's samples."""
    names = [x.name for x in row.samples]
    if target and target not in names:
        raise TrialsError(
            f"the target sample {target!r} is not a sample of trial {row.id}; "
            f"expected one of: {', '.join(map(repr, names)) or 'no samples yet'}")


def update_fields(s: Session, trial_id: int, changes: dict[str, Any], by: str) -> None:
    """Set fields of a trial, each change audited; the method and the target sample only
    while no plan is drawn (the target must be one of the trial's samples)."""
    row = rows.trial_row(s, trial_id)
    if "method" in changes and changes["method"] != row.method and rows.plan_count(s, row.id):
        raise TrialsError(
            f"cannot change the method of trial {row.id} to {changes['method']!r}: "
            "a serving plan is drawn"
        )
    if "target_sample" in changes and changes["target_sample"] != (row.target_sample or ""):
        _check_target(row, changes["target_sample"])
        if rows.plan_count(s, row.id):
            raise TrialsError(
                f"cannot change the target sample of trial {row.id} to "
                f"{changes['target_sample']!r}: a serving plan is drawn with the target's cups")
    for key, value in changes.items():
        old = getattr(row, key)
        if old != value:
            setattr(row, key, value)
            rows.audit(s, row.id, by, "study", row.id, key, old, value)


def advance_status(s: Session, trial_id: int, status: Status, by: str) -> bool:
    """Move a trial's status forward to ``status`` (audited); never backwards, so a
    status the leader set further on stays. True when it moved."""
    row = rows.trial_row(s, trial_id)
    order = list(Status)
    if order.index(Status(row.status)) >= order.index(status):
        return False
    rows.audit(s, row.id, by, "study", row.id, "status", row.status, status.value)
    row.status = status.value
    return True


def add_sample(s: Session, trial: StudyRow, sample: Sample, by: str) -> SampleRow:
    """Append a sample to a trial's row (names unique, one control at most)."""
    if any(x.name == sample.name for x in trial.samples):
        raise TrialsError(f"trial {trial.id} already has a sample named {sample.name!r}")
    if sample.is_control and any(x.is_control for x in trial.samples):
        raise TrialsError(
            f"trial {trial.id} already has a control; {sample.name!r} cannot be one too")
    row = SampleRow(
        name=sample.name, is_control=bool(sample.is_control),
        allergens=rows.join(sample.allergens), description=sample.description or "",
        position=len(trial.samples),
    )
    trial.samples.append(row)
    s.flush()
    rows.audit(s, trial.id, by, "sample", row.id, "created", None, sample.name)
    return row


def add_sample_to(s: Session, trial_id: int, sample: Sample, by: str) -> Sample:
    trial = rows.trial_row(s, trial_id)
    if rows.plan_count(s, trial.id):
        raise TrialsError(
            f"cannot add sample {sample.name!r}: trial {trial.id} has a plan drawn")
    return rows.sample_record(add_sample(s, trial, sample, by))


def add_attribute(s: Session, trial: StudyRow, attr: Attribute, by: str) -> AttributeRow:
    """Append a checked attribute (see :func:`trials.service.trials.check_attribute`)."""
    if any(x.name == attr.name for x in trial.attributes):
        raise TrialsError(f"trial {trial.id} already has an attribute named {attr.name!r}")
    row = AttributeRow(
        name=attr.name, kind=AttributeKind(attr.kind).value, low=attr.low, high=attr.high,
        anchors=json.dumps(list(attr.anchors)), position=len(trial.attributes),
    )
    trial.attributes.append(row)
    s.flush()
    rows.audit(s, trial.id, by, "attribute", row.id, "created", None,
               f"{attr.name} {attr.low}..{attr.high}")
    return row


def add_attribute_to(s: Session, trial_id: int, attr: Attribute, by: str) -> Attribute:
    trial = rows.trial_row(s, trial_id)
    if rows.response_count(s, trial.id):
        raise TrialsError(f"cannot add attribute {attr.name!r}: trial {trial.id} has answers")
    return rows.attribute_record(add_attribute(s, trial, attr, by))


def overview_counts(s: Session, trial_id: int) -> dict[str, Any]:
    """What the leader's overview adds to the trial: its batches, sessions, how many
    panelists are in the plan, cups and answers."""
    from trials.store.batches import batch_rows

    trial = rows.trial_row(s, trial_id)
    panelists = s.scalar(
        sa.select(sa.func.count(sa.distinct(PlanEntryRow.panelist_id)))
        .join(SessionRow).where(SessionRow.study_id == trial.id)
    )
    return {
        "batches": tuple(rows.batch_record(b) for b in batch_rows(s, trial.id)),
        "panelists": int(panelists or 0),
        "plan_size": rows.plan_count(s, trial.id),
        "responses": rows.response_count(s, trial.id),
        "sessions": tuple(x.name for x in trial.sessions),
    }


def change_stamp(s: Session, trial_id: int) -> tuple[int, int]:
    """(last audit id, answers) of a trial: changes whenever the trial changes."""
    trial = rows.trial_row(s, trial_id)
    last = s.scalar(sa.select(sa.func.max(AuditRow.id)).where(AuditRow.study_id == trial.id))
    return int(last or 0), rows.response_count(s, trial.id)


def sessions_of(s: Session, trial_id: int) -> list[dict[str, str | None]]:
    """The trial's sessions in order, with the day each was held."""
    return [{"name": x.name, "held_on": rows.text(x.held_on)}
            for x in rows.trial_row(s, trial_id).sessions]


def all_trials(s: Session) -> list[Trial]:
    """Every trial with its samples and attributes, newest first, in three queries."""
    from sqlalchemy.orm import selectinload

    q = (sa.select(StudyRow).order_by(StudyRow.id.desc())
         .options(selectinload(StudyRow.samples), selectinload(StudyRow.attributes)))
    return [rows.trial_record(r) for r in s.scalars(q).all()]


_HISTORY_COLUMNS = ("id", "name", "method", "status", "product", "created_on", "objective",
                    "decision", "rationale")


def history_rows(s: Session, trial_ids: Sequence[int] | None = None) -> list[dict[str, Any]]:
    """The trials the history lists, newest first, as plain rows in two queries: the
    columns of ``_HISTORY_COLUMNS`` with ``samples`` (names, in order) and ``control``
    (the control sample's name, or ""). Plain columns rather than records, so that a
    few thousand trials read in milliseconds. ``trial_ids`` keeps only those trials."""
    cols = [getattr(StudyRow, c) for c in _HISTORY_COLUMNS]
    q = sa.select(*cols).order_by(StudyRow.id.desc())
    qs = (sa.select(SampleRow.study_id, SampleRow.name, SampleRow.is_control)
          .order_by(SampleRow.study_id, SampleRow.position, SampleRow.id))
    if trial_ids is not None:
        q = q.where(StudyRow.id.in_(list(trial_ids)))
        qs = qs.where(SampleRow.study_id.in_(list(trial_ids)))
    out = {}
    for r in s.execute(q):
        row = dict(zip(_HISTORY_COLUMNS, r, strict=True))
        for c in ("product", "objective", "decision", "rationale"):
            row[c] = row[c] or ""
        row.update(samples=[], control="")
        out[row["id"]] = row
    for trial_id, name, is_control in s.execute(qs):
        owner = out.get(trial_id)
        if owner is None:
            continue
        owner["samples"].append(name)
        if is_control and not owner["control"]:
            owner["control"] = name
    return list(out.values())


def control_counts(s: Session, methods: Sequence[str]) -> dict[str, int]:
    """How many trials of these methods name each control sample, in one query."""
    q = (sa.select(SampleRow.name, sa.func.count(sa.distinct(SampleRow.study_id)))
         .join(StudyRow, SampleRow.study_id == StudyRow.id)
         .where(SampleRow.is_control.is_(True), StudyRow.method.in_(list(methods)))
         .group_by(SampleRow.name))
    return {name: int(n) for name, n in s.execute(q)}


def settings_by_trial(s: Session) -> dict[int, list[tuple[str, str, str]]]:
    """Every batch's process settings, (name, value, unit), keyed by trial, in one query."""
    from trials.store.schema import BatchValueRow

    q = (sa.select(SampleRow.study_id, BatchValueRow.name, BatchValueRow.value,
                   BatchValueRow.unit, BatchValueRow.is_number)
         .select_from(BatchValueRow)
         .join(BatchRow, BatchValueRow.batch_id == BatchRow.id)
         .join(SampleRow, BatchRow.sample_id == SampleRow.id)
         .where(BatchValueRow.kind == "setting"))
    out: dict[int, list[tuple[str, str, str]]] = {}
    for trial_id, name, value, unit, is_number in s.execute(q):
        shown = str(float(value)) if is_number else value
        out.setdefault(trial_id, []).append((name, shown, unit or ""))
    return out

