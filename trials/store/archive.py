"""Whole-trial archives in the store: a new trial made from an archive's document
(:func:`trials.service.archive.export_archive` writes it)."""

from __future__ import annotations

import datetime as dt
import json
from typing import Any

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import TrialsError
from trials.model import Measurement, Status
from trials.store import rows
from trials.store.plans import new_tokens
from trials.store.schema import (
    AttributeRow,
    AuditRow,
    BatchRow,
    PanelistRow,
    PlanEntryRow,
    SampleRow,
    SessionRow,
    StudyRow,
)


def _date(value: Any) -> dt.date | None:
    try:
        return dt.date.fromisoformat(value) if value else None
    except (TypeError, ValueError):
        raise TrialsError(f"the archive holds a date that is not YYYY-MM-DD: {value!r}") from None


def insert_archived_trial(s: Session, doc: dict[str, Any], fields: dict[str, Any],
                          by: str) -> int:
    """Insert the trial of a checked archive document: ``fields`` are its checked
    ``study`` columns; samples, attributes, batches, sessions, panelists new to the
    roster, the plan, fresh tokens and the original audit log (marked as imported).
    Answers are added by the caller once they are checked against the new plan."""
    st = doc["study"]
    row = StudyRow(status=Status(st["status"]).value, **fields)
    s.add(row)
    s.flush()
    for a in doc["audit"]:
        s.add(AuditRow(study_id=row.id, at=dt.datetime.fromisoformat(a["at"]), who=a["who"],
                       table_name=a["table"], row_id=None, field=a["field"],
                       old_value=a["old"], new_value=a["new"]))
    rows.audit(s, row.id, by, "study", row.id, "imported", None,
               f"archive of trial {st['id']} ({st['name']})")
    samples: dict[str, SampleRow] = {}
    for i, x in enumerate(st["samples"]):
        samples[x["name"]] = SampleRow(name=x["name"], is_control=x["is_control"],
                                       allergens=rows.join(x["allergens"]),
                                       description=x["description"], position=i)
        row.samples.append(samples[x["name"]])
    for i, a in enumerate(st["attributes"]):
        row.attributes.append(AttributeRow(name=a["name"], kind=a["kind"], low=a["low"],
                                           high=a["high"], anchors=json.dumps(a["anchors"]),
                                           position=i))
    batches: dict[tuple[str, str], BatchRow] = {}
    for b in doc["batches"]:
        br = BatchRow(label=b["label"], prepared_on=_date(b["prepared_on"]),
                      prepared_by=b["prepared_by"], notes=b["notes"],
                      safety_signed_by=b["safety_signed_by"],
                      safety_signed_on=_date(b["safety_signed_on"]))
        rows.batch_values(br, [Measurement(m["name"], m["value"], m["unit"])
                               for m in b["settings"]],
                          [Measurement(m["name"], m["value"], m["unit"]) for m in b["measures"]])
        samples[b["sample_name"]].batches.append(br)
        batches[(b["sample_name"], b["label"])] = br
    sessions: dict[str, SessionRow] = {}
    for x in doc["sessions"]:
        sessions[x["name"]] = SessionRow(name=x["name"], held_on=_date(x["held_on"]))
        row.sessions.append(sessions[x["name"]])
    s.flush()
    roster = {r.code: r for r in s.scalars(sa.select(PanelistRow)).all()}
    for p in doc["panelists"]:
        if p["code"] not in roster:
            pr = PanelistRow(code=p["code"], allergens=rows.join(p["allergens"]),
                             restrictions=p["restrictions"], consent_on=_date(p["consent_on"]))
            s.add(pr)
            s.flush()
            rows.audit(s, None, by, "panelist", pr.id, "created", None, p["code"])
            roster[p["code"]] = pr
    for e in doc["plan"]:
        batch = batches.get((e["sample_name"], e["batch_label"]))
        s.add(PlanEntryRow(session_id=sessions[e["session"]].id,
                           panelist_id=roster[e["panelist_code"]].id,
                           position=e["position"], code=e["code"],
                           sample_id=samples[e["sample_name"]].id, set_index=e["set_index"],
                           role=e["role"], batch_id=batch.id if batch else None))
    new_tokens(s, row.id, {e["panelist_code"] for e in doc["plan"]})
    s.flush()
    return row.id
