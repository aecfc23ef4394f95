"""Use cases of test batches: record a batch with its process settings and measured
variables, sign it off for food safety, import values from a file, and list them as a
tidy table."""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from trials.errors import ImportRowsError, TrialsError
from trials.model import Batch
from trials.service import _input
from trials.store import Store
from trials.store import batches as batch_rows
from trials.units import first_units, unit_problem

BATCH_COLUMNS = ("sample", "batch", "kind", "name", "value", "unit")
KINDS = ("setting", "measure")


def add_batch(
    store: Store,
    trial_id: int,
    sample_name: str,
    label: str,
    *,
    prepared_on: dt.date | str | None = None,
    prepared_by: str = "",
    settings: Iterable[Any] | dict | None = (),
    measures: Iterable[Any] | dict | None = (),
    notes: str = "",
    safety_signed_by: str = "",
    safety_signed_on: dt.date | str | None = None,
    by: str = "leader",
) -> Batch:
    """Record a test batch of a sample with its process settings and measured variables.

    ``settings`` and ``measures`` are :class:`~trials.model.Measurement` records,
    ``(name, value, unit)`` tuples or ``{name: (value, unit)}``. Each unit must be one
    pint reads (:mod:`trials.units`) and convertible to the unit the variable already
    has on the trial's other batches; otherwise :class:`TrialsError` names the variable
    and both units, and nothing is recorded. ``safety_signed_by`` (with
    ``safety_signed_on``, default today) records the food-safety sign-off at once.
    """
    label = _input.name(label, "a batch label")
    prepared = _input.as_date(prepared_on, "prepared_on")
    sets = _input.measurements(settings, "process setting")
    meas = _input.measurements(measures, "measured variable")
    signer = (safety_signed_by or "").strip()
    signed_on = _input.as_date(safety_signed_on, "the sign-off date") if signer else None

    def work(tx) -> Batch:
        declared = first_units(batch_rows.list_batches(tx, trial_id))
        problems = [p for kind, items in (("setting", sets), ("measure", meas)) for m in items
                    if (p := unit_problem(m.name, m.unit, declared.get((kind, m.name))))]
        if problems:
            raise TrialsError("; ".join(problems))
        batch = batch_rows.add_batch(
            tx, trial_id, sample_name, label, prepared_on=prepared, prepared_by=prepared_by,
            notes=notes, settings=sets, measures=meas, by=by)
        if signer:
            batch = batch_rows.sign_off(tx, trial_id, sample_name, label, who=signer,
                                        when=signed_on or _input.today())
        return batch

    return store.write(work)


def set_batch_value(
    store: Store,
    trial_id: int,
    sample_name: str,
    label: str,
    *,
    kind: str,
    name: str,
    value: Any,
    unit: str = "",
    by: str = "leader",
) -> Batch:
    """Correct one recorded value of a batch (``kind``: setting or measure): its value
    and unit, audited. The unit must be readable and convertible to the variable's
    unit on the trial's other batches."""
    if kind not in KINDS:
        raise TrialsError(f"expected kind 'setting' or 'measure', got {kind!r}")
    text = str(value if value is not None else "").strip()
    if not text:
        raise TrialsError(f"a value is required for {name!r}")
    unit = (unit or "").strip()

    def work(tx) -> Batch:
        others = [b for b in batch_rows.list_batches(tx, trial_id)
                  if (b.sample_name, b.label) != (sample_name, label)]
        problem = unit_problem(name, unit, first_units(others).get((kind, name)))
        if problem:
            raise TrialsError(problem)
        return batch_rows.set_value(tx, trial_id, sample_name, label, kind=kind, name=name,
                                    value=text, unit=unit, by=by)

    return store.write(work)


def list_batches(store: Store, trial_id: int) -> list[Batch]:
    """The trial's batches, by sample."""
    with store.read() as tx:
        return batch_rows.list_batches(tx, trial_id)


def unsigned_served(store: Store, trial_id: int) -> dict[str, list[str]]:
    """The food-safety points of what is served: ``unsigned`` names ("sample / batch")
    of the batches the plan serves that are not signed off (every unsigned batch of a
    planned sample when no cup names its batch), ``unrecorded`` the planned samples with
    no batch on file."""
    from trials.store import plans as plan_rows

    with store.read() as tx:
        batches = batch_rows.list_batches(tx, trial_id)
        plan = plan_rows.plan_entries(tx, trial_id)
    planned = list(dict.fromkeys(e.sample_name for e in plan))
    served = {(e.sample_name, e.batch_label) for e in plan if e.batch_label}
    unsigned = [f"{b.sample_name} / {b.label}" for b in batches
                if not b.signed_off and b.sample_name in planned
                and (not served or (b.sample_name, b.label) in served)]
    recorded = {b.sample_name for b in batches}
    return {"unsigned": unsigned, "unrecorded": [s for s in planned if s not in recorded]}


def sign_off_batch(
    store: Store,
    trial_id: int,
    sample_name: str,
    label: str,
    *,
    by: str,
    on: dt.date | str | None = None,
) -> Batch:
    """Record the food-safety sign-off of a batch (who, when), per the local food code."""
    who = _input.name(by, "the person signing off")
    when = _input.as_date(on, "the sign-off date") or _input.today()
    return store.write(lambda tx: batch_rows.sign_off(tx, trial_id, sample_name, label,
                                                      who=who, when=when))


def _parse_batch_rows(frame: pd.DataFrame, samples: set[str],
                      declared: dict[tuple[str, str], str] | None = None) -> list[tuple]:
    """Checked batch rows of a file; :class:`ImportRowsError` names every bad row.

    ``declared`` holds each variable's unit on file (:func:`trials.units.first_units`);
    a variable new to the trial takes the first unit the file gives it.
    """
    units = dict(declared or {})
    problems: list[str] = []
    parsed = []
    seen: dict[tuple, int] = {}
    for i, rec in enumerate(frame.to_dict("records")):
        rowno = i + 2
        sample = str(rec["sample"]).strip()
        label = str(rec["batch"]).strip()
        kind = str(rec["kind"]).strip().lower()
        name = str(rec["name"]).strip()
        value = str(rec["value"]).strip()
        if sample not in samples:
            problems.append(f"row {rowno}, column 'sample': unknown sample {sample!r}")
            continue
        if not label:
            problems.append(f"row {rowno}, column 'batch': a batch label is required")
            continue
        if kind not in KINDS:
            problems.append(
                f"row {rowno}, column 'kind': expected 'setting' or 'measure', got {kind!r}")
            continue
        if not name:
            problems.append(f"row {rowno}, column 'name': a name is required")
            continue
        if not value:
            problems.append(f"row {rowno}, column 'value': a value is required")
            continue
        key = (sample, label, kind, name)
        if key in seen:
            problems.append(f"row {rowno}: repeats row {seen[key]} ({sample}, {label}, {name})")
            continue
        seen[key] = rowno
        unit = str(rec["unit"]).strip()
        wrong = unit_problem(name, unit, units.get((kind, name)))
        if wrong:
            problems.append(f"row {rowno}, column 'unit': {wrong}")
            continue
        if unit:
            units.setdefault((kind, name), unit)
        try:
            prepared = _input.as_date(rec.get("prepared_on", ""), "prepared_on")
        except TrialsError as exc:
            problems.append(f"row {rowno}, column 'prepared_on': {exc}")
            continue
        parsed.append((sample, label, kind, name, value, unit, prepared,
                       str(rec.get("prepared_by", "") or "").strip()))
    if problems:
        raise ImportRowsError(problems)
    return parsed


def import_batches(store: Store, trial_id: int, path: str | Path, *, by: str = "import") -> int:
    """Import batch settings and measured variables from a tidy CSV or Excel file.

    A unit pint cannot read, or one that cannot be converted to the variable's unit
    (on file, or the first the file gives), refuses the row. Columns: ``sample``,
    ``batch``, ``kind`` (``setting`` or ``measure``), ``name``, ``value``, ``unit``;
    optional ``prepared_on`` (YYYY-MM-DD) and ``prepared_by``. Batches are created
    when new; a value already on file with the same name is replaced (audited).
    Returns the number of values imported. All rows or none.
    """
    frame = _input.read_rows(path)
    _input.require_columns(frame, BATCH_COLUMNS)

    def work(tx) -> int:
        parsed = _parse_batch_rows(frame, batch_rows.sample_names(tx, trial_id),
                                   first_units(batch_rows.list_batches(tx, trial_id)))
        return batch_rows.store_values(tx, trial_id, parsed, by)

    return store.write(work)


MEASURE_COLUMNS = ["sample", "batch", "kind", "name", "value", "text", "unit", "prepared_on",
                   "prepared_by", "signed_off"]


def measures_table(batches: Iterable[Batch]) -> pd.DataFrame:
    """Batch settings and measured variables, tidy: one row per value.

    Columns: ``sample batch kind name value unit prepared_on prepared_by signed_off``;
    ``value`` is a float where the value is a number, else NaN with the text in
    ``text``.
    """
    out = []
    for b in batches:
        for kind, items in (("setting", b.settings), ("measure", b.measures)):
            for m in items:
                number = isinstance(m.value, float)
                out.append({
                    "sample": b.sample_name, "batch": b.label, "kind": kind, "name": m.name,
                    "value": m.value if number else np.nan, "text": str(m.value),
                    "unit": m.unit, "prepared_on": b.prepared_on, "prepared_by": b.prepared_by,
                    "signed_off": b.signed_off,
                })
    return pd.DataFrame(out, columns=MEASURE_COLUMNS)


def measures_frame(store: Store, trial_id: int) -> pd.DataFrame:
    """The trial's batch values as :func:`measures_table`."""
    return measures_table(list_batches(store, trial_id))


def export_measures_bytes(store: Store, trial_id: int) -> bytes:
    """The trial's batch settings and measured variables (:func:`measures_frame`) as a
    tidy CSV, formula-like cells neutralised."""
    from trials.tabular import table_bytes

    return table_bytes(measures_frame(store, trial_id), fmt="csv")
