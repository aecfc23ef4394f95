"""Test batches in the store: each batch of a sample with its process settings and
measured variables (name, value, unit) and its food-safety sign-off."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence

import sqlalchemy as sa
from sqlalchemy.orm import Session, selectinload

from trials.errors import NotFoundError, TrialsError
from trials.model import Batch, Measurement
from trials.store import rows
from trials.store.schema import BatchRow, BatchValueRow, SampleRow


def batch_rows(s: Session, trial_id: int) -> list[BatchRow]:
    """The trial's batch rows, by sample (in the trial's order), then as recorded."""
    return list(s.scalars(
        sa.select(BatchRow).join(SampleRow).where(SampleRow.study_id == trial_id)
        .options(selectinload(BatchRow.values), selectinload(BatchRow.sample))
        .order_by(SampleRow.position, BatchRow.id)
    ).all())


def list_batches(s: Session, trial_id: int) -> list[Batch]:
    trial = rows.trial_row(s, trial_id)
    return [rows.batch_record(b) for b in batch_rows(s, trial.id)]


def add_batch(s: Session, trial_id: int, sample_name: str, label: str, *,
              prepared_on: dt.date | None, prepared_by: str, notes: str,
              settings: Sequence[Measurement], measures: Sequence[Measurement],
              by: str) -> Batch:
    trial = rows.trial_row(s, trial_id)
    sample = rows.sample_by_name(trial, sample_name)
    if any(b.label == label for b in sample.batches):
        raise TrialsError(f"sample {sample_name!r} already has a batch labelled {label!r}")
    row = BatchRow(label=label, prepared_on=prepared_on, prepared_by=prepared_by or "",
                   notes=notes or "")
    sample.batches.append(row)
    rows.batch_values(row, settings, measures)
    s.flush()
    rows.audit(s, trial.id, by, "batch", row.id, "created", None, f"{sample_name} / {label}")
    return rows.batch_record(row)


def sign_off(s: Session, trial_id: int, sample_name: str, label: str, *, who: str,
             when: dt.date) -> Batch:
    trial = rows.trial_row(s, trial_id)
    sample = rows.sample_by_name(trial, sample_name)
    row = next((b for b in sample.batches if b.label == label), None)
    if row is None:
        raise NotFoundError(f"sample {sample_name!r} has no batch labelled {label!r}")
    for key, value in (("safety_signed_by", who), ("safety_signed_on", when)):
        old = getattr(row, key)
        if old != value:
            rows.audit(s, trial.id, who, "batch", row.id, key, old, value)
            setattr(row, key, value)
    return rows.batch_record(row)


def set_value(s: Session, trial_id: int, sample_name: str, label: str, *, kind: str,
              name: str, value: str, unit: str, by: str) -> Batch:
    """Change one recorded value of a batch (its value and unit), each change audited."""
    trial = rows.trial_row(s, trial_id)
    sample = rows.sample_by_name(trial, sample_name)
    batch = next((b for b in sample.batches if b.label == label), None)
    if batch is None:
        raise NotFoundError(f"sample {sample_name!r} has no batch labelled {label!r}")
    old = next((v for v in batch.values if v.kind == kind and v.name == name), None)
    if old is None:
        raise NotFoundError(f"batch {sample_name!r} / {label!r} has no {kind} named {name!r}")
    stored, is_number = rows.value_text(value)
    if old.value != stored:
        rows.audit(s, trial.id, by, "batch_value", old.id, f"{name} value", old.value, stored)
    if (old.unit or "") != unit:
        rows.audit(s, trial.id, by, "batch_value", old.id, f"{name} unit", old.unit, unit)
    old.value, old.unit, old.is_number = stored, unit, is_number
    return rows.batch_record(batch)


def sample_names(s: Session, trial_id: int) -> set[str]:
    return {x.name for x in rows.trial_row(s, trial_id).samples}


def store_values(s: Session, trial_id: int, parsed: Sequence[tuple], by: str) -> int:
    """Write checked batch values ``(sample, label, kind, name, value, unit, prepared_on,
    prepared_by)``: a new batch is created, a value already on file with the same name is
    replaced (audited)."""
    trial = rows.trial_row(s, trial_id)
    samples = {x.name: x for x in trial.samples}
    for sample, label, kind, name, value, unit, prepared, prepared_by in parsed:
        srow = samples[sample]
        batch = next((b for b in srow.batches if b.label == label), None)
        if batch is None:
            batch = BatchRow(label=label, prepared_on=prepared, prepared_by=prepared_by,
                             notes="")
            srow.batches.append(batch)
            s.flush()
            rows.audit(s, trial.id, by, "batch", batch.id, "created", None,
                       f"{sample} / {label}")
        stored, is_number = rows.value_text(value)
        old = next((v for v in batch.values if v.kind == kind and v.name == name), None)
        if old is None:
            batch.values.append(BatchValueRow(kind=kind, name=name, value=stored, unit=unit,
                                              is_number=is_number,
                                              position=len(batch.values)))
        elif (old.value, old.unit) != (stored, unit):
            rows.audit(s, trial.id, by, "batch_value", old.id, name, old.value, stored)
            old.value, old.unit, old.is_number = stored, unit, is_number
    return len(parsed)
