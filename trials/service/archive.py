"""Use cases of whole-trial archives: one zip file holding everything about a trial,
read in one snapshot, and a new identical trial made from it."""

from __future__ import annotations

import datetime as dt
import io
import json
import zipfile

from trials.errors import AnswerError, TrialsError
from trials.methods import get_method
from trials.model import EntryMode
from trials.service import _input
from trials.service.tasting import checker_of
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import archive as archive_rows
from trials.store import batches as batch_rows
from trials.store import panel as panel_rows
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows

ARCHIVE_FORMAT = "kitchen-trials-archive"
ARCHIVE_VERSION = 1


def export_archive(store: Store, trial_id: int) -> bytes:
    """The whole trial as one zip file holding ``trial.json``: the trial, samples,
    attributes, batches, the panelists it serves, the plan with the key, responses and
    the audit log, read in one transaction. :func:`import_archive` makes an identical
    trial from it."""
    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
        entries = plan_rows.plan_entries(tx, trial_id)
        codes = {e.panelist_code for e in entries}
        doc = {
            "format": ARCHIVE_FORMAT, "version": ARCHIVE_VERSION,
            "study": study.to_dict(),
            "batches": [b.to_dict() for b in batch_rows.list_batches(tx, trial_id)],
            "panelists": [p.to_dict() for p in panel_rows.list_panelists(tx)
                          if p.code in codes],
            "sessions": trial_rows.sessions_of(tx, trial_id),
            "plan": [e.to_dict() for e in entries],
            "responses": [r.to_dict() for r in answer_rows.list_answers(tx, trial_id)],
            "audit": [a.to_dict() for a in answer_rows.audit_log(tx, trial_id)],
        }
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("trial.json", json.dumps(doc, indent=1, ensure_ascii=False))
    return buf.getvalue()


def _read(data: bytes) -> dict:
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as z:
            doc = json.loads(z.read("trial.json").decode("utf-8"))
    except (zipfile.BadZipFile, KeyError, ValueError) as exc:
        raise TrialsError(f"not a trial archive ({exc})") from None
    if doc.get("format") != ARCHIVE_FORMAT or doc.get("version") != ARCHIVE_VERSION:
        raise TrialsError(f"not a trial archive of version {ARCHIVE_VERSION}: "
                          f"format {doc.get('format')!r}, version {doc.get('version')!r}")
    return doc


def import_archive(store: Store, data: bytes, *, by: str = "import") -> int:
    """Make a new trial from :func:`export_archive`'s bytes; returns its id.

    Panelists are matched by code (added to the roster when new). Access tokens are new:
    a link of the original trial does not open the copy. The original audit log is
    kept, marked as imported.
    """
    doc = _read(data)
    st = doc["study"]
    fields = {
        "name": st["name"], "method": get_method(st["method"]).name,
        "objective": st["objective"], "product": st.get("product", ""),
        "aim": _input.aim(st.get("aim", "")),
        "target_sample": str(st.get("target_sample", "") or ""),
        "alpha": st["alpha"], "beta": st["beta"],
        "pd": st["pd"], "delta": st["delta"], "decision": st["decision"],
        "rationale": st["rationale"],
        "created_on": _input.as_date(st["created_on"], "created_on"),
    }

    def work(tx) -> int:
        trial_id = archive_rows.insert_archived_trial(tx, doc, fields, by)
        book = answer_rows.plan_book(tx, trial_id)
        checker = checker_of(book)
        found = []
        for r in doc["responses"]:
            try:
                ans = checker.check(r["session"], r["panelist_code"], r["code"],
                                    r["attribute"], r["value"])
            except AnswerError as bad:
                raise TrialsError(f"archive response {r!r}: {bad}") from None
            found.append((ans, {
                "comment": r["comment"], "entered_by": r["entered_by"],
                "entered_at": (dt.datetime.fromisoformat(r["entered_at"])
                               if r["entered_at"] else None),
                "mode": EntryMode(r["mode"]).value,
            }))
        answer_rows.insert_answers(tx, book, found, by=by, note=None)
        return trial_id

    return store.write(work)
