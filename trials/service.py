"""Use cases of Kitchen Trials: what the screens and the command line ask for.

Every function takes the open store first (``open_store(url)``) and returns records of
:mod:`trials.model` or the small frozen records below (each with ``to_dict()``). Input
errors raise :class:`trials.errors.TrialsError` (or a subclass) with a message that
quotes the bad value; nothing is changed then, because every write is one transaction.
Every change is written to the audit log with who made it.

The response file (CSV, with ``,`` ``;`` or tab; UTF-8 with or without a byte-order
mark, or Windows-1252; or an Excel workbook) has one row per answer:

=============  ==========================================================================
column         meaning
=============  ==========================================================================
session        the session's name, e.g. ``1``
panelist       the panelist's code, e.g. ``P07``
code           the cup's blinding code (forced choice: the chosen cup; tetrad: the two
               codes of the chosen group separated by a space; empty with
               ``no preference``)
attribute      ``choice`` for a forced choice, ``rank`` for a ranking, else the name of
               one of the trial's attributes
value          the score (a whole number on the attribute's scale), the rank (1 = most),
               empty for a choice, or ``no preference`` (paired preference only)
comment        optional free text
entered_by     optional: who entered the answer (default: ``import``)
entered_at     optional: when, ISO 8601 (default: the time of the import)
mode           optional: ``tablet``, ``paper`` or ``import`` (default ``import``)
=============  ==========================================================================

Other columns (an export adds ``sample``, ``set_index``, ``position``, ``role``) are
ignored, so an exported file imports back; an answer already on file with the same
value is recorded once. Rows are numbered as a spreadsheet shows them: the header is
row 1, the first answer row 2.
"""

from __future__ import annotations

import datetime as dt
import io
import json
import secrets
import zipfile
from collections import Counter, defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import AccessDenied, ImportRowsError, NotFoundError, TrialsError
from trials.methods import Family, MethodSpec, get_method
from trials.model import (
    AllergenConflict,
    Attribute,
    AttributeKind,
    Batch,
    EntryMode,
    Measurement,
    Panelist,
    PlanEntry,
    Record,
    Response,
    Sample,
    Status,
    Study,
)
from trials.store import Store, open_store
from trials.store.schema import (
    AccessTokenRow,
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

__all__ = [
    "open_store", "Store",
    "StudySummary", "StudyOverview", "PanelistBallot", "BallotSet", "BallotAnswer",
    "AuditEntry",
    "list_studies", "study_overview", "create_study", "get_study", "update_study",
    "set_status", "record_decision", "add_sample", "add_attribute",
    "add_batch", "list_batches", "sign_off_batch", "import_batches",
    "add_panelist", "list_panelists", "import_panelists",
    "draw_plan", "plan", "allergen_conflicts", "panelist_token", "panelist_links",
    "ballot_for_token", "record_answer", "record_response",
    "responses", "responses_frame", "measures_frame", "audit_log",
    "import_responses", "export_responses", "export_archive", "import_archive",
    "seed_demo",
]

TASTE_PATH = "/taste?t="
RESPONSE_COLUMNS = ("session", "panelist", "code", "attribute", "value")
OPTIONAL_COLUMNS = ("comment", "entered_by", "entered_at", "mode")
EXPORT_COLUMNS = (
    "session", "panelist", "code", "attribute", "value", "comment", "entered_by",
    "entered_at", "mode", "sample", "set_index", "position", "role",
)
NO_PREFERENCE = "no preference"


# ====================================================================== records


@dataclass(frozen=True, slots=True)
class StudySummary(Record):
    """One line of the list of trials."""

    id: int
    name: str
    method: str
    status: Status
    product: str = ""
    created_on: dt.date | None = None
    decision: str = ""


@dataclass(frozen=True, slots=True)
class StudyOverview(Record):
    """A trial at a glance, for the leader (``links``: panelist code -> tasting path)."""

    id: int
    name: str
    method: str
    status: Status
    product: str
    objective: str
    samples: tuple[Sample, ...]
    attributes: tuple[Attribute, ...]
    batches: tuple[Batch, ...]
    panelists: int
    plan_size: int
    responses: int
    links: dict[str, str]
    sessions: tuple[str, ...] = ()
    decision: str = ""


@dataclass(frozen=True, slots=True)
class BallotSet(Record):
    """The codes of one set, in serving order."""

    session: str
    set_index: int
    codes: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class BallotAnswer(Record):
    """An answer this panelist has already given."""

    session: str
    code: str
    attribute: str
    value: str
    comment: str = ""


@dataclass(frozen=True, slots=True)
class PanelistBallot(Record):
    """What a panelist's screen may show: never a sample name, id or the key."""

    title: str
    method: str
    question: str
    instructions: str
    panelist_code: str
    sets: tuple[BallotSet, ...]
    attributes: tuple[Attribute, ...]
    answers: tuple[BallotAnswer, ...]
    remaining: int

    @property
    def complete(self) -> bool:
        return self.remaining == 0


@dataclass(frozen=True, slots=True)
class AuditEntry(Record):
    """One change in the audit log."""

    at: dt.datetime
    who: str
    table: str
    row_id: int | None
    field: str
    old: str | None
    new: str | None


# ====================================================================== helpers


def _now() -> dt.datetime:
    return dt.datetime.now(dt.UTC).replace(tzinfo=None, microsecond=0)


def _today() -> dt.date:
    return dt.date.today()


def _text(value: Any) -> str | None:
    if value is None:
        return None
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return str(value)


def _allergens(value: Iterable[str] | str | None) -> tuple[str, ...]:
    """Lower-case allergen names, duplicates dropped, order kept."""
    if value is None:
        return ()
    if isinstance(value, str):
        for sep in (";", "|"):
            value = value.replace(sep, ",")
        value = value.split(",")
    out: list[str] = []
    for item in value:
        name = str(item).strip().lower()
        if name and name not in out:
            out.append(name)
    return tuple(out)


def _join(names: Iterable[str]) -> str:
    return ",".join(names)


def _split(text: str) -> tuple[str, ...]:
    return tuple(p for p in (text or "").split(",") if p)


def _audit(
    session: Session,
    study_id: int | None,
    who: str,
    table: str,
    row_id: int | None,
    field_name: str,
    old: Any = None,
    new: Any = None,
) -> None:
    session.add(
        AuditRow(
            study_id=study_id, at=_now(), who=who or "", table_name=table, row_id=row_id,
            field=field_name, old_value=_text(old), new_value=_text(new),
        )
    )


def _study_row(session: Session, study_id: int) -> StudyRow:
    row = session.get(StudyRow, int(study_id)) if str(study_id).lstrip("-").isdigit() else None
    if row is None:
        raise NotFoundError(f"no trial with id {study_id!r}")
    return row


def _name(value: Any, what: str) -> str:
    text = str(value or "").strip()
    if not text:
        raise TrialsError(f"{what} must not be empty, got {value!r}")
    return text


def _fraction(value: Any, what: str, *, allow_none: bool = False) -> float | None:
    if value is None and allow_none:
        return None
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise TrialsError(f"{what} must be a number between 0 and 1, got {value!r}") from None
    if not 0 < x < 1:
        raise TrialsError(f"{what} must lie strictly between 0 and 1, got {value!r}")
    return x


def _sample_record(row: SampleRow) -> Sample:
    return Sample(
        name=row.name, id=row.id, is_control=bool(row.is_control),
        allergens=_split(row.allergens), description=row.description or "",
    )


def _attribute_record(row: AttributeRow) -> Attribute:
    return Attribute(
        name=row.name, kind=AttributeKind(row.kind), low=row.low, high=row.high,
        anchors=tuple(json.loads(row.anchors or "[]")),
    )


def _study_record(row: StudyRow) -> Study:
    return Study(
        name=row.name, method=row.method, id=row.id, objective=row.objective or "",
        alpha=row.alpha, beta=row.beta, pd=row.pd, delta=row.delta,
        status=Status(row.status), decision=row.decision or "",
        rationale=row.rationale or "", product=row.product or "",
        aim=row.aim or "", created_on=row.created_on,
        samples=tuple(_sample_record(s) for s in row.samples),
        attributes=tuple(_attribute_record(a) for a in row.attributes),
    )


def _measure_value(row: BatchValueRow) -> float | str:
    if row.is_number:
        return float(row.value)
    return row.value


def _batch_record(row: BatchRow) -> Batch:
    settings = tuple(
        Measurement(v.name, _measure_value(v), v.unit or "") for v in row.values
        if v.kind == "setting"
    )
    measures = tuple(
        Measurement(v.name, _measure_value(v), v.unit or "") for v in row.values
        if v.kind == "measure"
    )
    return Batch(
        sample_name=row.sample.name, label=row.label, id=row.id,
        prepared_on=row.prepared_on, prepared_by=row.prepared_by or "",
        settings=settings, measures=measures,
        safety_signed_by=row.safety_signed_by or "", safety_signed_on=row.safety_signed_on,
        notes=row.notes or "",
    )


def _panelist_record(row: PanelistRow) -> Panelist:
    return Panelist(
        code=row.code, id=row.id, allergens=_split(row.allergens),
        restrictions=row.restrictions or "", consent_on=row.consent_on,
    )


def _as_date(value: Any, what: str) -> dt.date | None:
    if value is None or value == "":
        return None
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date):
        return value
    try:
        return dt.date.fromisoformat(str(value).strip())
    except ValueError:
        raise TrialsError(f"{what} must be a date written YYYY-MM-DD, got {value!r}") from None


def _measurements(items: Iterable[Any] | dict | None, what: str) -> list[Measurement]:
    if not items:
        return []
    if isinstance(items, dict):
        items = [(k, *(v if isinstance(v, tuple) else (v,))) for k, v in items.items()]
    out = []
    for item in items:
        if isinstance(item, Measurement):
            m = item
        elif isinstance(item, dict):
            m = Measurement(item["name"], item["value"], item.get("unit", ""))
        else:
            m = Measurement(*item)
        _name(m.name, f"the name of a {what}")
        out.append(m)
    names = [m.name for m in out]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise TrialsError(f"{what} named twice: {', '.join(map(repr, dupes))}")
    return out


def _value_text(value: float | str) -> tuple[str, bool]:
    if isinstance(value, bool):
        return str(value), False
    if isinstance(value, (int, float, np.integer, np.floating)):
        return repr(float(value)), True
    text = str(value).strip()
    try:
        float(text)
    except ValueError:
        return text, False
    return text, True


# ====================================================================== trials


def list_studies(store: Store) -> list[StudySummary]:
    """Every trial on file, newest first."""
    with store.read() as s:
        rows = s.scalars(sa.select(StudyRow).order_by(StudyRow.id.desc())).all()
        return [
            StudySummary(
                id=r.id, name=r.name, method=r.method, status=Status(r.status),
                product=r.product or "", created_on=r.created_on, decision=r.decision or "",
            )
            for r in rows
        ]


AIMS = ("", "difference", "similarity")


def _aim(value: Any) -> str:
    """A discrimination trial's question: ``difference``, ``similarity`` or unset."""
    text = (value or "").strip().lower()
    if text not in AIMS:
        raise TrialsError(f"aim must be 'difference' or 'similarity', got {value!r}")
    return text


def create_study(
    store: Store,
    *,
    name: str,
    method: str,
    objective: str = "",
    product: str = "",
    aim: str = "",
    alpha: float = 0.05,
    beta: float = 0.20,
    pd: float | None = None,
    delta: float | None = None,
    samples: Sequence[Sample | str] = (),
    attributes: Sequence[Attribute] = (),
    created_on: dt.date | None = None,
    by: str = "leader",
) -> Study:
    """Create a trial with its samples and attributes; returns it with its id."""
    spec = get_method(method)
    name = _name(name, "the trial's name")
    aim = _aim(aim)
    alpha = _fraction(alpha, "alpha")
    beta = _fraction(beta, "beta")
    pd = _fraction(pd, "pd", allow_none=True)
    if delta is not None:
        try:
            delta = float(delta)
        except (TypeError, ValueError):
            raise TrialsError(f"delta must be a number, got {delta!r}") from None
        if delta <= 0:
            raise TrialsError(f"delta must be positive, got {delta!r}")

    def work(s: Session) -> int:
        row = StudyRow(
            name=name, method=spec.name, objective=objective or "", product=product or "",
            aim=aim, alpha=alpha, beta=beta, pd=pd, delta=delta, status=Status.PLANNING.value,
            decision="", rationale="", created_on=created_on or _today(),
        )
        s.add(row)
        s.flush()
        _audit(s, row.id, by, "study", row.id, "created", None, name)
        for item in samples:
            sample = item if isinstance(item, Sample) else Sample(name=str(item))
            _add_sample(s, row, sample, by)
        for attr in attributes:
            _add_attribute(s, row, attr, by)
        return row.id

    study_id = store.write(work)
    return get_study(store, study_id)


def get_study(store: Store, study_id: int) -> Study:
    """The trial with its samples and attributes."""
    with store.read() as s:
        return _study_record(_study_row(s, study_id))


_EDITABLE = ("name", "product", "aim", "objective", "alpha", "beta", "pd", "delta", "method")


def update_study(store: Store, study_id: int, *, by: str, **changes: Any) -> Study:
    """Change fields of a trial (``name product aim objective alpha beta pd delta method``).

    Each changed field is audited. The method can change only while no plan is drawn.
    """
    unknown = sorted(set(changes) - set(_EDITABLE))
    if unknown:
        raise TrialsError(
            f"cannot change {', '.join(map(repr, unknown))}; editable: {', '.join(_EDITABLE)}"
        )
    clean: dict[str, Any] = {}
    for key, value in changes.items():
        if key == "name":
            clean[key] = _name(value, "the trial's name")
        elif key in ("alpha", "beta"):
            clean[key] = _fraction(value, key)
        elif key == "pd":
            clean[key] = _fraction(value, key, allow_none=True)
        elif key == "delta":
            clean[key] = None if value is None else float(value)
        elif key == "method":
            clean[key] = get_method(value).name
        elif key == "aim":
            clean[key] = _aim(value)
        else:
            clean[key] = str(value or "")

    def work(s: Session) -> None:
        row = _study_row(s, study_id)
        if "method" in clean and clean["method"] != row.method and _plan_count(s, row.id):
            raise TrialsError(
                f"cannot change the method of trial {row.id} to {clean['method']!r}: "
                "a serving plan is drawn"
            )
        for key, value in clean.items():
            old = getattr(row, key)
            if old != value:
                setattr(row, key, value)
                _audit(s, row.id, by, "study", row.id, key, old, value)

    store.write(work)
    return get_study(store, study_id)


def set_status(store: Store, study_id: int, status: Status | str, *, by: str) -> Study:
    """Move a trial to ``status`` (planning, ready, tasting, analysed, decided)."""
    try:
        status = Status(status)
    except ValueError:
        known = ", ".join(s.value for s in Status)
        raise TrialsError(f"unknown status {status!r}; expected one of: {known}") from None

    def work(s: Session) -> None:
        row = _study_row(s, study_id)
        if row.status != status.value:
            _audit(s, row.id, by, "study", row.id, "status", row.status, status.value)
            row.status = status.value

    store.write(work)
    return get_study(store, study_id)


def record_decision(
    store: Store, study_id: int, decision: str, rationale: str, *, by: str
) -> Study:
    """Record the leader's decision and its rationale; the trial becomes ``decided``."""
    decision = _name(decision, "the decision")

    def work(s: Session) -> None:
        row = _study_row(s, study_id)
        for key, value in (("decision", decision), ("rationale", rationale or ""),
                           ("status", Status.DECIDED.value)):
            old = getattr(row, key)
            if old != value:
                _audit(s, row.id, by, "study", row.id, key, old, value)
                setattr(row, key, value)

    store.write(work)
    return get_study(store, study_id)


def _add_sample(s: Session, study: StudyRow, sample: Sample, by: str) -> SampleRow:
    name = _name(sample.name, "a sample's name")
    if any(x.name == name for x in study.samples):
        raise TrialsError(f"trial {study.id} already has a sample named {name!r}")
    if sample.is_control and any(x.is_control for x in study.samples):
        raise TrialsError(f"trial {study.id} already has a control; {name!r} cannot be one too")
    row = SampleRow(
        name=name, is_control=bool(sample.is_control),
        allergens=_join(_allergens(sample.allergens)), description=sample.description or "",
        position=len(study.samples),
    )
    study.samples.append(row)
    s.flush()
    _audit(s, study.id, by, "sample", row.id, "created", None, name)
    return row


def add_sample(
    store: Store,
    study_id: int,
    name: str,
    *,
    is_control: bool = False,
    allergens: Iterable[str] | str = (),
    description: str = "",
    by: str = "leader",
) -> Sample:
    """Add a sample (a variant) to a trial whose plan is not drawn yet."""
    sample = Sample(name=name, is_control=is_control, allergens=_allergens(allergens),
                    description=description)

    def work(s: Session) -> Sample:
        study = _study_row(s, study_id)
        if _plan_count(s, study.id):
            raise TrialsError(f"cannot add sample {name!r}: trial {study.id} has a plan drawn")
        return _sample_record(_add_sample(s, study, sample, by))

    return store.write(work)


def _add_attribute(s: Session, study: StudyRow, attr: Attribute, by: str) -> AttributeRow:
    name = _name(attr.name, "an attribute's name")
    if name in ("choice", "rank"):
        raise TrialsError(f"{name!r} is reserved for forced choices and ranks")
    if any(x.name == name for x in study.attributes):
        raise TrialsError(f"trial {study.id} already has an attribute named {name!r}")
    try:
        kind = AttributeKind(attr.kind)
    except ValueError:
        known = ", ".join(k.value for k in AttributeKind)
        raise TrialsError(f"unknown attribute kind {attr.kind!r}; expected: {known}") from None
    low, high = attr.low, attr.high
    if not (isinstance(low, int) and isinstance(high, int)) or low >= high:
        raise TrialsError(
            f"a scale runs over whole numbers from low to high, low < high; got {low!r}..{high!r}"
        )
    anchors = tuple(str(a) for a in attr.anchors)
    if anchors and len(anchors) not in (2, high - low + 1):
        raise TrialsError(
            f"attribute {name!r}: give 2 anchors (the ends) or {high - low + 1} (every point), "
            f"got {len(anchors)}"
        )
    row = AttributeRow(
        name=name, kind=kind.value, low=low, high=high, anchors=json.dumps(list(anchors)),
        position=len(study.attributes),
    )
    study.attributes.append(row)
    s.flush()
    _audit(s, study.id, by, "attribute", row.id, "created", None, f"{name} {low}..{high}")
    return row


def add_attribute(
    store: Store,
    study_id: int,
    name: str,
    *,
    kind: AttributeKind | str = AttributeKind.HEDONIC,
    low: int = 1,
    high: int = 9,
    anchors: Sequence[str] = (),
    by: str = "leader",
) -> Attribute:
    """Add a rated attribute with its scale (whole points ``low``..``high``)."""
    attr = Attribute(name=name, kind=kind, low=low, high=high, anchors=tuple(anchors))

    def work(s: Session) -> Attribute:
        study = _study_row(s, study_id)
        if _response_count(s, study.id):
            raise TrialsError(f"cannot add attribute {name!r}: trial {study.id} has answers")
        return _attribute_record(_add_attribute(s, study, attr, by))

    return store.write(work)


def study_overview(store: Store, study_id: int) -> StudyOverview:
    """The trial at a glance for the leader, with each panelist's tasting link."""
    with store.read() as s:
        row = _study_row(s, study_id)
        study = _study_record(row)
        batches = s.scalars(
            sa.select(BatchRow).join(SampleRow).where(SampleRow.study_id == row.id)
            .order_by(SampleRow.position, BatchRow.id)
        ).all()
        panelists = s.scalar(
            sa.select(sa.func.count(sa.distinct(PlanEntryRow.panelist_id)))
            .join(SessionRow).where(SessionRow.study_id == row.id)
        )
        links = _links(s, row.id)
        return StudyOverview(
            id=row.id, name=row.name, method=row.method, status=Status(row.status),
            product=row.product or "", objective=row.objective or "",
            samples=study.samples, attributes=study.attributes,
            batches=tuple(_batch_record(b) for b in batches),
            panelists=int(panelists or 0), plan_size=_plan_count(s, row.id),
            responses=_response_count(s, row.id), links=links,
            sessions=tuple(x.name for x in row.sessions), decision=row.decision or "",
        )


def _plan_count(s: Session, study_id: int) -> int:
    return int(s.scalar(
        sa.select(sa.func.count(PlanEntryRow.id)).join(SessionRow)
        .where(SessionRow.study_id == study_id)
    ) or 0)


def _response_count(s: Session, study_id: int) -> int:
    return int(s.scalar(
        sa.select(sa.func.count(ResponseRow.id)).where(ResponseRow.study_id == study_id)
    ) or 0)


# ====================================================================== batches


def _sample_by_name(study: StudyRow, name: str) -> SampleRow:
    for x in study.samples:
        if x.name == name:
            return x
    known = ", ".join(repr(x.name) for x in study.samples) or "none"
    raise NotFoundError(f"trial {study.id} has no sample {name!r}; its samples: {known}")


def add_batch(
    store: Store,
    study_id: int,
    sample_name: str,
    label: str,
    *,
    prepared_on: dt.date | str | None = None,
    prepared_by: str = "",
    settings: Iterable[Any] | dict | None = (),
    measures: Iterable[Any] | dict | None = (),
    notes: str = "",
    by: str = "leader",
) -> Batch:
    """Record a test batch of a sample with its process settings and measured variables.

    ``settings`` and ``measures`` are :class:`~trials.model.Measurement` records,
    ``(name, value, unit)`` tuples or ``{name: (value, unit)}``.
    """
    label = _name(label, "a batch label")
    prepared = _as_date(prepared_on, "prepared_on")
    sets = _measurements(settings, "process setting")
    meas = _measurements(measures, "measured variable")

    def work(s: Session) -> Batch:
        study = _study_row(s, study_id)
        sample = _sample_by_name(study, sample_name)
        if any(b.label == label for b in sample.batches):
            raise TrialsError(f"sample {sample_name!r} already has a batch labelled {label!r}")
        row = BatchRow(label=label, prepared_on=prepared, prepared_by=prepared_by or "",
                       notes=notes or "")
        sample.batches.append(row)
        for kind, items in (("setting", sets), ("measure", meas)):
            for i, m in enumerate(items):
                text, is_number = _value_text(m.value)
                row.values.append(BatchValueRow(kind=kind, position=i, name=m.name,
                                                value=text, is_number=is_number,
                                                unit=m.unit or ""))
        s.flush()
        _audit(s, study.id, by, "batch", row.id, "created", None, f"{sample_name} / {label}")
        return _batch_record(row)

    return store.write(work)


def list_batches(store: Store, study_id: int) -> list[Batch]:
    """The trial's batches, by sample."""
    with store.read() as s:
        study = _study_row(s, study_id)
        return [_batch_record(b) for x in study.samples for b in x.batches]


def sign_off_batch(
    store: Store,
    study_id: int,
    sample_name: str,
    label: str,
    *,
    by: str,
    on: dt.date | str | None = None,
) -> Batch:
    """Record the food-safety sign-off of a batch (who, when), per the local food code."""
    who = _name(by, "the person signing off")
    when = _as_date(on, "the sign-off date") or _today()

    def work(s: Session) -> Batch:
        study = _study_row(s, study_id)
        sample = _sample_by_name(study, sample_name)
        row = next((b for b in sample.batches if b.label == label), None)
        if row is None:
            raise NotFoundError(f"sample {sample_name!r} has no batch labelled {label!r}")
        for key, value in (("safety_signed_by", who), ("safety_signed_on", when)):
            old = getattr(row, key)
            if old != value:
                _audit(s, study.id, who, "batch", row.id, key, old, value)
                setattr(row, key, value)
        return _batch_record(row)

    return store.write(work)


def import_batches(store: Store, study_id: int, path: str | Path, *, by: str = "import") -> int:
    """Import batch settings and measured variables from a tidy CSV or Excel file.

    Columns: ``sample``, ``batch``, ``kind`` (``setting`` or ``measure``), ``name``,
    ``value``, ``unit``; optional ``prepared_on`` (YYYY-MM-DD) and ``prepared_by``.
    Batches are created when new; a value already on file with the same name is
    replaced (audited). Returns the number of values imported. All rows or none.
    """
    frame = _read_rows(path)
    required = ("sample", "batch", "kind", "name", "value", "unit")
    _require_columns(frame, required)

    def work(s: Session) -> int:
        study = _study_row(s, study_id)
        samples = {x.name: x for x in study.samples}
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
            if kind not in ("setting", "measure"):
                problems.append(
                    f"row {rowno}, column 'kind': expected 'setting' or 'measure', got {kind!r}"
                )
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
            try:
                prepared = _as_date(rec.get("prepared_on", ""), "prepared_on")
            except TrialsError as exc:
                problems.append(f"row {rowno}, column 'prepared_on': {exc}")
                continue
            parsed.append((sample, label, kind, name, value, str(rec["unit"]).strip(),
                           prepared, str(rec.get("prepared_by", "") or "").strip()))
        if problems:
            raise ImportRowsError(problems)
        for sample, label, kind, name, value, unit, prepared, prepared_by in parsed:
            srow = samples[sample]
            batch = next((b for b in srow.batches if b.label == label), None)
            if batch is None:
                batch = BatchRow(label=label, prepared_on=prepared, prepared_by=prepared_by,
                                 notes="")
                srow.batches.append(batch)
                s.flush()
                _audit(s, study.id, by, "batch", batch.id, "created", None, f"{sample} / {label}")
            text, is_number = _value_text(value)
            old = next((v for v in batch.values if v.kind == kind and v.name == name), None)
            if old is None:
                batch.values.append(BatchValueRow(kind=kind, name=name, value=text, unit=unit,
                                                  is_number=is_number,
                                                  position=len(batch.values)))
            elif (old.value, old.unit) != (text, unit):
                _audit(s, study.id, by, "batch_value", old.id, name, old.value, text)
                old.value, old.unit, old.is_number = text, unit, is_number
        return len(parsed)

    return store.write(work)


def measures_frame(store: Store, study_id: int) -> pd.DataFrame:
    """Batch settings and measured variables, tidy: one row per value.

    Columns: ``sample batch kind name value unit prepared_on prepared_by signed_off``;
    ``value`` is a float where the value is a number, else NaN with the text in
    ``text``.
    """
    cols = ["sample", "batch", "kind", "name", "value", "text", "unit", "prepared_on",
            "prepared_by", "signed_off"]
    rows = []
    for b in list_batches(store, study_id):
        for kind, items in (("setting", b.settings), ("measure", b.measures)):
            for m in items:
                number = isinstance(m.value, float)
                rows.append({
                    "sample": b.sample_name, "batch": b.label, "kind": kind, "name": m.name,
                    "value": m.value if number else np.nan, "text": str(m.value),
                    "unit": m.unit, "prepared_on": b.prepared_on, "prepared_by": b.prepared_by,
                    "signed_off": b.signed_off,
                })
    return pd.DataFrame(rows, columns=cols)


# ====================================================================== panelists


def add_panelist(
    store: Store,
    code: str,
    *,
    allergens: Iterable[str] | str = (),
    restrictions: str = "",
    consent_on: dt.date | str | None = None,
    by: str = "leader",
) -> Panelist:
    """Add a panelist to the roster (a code; no personal data is required)."""
    code = _name(code, "a panelist code")
    consent = _as_date(consent_on, "consent_on")

    def work(s: Session) -> Panelist:
        if s.scalar(sa.select(PanelistRow.id).where(PanelistRow.code == code)) is not None:
            raise TrialsError(f"a panelist with code {code!r} is already on the roster")
        row = PanelistRow(code=code, allergens=_join(_allergens(allergens)),
                          restrictions=restrictions or "", consent_on=consent)
        s.add(row)
        s.flush()
        _audit(s, None, by, "panelist", row.id, "created", None, code)
        return _panelist_record(row)

    return store.write(work)


def list_panelists(store: Store, study_id: int | None = None) -> list[Panelist]:
    """The roster, or (with ``study_id``) the panelists in that trial's plan."""
    with store.read() as s:
        q = sa.select(PanelistRow).order_by(PanelistRow.code)
        if study_id is not None:
            study = _study_row(s, study_id)
            q = q.where(PanelistRow.id.in_(
                sa.select(PlanEntryRow.panelist_id).join(SessionRow)
                .where(SessionRow.study_id == study.id)
            ))
        return [_panelist_record(r) for r in s.scalars(q).all()]


def import_panelists(store: Store, path: str | Path, *, by: str = "import") -> int:
    """Import a roster from CSV/Excel: ``code`` and optional ``allergens`` (separated by
    ``;``, ``|`` or ``,``), ``restrictions``, ``consent_on`` (YYYY-MM-DD).

    New codes are added, known codes updated (audited). Returns the rows imported.
    """
    frame = _read_rows(path)
    _require_columns(frame, ("code",))

    def work(s: Session) -> int:
        problems, parsed, seen = [], [], {}
        for i, rec in enumerate(frame.to_dict("records")):
            rowno = i + 2
            code = str(rec["code"]).strip()
            if not code:
                problems.append(f"row {rowno}, column 'code': a panelist code is required")
                continue
            if code in seen:
                problems.append(f"row {rowno}, column 'code': {code!r} repeats row {seen[code]}")
                continue
            seen[code] = rowno
            try:
                consent = _as_date(rec.get("consent_on", ""), "consent_on")
            except TrialsError as exc:
                problems.append(f"row {rowno}, column 'consent_on': {exc}")
                continue
            parsed.append((code, _join(_allergens(str(rec.get("allergens", "") or ""))),
                           str(rec.get("restrictions", "") or "").strip(), consent))
        if problems:
            raise ImportRowsError(problems)
        known = {r.code: r for r in s.scalars(sa.select(PanelistRow)).all()}
        for code, allergens, restrictions, consent in parsed:
            row = known.get(code)
            if row is None:
                row = PanelistRow(code=code, allergens=allergens, restrictions=restrictions,
                                  consent_on=consent)
                s.add(row)
                s.flush()
                _audit(s, None, by, "panelist", row.id, "created", None, code)
                continue
            for key, value in (("allergens", allergens), ("restrictions", restrictions),
                               ("consent_on", consent)):
                if key in frame.columns and getattr(row, key) != value:
                    _audit(s, None, by, "panelist", row.id, key, getattr(row, key), value)
                    setattr(row, key, value)
        return len(parsed)

    return store.write(work)


# ====================================================================== the serving plan


def _plan_entries(
    spec: MethodSpec,
    samples: list[Sample],
    panelist_codes: list[str],
    session: str,
    seed: int | None,
    session_index: int,
    exclude_codes: Iterable[str],
    per_panelist: int | None,
) -> list[PlanEntry]:
    """The serving plan from trials.design.plan.serving_plan, the control first."""
    import warnings

    from trials.design.plan import serving_plan

    ordered = sorted(samples, key=lambda x: not x.is_control)
    with warnings.catch_warnings():
        # an unbalanced panel is reported by the plan screen, not as a warning here
        warnings.simplefilter("ignore")
        return list(serving_plan(
            spec.name, [x.name for x in ordered], panelist_codes, session=session, rng=seed,
            exclude_codes=exclude_codes, per_panelist=per_panelist,
            session_index=session_index,
        ))


def draw_plan(
    store: Store,
    study_id: int,
    *,
    panelist_codes: Sequence[str],
    session: str = "1",
    seed: int | None = None,
    per_panelist: int | None = None,
    by: str = "leader",
) -> list[PlanEntry]:
    """Draw (or redraw) the blind serving plan of one session.

    The plan comes from :func:`trials.design.plan.serving_plan` (balanced sets for
    forced choice, Williams orders or incomplete blocks with ``per_panelist`` for
    ratings and rankings); codes already used in the trial's other sessions are not
    drawn again. Every panelist must be on the roster with a consent date, and no
    panelist may be served a sample holding an allergen they declared (the plan is
    refused, naming each conflict). A session that already has answers cannot be
    redrawn. Each cup gets the sample's latest signed-off batch (else its latest
    batch). Each panelist gets an access token for the tasting link.
    """
    session = _name(session, "the session's name")
    codes = [str(c).strip() for c in panelist_codes]
    if not codes:
        raise TrialsError("a plan needs at least one panelist; got none")
    dupes = sorted(c for c, k in Counter(codes).items() if k > 1)
    if dupes:
        raise TrialsError(f"panelists listed twice: {', '.join(map(repr, dupes))}")

    def work(s: Session) -> list[PlanEntry]:
        study = _study_row(s, study_id)
        spec = get_method(study.method)
        samples = [_sample_record(x) for x in study.samples]
        if spec.is_forced_choice and len(samples) != 2:
            raise TrialsError(
                f"a {spec.name} trial compares exactly 2 samples; trial {study.id} has {len(samples)}"
            )
        if not spec.is_forced_choice and len(samples) < 2:
            raise TrialsError(f"a {spec.name} trial needs 2 or more samples; it has {len(samples)}")
        if spec.family == Family.RATING and not study.attributes:
            raise TrialsError(f"a rating trial needs at least one attribute; trial {study.id} has none")
        roster = {r.code: r for r in s.scalars(
            sa.select(PanelistRow).where(PanelistRow.code.in_(codes))).all()}
        missing = [c for c in codes if c not in roster]
        if missing:
            raise NotFoundError(f"not on the roster: {', '.join(map(repr, missing))}")
        unconsented = [c for c in codes if roster[c].consent_on is None]
        if unconsented:
            raise TrialsError(
                "no consent recorded for: " + ", ".join(map(repr, unconsented))
                + "; record each panelist's informed consent first"
            )
        srow = next((x for x in study.sessions if x.name == session), None)
        if srow is None:
            srow = SessionRow(name=session)
            study.sessions.append(srow)
            s.flush()
            _audit(s, study.id, by, "tasting_session", srow.id, "created", None, session)
        else:
            answered = s.scalar(sa.select(sa.func.count(ResponseRow.id))
                                .where(ResponseRow.session_id == srow.id))
            if answered:
                raise TrialsError(
                    f"session {session!r} of trial {study.id} has {answered} answers; "
                    "its plan cannot be redrawn"
                )
            old = s.scalar(sa.select(sa.func.count(PlanEntryRow.id))
                           .where(PlanEntryRow.session_id == srow.id))
            if old:
                s.execute(sa.delete(PlanEntryRow).where(PlanEntryRow.session_id == srow.id))
                _audit(s, study.id, by, "plan_entry", None, f"session {session}", f"{old} cups",
                       "redrawn")
        index = [x.name for x in study.sessions].index(session)
        used = s.scalars(
            sa.select(PlanEntryRow.code).join(SessionRow)
            .where(SessionRow.study_id == study.id, SessionRow.id != srow.id)
        ).all()
        entries = _plan_entries(spec, samples, codes, session, seed, index, set(used),
                                per_panelist)
        conflicts = _conflicts(entries, samples, [_panelist_record(roster[c]) for c in codes])
        if conflicts:
            raise TrialsError(
                "the plan would serve declared allergens: " + "; ".join(
                    f"panelist {c.panelist_code!r} declared {', '.join(c.allergens)}, held by "
                    f"sample {c.sample_name!r}" for c in conflicts
                ) + ". Leave these panelists out of this trial"
            )
        by_name = {x.name: x for x in study.samples}
        batch_of: dict[str, BatchRow | None] = {}
        for x in study.samples:
            signed = [b for b in x.batches if b.safety_signed_by]
            pool = signed or list(x.batches)
            batch_of[x.name] = pool[-1] if pool else None
        out, rows = [], []
        for e in entries:
            batch = batch_of[e.sample_name]
            rows.append({
                "session_id": srow.id, "panelist_id": roster[e.panelist_code].id,
                "position": e.position, "code": e.code,
                "sample_id": by_name[e.sample_name].id, "set_index": e.set_index,
                "role": e.role, "batch_id": batch.id if batch else None,
            })
            out.append(PlanEntry(e.session, e.panelist_code, e.position, e.code, e.sample_name,
                                 e.set_index, e.role, batch.label if batch else ""))
        s.execute(sa.insert(PlanEntryRow), rows)  # one executemany, not one ORM add a cup
        have = set(s.scalars(sa.select(AccessTokenRow.panelist_id)
                             .where(AccessTokenRow.study_id == study.id)).all())
        for c in codes:
            if roster[c].id not in have:
                s.add(AccessTokenRow(study_id=study.id, panelist_id=roster[c].id,
                                     token=secrets.token_urlsafe(24)))
        _audit(s, study.id, by, "plan_entry", None, f"session {session}", None,
               f"{len(out)} cups for {len(codes)} panelists (seed {seed})")
        if study.status == Status.PLANNING.value:
            _audit(s, study.id, by, "study", study.id, "status", study.status, Status.READY.value)
            study.status = Status.READY.value
        return out

    return store.write(work)


def plan(store: Store, study_id: int, session: str | None = None) -> list[PlanEntry]:
    """The serving plan with the decoding key (leader views and the serving sheet only)."""
    with store.read() as s:
        study = _study_row(s, study_id)
        q = (
            sa.select(SessionRow.name, PanelistRow.code, PlanEntryRow.position,
                      PlanEntryRow.code, SampleRow.name, PlanEntryRow.set_index,
                      PlanEntryRow.role, BatchRow.label)
            .select_from(PlanEntryRow)
            .join(SessionRow, PlanEntryRow.session_id == SessionRow.id)
            .join(PanelistRow, PlanEntryRow.panelist_id == PanelistRow.id)
            .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
            .outerjoin(BatchRow, PlanEntryRow.batch_id == BatchRow.id)
            .where(SessionRow.study_id == study.id)
            .order_by(SessionRow.id, PanelistRow.code, PlanEntryRow.position)
        )
        if session is not None:
            q = q.where(SessionRow.name == str(session))
        return [PlanEntry(a, b, c, d, e, f, g, h or "") for a, b, c, d, e, f, g, h in s.execute(q)]


def _conflicts(entries: Sequence[PlanEntry], samples: Sequence[Sample],
               panelists: Sequence[Panelist]) -> list[AllergenConflict]:
    from trials.design.allergens import allergen_conflicts as design_conflicts

    served: dict[str, set[str]] = defaultdict(set)
    for e in entries:
        served[e.panelist_code].add(e.sample_name)
    out = []
    for p in panelists:
        mine = [x for x in samples if x.name in served.get(p.code, ())]
        out += design_conflicts(mine, [p])
    return out


def allergen_conflicts(store: Store, study_id: int) -> list[AllergenConflict]:
    """Panelists whose declared allergens a sample of the trial holds
    (:func:`trials.design.allergens.allergen_conflicts`).

    With a plan drawn, only the samples each panelist is served count; before, every
    sample of the trial counts for every panelist on the roster.
    """
    from trials.design.allergens import allergen_conflicts as design_conflicts

    study = get_study(store, study_id)
    entries = plan(store, study_id)
    roster = list_panelists(store)
    if not entries:
        return list(design_conflicts(study.samples, roster))
    return _conflicts(entries, study.samples, roster)


# ====================================================================== tokens and ballots


def _links(s: Session, study_id: int) -> dict[str, str]:
    rows = s.execute(
        sa.select(PanelistRow.code, AccessTokenRow.token)
        .join(AccessTokenRow, AccessTokenRow.panelist_id == PanelistRow.id)
        .where(AccessTokenRow.study_id == study_id).order_by(PanelistRow.code)
    ).all()
    return {code: TASTE_PATH + token for code, token in rows}


def panelist_token(store: Store, study_id: int, panelist_code: str) -> str:
    """The unguessable token of a panelist's tasting link for a trial (made on first use)."""

    def work(s: Session) -> str:
        study = _study_row(s, study_id)
        pid = s.scalar(sa.select(PanelistRow.id).where(PanelistRow.code == panelist_code))
        if pid is None:
            raise NotFoundError(f"no panelist with code {panelist_code!r}")
        token = s.scalar(sa.select(AccessTokenRow.token).where(
            AccessTokenRow.study_id == study.id, AccessTokenRow.panelist_id == pid))
        if token is None:
            token = secrets.token_urlsafe(24)
            s.add(AccessTokenRow(study_id=study.id, panelist_id=pid, token=token))
        return token

    return store.write(work)


def panelist_links(store: Store, study_id: int) -> dict[str, str]:
    """Panelist code -> path of the tasting screen, relative to the app's address."""
    with store.read() as s:
        return _links(s, _study_row(s, study_id).id)


def _token_owner(s: Session, token: str) -> tuple[StudyRow, PanelistRow]:
    row = s.scalar(sa.select(AccessTokenRow).where(AccessTokenRow.token == str(token or "")))
    if row is None:
        raise AccessDenied("this tasting link is not valid; ask the panel leader for yours")
    return s.get(StudyRow, row.study_id), s.get(PanelistRow, row.panelist_id)


def ballot_for_token(store: Store, token: str) -> PanelistBallot:
    """The ballot behind a tasting link: codes, scales and this panelist's own answers.

    Holds nothing a panelist may not see: no trial name, no sample names or ids, no key.
    """
    with store.read() as s:
        study, panelist = _token_owner(s, token)
        ctx = _Context.load(s, study, panelist_id=panelist.id)
        spec = ctx.spec
        sets: list[BallotSet] = []
        for (sess, code), cups in sorted(ctx.plan.items(), key=lambda kv: (
                ctx.session_order[kv[0][0]], kv[0][1])):
            if code != panelist.code:
                continue
            by_set: dict[int, list[_Cup]] = defaultdict(list)
            for cup in cups.values():
                by_set[cup.set_index].append(cup)
            for k in sorted(by_set):
                ordered = sorted(by_set[k], key=lambda c: c.position)
                sets.append(BallotSet(sess, k, tuple(c.code for c in ordered)))
        answers = tuple(
            BallotAnswer(r.session, r.code, r.attribute, r.value, r.comment)
            for r in _responses(s, study.id, panelist_id=panelist.id)
        )
        attributes = tuple(_attribute_record(a) for a in study.attributes)
        if spec.family == Family.RATING:
            expected = sum(len(x.codes) for x in sets) * len(attributes)
        elif spec.family == Family.RANKING:
            expected = sum(len(x.codes) for x in sets)
        else:
            expected = len(sets)
        return PanelistBallot(
            title=f"Tasting - {spec.label}",
            method=spec.name, question=spec.question, instructions=spec.instructions,
            panelist_code=panelist.code, sets=tuple(sets),
            attributes=attributes if spec.family == Family.RATING else (),
            answers=answers, remaining=max(0, expected - len(answers)),
        )


# ====================================================================== answers


@dataclass(slots=True)
class _Cup:
    code: str
    position: int
    set_index: int
    sample: str
    role: str


@dataclass(slots=True)
class _Answer:
    session_id: int
    panelist_id: int
    question: str
    code: str
    attribute: str
    value: str


class _Bad(Exception):
    def __init__(self, column: str, text: str):
        super().__init__(text)
        self.column = column
        self.text = text


@dataclass(slots=True)
class _Context:
    """Everything needed to check answers to one trial, loaded once."""

    study: StudyRow
    spec: MethodSpec
    attributes: dict[str, AttributeRow]
    sessions: dict[str, int]
    session_order: dict[str, int]
    panelists: dict[str, int]
    plan: dict[tuple[str, str], dict[str, _Cup]]
    existing: dict[tuple[int, int, str], tuple[str, str, int]] = field(default_factory=dict)

    @classmethod
    def load(cls, s: Session, study: StudyRow, *, with_existing: bool = False,
             panelist_id: int | None = None) -> _Context:
        sessions = {x.name: x.id for x in study.sessions}
        order = {x.name: i for i, x in enumerate(study.sessions)}
        q = (
            sa.select(SessionRow.name, PanelistRow.code, PanelistRow.id, PlanEntryRow.code,
                      PlanEntryRow.position, PlanEntryRow.set_index, SampleRow.name,
                      PlanEntryRow.role)
            .select_from(PlanEntryRow)
            .join(SessionRow, PlanEntryRow.session_id == SessionRow.id)
            .join(PanelistRow, PlanEntryRow.panelist_id == PanelistRow.id)
            .join(SampleRow, PlanEntryRow.sample_id == SampleRow.id)
            .where(SessionRow.study_id == study.id)
        )
        if panelist_id is not None:  # one panelist's answers need only their own cups
            q = q.where(PlanEntryRow.panelist_id == panelist_id)
        rows = s.execute(q).all()
        plan: dict[tuple[str, str], dict[str, _Cup]] = defaultdict(dict)
        panelists: dict[str, int] = {}
        for sess, pcode, pid, code, pos, k, sample, role in rows:
            plan[(sess, pcode)][code] = _Cup(code, pos, k, sample, role)
            panelists[pcode] = pid
        ctx = cls(study, get_method(study.method), {a.name: a for a in study.attributes},
                  sessions, order, panelists, dict(plan))
        if with_existing:
            for r in s.execute(
                sa.select(ResponseRow.session_id, ResponseRow.panelist_id, ResponseRow.question,
                          ResponseRow.code, ResponseRow.value, ResponseRow.id)
                .where(ResponseRow.study_id == study.id)
            ):
                ctx.existing[(r[0], r[1], r[2])] = (r[3], r[4], r[5])
        return ctx

    def check(self, session: str, panelist: str, code: str, attribute: str,
              value: str) -> _Answer:
        """Validate one answer; raises _Bad(column, text) naming what was expected."""
        session, panelist = session.strip(), panelist.strip()
        code, attribute, value = code.strip(), attribute.strip(), value.strip()
        if panelist not in self.panelists:
            raise _Bad("panelist", f"panelist {panelist!r} has no serving plan in this trial")
        if session not in self.sessions:
            known = ", ".join(repr(x) for x in self.sessions)
            raise _Bad("session", f"expected one of the sessions {known}, got {session!r}")
        cups = self.plan.get((session, panelist))
        if not cups:
            raise _Bad("session", f"panelist {panelist!r} is not served in session {session!r}")
        spec = self.spec
        sid, pid = self.sessions[session], self.panelists[panelist]

        def cup(c: str) -> _Cup:
            if c not in cups:
                raise _Bad("code", f"{c!r} is not a code served to panelist {panelist!r} "
                                   f"in session {session!r}")
            return cups[c]

        if spec.is_forced_choice:
            if attribute != "choice":
                raise _Bad("attribute", f"a {spec.name} trial takes attribute 'choice', "
                                        f"got {attribute!r}")
            if value:
                if spec.name == "paired-preference" and value.lower() == NO_PREFERENCE:
                    if code:
                        raise _Bad("code", f"give no code with 'no preference', got {code!r}")
                    sets = sorted({c.set_index for c in cups.values()})
                    if len(sets) != 1:
                        raise _Bad("code", "this panelist has several sets; 'no preference' "
                                           "needs one set per session")
                    return _Answer(sid, pid, f"choice:{sets[0]}", "", attribute, NO_PREFERENCE)
                allowed = "empty or 'no preference'" if spec.name == "paired-preference" else "empty"
                raise _Bad("value", f"expected {allowed} for a choice, got {value!r}")
            picked = code.split()
            want = 2 if spec.name == "tetrad" else 1
            if len(picked) != want:
                what = "the two codes of the chosen group" if want == 2 else "one code"
                raise _Bad("code", f"expected {what}, got {code!r}")
            chosen = [cup(c) for c in picked]
            if len({c.set_index for c in chosen}) != 1 or len(set(picked)) != want:
                raise _Bad("code", f"expected two different codes of the same set, got {code!r}")
            if spec.name == "duo-trio" and chosen[0].role == "R":
                raise _Bad("code", f"{code!r} is the reference; choose one of the coded samples")
            chosen.sort(key=lambda c: c.position)
            return _Answer(sid, pid, f"choice:{chosen[0].set_index}",
                           " ".join(c.code for c in chosen), attribute, "")
        if not code:
            raise _Bad("code", "a code is required")
        c = cup(code)
        if spec.family == Family.RANKING:
            if attribute != "rank":
                raise _Bad("attribute", f"a ranking trial takes attribute 'rank', got {attribute!r}")
            k = sum(1 for x in cups.values() if x.set_index == c.set_index)
            return _Answer(sid, pid, f"{code}:rank", code, attribute,
                           str(_whole(value, 1, k, "a rank")))
        attr = self.attributes.get(attribute)
        if attr is None:
            known = ", ".join(repr(a) for a in self.attributes) or "none"
            raise _Bad("attribute", f"expected one of the trial's attributes {known}, "
                                    f"got {attribute!r}")
        return _Answer(sid, pid, f"{code}:{attribute}", code, attribute,
                       str(_whole(value, attr.low, attr.high, "a score")))


def _whole(value: str, low: int, high: int, what: str) -> int:
    try:
        x = float(value)
    except ValueError:
        x = float("nan")
    if not (x == x) or x != int(x) or not low <= x <= high:
        raise _Bad("value", f"expected a whole number from {low} to {high}, got {value!r}")
    return int(x)


def _save_answer(
    s: Session,
    ctx: _Context,
    ans: _Answer,
    *,
    comment: str,
    entered_by: str,
    entered_at: dt.datetime | None,
    mode: EntryMode,
) -> ResponseRow:
    """Insert, or update (audited) a different answer; the same answer is kept once."""
    row = s.scalar(sa.select(ResponseRow).where(
        ResponseRow.session_id == ans.session_id, ResponseRow.panelist_id == ans.panelist_id,
        ResponseRow.question == ans.question))
    if row is None:
        row = ResponseRow(
            study_id=ctx.study.id, session_id=ans.session_id, panelist_id=ans.panelist_id,
            question=ans.question, code=ans.code, attribute=ans.attribute, value=ans.value,
            comment=comment or "", entered_by=entered_by, entered_at=entered_at or _now(),
            mode=mode.value,
        )
        s.add(row)
        s.flush()
        _audit(s, ctx.study.id, entered_by, "response", row.id, "created", None,
               f"{ans.question} = {ans.code} {ans.value}".strip())
        return row
    for key, new in (("code", ans.code), ("value", ans.value), ("comment", comment or "")):
        old = getattr(row, key)
        if key == "comment" and not new:
            continue  # an answer repeated without its comment keeps the comment
        if old != new:
            _audit(s, ctx.study.id, entered_by, "response", row.id, key, old, new)
            setattr(row, key, new)
    return row


def _response_record(row: ResponseRow, session: str, panelist: str) -> Response:
    return Response(
        session=session, panelist_code=panelist, code=row.code, attribute=row.attribute,
        value=row.value, comment=row.comment or "", entered_by=row.entered_by or "",
        entered_at=row.entered_at, mode=EntryMode(row.mode),
    )


def _answer(s: Session, ctx: _Context, session: str, panelist: str, code: str,
            attribute: str, value: Any, comment: str, entered_by: str,
            entered_at: dt.datetime | None, mode: EntryMode) -> Response:
    try:
        ans = ctx.check(str(session), str(panelist), str(code or ""), str(attribute or ""),
                        "" if value is None else str(value))
    except _Bad as bad:
        raise TrialsError(f"{bad.column}: {bad.text}") from None
    row = _save_answer(s, ctx, ans, comment=comment, entered_by=entered_by,
                       entered_at=entered_at, mode=mode)
    return _response_record(row, str(session).strip(), str(panelist).strip())


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

    def work(s: Session) -> Response:
        study, panelist = _token_owner(s, token)
        ctx = _Context.load(s, study, panelist_id=panelist.id)
        sess = session
        if sess is None:
            mine = [k[0] for k in ctx.plan if k[1] == panelist.code]
            if len(mine) != 1:
                raise TrialsError(f"say which session; panelist {panelist.code!r} is served in "
                                  f"{', '.join(map(repr, mine)) or 'none'}")
            sess = mine[0]
        return _answer(s, ctx, sess, panelist.code, code, attribute, value, comment,
                       panelist.code, None, EntryMode.TABLET)

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
    mode = _mode(mode)

    def work(s: Session) -> Response:
        ctx = _Context.load(s, _study_row(s, study_id))
        return _answer(s, ctx, session, panelist_code, code, attribute, value, comment,
                       entered_by, entered_at, mode)

    return store.write(work)


def _mode(mode: Any) -> EntryMode:
    try:
        return EntryMode(str(mode).strip().lower())
    except ValueError:
        known = ", ".join(m.value for m in EntryMode)
        raise TrialsError(f"unknown entry mode {mode!r}; expected one of: {known}") from None


def _responses(s: Session, study_id: int, *, panelist_id: int | None = None) -> list[Response]:
    q = (
        sa.select(ResponseRow, SessionRow.name, PanelistRow.code)
        .join(SessionRow, ResponseRow.session_id == SessionRow.id)
        .join(PanelistRow, ResponseRow.panelist_id == PanelistRow.id)
        .where(ResponseRow.study_id == study_id)
        .order_by(SessionRow.id, PanelistRow.code, ResponseRow.id)
    )
    if panelist_id is not None:
        q = q.where(ResponseRow.panelist_id == panelist_id)
    return [_response_record(r, sess, p) for r, sess, p in s.execute(q)]


def responses(store: Store, study_id: int) -> list[Response]:
    """Every answer to a trial, by session and panelist."""
    with store.read() as s:
        return _responses(s, _study_row(s, study_id).id)


def responses_frame(store: Store, study_id: int) -> pd.DataFrame:
    """Answers joined with the key, tidy, for analysis (leader only).

    Columns: ``session panelist code attribute value score sample set_index position
    role pattern comment entered_by entered_at mode``. ``score`` is the value as a
    float (NaN for choices); ``sample`` the chosen or rated cup's sample (a tetrad's two
    codes give two names joined by ``" + "``); ``role`` the chosen cup's letter and
    ``pattern`` the set's letters in serving order (e.g. ``"ABB"``), from which a forced
    choice's correctness follows.
    """
    with store.read() as s:
        study = _study_row(s, study_id)
        ctx = _Context.load(s, study)
        rows = []
        for r in _responses(s, study.id):
            cups = ctx.plan.get((r.session, r.panelist_code), {})
            picked = [cups[c] for c in r.code.split() if c in cups]
            k = picked[0].set_index if picked else (min((c.set_index for c in cups.values()),
                                                        default=0))
            in_set = sorted((c for c in cups.values() if c.set_index == k),
                            key=lambda c: c.position)
            try:
                score = float(r.value) if r.attribute != "choice" else np.nan
            except ValueError:
                score = np.nan
            rows.append({
                "session": r.session, "panelist": r.panelist_code, "code": r.code,
                "attribute": r.attribute, "value": r.value, "score": score,
                "sample": " + ".join(c.sample for c in picked),
                "set_index": k, "position": picked[0].position if len(picked) == 1 else None,
                "role": "".join(c.role for c in picked),
                "pattern": "".join(c.role for c in in_set),
                "comment": r.comment, "entered_by": r.entered_by, "entered_at": r.entered_at,
                "mode": r.mode.value,
            })
    cols = ["session", "panelist", "code", "attribute", "value", "score", "sample",
            "set_index", "position", "role", "pattern", "comment", "entered_by",
            "entered_at", "mode"]
    frame = pd.DataFrame(rows, columns=cols)
    frame["position"] = frame["position"].astype("Int64")
    return frame


def audit_log(store: Store, study_id: int) -> list[AuditEntry]:
    """Every change to a trial, oldest first (roster changes are under no trial)."""
    with store.read() as s:
        study = _study_row(s, study_id)
        rows = s.scalars(sa.select(AuditRow).where(AuditRow.study_id == study.id)
                         .order_by(AuditRow.id)).all()
        return [AuditEntry(r.at, r.who, r.table_name, r.row_id, r.field, r.old_value,
                           r.new_value) for r in rows]


# ====================================================================== files


def _read_rows(path: str | Path | bytes, name: str = "") -> pd.DataFrame:
    from trials.tabular import read_table

    return read_table(path, name=name or ("" if isinstance(path, (str, Path)) else "upload.csv"))


def _require_columns(frame: pd.DataFrame, required: Sequence[str]) -> None:
    missing = [c for c in required if c not in frame.columns]
    if missing:
        have = ", ".join(repr(c) for c in frame.columns) or "none"
        raise ImportRowsError([
            f"row 1 (the header): missing column {c!r}; the file has columns {have}"
            for c in missing
        ])


def import_responses(
    store: Store,
    study_id: int,
    path: str | Path | bytes,
    *,
    entered_by: str = "import",
    name: str = "",
) -> int:
    """Import answers from a CSV or Excel file (columns: see the module docstring).

    Every row is checked (panelist, session, code in this panelist's plan, attribute,
    value on the scale, rank in 1..k, no answer twice in the file, no answer that
    contradicts one on file). On any bad row :class:`~trials.errors.ImportRowsError`
    lists every bad row and nothing is imported. Answers already on file with the same
    value are skipped (recorded once). Returns the number of answers added.
    """
    frame = _read_rows(path, name)
    _require_columns(frame, RESPONSE_COLUMNS)
    source = name or (Path(path).name if isinstance(path, (str, Path)) else "upload")
    records = frame.to_dict("records")
    now = _now()

    def work(s: Session) -> int:
        study = _study_row(s, study_id)
        ctx = _Context.load(s, study, with_existing=True)
        problems: list[str] = []
        seen: dict[tuple[int, int, str], int] = {}
        new: list[dict[str, Any]] = []
        for i, rec in enumerate(records):
            rowno = i + 2
            try:
                ans = ctx.check(str(rec["session"]), str(rec["panelist"]), str(rec["code"]),
                                str(rec["attribute"]), str(rec["value"]))
                mode = EntryMode.IMPORT
                if str(rec.get("mode", "") or "").strip():
                    try:
                        mode = EntryMode(str(rec["mode"]).strip().lower())
                    except ValueError:
                        raise _Bad("mode", "expected tablet, paper or import, got "
                                           f"{rec['mode']!r}") from None
                at = now
                if str(rec.get("entered_at", "") or "").strip():
                    try:
                        at = dt.datetime.fromisoformat(str(rec["entered_at"]).strip())
                    except ValueError:
                        raise _Bad("entered_at", "expected a date and time written "
                                   f"YYYY-MM-DDTHH:MM:SS, got {rec['entered_at']!r}") from None
                    if at.tzinfo is not None:
                        at = at.astimezone(dt.UTC).replace(tzinfo=None)
            except _Bad as bad:
                problems.append(f"row {rowno}, column {bad.column!r}: {bad.text}")
                continue
            key = (ans.session_id, ans.panelist_id, ans.question)
            if key in seen:
                problems.append(f"row {rowno}: answers the same question as row {seen[key]} "
                                f"(panelist {str(rec['panelist']).strip()!r}, "
                                f"{_question_text(ans)})")
                continue
            seen[key] = rowno
            old = ctx.existing.get(key)
            if old is not None:
                if (old[0], old[1]) != (ans.code, ans.value):
                    problems.append(
                        f"row {rowno}: conflicts with the answer on file for panelist "
                        f"{str(rec['panelist']).strip()!r}, {_question_text(ans)} "
                        f"(on file: code {old[0]!r}, value {old[1]!r}; in the file: code "
                        f"{ans.code!r}, value {ans.value!r})"
                    )
                continue
            new.append({
                "study_id": study.id, "session_id": ans.session_id,
                "panelist_id": ans.panelist_id, "question": ans.question, "code": ans.code,
                "attribute": ans.attribute, "value": ans.value,
                "comment": str(rec.get("comment", "") or ""),
                "entered_by": str(rec.get("entered_by", "") or "").strip() or entered_by,
                "entered_at": at, "mode": mode.value,
            })
        if problems:
            raise ImportRowsError(problems)
        for start in range(0, len(new), 5000):
            s.execute(sa.insert(ResponseRow), new[start:start + 5000])
        _audit(s, study.id, entered_by, "response", None, "import", None,
               f"{len(new)} answers from {source} ({len(records) - len(new)} already on file)")
        return len(new)

    return store.write(work)


def _question_text(ans: _Answer) -> str:
    if ans.question.startswith("choice:"):
        return f"the choice of set {ans.question.split(':', 1)[1]}"
    return f"code {ans.code!r}, attribute {ans.attribute!r}"


def export_responses(
    store: Store, study_id: int, path: str | Path, *, fmt: str = "csv"
) -> int:
    """Write every answer with the sample behind each code (leader only); rows written.

    Columns: ``session panelist code attribute value comment entered_by entered_at mode
    sample set_index position role``; formula-like cells are neutralised. The file
    imports back with :func:`import_responses`.
    """
    from trials.tabular import write_table

    if fmt not in ("csv", "xlsx"):
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    frame = responses_frame(store, study_id)
    out = pd.DataFrame({
        "session": frame["session"], "panelist": frame["panelist"], "code": frame["code"],
        "attribute": frame["attribute"], "value": frame["value"], "comment": frame["comment"],
        "entered_by": frame["entered_by"],
        "entered_at": [x.isoformat() if isinstance(x, dt.datetime) else "" for x in
                       frame["entered_at"]],
        "mode": frame["mode"], "sample": frame["sample"], "set_index": frame["set_index"],
        "position": frame["position"], "role": frame["role"],
    }, columns=list(EXPORT_COLUMNS))
    return write_table(out, Path(path), fmt=fmt)


# ====================================================================== archives

ARCHIVE_FORMAT = "kitchen-trials-archive"
ARCHIVE_VERSION = 1


def export_archive(store: Store, study_id: int) -> bytes:
    """The whole trial as one zip file holding ``trial.json``: the trial, samples,
    attributes, batches, the panelists it serves, the plan with the key, responses and
    the audit log. :func:`import_archive` makes an identical trial from it."""
    study = get_study(store, study_id)
    entries = plan(store, study_id)
    codes = {e.panelist_code for e in entries}
    with store.read() as s:
        sessions = [{"name": x.name, "held_on": _text(x.held_on)}
                    for x in _study_row(s, study_id).sessions]
    doc = {
        "format": ARCHIVE_FORMAT, "version": ARCHIVE_VERSION,
        "study": study.to_dict(),
        "batches": [b.to_dict() for b in list_batches(store, study_id)],
        "panelists": [p.to_dict() for p in list_panelists(store) if p.code in codes],
        "sessions": sessions,
        "plan": [e.to_dict() for e in entries],
        "responses": [r.to_dict() for r in responses(store, study_id)],
        "audit": [a.to_dict() for a in audit_log(store, study_id)],
    }
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("trial.json", json.dumps(doc, indent=1, ensure_ascii=False))
    return buf.getvalue()


def import_archive(store: Store, data: bytes, *, by: str = "import") -> int:
    """Make a new trial from :func:`export_archive`'s bytes; returns its id.

    Panelists are matched by code (added to the roster when new). Access tokens are new:
    a link of the original trial does not open the copy. The original audit log is
    kept, marked as imported.
    """
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as z:
            doc = json.loads(z.read("trial.json").decode("utf-8"))
    except (zipfile.BadZipFile, KeyError, ValueError) as exc:
        raise TrialsError(f"not a trial archive ({exc})") from None
    if doc.get("format") != ARCHIVE_FORMAT or doc.get("version") != ARCHIVE_VERSION:
        raise TrialsError(f"not a trial archive of version {ARCHIVE_VERSION}: "
                          f"format {doc.get('format')!r}, version {doc.get('version')!r}")
    st = doc["study"]

    def work(s: Session) -> int:
        row = StudyRow(
            name=st["name"], method=get_method(st["method"]).name, objective=st["objective"],
            product=st.get("product", ""), aim=_aim(st.get("aim", "")),
            alpha=st["alpha"], beta=st["beta"], pd=st["pd"],
            delta=st["delta"], status=Status(st["status"]).value, decision=st["decision"],
            rationale=st["rationale"], created_on=_as_date(st["created_on"], "created_on"),
        )
        s.add(row)
        s.flush()
        for a in doc["audit"]:
            s.add(AuditRow(study_id=row.id, at=dt.datetime.fromisoformat(a["at"]), who=a["who"],
                           table_name=a["table"], row_id=None, field=a["field"],
                           old_value=a["old"], new_value=a["new"]))
        _audit(s, row.id, by, "study", row.id, "imported", None,
               f"archive of trial {st['id']} ({st['name']})")
        samples = {}
        for i, x in enumerate(st["samples"]):
            samples[x["name"]] = SampleRow(name=x["name"], is_control=x["is_control"],
                                           allergens=_join(x["allergens"]),
                                           description=x["description"], position=i)
            row.samples.append(samples[x["name"]])
        for i, a in enumerate(st["attributes"]):
            row.attributes.append(AttributeRow(name=a["name"], kind=a["kind"], low=a["low"],
                                               high=a["high"], anchors=json.dumps(a["anchors"]),
                                               position=i))
        batches = {}
        for b in doc["batches"]:
            br = BatchRow(label=b["label"], prepared_on=_as_date(b["prepared_on"], "prepared_on"),
                          prepared_by=b["prepared_by"], notes=b["notes"],
                          safety_signed_by=b["safety_signed_by"],
                          safety_signed_on=_as_date(b["safety_signed_on"], "signed_on"))
            for kind, items in (("setting", b["settings"]), ("measure", b["measures"])):
                for i, m in enumerate(items):
                    text, is_number = _value_text(m["value"])
                    br.values.append(BatchValueRow(kind=kind, position=i, name=m["name"],
                                                   value=text, is_number=is_number,
                                                   unit=m["unit"]))
            samples[b["sample_name"]].batches.append(br)
            batches[(b["sample_name"], b["label"])] = br
        sessions = {}
        for x in doc["sessions"]:
            sessions[x["name"]] = SessionRow(name=x["name"],
                                             held_on=_as_date(x["held_on"], "held_on"))
            row.sessions.append(sessions[x["name"]])
        s.flush()
        roster = {r.code: r for r in s.scalars(sa.select(PanelistRow)).all()}
        for p in doc["panelists"]:
            if p["code"] not in roster:
                pr = PanelistRow(code=p["code"], allergens=_join(p["allergens"]),
                                 restrictions=p["restrictions"],
                                 consent_on=_as_date(p["consent_on"], "consent_on"))
                s.add(pr)
                s.flush()
                _audit(s, None, by, "panelist", pr.id, "created", None, p["code"])
                roster[p["code"]] = pr
        for e in doc["plan"]:
            batch = batches.get((e["sample_name"], e["batch_label"]))
            s.add(PlanEntryRow(session_id=sessions[e["session"]].id,
                               panelist_id=roster[e["panelist_code"]].id,
                               position=e["position"], code=e["code"],
                               sample_id=samples[e["sample_name"]].id, set_index=e["set_index"],
                               role=e["role"], batch_id=batch.id if batch else None))
        for code in sorted({e["panelist_code"] for e in doc["plan"]}):
            s.add(AccessTokenRow(study_id=row.id, panelist_id=roster[code].id,
                                 token=secrets.token_urlsafe(24)))
        s.flush()
        ctx = _Context.load(s, row)
        for r in doc["responses"]:
            try:
                ans = ctx.check(r["session"], r["panelist_code"], r["code"], r["attribute"],
                                r["value"])
            except _Bad as bad:
                raise TrialsError(f"archive response {r!r}: {bad.column}: {bad.text}") from None
            s.add(ResponseRow(
                study_id=row.id, session_id=ans.session_id, panelist_id=ans.panelist_id,
                question=ans.question, code=ans.code, attribute=ans.attribute, value=ans.value,
                comment=r["comment"], entered_by=r["entered_by"],
                entered_at=dt.datetime.fromisoformat(r["entered_at"]) if r["entered_at"] else None,
                mode=EntryMode(r["mode"]).value,
            ))
        return row.id

    return store.write(work)


# ====================================================================== the demo


def seed_demo(store: Store) -> list[StudySummary]:
    """Seed the invented demo trials (see trials/demo.py); running it twice adds nothing."""
    from trials.demo import seed

    ids = seed(store)
    return [x for x in list_studies(store) if x.id in ids]


# ====================================================================== app use cases
# Read and write helpers for the Streamlit screens (pages/): the screens hold widgets
# only and ask these for everything they show or change.


def change_stamp(store: Store, study_id: int) -> tuple[int, int]:
    """A value that changes whenever the trial changes: (last audit id, answers).

    Every write is audited, so a cached read keyed on this stays right.
    """
    with store.read() as s:
        study = _study_row(s, study_id)
        last = s.scalar(sa.select(sa.func.max(AuditRow.id)).where(AuditRow.study_id == study.id))
        return int(last or 0), _response_count(s, study.id)


def analyse_study(store: Store, study_id: int):
    """The trial's analysis (:func:`trials.analysis.analyse`) from the store."""
    from trials.analysis import analyse

    return analyse(get_study(store, study_id), plan(store, study_id),
                   responses(store, study_id), batches=list_batches(store, study_id))


def planning_answer(store: Store, study_id: int):
    """How many assessors a discrimination trial needs for its alpha, beta and pd
    (:func:`trials.stats.discrimination.panel_size`); None when the trial is not a
    forced-choice trial or has no pd yet."""
    study = get_study(store, study_id)
    if not get_method(study.method).is_forced_choice or not study.pd:
        return None
    from trials.stats.discrimination import panel_size

    return panel_size(study.pd, method=study.method, alpha=study.alpha, beta=study.beta)


def power_curve(method: str, *, pd: float, alpha: float, ns: Sequence[int]) -> pd.DataFrame:
    """Exact power of the difference test against the number of assessors
    (:func:`trials.stats.discrimination.power`); columns ``n power critical``."""
    from pandas import DataFrame  # the name ``pd`` is the proportion here

    from trials.stats.discrimination import power

    rows = [power(int(n), method=method, pd=pd, alpha=alpha) for n in ns]
    return DataFrame({"n": [r.n for r in rows], "power": [r.power for r in rows],
                      "critical": [r.critical for r in rows]})


def plan_balance(store: Store, study_id: int) -> dict[str, pd.DataFrame]:
    """How balanced the drawn plan is: cups of each sample at each position, and (forced
    choice) how often each set pattern is served. Empty frames without a plan."""
    entries = plan(store, study_id)
    if not entries:
        return {"positions": pd.DataFrame(), "patterns": pd.DataFrame()}
    frame = pd.DataFrame([e.to_dict() for e in entries])
    positions = pd.crosstab(frame["sample_name"], frame["position"])
    positions.index.name, positions.columns.name = "sample", "position"
    out = {"positions": positions, "patterns": pd.DataFrame()}
    if frame["role"].astype(str).str.len().gt(0).any():
        pats = (frame.sort_values("position").groupby(["session", "panelist_code", "set_index"])
                ["role"].agg("".join))
        counts = pats.value_counts().rename_axis("pattern").reset_index(name="sets")
        out["patterns"] = counts.sort_values("pattern").reset_index(drop=True)
    return out


def answer_progress(store: Store, study_id: int) -> pd.DataFrame:
    """Answers on file against answers expected, per panelist and session.

    Columns ``session panelist expected answered``.
    """
    study = get_study(store, study_id)
    spec = get_method(study.method)
    entries = plan(store, study_id)
    got = responses(store, study_id)
    expected: dict[tuple[str, str], int] = defaultdict(int)
    sets: dict[tuple[str, str], set[int]] = defaultdict(set)
    for e in entries:
        key = (e.session, e.panelist_code)
        sets[key].add(e.set_index)
        if spec.family == Family.RATING:
            expected[key] += len(study.attributes)
        elif spec.family == Family.RANKING:
            expected[key] += 1
    for key, k in sets.items():
        if spec.is_forced_choice:
            expected[key] = len(k)
    answered: dict[tuple[str, str], int] = defaultdict(int)
    for r in got:
        answered[(r.session, r.panelist_code)] += 1
    rows = [{"session": k[0], "panelist": k[1], "expected": v, "answered": answered.get(k, 0)}
            for k, v in sorted(expected.items())]
    return pd.DataFrame(rows, columns=["session", "panelist", "expected", "answered"])


def panel_performance_of(store: Store, study_id: int, attribute: str):
    """Per-panelist performance on one rated attribute
    (:func:`trials.stats.panel.panel_performance`); sessions are the replicates."""
    from trials.stats.panel import panel_performance

    frame = responses_frame(store, study_id)
    frame = frame[frame["attribute"] == attribute]
    if frame.empty:
        raise TrialsError(f"no scores on file for attribute {attribute!r}")
    replicate = "session" if frame["session"].nunique() > 1 else None
    study = get_study(store, study_id)
    return panel_performance(frame, score="score", sample="sample", panelist="panelist",
                             replicate=replicate, alpha=study.alpha)


def paper_sheet(store: Store, study_id: int, session: str) -> pd.DataFrame:
    """The paper-entry grid of one session, filled with the answers on file.

    Forced choice: one row per panelist and set, columns ``panelist set cups chosen``
    (plus ``no_preference`` for paired preference). Rating: one row per cup in serving
    order, columns ``panelist position code`` and one per attribute. Ranking: one row per
    cup, columns ``panelist position code rank``. Codes are the blinding codes only.
    """
    study = get_study(store, study_id)
    spec = get_method(study.method)
    entries = [e for e in plan(store, study_id, session)]
    got = [r for r in responses(store, study_id) if r.session == str(session)]
    if spec.is_forced_choice:
        chosen: dict[tuple[str, str], Response] = {}
        cups: dict[tuple[str, int], list[PlanEntry]] = defaultdict(list)
        for e in entries:
            cups[(e.panelist_code, e.set_index)].append(e)
        code_set = {(e.panelist_code, e.code): e.set_index for e in entries}
        for r in got:
            first = r.code.split()[0] if r.code.split() else ""
            k = code_set.get((r.panelist_code, first), 0)
            chosen[(r.panelist_code, k)] = r
        rows = []
        for (p, k), items in sorted(cups.items()):
            r = chosen.get((p, k))
            row = {"panelist": p, "set": k + 1,
                   "cups": " ".join(e.code for e in sorted(items, key=lambda e: e.position)),
                   "chosen": r.code if r else ""}
            if spec.name == "paired-preference":
                row["no_preference"] = bool(r and r.value == NO_PREFERENCE)
            rows.append(row)
        cols = ["panelist", "set", "cups", "chosen"]
        if spec.name == "paired-preference":
            cols.append("no_preference")
        return pd.DataFrame(rows, columns=cols)
    names = [a.name for a in study.attributes] if spec.family == Family.RATING else ["rank"]
    have = {(r.panelist_code, r.code, r.attribute): r.value for r in got}
    rows = []
    for e in entries:
        row = {"panelist": e.panelist_code, "position": e.position, "code": e.code}
        for a in names:
            v = have.get((e.panelist_code, e.code, a))
            row[a] = float(v) if v not in (None, "") else None
        rows.append(row)
    frame = pd.DataFrame(rows, columns=["panelist", "position", "code", *names])
    for a in names:
        frame[a] = frame[a].astype("Float64")
    return frame


def _sheet_answers(study: Study, spec: MethodSpec, session: str,
                   frame: pd.DataFrame) -> list[tuple[int, dict[str, Any]]]:
    """The answers a paper grid holds, as (grid row, answer fields); blanks skipped."""
    out: list[tuple[int, dict[str, Any]]] = []
    for i, rec in enumerate(frame.to_dict("records")):
        panelist = str(rec.get("panelist") or "").strip()
        if spec.is_forced_choice:
            code = str(rec.get("chosen") or "").strip()
            if rec.get("no_preference"):
                out.append((i, {"session": session, "panelist": panelist, "code": "",
                                "attribute": "choice", "value": NO_PREFERENCE}))
            elif code:
                out.append((i, {"session": session, "panelist": panelist, "code": code,
                                "attribute": "choice", "value": ""}))
            continue
        names = ([a.name for a in study.attributes] if spec.family == Family.RATING
                 else ["rank"])
        for a in names:
            v = rec.get(a)
            if v is None or (isinstance(v, float) and v != v) or v is pd.NA or str(v).strip() == "":
                continue
            value = v
            if isinstance(v, float) and v == int(v):
                value = int(v)
            out.append((i, {"session": session, "panelist": panelist,
                            "code": str(rec.get("code") or "").strip(), "attribute": a,
                            "value": str(value)}))
    return out


def check_paper_sheet(store: Store, study_id: int, session: str,
                      frame: pd.DataFrame) -> list[str]:
    """Problems of a paper grid, one message per bad cell, naming the grid row (1-based),
    the panelist and what was expected; empty when every answer would be accepted.
    Also flags a rank given twice by one panelist in one set."""
    problems: list[str] = []
    ranks: dict[tuple[str, int], dict[str, str]] = defaultdict(dict)
    with store.read() as s:
        study_row = _study_row(s, study_id)
        ctx = _Context.load(s, study_row)
        study = _study_record(study_row)
        spec = ctx.spec
        for i, a in _sheet_answers(study, spec, str(session), frame):
            try:
                ans = ctx.check(a["session"], a["panelist"], a["code"], a["attribute"],
                                a["value"])
            except _Bad as bad:
                problems.append(
                    f"row {i + 1} (panelist {a['panelist']!r}), {bad.column}: {bad.text}")
                continue
            if spec.family == Family.RANKING:
                k = ctx.plan[(a["session"], a["panelist"])][ans.code].set_index
                given = ranks[(a["panelist"], k)]
                if ans.value in given:
                    problems.append(f"row {i + 1} (panelist {a['panelist']!r}): rank "
                                    f"{ans.value} is also given to code {given[ans.value]!r}")
                given[ans.value] = ans.code
    return problems


def save_paper_sheet(store: Store, study_id: int, session: str, frame: pd.DataFrame, *,
                     entered_by: str = "leader") -> int:
    """Record every answer of a paper grid (mode ``paper``) in one transaction; all or
    none. An answer already on file with the same value is kept once; a changed one is
    replaced and audited. Returns the answers in the grid."""
    problems = check_paper_sheet(store, study_id, session, frame)
    if problems:
        raise ImportRowsError(problems)
    study = get_study(store, study_id)
    spec = get_method(study.method)
    items = _sheet_answers(study, spec, str(session), frame)

    def work(s: Session) -> int:
        ctx = _Context.load(s, _study_row(s, study_id))
        for _, a in items:
            _answer(s, ctx, a["session"], a["panelist"], a["code"], a["attribute"], a["value"],
                    "", entered_by, None, EntryMode.PAPER)
        return len(items)

    return store.write(work)


def print_result(store: Store, study_id: int, kind: str, *, progress=None,
                 base_url: str = ""):
    """A printed document of the trial as a :class:`trials.printing.PrintResult`:
    ``ballots``, ``sheet`` (the serving sheet with the key, kitchen only) or ``labels``.

    ``progress(done, total)`` is called as the work goes on; ``base_url`` (the app's
    address) puts each panelist's tasting link on their ballot as a QR code.
    """
    from trials import printing

    study = get_study(store, study_id)
    entries = plan(store, study_id)
    if not entries:
        raise TrialsError(f"trial {study_id} has no serving plan yet; draw one first")
    if kind == "ballots":
        links = panelist_links(store, study_id)
        result = printing.ballots_pdf(study, entries, panelists=list_panelists(store),
                                      base_url=base_url, tokens=links if base_url else None,
                                      today=_today(), progress=progress)
    elif kind == "sheet":
        result = printing.serving_sheet_pdf(
            study, entries, batches=list_batches(store, study_id),
            conflicts=allergen_conflicts(store, study_id),
            panelists=list_panelists(store), progress=progress)
    elif kind == "labels":
        result = printing.labels_pdf(entries, progress=progress)
    else:
        raise TrialsError(f"unknown document {kind!r}; expected ballots, sheet or labels")
    return result


def print_bytes(store: Store, study_id: int, kind: str, *, progress=None,
                base_url: str = "") -> bytes:
    """The PDF bytes of :func:`print_result`, for a download button."""
    return print_result(store, study_id, kind, progress=progress, base_url=base_url).data


def study_decision(store: Store, study_id: int, analysis=None):
    """The decision text for the trial's results (:func:`trials.decision.decide`), from
    a given analysis or a fresh one."""
    from trials.decision import decide

    if analysis is None:
        analysis = analyse_study(store, study_id)
    return decide(analysis, study=get_study(store, study_id))


def export_bytes(store: Store, study_id: int, *, fmt: str = "csv") -> bytes:
    """:func:`export_responses` as bytes, for a download button."""
    import tempfile

    with tempfile.TemporaryDirectory(prefix="trials-export-") as folder:
        path = Path(folder) / f"answers.{fmt}"
        export_responses(store, study_id, path, fmt=fmt)
        return path.read_bytes()


def report_html(store: Store, study_id: int) -> str:
    """The trial's report as one self-contained HTML document
    (:func:`trials.printing.report.report_html`)."""
    from trials.printing.report import report_html as build

    study = get_study(store, study_id)
    return build(study, analyse_study(store, study_id), plan=plan(store, study_id),
                 responses=responses(store, study_id),
                 batches=list_batches(store, study_id))


def report_pdf(store: Store, study_id: int) -> bytes:
    """The trial's printable summary as PDF bytes (:func:`trials.printing.report.report_pdf`)."""
    from trials.printing.report import report_pdf as build

    study = get_study(store, study_id)
    return build(study, analyse_study(store, study_id), plan=plan(store, study_id),
                 responses=responses(store, study_id), batches=list_batches(store, study_id))


def export_measures_bytes(store: Store, study_id: int) -> bytes:
    """The trial's batch settings and measured variables (:func:`measures_frame`) as a
    tidy CSV, formula-like cells neutralised."""
    import tempfile

    from trials.tabular import write_table

    with tempfile.TemporaryDirectory(prefix="trials-export-") as folder:
        path = Path(folder) / "batches.csv"
        write_table(measures_frame(store, study_id), path)
        return path.read_bytes()


def print_document(store: Store, study_id: int, kind: str, path: Path, *,
                   base_url: str = "") -> int:
    """Write :func:`print_result`'s PDF to ``path``; returns the number of pages."""
    result = print_result(store, study_id, kind, base_url=base_url)
    Path(path).write_bytes(result.data)
    return result.pages


def write_report(store: Store, study_id: int, path: Path) -> str:
    """Write the trial's HTML report to ``path``; returns the decision's headline."""
    Path(path).write_text(report_html(store, study_id), encoding="utf-8")
    return study_decision(store, study_id).text


# ====================================================================== history
# Trials on file, searched and compared: the next trial starts from the last.


def history(store: Store, *, text: str = "", method: str | None = None,
            decision: str | None = None) -> list[dict[str, Any]]:
    """The trials on file matching a free text (name, objective, product, decision,
    rationale, a sample's name, a process setting), a method and a decision
    (:func:`trials.analysis.search_trials`); one plain row per trial, newest first."""
    from trials.analysis import search_trials

    rows = []
    for summary in list_studies(store):
        study = get_study(store, summary.id)
        settings = sorted({f"{m.name} {m.value} {m.unit}".strip()
                           for b in list_batches(store, study.id) for m in b.settings})
        control = next((x.name for x in study.samples if x.is_control), "")
        rows.append({
            "id": study.id, "name": study.name, "method": study.method,
            "status": study.status.value, "product": study.product,
            "created_on": study.created_on, "objective": study.objective,
            "decision": study.decision, "rationale": study.rationale,
            "samples": [x.name for x in study.samples], "control": control,
            "settings": "; ".join(settings),
        })
    return search_trials(rows, text=text, method=method, decision=decision)


def control_names(store: Store) -> list[str]:
    """The control samples of the rated trials on file (the ones with scores to follow),
    the control of the most trials first, then by name."""
    counts = Counter(r["control"] for r in history(store, method="rating") if r["control"])
    return sorted(counts, key=lambda name: (-counts[name], name))


def control_trend(store: Store, control: str, *, attribute: str | None = None):
    """The control sample's mean scores across the trials that rated it
    (:func:`trials.analysis.control_trend`): one point per trial and attribute."""
    from trials.analysis import control_trend as trend

    frames = []
    for row in history(store):
        if control not in row["samples"]:
            continue
        frame = responses_frame(store, row["id"])
        if frame.empty or "score" not in frame.columns:
            continue
        scored = frame[frame["sample"] == control].dropna(subset=["score"])
        if scored.empty:
            continue
        frames.append(pd.DataFrame({
            "study": row["name"], "date": str(row["created_on"] or ""),
            "sample": scored["sample"], "attribute": scored["attribute"],
            "score": scored["score"],
        }))
    if not frames:
        return ()
    return trend(pd.concat(frames, ignore_index=True), control=control, attribute=attribute)


# ====================================================================== reference tables


def critical_values(method: str):
    """The critical-value table of a forced-choice method for n = 5..200 at alpha 0.20,
    0.10, 0.05, 0.01 and 0.001 (:func:`trials.stats.discrimination.critical_table`)."""
    from trials.stats.discrimination import critical_table

    return critical_table(method=method)


def critical_values_pdf(method: str) -> bytes:
    """:func:`critical_values` as a printable PDF."""
    from trials.printing import critical_table_pdf

    return critical_table_pdf(critical_values(method)).data
