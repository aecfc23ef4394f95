"""Recipe experiments in the store: the design's factors and runs, each run linked to
the sample and batch it was made as in the experiment's rating trial (schema version 5).
"""

from __future__ import annotations

import json
from collections.abc import Sequence

import sqlalchemy as sa
from sqlalchemy.orm import Session, selectinload

from trials.errors import NotFoundError
from trials.model import Experiment, ExperimentFactor, ExperimentRun
from trials.store import rows
from trials.store.schema import (
    BatchRow,
    ExperimentFactorRow,
    ExperimentRow,
    ExperimentRunRow,
    SampleRow,
)


def insert_experiment(s: Session, trial_id: int, fields: dict, factors: Sequence[ExperimentFactor],
                      runs: Sequence[ExperimentRun], by: str) -> int:
    """Store an experiment over the trial whose samples and batches are already its runs
    (named by ``runs``); returns its id."""
    trial = rows.trial_row(s, trial_id)
    row = ExperimentRow(study_id=trial.id, **fields)
    for i, f in enumerate(factors):
        row.factors.append(ExperimentFactorRow(
            position=i, name=f.name, unit=f.unit, low=f.low, high=f.high,
            safe_low=f.safe_low, safe_high=f.safe_high, levels=json.dumps(list(f.levels))))
    for r in runs:
        sample = rows.sample_by_name(trial, r.sample_name)
        batch = next(b for b in sample.batches if b.label == r.batch_label)
        row.runs.append(ExperimentRunRow(
            run_order=r.run, std_order=r.std_order, block=r.block, point=r.point,
            coded=json.dumps(list(r.coded)), sample_id=sample.id, batch_id=batch.id))
    s.add(row)
    s.flush()
    rows.audit(s, trial.id, by, "experiment", row.id, "created", None, row.name)
    return row.id


def _record(row: ExperimentRow, s: Session) -> Experiment:
    factors = tuple(ExperimentFactor(
        name=f.name, unit=f.unit or "", low=f.low, high=f.high, safe_low=f.safe_low,
        safe_high=f.safe_high, levels=tuple(float(v) for v in json.loads(f.levels or "[]")))
        for f in row.factors)
    samples = {x.id: x.name for x in s.scalars(
        sa.select(SampleRow).where(SampleRow.study_id == row.study_id))}
    batch_ids = [r.batch_id for r in row.runs if r.batch_id is not None]
    labels = {b.id: b.label for b in s.scalars(
        sa.select(BatchRow).where(BatchRow.id.in_(batch_ids)))} if batch_ids else {}
    runs = []
    for r in row.runs:
        coded = tuple(float(v) for v in json.loads(r.coded or "[]"))
        settings = tuple(round(f.low + (c + 1) * (f.high - f.low) / 2, 6)
                         for f, c in zip(factors, coded))
        runs.append(ExperimentRun(
            run=r.run_order, std_order=r.std_order, block=r.block, point=r.point,
            coded=coded, settings=settings, sample_name=samples.get(r.sample_id, ""),
            batch_label=labels.get(r.batch_id, "") if r.batch_id else ""))
    return Experiment(
        id=row.id, trial_id=row.study_id, name=row.name, kind=row.kind, seed=row.seed,
        center_points=row.center_points, blocks=row.blocks, resolution=row.resolution,
        generators=row.generators or "", factors=factors, runs=tuple(runs),
        created_on=row.created_on)


def _options():
    return (selectinload(ExperimentRow.factors), selectinload(ExperimentRow.runs))


def get_experiment(s: Session, experiment_id: int) -> Experiment:
    row = s.get(ExperimentRow, int(experiment_id), options=_options())
    if row is None:
        raise NotFoundError(f"no experiment with id {experiment_id!r}")
    return _record(row, s)


def experiment_of_trial(s: Session, trial_id: int) -> Experiment | None:
    row = s.scalars(sa.select(ExperimentRow).where(ExperimentRow.study_id == int(trial_id))
                    .options(*_options())).first()
    return _record(row, s) if row is not None else None


def list_experiments(s: Session) -> list[Experiment]:
    found = s.scalars(sa.select(ExperimentRow).order_by(ExperimentRow.id.desc())
                      .options(*_options())).all()
    return [_record(r, s) for r in found]
